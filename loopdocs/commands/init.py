"""``loopdocs init DIR``: a starter project."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from loopdocs.commands import fail_input
from loopdocs.core.errors import InputError


def init(directory: Annotated[Path, typer.Argument(help="Folder to create the starter project in.")]) -> None:
    """Write a starter project: an index workbook with the default headers, drop-down lists and header notes, and a commented loopdocs.toml."""
    from loopdocs.sheets.index_template import write_starter

    try:
        written = write_starter(directory)
    except InputError as exc:
        fail_input(exc)
    for path in written:
        typer.echo(f"wrote {path}")


def register(app: typer.Typer) -> None:
    app.command()(init)
