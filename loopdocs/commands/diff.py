"""``loopdocs diff OLD NEW``: what changed between two issues of the index (tags added,
removed, renamed and changed, the loops they touch, the split groups and calibration
tables that change as a consequence), as a table or as one JSON object."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Any, Optional

import typer

from loopdocs.commands import FormatOpt, OutputFormat, emit_json, fail_input
from loopdocs.core.errors import InputError

OldArg = Annotated[Path, typer.Argument(help="The earlier issue: index file (.xlsx, .xlsm, .csv) or project folder holding loopdocs.toml.")]
NewArg = Annotated[Path, typer.Argument(help="The later issue: index file (.xlsx, .xlsm, .csv) or project folder holding loopdocs.toml.")]

OutOpt = Annotated[Optional[Path], typer.Option(
    "--out", "-o", help="Also write the change report (.xlsx): the list of changes, and the rows of the tags concerned with the changed cells highlighted.")]


def diff(old: OldArg, new: NewArg, format: FormatOpt = OutputFormat.text, out: OutOpt = None) -> None:
    """Compare two issues of the index: tags added, removed and renamed, the cells changed on each tag with old and new values, the loops affected, and the split groups and calibration tables that change as a consequence.

    A tag counts as renamed when a removed and an added tag have every other cell equal (the row number aside).

    Exit code 0 when the two issues do not differ, 1 when they do, 2 when an input could not be read or the report could not be written.
    """
    import gc

    gc.disable()  # a one-shot command: its records all live to the end (as in ``check``)
    from loopdocs.calibration.table_changes import changed_tables
    from loopdocs.model.changes import compare_projects
    from loopdocs.model.loading import load_pair

    try:
        before, after = load_pair(old, new)
    except InputError as exc:
        fail_input(exc)
    changes = compare_projects(before, after)
    calibration = changed_tables(before, after, {r.old: r.new for r in changes.renamed}, changes.touched)
    if out is not None:
        try:
            _write_report(out, changes, calibration, before, after, [old, new])
        except InputError as exc:
            fail_input(exc)
    if format is OutputFormat.json:
        emit_json(diff_json(changes, calibration, before, after))
    else:
        print_diff(changes, calibration, before, after, old, new)
    if out is not None:
        typer.echo(f"wrote {out}", err=format is OutputFormat.json)
    raise typer.Exit(1 if changes.any or calibration else 0)


def _write_report(out: Path, changes: Any, calibration: list[tuple[str, str]], before: Any, after: Any,
                  inputs: list[Path]) -> None:
    """The ``.xlsx`` change report; never over one of the inputs (``InputError`` otherwise)."""
    from loopdocs.core.files import refuse_overwriting
    from loopdocs.read.project_file import locate
    from loopdocs.sheets.change_report import write_change_report

    if Path(out).suffix.lower() != ".xlsx":
        raise InputError(f"--out {out}: the change report is an .xlsx file; name it so")
    sources: list[Path] = []
    for given in inputs:
        paths = locate(Path(given))
        sources += [paths.index, *([paths.config_file] if paths.config_file else [])]
    refuse_overwriting(out, sources)
    try:
        write_change_report(out, changes, calibration, before, after)
    except OSError as exc:
        raise InputError(f"{out}: cannot be written ({exc.strerror or exc})") from None


def diff_json(changes: Any, calibration: list[tuple[str, str]], before: Any, after: Any) -> dict[str, Any]:
    """``{added, removed, renamed, changed, loops, splits, calibration}``; every tag and
    changed cell with the ``cell`` where it is in its issue (the later one, the earlier for
    a removed tag: ``model.changes.cell_of``)."""
    from loopdocs.model.changes import cell_of

    return {
        "added": [{"tag": t.tag, "loop": t.loop, "cell": cell_of(after, t.tag)} for t in changes.added],
        "removed": [{"tag": t.tag, "loop": t.loop, "cell": cell_of(before, t.tag)} for t in changes.removed],
        "renamed": [{**r.as_json(), "cell": cell_of(after, r.new)} for r in changes.renamed],
        "changed": [{"tag": c.tag, "loop": c.loop,
                     "fields": [{**f.as_json(), "cell": cell_of(after, c.tag, f.key)} for f in c.fields]}
                    for c in changes.changed],
        "loops": list(changes.loops),
        "splits": [s.as_json() for s in changes.splits],
        "calibration": [{"tag": tag, "kind": kind} for tag, kind in calibration],
    }


def print_diff(changes: Any, calibration: list[tuple[str, str]], before: Any, after: Any, old: Path, new: Path) -> None:
    from rich.console import Console
    from rich.markup import escape
    from rich.table import Table

    from loopdocs.model.changes import cell_of

    console = Console(highlight=False)
    console.print(f"[bold]{escape(str(old))}[/] -> [bold]{escape(str(new))}[/]")
    if not (changes.any or calibration):
        console.print("No differences.")
        return
    table = Table(title="Tags", title_justify="left")
    for head in ("Change", "Tag", "Loop", "Column", "Old", "New", "Cell"):
        table.add_column(head)
    for t in changes.added:
        table.add_row("added", escape(t.tag), escape(t.loop), "", "", "", escape(cell_of(after, t.tag)))
    for t in changes.removed:
        table.add_row("removed", escape(t.tag), escape(t.loop), "", "", "", escape(cell_of(before, t.tag)) + " (earlier)")
    for r in changes.renamed:
        table.add_row("renamed", escape(r.new), escape(r.new_loop), "Tag", escape(r.old), escape(r.new),
                      escape(cell_of(after, r.new)))
    for c in changes.changed:
        for i, f in enumerate(c.fields):
            table.add_row("changed" if i == 0 else "", escape(c.tag) if i == 0 else "", escape(c.loop) if i == 0 else "",
                          escape(f.column), escape(f.old), escape(f.new), escape(cell_of(after, c.tag, f.key)))
    if table.row_count:
        console.print(table)
    if changes.splits:
        splits = Table(title="Split groups", title_justify="left")
        for head in ("Controller", "Loop", "What", "Old", "New"):
            splits.add_column(head)
        for s in changes.splits:
            splits.add_row(escape(s.controller), escape(s.loop), escape(s.what), escape(s.old), escape(s.new))
        console.print(splits)
        console.print("These are the settings each split needs; [bold]loopdocs check[/] of the later issue names "
                      "the index cells that do not hold them yet.")
    if calibration:
        console.print("Calibration tables changed: " + escape(", ".join(f"{tag} ({kind})" for tag, kind in calibration)))
    console.print(f"Loops affected: {escape(', '.join(changes.loops)) or 'none'}")


def register(app: typer.Typer) -> None:
    app.command()(diff)
