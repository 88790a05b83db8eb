"""``loopdocs build``: loop sheets rendered in parallel, cached, never half-written.

Steps (:func:`build`):

1. read and check the project (``loopdocs.checks.check_project``), validate ``[sheet]``;
2. give every loop its sheet number, output file name (``loopdocs.core.names``) and cache key
   (``loopdocs.render.cache``); loops whose output is fresh are reused;
3. unless a selection was asked for, lay out the front matter (cover sheet, drawing list)
   as HTML in parts of ``LIST_ROWS_PER_PART`` rows, each part keyed on its own HTML, so
   that editing one loop renders again only the part that lists it (and the cover when
   its counts change);
4. render the stale front parts and sheets in a ``ProcessPoolExecutor`` (``workers``
   processes, default ``os.cpu_count()``, forked, in waves of ``SHEETS_PER_PROCESS``
   sheets per worker so that memory does not grow with the number of loops); each
   worker holds the project and the split groups by loop once (pool initializer) and
   one weasyprint font configuration (``loopdocs.render.pdf.start_worker``), draws the
   loop's diagram and range charts, takes its calibration tables, renders the HTML,
   writes the PDF with ``atomic_write`` (temporary file, then rename) and keeps its join
   fragment (``loopdocs.render.package.cached_fragment``);
5. join everything into the package from the kept fragments, again through a temporary file.

The checks run with the cyclic garbage collector off (as in ``loopdocs check``).

Output folder::

    OUT/loop-sheets.pdf            the package
    OUT/loops/<loop>.pdf           one PDF per loop
    OUT/.loopdocs-cache/           manifest (keys), front matter, one join fragment per sheet

A worker that dies mid-write leaves only its temporary ``.part`` file, which the build
removes; files in their final names are always complete.

Test hook: when the environment variable ``LOOPDOCS_TEST_CRASH_LOOP`` names a loop, the
worker rendering it writes half of the PDF to the temporary file and ends its process
with ``os._exit`` (an interrupted build, for ``tests/test_build.py``).
"""

from __future__ import annotations

import errno
import functools
import gc
import json
import os
import signal
import sys
import threading
import time
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from loopdocs.core.errors import InputError
from loopdocs.core.files import remove_inside, remove_partials, shareable
from loopdocs.core.files import atomic_write, folder_lock, interrupt_on_terminate
from loopdocs.core.findings import Finding, FindingCounts
from loopdocs.model.records import Project
from loopdocs.render.cache import CACHE_DIR_NAME, Manifest, digest_json, environment_digest, loop_key
from loopdocs.render.settings import SheetSettings, sheet_settings
from loopdocs.render.sheet import TEMPLATES_DIR, current_revision, drawing_number, has_blocking_error

PACKAGE_NAME = "loop-sheets.pdf"
LOOPS_DIR = "loops"
FRONT_CACHE = "front-{part}.pdf"
FRAGMENTS_DIR = "fragments"
SHEETS_PER_PROCESS = 100
"""Sheets a worker process renders before it is replaced (memory stays flat)."""
CRASH_ENV = "LOOPDOCS_TEST_CRASH_LOOP"
LOCK_WAIT_S = 5.0
"""How long a build waits for another build writing the same output folder before refusing."""
MANIFEST_SAVE_S = 1.0
"""The cache manifest is saved as sheets finish, at most once per this many seconds (a killed
build keeps the sheets finished before its last save; 3,000 sheets do not write 3,000 manifests)."""
SOURCE_DIR = Path(__file__).resolve().parent.parent


class BuildError(Exception):
    """The build could not complete (a worker died, a sheet failed to render)."""


