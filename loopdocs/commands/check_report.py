"""Check results for people (a terminal table grouped by loop) and for tools (docs/design.md §9.1 JSON)."""

from __future__ import annotations

from itertools import groupby
from typing import Any

from loopdocs.checks import Checked
from loopdocs.core.findings import FindingCounts, Severity

def check_json(checked: Checked) -> dict[str, Any]:
    """The ``check --format json`` object: findings, splits, summary."""
    counts = FindingCounts.of(checked.findings)
    return {
        "findings": [f.as_json() for f in checked.findings],
        "splits": [group.as_json() for group in checked.splits if group.is_split],
        "summary": {
            **counts.as_json(),
            "tags": len(checked.project.tags),
            "loops": len(checked.project.loops),
        },
    }


_STYLE = {Severity.ERROR: "bold red", Severity.WARNING: "yellow", Severity.INFO: "cyan"}


def print_check(checked: Checked) -> None:
    from rich.console import Console
    from rich.markup import escape
    from rich.table import Table

    console = Console(highlight=False)
    project = checked.project
    console.print(f"[bold]{escape(str(project.index_path))}[/] sheet {escape(repr(project.sheet))}: {len(project.tags)} tags in "
                  f"{len(project.loops)} loops")
    for loop_id, group in groupby(checked.findings, key=lambda f: f.loop or ""):
        findings = list(group)
        service = project.loops[loop_id].service if loop_id in project.loops else None
        title = f"loop {loop_id}" + (f": {service}" if service else "") if loop_id else "project"
        table = Table(title=escape(title), title_justify="left", show_lines=False, expand=False)
        table.add_column("severity")
        table.add_column("rule")
        table.add_column("cell")
        table.add_column("message", overflow="fold")
        for f in findings:
            severity = f"[{_STYLE[f.severity]}]{f.severity.value}[/]" + (" (accepted)" if f.accepted else "")
            message = f.message + (f"\naccepted by {f.accepted.by}: {f.accepted.reason}" if f.accepted else "")
            table.add_row(severity, f.rule, escape(str(f.location)) if f.location else "", escape(message))
        console.print(table)
    print_splits(console, checked)
    counts = FindingCounts.of(checked.findings)
    console.print(
        f"[bold]{counts.error} error(s), {counts.warning} warning(s), {counts.info} info, "
        f"{counts.accepted} accepted[/]"
    )


def _method_text(group: Any) -> str:
    from loopdocs.core.formatting import fmt_range

    spans = {e.span for e in group.elements}
    span = next(iter(spans)) if len(spans) == 1 else None
    on = f" {fmt_range(span.low, span.high, span.unit)}" if span else ""
    if group.method == "positioner":
        return f"split in the positioners (one shared{on} output)"
    if group.method == "pneumatic":
        via = ", ".join(c.tag for c in group.converters)
        return f"pneumatic split on{on}" + (f" via {via}" if via else "")
    if group.method == "dcs":
        return "split in the control system (one output per element)"
    return "split in more than one place"


def _settings_cells(e: Any) -> tuple[str, str]:
    """(as set, what loopdocs recommends) for one element of a split."""
    from loopdocs.core.formatting import fmt_pct, fmt_range

    now = fmt_range(*e.input_range, e.input_units) if e.input_range else "not given"
    if e.required_input_range is None:
        needed = "-"
    else:
        needed = fmt_range(*e.required_input_range, e.input_units)
    if e.method == "dcs":
        now = f"positioner {now}"
        needed = f"positioner {needed}"
        scaling = e.required_dcs_scaling
        if scaling is not None:
            needed += f"; {scaling.text()}"
    return now, needed


def print_splits(console: Any, checked: Checked) -> None:
    """A summary per split group: arrangement, segments, gaps and overlaps, settings."""
    from rich.markup import escape
    from rich.table import Table

    from loopdocs.core.formatting import fmt_pct

    splits = [group for group in checked.splits if group.is_split]
    if not splits:
        return
    console.print(f"[bold]Split ranges[/] ({len(splits)})")
    for group in splits:
        table = Table(
            title=escape(f"{group.controller} (loop {group.loop}): {group.mode}, {_method_text(group)}"),
            title_justify="left", expand=False,
        )
        for column in ("element", "CO %", "travel %", "set", "recommended"):
            table.add_column(column, overflow="fold")
        for e in group.elements:
            now, needed = _settings_cells(e)
            travel = f"{fmt_pct(e.travel_start_pct)} -> {fmt_pct(e.travel_end_pct)}"
            if e.intent_source != "stated":
                travel += f" ({'from settings' if e.intent_source == 'settings' else 'default'})"
            segment = f"{fmt_pct(e.co_start_pct)} to {fmt_pct(e.co_end_pct)}"
            table.add_row(escape(e.tag), segment if e.intent is not None else f"{segment} (invalid)", travel,
                          escape(now), escape(needed))
        notes = [f"{e.tag} is invalid and not placed in the split: {e.intent_problem}" for e in group.invalid]
        for low, high in group.uncovered_co:
            if high - low > 0.01:
                who = "no valid element moves" if group.invalid else "nothing moves"
                notes.append(f"{who} over CO {fmt_pct(low)} to {fmt_pct(high)} % ({fmt_pct(high - low)} %)")
        for first, second, relation in group.pairs:
            if relation.overlap_pct > 0.01 and relation.ranges != "shared":
                notes.append(f"{first.tag} and {second.tag} overlap by {fmt_pct(relation.overlap_pct)} % CO")
        advice = group.capacity_advice
        if advice is not None:
            ratios = ", ".join(f"{r:.2f}" for r in advice.ratios_now)
            if advice.recommended_pct is not None:
                kind = "in proportion to Cv" if advice.is_proportional else "recommended (smallest gain change)"
                text = f"boundaries {kind}: " + ", ".join(f"{fmt_pct(b)} %" for b in advice.recommended_pct)
                text += f"; gain ratio across each boundary now: {ratios}"
                if advice.improves:
                    text += ", with these: " + ", ".join(f"{r:.2f}" for r in advice.best_ratios)
            else:
                text = f"no boundaries do better than the ones set; gain ratio across each boundary now: {ratios}"
            notes.append(text)
        if notes:
            table.caption = escape("; ".join(notes))
            table.caption_justify = "left"
        console.print(table)
