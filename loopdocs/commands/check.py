"""``loopdocs check``: findings as a table grouped by loop, or as docs/design.md §9.1 JSON."""

from __future__ import annotations

import gc

import typer

from loopdocs.commands import FormatOpt, OutputFormat, PathArg, emit_json, fail_input
from loopdocs.core.errors import InputError


def check(path: PathArg, format: FormatOpt = OutputFormat.text) -> None:
    """Check the index: structure, loops and split-range consistency.

    Exit code 0 when no error was found, 1 when one was, 2 when the input could not be read.
    """
    from loopdocs.checks import check_project
    from loopdocs.commands.check_report import check_json, print_check

    # A one-shot command builds many small records that all live to the end: the cyclic
    # garbage collector only costs time here (about a third of a 10,000-row check).
    gc.disable()
    try:
        checked = check_project(path)
    except InputError as exc:
        fail_input(exc)
    if format is OutputFormat.json:
        emit_json(check_json(checked))
    else:
        print_check(checked)
    raise typer.Exit(1 if any(f.counts_as_error for f in checked.findings) else 0)


def register(app: typer.Typer) -> None:
    app.command()(check)