@dataclass
class BuildResult:
    out_dir: Path
    rendered: list[str] = field(default_factory=list)
    """Loops whose sheet was rendered in this build."""
    reused: list[str] = field(default_factory=list)
    """Loops whose sheet was fresh in the cache."""
    removed: list[str] = field(default_factory=list)
    """Sheets of loops no longer in the index, deleted."""
    loop_files: dict[str, Path] = field(default_factory=dict)
    package: Path | None = None
    package_pages: int | None = None
    """Pages of the package when it was (re)written in this build."""
    front_rendered: bool = False
    findings: list[Finding] = field(default_factory=list)
    seconds: float = 0.0
    """Wall time of the whole build."""
    render_seconds: dict[str, float] = field(default_factory=dict)
    """Time each rendered sheet took in its worker (drawing, HTML, PDF, write)."""
    revisions: dict[str, str] = field(default_factory=dict)
    """Loop -> the revision its sheet shows ('' when the project has no revision state)."""
    issued: list[Any] = field(default_factory=list)
    """With ``issue``: the sheets issued (``loopdocs.model.revisions.IssuedSheet``), in loop order."""
    state: Any = None
    """The revision state the sheets show (``loopdocs.model.revisions.RevisionState``; after
    the issue with ``issue``), ``None`` when the project has none. Saving it is the caller's
    last step (``loopdocs.commands.build.issue_build``)."""
    state_file: Path | None = None
    """The revision state file written (``issue_build`` only)."""
    transmittal: list[Path] = field(default_factory=list)
    """The transmittal list of this issue, xlsx and PDF (``issue_build`` only)."""
    project: Any = None
    """The project built (``loopdocs.model.records.Project``)."""
    settings: Any = None
    """The project's sheet settings."""

    @property
    def has_errors(self) -> bool:
        return any(f.counts_as_error for f in self.findings)


def frame_record(project: Project, settings: SheetSettings, loop_id: str, sheet_no: int, sheet_count: int, pdfa: bool,
                 revision_changes: Sequence[Any] = ()) -> dict[str, Any]:
    """What the sheet's frame is made from; ``settings`` are the loop's own (its revision
    history in ``revisions``), so a sheet whose revision changed is rendered again.
    ``revision_changes``: the items (tag, column key) changed in the current revision."""
    sheet = settings.model_dump(mode="json", exclude={"release_with_errors"})
    return {
        "title_block": project.config.title_block.model_dump(mode="json"),
        "sheet": sheet,
        "release": settings.release_reason(loop_id),
        "sheet_no": sheet_no,
        "sheet_count": sheet_count,
        "pdfa": pdfa,
        "revision": current_revision(project.config.title_block, settings),
        "revision_changes": [{"tag": c.tag, "field": c.field} for c in revision_changes],
    }


NOT_ISSUED = "-"
"""Revision shown on the sheet of a loop not yet issued in a project that has a revision state."""


def loop_settings(settings: SheetSettings, state: Any, loop_id: str) -> SheetSettings:
    """The sheet settings of one loop: with a revision state (``loopdocs.model.revisions``),
    the revision table is the loop's own history (or one row "not issued yet"); without
    one, the configured table."""
    from loopdocs.render.settings import Revision

    if state is None:
        return settings
    loop = state.loops.get(loop_id)
    if loop is None:
        rows = [Revision(rev=NOT_ISSUED, description="Not issued yet")]
    else:
        rows = [Revision(rev=h.rev, date=h.date, description=h.description, by=h.by, checked=h.checked,
                         approved=h.approved) for h in loop.history if not h.withdrawn]
    return settings.model_copy(update={"revisions": rows})


def sheet_status(findings: Sequence[Finding], settings: SheetSettings, loop_id: str) -> str:
    """How a loop's sheet is issued (``loopdocs.model.revisions`` status words): '' when
    it has no unaccepted error finding, ``errors released`` when the project file releases
    it with errors, else ``not for construction`` (the sheet carries that mark)."""
    from loopdocs.model.revisions import STATUS_NOT_FOR_CONSTRUCTION, STATUS_RELEASED

    if not has_blocking_error(findings):
        return ""
    return STATUS_RELEASED if settings.release_reason(loop_id) is not None else STATUS_NOT_FOR_CONSTRUCTION


