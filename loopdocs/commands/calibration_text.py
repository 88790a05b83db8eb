"""Calibration tables for people: one terminal table per view (rich).

The views are those of ``loopdocs.calibration.presentation`` (the loop sheet and the
workbook show the same heads, numbers, tolerance and notes); a point read rising and
falling has the same expected values both ways, so each point is printed once (the
workbook keeps both directions for the readings), with the limits of its expected value.
"""

from __future__ import annotations

from typing import Any

from loopdocs.calibration.presentation import TableView, present_tables
from loopdocs.calibration.project_tables import CalibrationSet


def rich_table(view: TableView) -> Any:
    """The rich ``Table`` of one view: title (tag, kind, service, range), a column per
    view column plus the limits, caption with the tolerance and the notes."""
    from rich.markup import escape
    from rich.table import Table

    table = Table(title=escape(f"{view.title}  [{view.range_text}]"), title_justify="left", expand=False)
    for column in view.columns:
        table.add_column(escape(column.label), justify="right")
    with_limits = any(low for low, _ in view.limits)
    if with_limits:
        table.add_column(f"Limits {view.limits_unit}", justify="right")
    for row, (low, high) in zip(view.rows, view.limits):
        table.add_row(*row, *([f"{low} to {high}"] if with_limits else []))
    caption = [escape(f"tolerance {view.tolerance}")]
    caption += [f"[bold]{escape(n.text)}[/]" if n.emphasis else escape(n.text) for n in view.notes]
    table.caption = "\n".join(caption)
    table.caption_justify = "left"
    return table


def print_calibration(cset: CalibrationSet) -> None:
    from rich.console import Console
    from rich.markup import escape

    from loopdocs.core.wording import CAUTION

    console = Console(highlight=False)
    console.print(f"[bold]{escape(cset.project)}[/] ({escape(str(cset.index_path))}): {len(cset.tables)} table(s)")
    for view in present_tables(cset.tables):
        console.print(rich_table(view))
    if cset.skipped:
        console.print(f"[bold]{len(cset.skipped)} tag(s) without a table:[/]")
        for s in cset.skipped:
            console.print(f"  {escape(s.tag)}: {escape(s.reason)}")
    console.print(f"[bold red]CAUTION:[/] {CAUTION}")


def print_summary(cset: CalibrationSet) -> None:
    """What a written workbook holds, in a few lines: tables by kind, tags skipped."""
    from collections import Counter

    from rich.console import Console
    from rich.markup import escape

    from loopdocs.core.wording import CAUTION

    console = Console(highlight=False)
    tags = {t.tag for t in cset.tables}
    kinds = Counter(t.kind for t in cset.tables)
    by_kind = ", ".join(f"{n} {kind}" for kind, n in kinds.items())
    console.print(f"[bold]{escape(cset.project)}[/] ({escape(str(cset.index_path))}): {len(cset.tables)} table(s) for {len(tags)} tag(s)"
                  + (f" ({by_kind})" if by_kind else ""))
    if cset.skipped:
        console.print(f"{len(cset.skipped)} tag(s) without a table (listed with the reason on the Contents sheet): "
                      + ", ".join(escape(s.tag) for s in cset.skipped[:10]) + (" ..." if len(cset.skipped) > 10 else ""))
    console.print(f"[bold red]CAUTION:[/] {CAUTION}")
