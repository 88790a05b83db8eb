"""``loopdocs draw``: a loop diagram per loop and a range chart per split group, as SVG."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from loopdocs.commands import PathArg, fail_input
from loopdocs.core.errors import InputError

OutOpt = Annotated[Path, typer.Option("--out", "-o", help="Folder for the SVG files (created if missing).")]

#: Show a progress bar from this many loops on.
PROGRESS_FROM_LOOPS = 20


def draw(path: PathArg, out: OutOpt = Path("drawings")) -> None:
    """Draw every loop (NAME.loop.svg) and every split group's range chart (NAME.range.svg).

    Files whose content did not change are left as they are. Exit code 2 when the input could not be read.
    """
    from loopdocs.draw.export import drawing_files, write_drawings
    from loopdocs.checks import check_project

    try:
        checked = check_project(path)
    except InputError as exc:
        fail_input(exc)
    project = checked.project
    count = len(project.loops)
    if count >= PROGRESS_FROM_LOOPS:
        from rich.progress import Progress

        with Progress(transient=True) as bar:
            task = bar.add_task("drawing loops", total=count)
            files = drawing_files(project, checked.findings, progress=lambda _loop: bar.advance(task))
    else:
        files = drawing_files(project, checked.findings)
    try:
        written, unchanged = write_drawings(files, out)
    except OSError as exc:
        typer.echo(f"loopdocs: cannot write to {out}: {exc}", err=True)
        raise typer.Exit(2) from None
    diagrams = sum(1 for f in files if f.kind == "diagram")
    charts = len(files) - diagrams
    note = f" ({len(unchanged)} unchanged)" if unchanged else ""
    typer.echo(f"{diagrams} loop diagrams and {charts} range charts in {out}{note}")


def register(app: typer.Typer) -> None:
    app.command()(draw)
