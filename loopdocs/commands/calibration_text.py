"""Calibration tables for people: one terminal table per tag (rich).

A point read rising and falling has the same expected values both ways, so each point
is printed once; the workbook keeps both directions for the readings.
"""

from __future__ import annotations

from loopdocs.calc.tables import CalibrationTable, Point, display_decimals, ne43_note
from loopdocs.calibration.project_tables import CalibrationSet


def _num(value: float, unit: str, span: float = 0.0, resolve: float | None = None) -> str:
    text = f"{value:.{display_decimals(span, unit, resolve)}f}"
    return "0" + text[2:] if text.startswith("-0") and float(text) == 0 else text


def _sim_text(point: Point, span: float) -> str:
    parts = []
    for s in point.simulate:
        label = f" (RJ {s.reference_junction_c:g} degC)" if s.reference_junction_c not in (None, 0.0) else ""
        parts.append(f"{_num(s.value, s.unit, span)} {s.unit}{label}")
    return "\n".join(parts)


def table_rows(table: CalibrationTable) -> list[tuple[str, ...]]:
    """Distinct points in order (the falling repeats of a rising point dropped)."""
    rows, seen = [], set()
    tol = table.tolerance.output.value if table.tolerance else None
    in_span = abs(table.input_range[1].value - table.input_range[0].value)
    out_span = table.output_span
    for p in table.points:
        key = (p.percent, p.input.value, p.output.value)
        if key in seen:
            continue
        seen.add(key)
        unit = p.output.unit
        limits = (f"{_num(p.output.value - tol, unit, out_span, tol)} to {_num(p.output.value + tol, unit, out_span, tol)}"
                  if tol is not None else "")
        sim_span = in_span if p.simulate and p.simulate[0].unit == p.input.unit else 0.0
        rows.append((f"{p.percent:g}", f"{_num(p.input.value, p.input.unit, in_span)} {p.input.unit}",
                     _sim_text(p, sim_span), f"{_num(p.output.value, unit, out_span, tol)} {unit}", limits))
    return rows


def print_calibration(cset: CalibrationSet) -> None:
    from rich.console import Console
    from rich.table import Table

    from loopdocs.core.wording import CAUTION

    console = Console(highlight=False)
    console.print(f"[bold]{cset.project}[/] ({cset.index_path}): {len(cset.tables)} table(s)")
    basis = {"final element": "% travel", "fail action": "% travel held", "loop check": "% CO"}
    for t in cset.tables:
        lo, hi = t.input_range
        olo, ohi = t.output_range
        title = f"{t.tag} {t.kind}" + (f": {t.service}" if t.service else "")
        if t.kind == "fail action":
            title += f"  (hold {lo.value:.4g} {lo.unit}, remove the air: valve travel {t.points[0].output.value:g} %)"
        elif t.kind != "loop check":
            title += f"  [{lo.value:g} to {hi.value:g} {lo.unit} -> {olo.value:g} to {ohi.value:g} {olo.unit}]"
        table = Table(title=title, title_justify="left", expand=False)
        table.add_column(basis.get(t.kind, "% span"), justify="right")
        table.add_column("apply", justify="right")
        table.add_column("simulate / signal", justify="right")
        table.add_column("expect", justify="right")
        table.add_column("limits", justify="right")
        for row in table_rows(t):
            table.add_row(*row)
        caption = []
        if t.tolerance:
            tol = t.tolerance
            caption.append(
                f"tolerance {tol.percent_of_span:g} % of span"
                + (f" = +/-{tol.input.value:.4g} {tol.input.unit}" if tol.input else "")
                + f" = +/-{tol.output.value:.4g} {tol.output.unit} ({tol.basis})"
            )
        if t.ne43:
            caption.append(ne43_note(t.ne43))
        if t.dcs_scaling and t.kind == "final element":
            sc = t.dcs_scaling
            caption.append(f"control system: {sc.text()}")
        caption += list(t.notes)
        if caption:
            table.caption = "\n".join(caption)
            table.caption_justify = "left"
        console.print(table)
    if cset.skipped:
        console.print(f"[bold]{len(cset.skipped)} tag(s) without a table:[/]")
        for s in cset.skipped:
            console.print(f"  {s.tag}: {s.reason}")
    console.print(f"[bold red]CAUTION:[/] {CAUTION}")


def print_summary(cset: CalibrationSet) -> None:
    """What a written workbook holds, in a few lines: tables by kind, tags skipped."""
    from collections import Counter

    from rich.console import Console

    from loopdocs.core.wording import CAUTION

    console = Console(highlight=False)
    tags = {t.tag for t in cset.tables}
    kinds = Counter(t.kind for t in cset.tables)
    by_kind = ", ".join(f"{n} {kind}" for kind, n in kinds.items())
    console.print(f"[bold]{cset.project}[/] ({cset.index_path}): {len(cset.tables)} table(s) for {len(tags)} tag(s)"
                  + (f" ({by_kind})" if by_kind else ""))
    if cset.skipped:
        console.print(f"{len(cset.skipped)} tag(s) without a table (listed with the reason on the Contents sheet): "
                      + ", ".join(s.tag for s in cset.skipped[:10]) + (" ..." if len(cset.skipped) > 10 else ""))
    console.print(f"[bold red]CAUTION:[/] {CAUTION}")