@dataclass(frozen=True)
class Job:
    loop_id: str
    sheet_no: int
    sheet_count: int
    path: Path
    key: str
    findings: tuple[Finding, ...]
    settings: SheetSettings | None = None
    """The loop's own sheet settings (its revision table), when they differ from the project's."""
    marks: Any = None
    """The revision marks of the sheet (``loopdocs.draw.revision_marks.RevisionMarks``): its
    current revision and the tags changed in it; in the cache key through ``frame_record``."""

    @property
    def label(self) -> str:
        return f"loop {self.loop_id}"


@dataclass(frozen=True)
class FrontJob:
    """One part of the package's front matter: its HTML (``package.front_html``) and where
    its PDF goes; ``key`` is the digest of that HTML (plus the environment and PDF/A)."""

    part: int
    html: str
    path: Path
    key: str

    @property
    def name(self) -> str:
        """Its name in the manifest's artefacts."""
        return f"front-{self.part}"

    @property
    def label(self) -> str:
        return "the cover sheet and drawing list" if self.part == 0 else f"the drawing list (part {self.part + 1})"


# --- worker side -----------------------------------------------------------------------

_STATE: dict[str, Any] = {}


_PARENT_PID = 0
"""The build process, set before its workers are forked (they inherit it)."""


def _die_with_parent(parent_pid: int) -> None:
    """End this worker when the build process that started it ends, even by SIGKILL: on
    Linux the kernel sends SIGKILL on the parent's death (``prctl(PR_SET_PDEATHSIG)``,
    prctl(2)); elsewhere a daemon thread polls the parent's id once a second. A parent
    already gone before this ran ends the worker at once."""
    armed = False
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            PR_SET_PDEATHSIG = 1
            libc = ctypes.CDLL(None, use_errno=True)
            armed = libc.prctl(PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0) == 0
        except (OSError, AttributeError):
            armed = False
    if os.getppid() != parent_pid:
        os._exit(1)
    if not armed:
        def watch() -> None:
            while os.getppid() == parent_pid:
                time.sleep(1.0)
            os._exit(1)

        threading.Thread(target=watch, name="loopdocs-parent-watch", daemon=True).start()


def _init_worker(checked: Any, settings: SheetSettings, project_dir: Path, pdfa: bool,
                 splits_by_loop: dict[str, list[Any]] | None = None, fragment_dir: Path | None = None) -> None:
    """Pool initializer: die with the build process; keep the checked project, its split
    groups by loop (:func:`splits_by_loop`) and one font configuration for every job of
    this process (``pdf.start_worker``: one parsed stylesheet too); ``fragment_dir``:
    where each rendered PDF's join fragment is kept."""
    from loopdocs.render.pdf import quiet_weasyprint, start_worker

    if _PARENT_PID and os.getpid() != _PARENT_PID:  # a forked worker, not the build process itself
        signal.signal(signal.SIGTERM, signal.SIG_DFL)  # the build's own handler is for the build
        _die_with_parent(_PARENT_PID)
    quiet_weasyprint()
    start_worker()
    _STATE.clear()
    _STATE.update(checked=checked, settings=settings, project_dir=project_dir, pdfa=pdfa,
                  splits_by_loop=splits_by_loop, fragment_dir=fragment_dir)


def _splits(checked: Any) -> list[Any]:
    return list(getattr(checked, "splits", None) or [])


def splits_by_loop(splits: Sequence[Any]) -> dict[str, list[Any]]:
    """The split groups by the loop whose sheet shows them (``pieces.group_loop``), made
    once per build instead of each sheet scanning every group of the project."""
    from loopdocs.render.pieces import group_loop

    by_loop: dict[str, list[Any]] = {}
    for group in splits:
        by_loop.setdefault(group_loop(group), []).append(group)
    return by_loop


