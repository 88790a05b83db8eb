"""Robustness of the outputs: one writer per output folder, workers that die with the build,
cache entries kept through a kill, interrupted and refused writes that leave nothing
behind, project-file and direction-control mistakes caught early. Every project and index
is made in the test; the table in docs/testing.md lists each case and what loopdocs does.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest
from typer.testing import CliRunner

from loopdocs.cli import app
from loopdocs.core.errors import InputError
from loopdocs.core.files import LOCK_NAME, FolderBusy, folder_lock, remove_stale_partials

sys.path.insert(0, str(Path(__file__).resolve().parent))
from test_build import small_project  # noqa: E402

REPO = Path(__file__).resolve().parents[1]
PYTHON = sys.executable
runner = CliRunner()
LINUX = sys.platform.startswith("linux")


def _dead_pid() -> int:
    """The id of a process that has just ended (reaped, so no process has it now)."""
    child = subprocess.Popen([PYTHON, "-c", "pass"])
    child.wait()
    return child.pid


def _start(code: str, *args: str) -> subprocess.Popen:
    return subprocess.Popen([PYTHON, "-c", textwrap.dedent(code), *args], cwd=REPO,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def _wait_for(predicate, timeout_s: float = 120.0, step_s: float = 0.05):
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        value = predicate()
        if value:
            return value
        time.sleep(step_s)
    raise AssertionError("timed out waiting")


def _partials(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.rglob("*.part"))


# --- 1. two builds into one output folder -----------------------------------------------------

def test_a_second_writer_waits_then_is_refused_naming_the_folder_and_the_pid(tmp_path):
    # exclusive creation of the lock file: POSIX open() with O_CREAT | O_EXCL fails when the
    # file exists (IEEE Std 1003.1, open()); the holder here is another live process
    out = tmp_path / "out"
    out.mkdir()
    holder = _start("""
        import sys, time
        from pathlib import Path
        from loopdocs.core.files import folder_lock
        with folder_lock(Path(sys.argv[1])):
            print("locked", flush=True)
            time.sleep(60)
    """, str(out))
    try:
        assert holder.stdout.readline().strip() == "locked"
        started = time.monotonic()
        with pytest.raises(FolderBusy) as refused:
            with folder_lock(out, wait_s=0.6, poll_s=0.1):
                pass
        waited = time.monotonic() - started
        message = str(refused.value)
        assert 0.6 <= waited < 5.0  # it waited a little before refusing
        assert str(out) in message and f"process {holder.pid}" in message and "\n" not in message
        assert isinstance(refused.value, InputError)  # exit 2, one line, on the command line
    finally:
        holder.kill()
        holder.wait()
    # the holder was killed (SIGKILL: no cleanup ran), so its lock file is still there ...
    lock = out / LOCK_NAME
    assert lock.read_text().split("\n")[0] == str(holder.pid)
    # ... and is taken over, since its process is gone
    with folder_lock(out, wait_s=0.0) as taken:
        assert taken.read_text().split("\n")[0] == str(os.getpid())
    assert not lock.exists()  # released on leaving


def test_build_command_refuses_a_folder_another_build_holds(tmp_path, monkeypatch):
    import loopdocs.render.builder as builder

    project = small_project(tmp_path / "p", ("T-3105",))
    out = tmp_path / "out"
    out.mkdir()
    holder = _start("""
        import sys, time
        from pathlib import Path
        from loopdocs.core.files import folder_lock
        with folder_lock(Path(sys.argv[1])):
            print("locked", flush=True)
            time.sleep(60)
    """, str(out))
    try:
        assert holder.stdout.readline().strip() == "locked"
        monkeypatch.setattr(builder, "LOCK_WAIT_S", 0.3)
        result = runner.invoke(app, ["build", str(project), "--out", str(out)])
        assert result.exit_code == 2, result.output
        lines = [line for line in result.output.splitlines() if line.strip()]
        assert len(lines) == 1 and f"process {holder.pid}" in lines[0] and str(out) in lines[0]
        assert not (out / "loops").exists()  # nothing written, no .part of the other build touched
    finally:
        holder.kill()
        holder.wait()


# --- 2. workers die with the build ------------------------------------------------------------

def _children(pid: int) -> set[int]:
    found: set[int] = set()
    try:
        for task in Path(f"/proc/{pid}/task").iterdir():
            text = (task / "children").read_text()
            found |= {int(p) for p in text.split()}
    except OSError:
        pass
    return found


def _running(pid: int) -> bool:
    """A process that exists and is not a zombie (an orphan reparented to an init that does
    not reap shows as Z: it has ended)."""
    try:
        stat = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return False
    return stat.rsplit(")", 1)[1].split()[0] != "Z"


@pytest.mark.skipif(not LINUX, reason="reads /proc to find the workers")
def test_killing_the_build_process_leaves_no_worker_running(tmp_path):
    # SIGKILL cannot be caught (POSIX signal.h): the workers end because the kernel sends them
    # SIGKILL when their parent dies (prctl(2) PR_SET_PDEATHSIG)
    project = small_project(tmp_path / "p", ("T-3110", "T-7401", "L-2105", "T-3105", "F-1201", "P-4120"))
    out = tmp_path / "out"
    build = _start("""
        import sys
        from loopdocs.render.builder import build
        build(sys.argv[1], sys.argv[2], workers=2)
    """, str(project), str(out))
    try:
        workers = _wait_for(lambda: {c for c in _children(build.pid) if _running(c)} if len(_children(build.pid)) >= 2 else None)
        assert len(workers) >= 2
        os.kill(build.pid, signal.SIGKILL)
        build.wait()
        left = _wait_for(lambda: not any(_running(w) for w in workers) or None, timeout_s=10)
        assert left
    finally:
        if build.poll() is None:
            build.kill()
            build.wait()
        for w in _children(build.pid):
            if _running(w):
                os.kill(w, signal.SIGKILL)


# --- 3. a kill during rendering keeps the cache entries of finished sheets --------------------

EXAMPLE_LOOPS = ("T-3110", "T-7401", "L-2105", "T-3105", "F-1201", "P-4120", "T-5310", "A-9101")


def _manifest_loops(out: Path) -> dict:
    try:
        return json.loads((out / ".loopdocs-cache" / "manifest.json").read_text())["loops"]
    except (OSError, ValueError, KeyError):
        return {}


@pytest.mark.parametrize("kill_with", [signal.SIGKILL, signal.SIGTERM])
def test_a_killed_build_keeps_the_sheets_it_finished(tmp_path, kill_with):
    from loopdocs.render.builder import build

    project = small_project(tmp_path / "p", EXAMPLE_LOOPS)
    out = tmp_path / "out"
    # one process renders the sheets one after the other; the manifest is saved as they land
    running = _start("""
        import sys
        from loopdocs.render.builder import build
        build(sys.argv[1], sys.argv[2], workers=1)
    """, str(project), str(out))
    try:
        _wait_for(lambda: len(_manifest_loops(out)) >= 2)
        os.kill(running.pid, kill_with)
        running.wait(timeout=60)
    finally:
        if running.poll() is None:
            running.kill()
            running.wait()
    kept = _manifest_loops(out)
    sheets = {p.name for p in (out / "loops").glob("*.pdf")}
    assert 2 <= len(kept) < len(EXAMPLE_LOOPS), "killed before the end, after two sheets were recorded"
    assert {Path(e["file"]).name for e in kept.values()} <= sheets
    if kill_with == signal.SIGTERM:
        # caught: the build ends as after Ctrl-C, every finished sheet recorded, no .part left
        assert {Path(e["file"]).name for e in kept.values()} == sheets
        assert _partials(out) == []
    again = build(project, out, workers=2)
    assert set(again.reused) == set(kept)  # the sheets recorded before the kill are not rendered again
    assert set(again.rendered) == set(EXAMPLE_LOOPS) - set(kept)
    assert _partials(out) == []


def test_manifest_saves_are_batched_by_time(tmp_path, monkeypatch):
    # 3,000 finished sheets within one save interval write the manifest once, not 3,000 times
    import loopdocs.render.builder as builder
    from loopdocs.render.cache import Manifest

    saves = []
    monkeypatch.setattr(Manifest, "save", lambda self: saves.append(len(self.entries)))
    monkeypatch.setattr(builder, "render_job", lambda job: (job.loop_id, 0.0))
    monkeypatch.setattr(builder, "_init_worker", lambda *a: None)
    monkeypatch.setattr(builder, "SHEETS_PER_PROCESS", 10_000)  # in this process, no pool
    manifest = Manifest(tmp_path)
    pdf = tmp_path / "x.pdf"
    pdf.write_bytes(b"%PDF")
    jobs = [builder.Job(f"T-{i}", i, 3000, pdf, "k", ()) for i in range(3000)]
    result = builder.BuildResult(out_dir=tmp_path)
    builder._render(jobs, None, None, tmp_path, False, 1, manifest, result, None)
    assert len(result.rendered) == 3000 and len(saves) <= 1


# --- 4. [sheet] mistakes are caught by check ----------------------------------------------------

@pytest.mark.parametrize("sheet, key", [
    ('size = "A5"', "sheet.size"),
    ('colour = "red"', "sheet.colour"),
    ('release_with_errors = { "T-3105" = " " }', "sheet.release_with_errors"),
])
def test_sheet_mistakes_are_one_line_in_check_and_calibrate(tmp_path, sheet, key):
    project = small_project(tmp_path / "p", ("T-3105",))
    config = project / "loopdocs.toml"
    text = config.read_text()
    text = text.replace('size = "A3"\n', "", 1)  # the example names its size; the mistake replaces it
    config.write_text(text.replace("[sheet]\n", f"[sheet]\n{sheet}\n", 1))
    for command in ("check", "calibrate"):
        result = runner.invoke(app, [command, str(project)])
        assert result.exit_code == 2, result.output
        lines = [line for line in result.output.splitlines() if line.strip()]
        assert len(lines) == 1 and f"[{key}" in lines[0] and "loopdocs.toml" in lines[0]


# --- 5. direction controls never reach file or sheet names -------------------------------------

BIDI = ["\u202a", "\u202b", "\u202c", "\u202d", "\u202e", "\u2066", "\u2067", "\u2068", "\u2069", "\u200e", "\u200f", "\u061c"]
"""Unicode Standard Annex #9: embeddings and overrides U+202A-U+202E, isolates U+2066-U+2069,
implicit marks LRM U+200E, RLM U+200F, ALM U+061C."""


@pytest.mark.parametrize("char", BIDI)
def test_direction_controls_never_reach_file_names(char):
    from loopdocs.core.names import safe_filename, unique_filenames

    text = f"T-1{char}fdp.exe"  # shows as T-1exe.pdf with U+202E (the trojan-source trick)
    for name in (safe_filename(text), unique_filenames([text, "T-1"])[text]):
        assert char not in name and all(ch.isascii() for ch in name)
    assert safe_filename(text) != safe_filename("T-1fdp.exe")  # the changed name is told apart


@pytest.mark.parametrize("char", BIDI)
def test_direction_controls_in_the_index_are_removed_with_a_finding_at_the_cell(tmp_path, char):
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.checks import check_project
    from loopdocs.sheets.technicians_workbook import write_workbook

    # CSV: an export from another system; the loop id carries the character
    path = tmp_path / "index.csv"
    path.write_text("Tag,Loop,Service,Signal,Range Low,Range High,Units,Accuracy %\n"
                    f"PT-2,P-2{char},Jacket{char} supply,4-20 mA,0,10,barg,0.25\n", encoding="utf-8")
    checked = check_project(path)
    found = [f for f in checked.findings if f.rule == "index.unprintable"]
    assert sorted(f.location.column for f in found) == ["B", "C"]  # Loop and Service columns
    assert all(f.location.row == 2 for f in found)
    assert checked.project.tags["PT-2"].service == "Jacket supply"
    out = tmp_path / "cal.xlsx"
    write_workbook(calibration_set(checked.project), out)
    import openpyxl

    names = openpyxl.load_workbook(out).sheetnames
    assert not any(char in name for name in names) and "P-2" in names


def test_a_direction_control_in_a_loop_key_is_dropped_from_the_sheet_name():
    # the workbook's own guard, for a key that did not come through the index reader
    from loopdocs.sheets.technicians_workbook import _sheet_name

    assert _sheet_name("P-2\u202e1", set()) == "P-21"


# --- 6. calibrate --out interrupted -------------------------------------------------------------

def _big_index(folder: Path, loops: int) -> Path:
    sys.path.insert(0, str(REPO / "benchmarks"))
    from make_index import write_index

    return write_index(folder / "index.xlsx", loops)


def test_calibrate_out_terminated_mid_write_leaves_no_part_file(tmp_path):
    index = _big_index(tmp_path, 400)
    out = tmp_path / "cal.xlsx"
    running = subprocess.Popen([str(Path(PYTHON).parent / "loopdocs"), "calibrate", str(index), "--out", str(out)],
                               cwd=REPO, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        _wait_for(lambda: list(tmp_path.glob(".cal.xlsx.*.part")), step_s=0.01)
        running.send_signal(signal.SIGTERM)
        running.wait(timeout=60)
    finally:
        if running.poll() is None:
            running.kill()
            running.wait()
    assert running.returncode != 0
    assert _partials(tmp_path) == [] and not out.exists()


def test_stale_part_files_of_a_killed_calibrate_are_removed_by_the_next_run(tmp_path):
    # SIGKILL runs no cleanup (POSIX): the next write of the same file removes what a dead
    # process left, and leaves what a running one is writing and anything not its own
    dead, alive = _dead_pid(), os.getpid()
    stale = tmp_path / f".cal.xlsx.{dead}.k3j2_x.part"
    busy = tmp_path / f".cal.xlsx.{alive}.a8d0qq.part"
    other = tmp_path / f".index.xlsx.{dead}.zz81xy.part"
    for path in (stale, busy, other):
        path.write_bytes(b"PK")
    assert remove_stale_partials(tmp_path / "cal.xlsx") == [stale]
    assert not stale.exists() and busy.exists() and other.exists()


def test_calibrate_out_removes_a_stale_part_file(tmp_path):
    project = small_project(tmp_path / "p", ("T-3105",))
    stale = tmp_path / f".cal.xlsx.{_dead_pid()}.q1w2e3.part"
    stale.write_bytes(b"PK")
    result = runner.invoke(app, ["calibrate", str(project), "--out", str(tmp_path / "cal.xlsx")])
    assert result.exit_code in (0, 1), result.output
    assert (tmp_path / "cal.xlsx").is_file() and not stale.exists()


# --- 7. an output folder that cannot be written ----------------------------------------------
# The tests run as root, whom a read-only folder (chmod 0555) does not stop: the write is made
# to fail with PermissionError instead, as writing into a read-only folder does for a user.

def test_calibrate_into_a_read_only_folder_is_one_line_and_leaves_no_part(tmp_path, monkeypatch):
    import loopdocs.core.files as files

    project = small_project(tmp_path / "p", ("T-3105",))
    real = files.shareable

    def refuse(path):
        real(path)
        raise PermissionError(13, "Permission denied", str(path))

    monkeypatch.setattr(files, "shareable", refuse)
    result = runner.invoke(app, ["calibrate", str(project), "--out", str(tmp_path / "cal.xlsx")])
    assert result.exit_code == 2, result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "cannot be written" in lines[0] and "Permission denied" in lines[0]
    assert _partials(tmp_path) == [] and not (tmp_path / "cal.xlsx").exists()


def test_build_into_a_read_only_folder_is_one_line(tmp_path, monkeypatch):
    import loopdocs.core.files as files

    project = small_project(tmp_path / "p", ("T-3105",))
    out = tmp_path / "out"

    real_open = os.open

    def refuse(path, *args, **kwargs):
        if str(path).endswith(LOCK_NAME):  # the first file a build creates in its folder
            raise PermissionError(13, "Permission denied", str(path))
        return real_open(path, *args, **kwargs)

    monkeypatch.setattr(files.os, "open", refuse)
    result = runner.invoke(app, ["build", str(project), "--out", str(out)])
    assert result.exit_code == 2, result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "cannot be written" in lines[0] and "Permission denied" in lines[0]


def test_a_sheet_that_cannot_be_written_is_one_line_and_leaves_no_part(tmp_path, monkeypatch):
    import loopdocs.render.builder as builder

    project = small_project(tmp_path / "p", ("T-3105",))
    out = tmp_path / "out"

    def refuse(path):
        raise PermissionError(13, "Permission denied", str(path))

    monkeypatch.setattr(builder, "shareable", refuse)  # the sheet's own write into loops/
    result = runner.invoke(app, ["build", str(project), "--out", str(out)])
    assert result.exit_code == 2, result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "cannot be written" in lines[0]
    assert _partials(out) == [] and not (out / LOCK_NAME).exists()


def test_the_workbook_is_streamed_not_held_in_memory(tmp_path):
    # before streaming, openpyxl held every cell: about 14 kB of Python memory per test point
    # (1,000 generated loops: 669 MB peak for 41,527 points, benchmarks/bench_workbook.py);
    # streamed, what stays is the tables' own presentation, under 4 kB a point
    import tracemalloc

    import openpyxl

    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.checks import check_project
    from loopdocs.sheets.technicians_workbook import RECORD_SHEET, write_workbook

    cset = calibration_set(check_project(_big_index(tmp_path, 100)).project)
    tracemalloc.start()
    try:
        counts = write_workbook(cset, tmp_path / "cal.xlsx")
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    points = sum(counts.values())
    assert points > 3000 and peak / points < 4096
    book = openpyxl.load_workbook(tmp_path / "cal.xlsx")
    assert book.sheetnames[0] == "Contents" and book.sheetnames[-1] == RECORD_SHEET
    assert book[RECORD_SHEET].sheet_state == "veryHidden" and book[RECORD_SHEET].max_row == points + 2
