"""``loopdocs check``: findings as a table grouped by loop, or as docs/design.md §9.1 JSON."""

from __future__ import annotations

import gc
import json
import sys
from typing import Any

import typer

from loopdocs.commands import FormatOpt, OutputFormat, PathArg, emit_json, fail_input
from loopdocs.core.errors import InputError


def check(path: PathArg, format: FormatOpt = OutputFormat.text) -> None:
    """Check the index: structure, loops and split-range consistency.

    Exit code 0 when no error was found, 1 when one was, 2 when the input could not be read.
    """
    # A one-shot command builds many small records that all live to the end: the cyclic
    # garbage collector only costs time here (about a third of a 10,000-row check).
    gc.disable()
    from loopdocs.read.background import start_reading

    try:
        # the index is read on a second thread while the checks and their libraries are imported
        pending = start_reading(path)
        from loopdocs.checks import check_project
        from loopdocs.commands.check_report import check_json, print_check

        checked = check_project(path, pending)
    except InputError as exc:
        fail_input(exc)
    if format is OutputFormat.json:
        report = check_json(checked)
        if sys.stdout.isatty():
            emit_json(report)
        else:
            write_json_parts(report)
    else:
        print_check(checked)
    raise typer.Exit(1 if any(f.counts_as_error for f in checked.findings) else 0)


def write_json_parts(report: dict[str, Any]) -> None:
    """``report`` as compact JSON on stdout, the same bytes as ``emit_json`` gives on a
    pipe (``json.dumps`` with its default separators), written one top-level member at a
    time: each member is encoded by the C encoder (``json.dump`` never uses it), and the
    whole text of a large report is never held at once (docs/performance.md)."""
    write = sys.stdout.write
    write("{")
    for i, (key, value) in enumerate(report.items()):
        write(f"{', ' if i else ''}{json.dumps(key)}: {json.dumps(value)}")
    write("}\n")


def register(app: typer.Typer) -> None:
    app.command()(check)