def _pieces(job: Job):
    """Draw and gather everything the sheet of ``job.loop_id`` shows."""
    from loopdocs.render.pieces import loop_pieces

    checked = _STATE["checked"]
    by_loop = _STATE.get("splits_by_loop")
    if by_loop is None:
        by_loop = _STATE["splits_by_loop"] = splits_by_loop(_splits(checked))
    return loop_pieces(checked.project, job.loop_id, job.findings, by_loop.get(job.loop_id, ()), _STATE, job.marks)


def _keep_fragment(path: Path) -> None:
    """Make the join fragment of the PDF just written (``package.cached_fragment``) here in
    the worker, so that joining the package only reads it."""
    folder = _STATE.get("fragment_dir")
    if folder is not None:
        from loopdocs.render.package import cached_fragment

        cached_fragment(path, folder)


def render_job(job: Job) -> tuple[str, float]:
    """Render one sheet to ``job.path`` (worker side). Returns (loop id, seconds)."""
    from loopdocs.render.pdf import JsonAttachment, sheet_pdf
    from loopdocs.render.sheet import SheetFrame

    started = time.perf_counter()
    checked, settings = _STATE["checked"], job.settings or _STATE["settings"]
    project: Project = checked.project
    pieces, record = _pieces(job)
    frame = SheetFrame(project.config.title_block, settings, job.sheet_no, job.sheet_count)
    attachments = []
    if _STATE["pdfa"]:
        data = json.dumps(record, indent=1, ensure_ascii=False, default=str).encode("utf-8")
        attachments.append(JsonAttachment(f"{job.path.stem}.json", data, f"Records of loop {job.loop_id} (loopdocs)"))
    pdf = sheet_pdf(pieces, frame, allowed_dirs=[_STATE["project_dir"]], pdfa=_STATE["pdfa"], attachments=attachments)

    def write(tmp: Path) -> None:
        if os.environ.get(CRASH_ENV) == job.loop_id:
            tmp.write_bytes(pdf[: len(pdf) // 2])
            os._exit(70)  # test hook: die mid-write, as a killed worker would
        tmp.write_bytes(pdf)
        shareable(tmp)

    atomic_write(job.path, write)
    _keep_fragment(job.path)
    return job.loop_id, time.perf_counter() - started


def render_front(job: FrontJob) -> tuple[str, float]:
    """Render one front-matter part to ``job.path`` (worker side). Returns (name, seconds)."""
    from loopdocs.render.pdf import html_to_pdf

    started = time.perf_counter()
    pdf = html_to_pdf(job.html, allowed_dirs=[_STATE["project_dir"]], pdfa=_STATE["pdfa"])
    atomic_write(job.path, lambda tmp: (tmp.write_bytes(pdf), shareable(tmp)))
    _keep_fragment(job.path)
    return job.name, time.perf_counter() - started


def _run(job: Job | FrontJob) -> tuple[str, float]:
    """The worker function of a job (looked up when called: tests replace ``render_job``)."""
    return render_job(job) if isinstance(job, Job) else render_front(job)


# --- main side ---------------------------------------------------------------------------

def _default_workers() -> int:
    return os.cpu_count() or 1


def _one_writer(run: Callable[..., BuildResult]) -> Callable[..., BuildResult]:
    """Around :func:`build`: the output folder locked for this build (``folder_lock``: a
    second build into it waits ``LOCK_WAIT_S`` seconds, then is refused in one line naming
    the other process), SIGTERM ending the build as Ctrl-C does (finished sheets recorded, no
    ``.part`` left), and a folder that cannot be written refused in one line."""

    @functools.wraps(run)
    def locked(path: Path, out_dir: Path, *args: Any, **kwargs: Any) -> BuildResult:
        out_dir = Path(out_dir)
        try:
            out_dir.mkdir(parents=True, exist_ok=True)
            with interrupt_on_terminate(), folder_lock(out_dir, wait_s=LOCK_WAIT_S):
                return run(path, out_dir, *args, **kwargs)
        except OSError as exc:
            if exc.errno not in (errno.EACCES, errno.EPERM, errno.EROFS):
                raise
            where = exc.filename or out_dir
            raise InputError(f"{where}: cannot be written ({exc.strerror or exc}); "
                             f"build into a folder you can write") from None

    return locked


@_one_writer
def build(
    path: Path,
    out_dir: Path,
    *,
    loops: Sequence[str] = (),
    workers: int | None = None,
    pdfa: bool = False,
    force: bool = False,
    progress: Callable[[int, int, str], None] | None = None,
    issue: str | None = None,
    issue_date: str | None = None,
) -> BuildResult:
    """Build the loop sheets of the project at ``path`` into ``out_dir``.

    ``loops`` selects loop ids (case-insensitive; the package is then not rewritten);
    ``force`` ignores the cache; ``progress(done, total, loop_id)`` is called as sheets
    finish. ``issue`` (a purpose of issue) gives the loops whose rows changed since their
    last issue their next revision dated ``issue_date`` (default: today) on their sheets;
    the state is not saved here (``loopdocs.commands.build.issue_build`` saves it once
    everything is written). Raises ``InputError`` for
    unreadable input or an unknown loop id, and ``BuildError`` when rendering could not complete.
    """
    from loopdocs.read.project_file import locate
    from loopdocs.draw.symbols import symbols_dir
    from loopdocs.core.names import unique_filenames
    started = time.perf_counter()
    return _build(path, out_dir, started, loops=loops, workers=workers, pdfa=pdfa, force=force,
                  progress=progress, issue=issue, issue_date=issue_date)


def _build(path: Path, out_dir: Path, started: float, *, loops: Sequence[str], workers: int | None, pdfa: bool,
           force: bool, progress: Callable[[int, int, str], None] | None, issue: str | None,
           issue_date: str | None) -> BuildResult:
    """:func:`build`, inside the output folder's lock."""
    from loopdocs.read.project_file import locate
    from loopdocs.draw.symbols import symbols_dir
    from loopdocs.core.names import unique_filenames
    from loopdocs.checks import check_project
    from loopdocs.render.pieces import loop_findings, loop_record
    from loopdocs.draw.revision_marks import revision_marks

    out_dir = Path(out_dir)
    paths = locate(Path(path))
    collecting = gc.isenabled()
    gc.disable()  # many small records that all live to the end: the cycle collector only costs time
    try:
        checked = check_project(Path(path))
    finally:
        if collecting:
            gc.enable()
    project = checked.project
    settings = sheet_settings(project.config.sheet, paths.config_file)
    result = BuildResult(out_dir=out_dir, findings=list(checked.findings))
    findings_by_loop = loop_findings(checked.findings, project)
    statuses = {loop_id: sheet_status(findings_by_loop[loop_id], settings, loop_id) for loop_id in project.loops}
    state, new_state = _revision_state(project, paths, loops, issue, issue_date, result, statuses)
    result.state, result.project, result.settings = new_state, project, settings

    all_loops = list(project.loops)
    if loops:
        by_upper = {loop_id.upper(): loop_id for loop_id in all_loops}
        unknown = [name for name in loops if name.upper() not in by_upper]
        if unknown:
            raise InputError(f"{paths.index}: no loop {', '.join(unknown)} in the index (loop ids look like {all_loops[0] if all_loops else 'T-101'})")
        selected = list(dict.fromkeys(by_upper[name.upper()] for name in loops))
    else:
        selected = all_loops

    loops_dir = out_dir / LOOPS_DIR
    cache_dir = out_dir / CACHE_DIR_NAME
    for folder in (out_dir, loops_dir, cache_dir, cache_dir / FRAGMENTS_DIR):
        folder.mkdir(parents=True, exist_ok=True)
        remove_partials(folder)

    names = unique_filenames(all_loops)
    groups_by_loop = splits_by_loop(_splits(checked))
    symbols = symbols_dir()
    environment = environment_digest(TEMPLATES_DIR, symbols, SOURCE_DIR)
    manifest = Manifest(out_dir)
    count = len(all_loops)

    jobs: list[Job] = []
    keys: dict[str, str] = {}
    links: dict[str, Any] = {}
    for number, loop_id in enumerate(all_loops, start=1):
        found = findings_by_loop[loop_id]
        record = loop_record(project, loop_id, found, groups_by_loop.get(loop_id, ()), links)
        own = loop_settings(settings, new_state, loop_id)
        changes = new_state.loops[loop_id].changed if new_state is not None and loop_id in new_state.loops else ()
        result.revisions[loop_id] = current_revision(project.config.title_block, own) if new_state is not None else ""
        key = loop_key(environment, record, frame_record(project, own, loop_id, number, count, pdfa, changes))
        keys[loop_id] = key
        target = loops_dir / f"{names[loop_id]}.pdf"
        result.loop_files[loop_id] = target
        if loop_id not in selected:
            continue
        if not force and manifest.fresh(loop_id, key) and manifest.entries[loop_id].file == str(target.relative_to(out_dir)):
            result.reused.append(loop_id)
        else:
            jobs.append(Job(loop_id, number, count, target, key, tuple(found), own if own is not settings else None,
                            revision_marks(result.revisions[loop_id], changes)))

    if not loops:  # sheets of loops that left the index
        for gone in sorted(set(manifest.entries) - set(all_loops)):
            entry = manifest.forget(gone)
            if entry is not None:
                remove_inside(out_dir, entry.file)  # only our own sheet inside the output folder
                result.removed.append(gone)

    front: list[FrontJob] = []
    if not loops:
        front = _front_jobs(project, settings, checked.findings, findings_by_loop, all_loops, result, pdfa, new_state)
    stale_front = [job for job in front if not manifest.artefact_fresh(job.name, job.key)]
    try:
        _render([*stale_front, *jobs], checked, settings, paths.folder, pdfa, workers or _default_workers(), manifest,
                result, progress, splits_by_loop=groups_by_loop, fragment_dir=cache_dir / FRAGMENTS_DIR)
    finally:
        remove_partials(loops_dir)
        remove_partials(cache_dir)
        manifest.save()

    if not loops:
        _package(project, settings, all_loops, keys, result, manifest, pdfa, front, new_state)
        manifest.save()
    result.seconds = time.perf_counter() - started
    return result


def _revision_state(project: Project, paths: Any, loops: Sequence[str], issue: str | None, issue_date: str | None,
                    result: BuildResult, statuses: dict[str, str]) -> tuple[Any, Any]:
    """The revision state as read from the project folder and as this build shows it
    (after the issue, when ``issue`` is given; ``result.issued`` lists what it issues,
    withdrawn sheets last). ``statuses``: loop -> its sheet's status (:func:`sheet_status`)."""
    from loopdocs.model.revisions import issue as issue_state, read_state, revision_scheme, RevisionState

    state = read_state(paths.folder)
    if issue is None:
        return state, state
    if loops:
        raise InputError("--issue issues the whole project: leave out --loop")
    scheme = revision_scheme(project.config.revisions, paths.config_file)
    date = issue_date or _today()
    new_state, issued = issue_state(state or RevisionState(), project, issue, date, scheme, statuses)
    result.issued = issued
    return state, new_state


def _today() -> str:
    import datetime

    return datetime.date.today().isoformat()


def _render(jobs: list[Job | FrontJob], checked: Any, settings: SheetSettings, project_dir: Path, pdfa: bool,
            workers: int, manifest: Manifest, result: BuildResult,
            progress: Callable[[int, int, str], None] | None, *,
            splits_by_loop: dict[str, list[Any]] | None = None, fragment_dir: Path | None = None) -> None:
    """Render ``jobs`` (sheets and front-matter parts), recording each in the manifest as
    it lands; ``progress`` counts the sheets."""
    total = sum(1 for job in jobs if isinstance(job, Job))
    done = 0
    last_save = time.monotonic()

    def finished(job: Job | FrontJob, seconds: float) -> None:
        nonlocal done, last_save
        if isinstance(job, FrontJob):
            manifest.record_artefact(job.name, job.key, job.path)
            result.front_rendered = True
        else:
            result.render_seconds[job.loop_id] = seconds
            manifest.record(job.loop_id, job.key, job.path)
            result.rendered.append(job.loop_id)
            done += 1
            if progress:
                progress(done, total, job.loop_id)
        if time.monotonic() - last_save >= MANIFEST_SAVE_S:
            manifest.save()
            last_save = time.monotonic()

    if not jobs:
        return
    initargs = (checked, settings, project_dir, pdfa, splits_by_loop, fragment_dir)
    if len(jobs) <= 1 or (workers <= 1 and len(jobs) <= SHEETS_PER_PROCESS):
        _init_worker(*initargs)
        for job in jobs:
            finished(job, (render_job(job) if isinstance(job, Job) else render_front(job))[1])
        return
    import multiprocessing

    _warm_up()
    context = multiprocessing.get_context("fork") if "fork" in multiprocessing.get_all_start_methods() else None
    count = max(1, min(workers, len(jobs)))
    wave = count * SHEETS_PER_PROCESS
    for start in range(0, len(jobs), wave):
        _render_wave(jobs[start:start + wave], count, context, initargs, result, finished)


def _warm_up() -> None:
    """Import weasyprint and lay out one line in this process before forking, so that every
    worker starts with the fonts already found (``pdf.warm_up``: once per process)."""
    from loopdocs.render.pdf import warm_up

    warm_up()


def _render_wave(jobs: list[Job | FrontJob], count: int, context: Any, initargs: tuple, result: BuildResult,
                 finished: Callable[[Job | FrontJob, float], None]) -> None:
    """One pool of ``count`` fresh worker processes for ``jobs`` (each worker renders about
    ``SHEETS_PER_PROCESS`` sheets, then the pool is shut down: the C libraries under
    weasyprint keep about 0.25 MB per sheet rendered, so long-lived workers would grow
    with the number of loops)."""
    global _PARENT_PID
    _PARENT_PID = os.getpid()
    with ProcessPoolExecutor(max_workers=count, mp_context=context, initializer=_init_worker, initargs=initargs) as pool:
        pending: dict[Future, Job | FrontJob] = {pool.submit(_run, job): job for job in jobs}
        try:
            while pending:
                complete, _ = wait(pending, return_when=FIRST_COMPLETED)
                for future in complete:
                    job = pending.pop(future)
                    try:
                        _, seconds = future.result()
                    except OSError as exc:
                        if exc.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
                            raise  # the output folder cannot be written: one line, see _one_writer
                        raise BuildError(f"{job.label}: the sheet could not be written ({exc})") from exc
                    except BrokenProcessPool:
                        raise BuildError(f"a rendering process died while building {job.label}; "
                                         f"{len(result.rendered)} sheet(s) finished and kept, run the build again") from None
                    except Exception as exc:
                        raise BuildError(f"{job.label}: the sheet could not be rendered ({type(exc).__name__}: {exc})") from exc
                    finished(job, seconds)
        except BaseException:
            for future in pending:
                future.cancel()
            pool.shutdown(wait=True, cancel_futures=True)
            raise


def _front_jobs(project: Project, settings: SheetSettings, findings: Sequence[Finding],
                findings_by_loop: dict[str, list[Finding]], all_loops: list[str], result: BuildResult,
                pdfa: bool, state: Any = None) -> list[FrontJob]:
    """The front matter as parts of ``LIST_ROWS_PER_PART`` rows of the drawing list (the
    first with the cover sheet), each keyed on its own HTML: a part is rendered again only
    when what it shows changed. With a revision state each sheet's line in the drawing
    list carries its own revision, and the cover lists the issues recorded in the state."""
    from loopdocs.model.revisions import STATUS_NOT_FOR_CONSTRUCTION, STATUS_RELEASED
    from loopdocs.render.package import LIST_ROWS_PER_PART, ListRow, front_html, issue_rows

    tb = project.config.title_block
    revision = current_revision(tb, settings)
    issues = issue_rows(state) if state is not None else None
    rows = []
    for number, loop_id in enumerate(all_loops, start=1):
        status = sheet_status(findings_by_loop[loop_id], settings, loop_id)
        rows.append(ListRow(number, drawing_number(tb.drawing_number, loop_id), loop_id,
                            project.loops[loop_id].service or "", result.revisions.get(loop_id) or revision,
                            status == STATUS_NOT_FOR_CONSTRUCTION, status == STATUS_RELEASED))
    counts = FindingCounts.of(findings)
    environment = environment_digest(TEMPLATES_DIR, None, SOURCE_DIR)
    jobs = []
    for part, first in enumerate(range(0, max(1, len(rows)), LIST_ROWS_PER_PART)):
        html = front_html(tb, settings, rows, open_errors=counts.error, open_warnings=counts.warning,
                          accepted=counts.accepted, first=first, count=LIST_ROWS_PER_PART, issues=issues)
        key = digest_json({"html": html, "part": part, "pdfa": pdfa, "environment": environment})
        jobs.append(FrontJob(part, html, result.out_dir / CACHE_DIR_NAME / FRONT_CACHE.format(part=part), key))
    return jobs


def _package(project: Project, settings: SheetSettings, all_loops: list[str], keys: dict[str, str],
             result: BuildResult, manifest: Manifest, pdfa: bool, front: Sequence[FrontJob], state: Any = None) -> None:
    """The joined package (rejoined when a sheet or a front-matter part changed), from the
    fragments the workers kept; front-matter parts no longer needed are deleted."""
    from loopdocs.render.package import issue_rows, write_package

    tb = project.config.title_block
    issues = issue_rows(state) if state is not None else None
    front_paths = [job.path for job in front]
    for stale in set(manifest.artefacts) - {job.name for job in front} - {"package"}:
        entry = manifest.artefacts.pop(stale)
        remove_inside(result.out_dir, entry.file)

    package_path = result.out_dir / PACKAGE_NAME
    package_key = digest_json({"front": [job.key for job in front], "loops": [keys[l] for l in all_loops],
                               "pdfa": pdfa, "title_block": tb.model_dump(mode="json"),
                               "sheet": settings.model_dump(mode="json"),
                               "revision": issues[-1].rev if issues else None})
    result.package = package_path
    if manifest.artefact_fresh("package", package_key) and not result.rendered and not result.front_rendered:
        return
    sheets = [(result.loop_files[l], _bookmark(l, project.loops[l].service)) for l in all_loops]
    fragments = result.out_dir / CACHE_DIR_NAME / FRAGMENTS_DIR
    result.package_pages = write_package(package_path, front_paths, sheets, title_block=tb, settings=settings,
                                         pdfa=pdfa, fragment_dir=fragments,
                                         revision=issues[-1].rev if issues else None)
    _prune_fragments(fragments, [*front_paths, *(p for p, _ in sheets)])
    manifest.record_artefact("package", package_key, package_path)


def _prune_fragments(folder: Path, sources: Sequence[Path]) -> None:
    """Delete kept fragments of sheets that are no longer in the package."""
    from loopdocs.render.package import FRAGMENT_SUFFIX

    wanted = {p.name + FRAGMENT_SUFFIX for p in sources}
    for fragment in folder.glob("*" + FRAGMENT_SUFFIX):
        if fragment.name not in wanted:
            fragment.unlink(missing_ok=True)


def _bookmark(loop_id: str, service: str | None) -> str:
    return f"{loop_id}: {service}" if service else loop_id
