"""Check results for people (a terminal table grouped by loop) and for tools (DESIGN §5 JSON)."""

from __future__ import annotations

from itertools import groupby
from typing import Any

from loopdocs.findings import FindingCounts, Severity
from loopdocs.pipeline import Checked

CAUTION = (
    "Values are to be confirmed against the issued design. Isolate and verify before any "
    "work on live plant; local codes, site procedures and licensed engineering practice prevail."
)


def check_json(checked: Checked) -> dict[str, Any]:
    """The ``check --format json`` object: findings, splits, summary."""
    counts = FindingCounts.of(checked.findings)
    return {
        "findings": [f.as_json() for f in checked.findings],
        "splits": [group.as_json() for group in getattr(checked, "splits", [])],
        "summary": {
            **counts.as_json(),
            "tags": len(checked.project.tags),
            "loops": len(checked.project.loops),
        },
    }


_STYLE = {Severity.ERROR: "bold red", Severity.WARNING: "yellow", Severity.INFO: "cyan"}


def print_check(checked: Checked) -> None:
    from rich.console import Console
    from rich.table import Table

    console = Console(highlight=False)
    project = checked.project
    console.print(f"[bold]{project.index_path}[/] sheet {project.sheet!r}: {len(project.tags)} tags in {len(project.loops)} loops")
    for loop_id, group in groupby(checked.findings, key=lambda f: f.loop or ""):
        findings = list(group)
        service = project.loops[loop_id].service if loop_id in project.loops else None
        title = f"loop {loop_id}" + (f": {service}" if service else "") if loop_id else "project"
        table = Table(title=title, title_justify="left", show_lines=False, expand=False)
        table.add_column("severity")
        table.add_column("rule")
        table.add_column("cell")
        table.add_column("message", overflow="fold")
        for f in findings:
            severity = f"[{_STYLE[f.severity]}]{f.severity.value}[/]" + (" (accepted)" if f.accepted else "")
            message = f.message + (f"\naccepted by {f.accepted.by}: {f.accepted.reason}" if f.accepted else "")
            table.add_row(severity, f.rule, str(f.location) if f.location else "", message)
        console.print(table)
    counts = FindingCounts.of(checked.findings)
    console.print(
        f"[bold]{counts.error} error(s), {counts.warning} warning(s), {counts.info} info, "
        f"{counts.accepted} accepted[/]"
    )
