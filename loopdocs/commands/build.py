"""``loopdocs build PATH --out DIR [--issue PURPOSE]``: the loop sheets and the issue
package as PDF; with ``--issue`` the changed loops get their next revision, the transmittal
list is written and the revision state saved (docs/design.md §12)."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from loopdocs.commands import PathArg, fail_input
from loopdocs.core.errors import InputError

EXIT_BUILD_FAILED = 3


def issue_build(path: Path, out_dir: Path, purpose: str, date: str | None = None, **options):  # noqa: ANN003, ANN201
    """Build and issue: the sheets with the new revisions, the package, the transmittal list
    (``OUT/transmittal.xlsx`` and ``.pdf``, when a sheet was issued), then the revision state
    ``loopdocs-revisions.toml`` in the project folder, written last and atomically, so a
    build that fails leaves the state as it was. Returns the ``BuildResult``."""
    from loopdocs.model.revisions import write_state
    from loopdocs.read.project_file import locate
    from loopdocs.render.builder import build as run_build
    from loopdocs.sheets.transmittal import write_transmittal

    result = run_build(path, out_dir, issue=purpose, issue_date=date, **options)
    if result.issued:
        folder = locate(Path(path)).folder
        result.transmittal = write_transmittal(Path(out_dir), result.project, result.settings, result.issued,
                                               result.state, pdfa=options.get("pdfa", False), project_dir=folder)
        result.state_file = write_state(folder, result.state)
    return result


def _issue_date(value: Optional[str]) -> Optional[str]:
    if value is None:
        return None
    import datetime

    try:
        return datetime.date.fromisoformat(value.strip()).isoformat()
    except ValueError:
        raise typer.BadParameter(f"{value!r} is not a date like 2026-12-24") from None


def build(
    path: PathArg,
    out: Annotated[Path, typer.Option("--out", "-o", help="Output folder (created if missing).")],
    loop: Annotated[Optional[list[str]], typer.Option(
        "--loop", "-l", help="Build only this loop (repeat for more); the package is then left as it is.")] = None,
    workers: Annotated[Optional[int], typer.Option(
        "--workers", "-w", min=1, help="Rendering processes (default: the number of CPU cores).")] = None,
    pdfa: Annotated[bool, typer.Option(
        "--pdfa", help="Write PDF/A-3b with each loop's records attached to its sheet as JSON.")] = False,
    force: Annotated[bool, typer.Option("--force", help="Render every sheet again, ignoring the cache.")] = False,
    issue: Annotated[Optional[str], typer.Option(
        "--issue", help="Issue the sheets for this purpose (for example \"Issued for construction\"): loops changed "
                        "since their last issue get their next revision; writes the transmittal list and "
                        "loopdocs-revisions.toml.")] = None,
    date: Annotated[Optional[str], typer.Option(
        "--date", help="Date of the issue, YYYY-MM-DD (default: today).", callback=_issue_date)] = None,
) -> None:
    """Render one loop sheet per loop and join them into one bookmarked package.

    Sheets whose records, findings, config and templates did not change since the last build are reused from the output folder (OUT/loops/LOOP.pdf, package OUT/loop-sheets.pdf).

    Exit code 0 when no error was found, 1 when an error was found (those sheets are marked NOT FOR CONSTRUCTION), 2 when the input could not be read, 3 when rendering could not complete.
    """
    from rich.console import Console

    from loopdocs.render.builder import BuildError, build as run_build

    console = Console(stderr=True, highlight=False)
    try:
        with _progress(console) as update:
            options = dict(loops=loop or (), workers=workers, pdfa=pdfa, force=force, progress=update)
            if issue is not None:
                result = issue_build(path, out, issue, date, **options)
            else:
                result = run_build(path, out, **options)
    except InputError as exc:
        fail_input(exc)
    except BuildError as exc:
        typer.echo(f"loopdocs: build failed: {exc}", err=True)
        raise typer.Exit(EXIT_BUILD_FAILED)
    except KeyboardInterrupt:
        typer.echo("loopdocs: build interrupted; finished sheets are kept, run the build again", err=True)
        raise typer.Exit(130)
    blocked = sum(1 for f in result.findings if f.counts_as_error)
    parts = [f"{len(result.rendered)} sheet(s) rendered", f"{len(result.reused)} reused"]
    if result.removed:
        parts.append(f"{len(result.removed)} removed")
    typer.echo(f"{', '.join(parts)} in {result.seconds:.1f} s")
    from loopdocs.render.pdf import subsetting_notes  # one line when fonts are subset the slow way
    for note in subsetting_notes(result.rendered):
        typer.echo(note)
    if result.package is not None:
        pages = f" ({result.package_pages} pages)" if result.package_pages else " (unchanged)"
        typer.echo(f"package: {result.package}{pages}")
    typer.echo(f"sheets:  {result.out_dir / 'loops'}")
    if issue is not None:
        _report_issue(result)
    if blocked:
        typer.echo(f"{blocked} unresolved error finding(s): the sheets concerned are marked NOT FOR CONSTRUCTION "
                   f"(run 'loopdocs check {path}' for the list)")
    raise typer.Exit(1 if result.has_errors else 0)


def _report_issue(result) -> None:  # noqa: ANN001
    """What the issue did: the sheets issued with their revisions, the sheets withdrawn,
    one line per sheet issued for construction while marked NOT FOR CONSTRUCTION; or that
    nothing changed."""
    from loopdocs.model.revisions import STATUS_NOT_FOR_CONSTRUCTION, is_for_construction, revision_scheme

    if not result.issued:
        typer.echo("issue: no loop changed since its last issue; nothing issued, revision state left as it was")
        return
    sheets = [s for s in result.issued if not s.withdrawn]
    withdrawn = [s for s in result.issued if s.withdrawn]
    if sheets:
        shown = ", ".join(f"{s.loop} {s.previous + ' -> ' if s.previous else ''}{s.revision}" for s in sheets[:12])
        more = f" and {len(sheets) - 12} more" if len(sheets) > 12 else ""
        typer.echo(f"issued:  {len(sheets)} sheet(s): {shown}{more}")
    if withdrawn:
        shown = ", ".join(f"{s.loop} (last revision {s.revision})" for s in withdrawn[:12])
        more = f" and {len(withdrawn) - 12} more" if len(withdrawn) > 12 else ""
        typer.echo(f"withdrawn: {len(withdrawn)} sheet(s) of loops removed from the index: {shown}{more}")
    purpose = result.state.loops[result.issued[0].loop].history[-1].purpose
    if is_for_construction(purpose, revision_scheme(result.project.config.revisions)):
        marked = [s for s in sheets if s.status == STATUS_NOT_FOR_CONSTRUCTION]
        for s in marked[:MARKED_SHOWN]:
            typer.echo(f"caution: {s.loop} revision {s.revision} issued '{purpose}' but marked NOT FOR CONSTRUCTION "
                       f"(unresolved error findings; the transmittal says so)")
        if len(marked) > MARKED_SHOWN:
            typer.echo(f"caution: {len(marked) - MARKED_SHOWN} more sheet(s) issued marked NOT FOR CONSTRUCTION: "
                       f"see the Status column of the transmittal")
    for path in result.transmittal:
        typer.echo(f"transmittal: {path}")
    typer.echo(f"revision state: {result.state_file}")


MARKED_SHOWN = 20
"""Sheets issued for construction while marked NOT FOR CONSTRUCTION named one a line; the rest counted."""


class _progress:
    """A rich progress bar on stderr, fed by ``update(done, total, loop_id)``."""

    def __init__(self, console) -> None:  # noqa: ANN001
        self.console = console
        self.bar = None
        self.task = None

    def __enter__(self):
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeRemainingColumn

        self.bar = Progress(TextColumn("rendering"), BarColumn(), MofNCompleteColumn(), TimeRemainingColumn(),
                            TextColumn("{task.description}"), console=self.console, transient=True)
        self.bar.__enter__()
        return self.update

    def update(self, done: int, total: int, loop_id: str) -> None:
        if self.task is None:
            self.task = self.bar.add_task("", total=total)
        from rich.markup import escape

        self.bar.update(self.task, completed=done, description=escape(loop_id))

    def __exit__(self, *exc) -> None:  # noqa: ANN002
        self.bar.__exit__(*exc)


def register(app: typer.Typer) -> None:
    app.command()(build)
