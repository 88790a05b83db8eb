"""Calibration tables as the sheet prints them: column heads and rows of text.

Input: ``loopdocs.calc.tables.CalibrationTable`` (made by ``loopdocs.calibration.project_tables``).
Nothing is computed here beyond layout; decimals come from ``display_decimals`` and the
NAMUR NE 43 line from ``ne43_note`` of the calibration module, so the sheet, the
terminal and the workbook show the same figures.

- a point read rising and again falling has the same values: printed once (the sheet
  says every point is read rising, then falling);
- the ``%`` column is left out when it repeats the input (``% CO``) or the output
  (``% travel``) column;
- the loop checks of one split group (same CO points) are printed side by side in one
  table: CO, the signal at the elements (one column when they share it), and the
  expected travel of each element;
- minus signs are typographic.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from loopdocs.calc.tables import DP_BASIS, DP_PCT_UNIT, CalibrationTable, Point, display_decimals, ne43_note

PERCENT_HEADS = {"final element": "% travel", "fail action": "% travel held", "loop check": "% CO"}
LOOP_CHECK = "loop check"
SIGNAL_BASIS = "signal at the element"


TABLE_TEXT_MM = 2.5
"""Font size of the calibration tables (dense tables: 1.82 mm capitals)."""
CELL_PAD_MM = 2.6
"""Left and right cell padding plus the rule, per column (``sheet.css`` ``table.dense``)."""
MIN_TABLE_MM = 56.0
"""Narrowest table, so that its caption and notes do not wrap into a tall column."""


@dataclass(frozen=True)
class DisplayTable:
    """One printed calibration table."""

    tag: str
    title: str
    heads: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    tolerance: str = ""
    notes: tuple[str, ...] = ()

    @property
    def column_widths_mm(self) -> tuple[float, ...]:
        """Each column as wide as its widest cell (a head may break at its spaces into
        two lines), measured with the font's advance widths."""
        from loopdocs.draw.text import text_width_mm, wrap_text

        widths = []
        for i, head in enumerate(self.heads):
            natural = text_width_mm(head, TABLE_TEXT_MM, bold=True)
            two_lines = max(text_width_mm(line, TABLE_TEXT_MM, bold=True)
                            for line in wrap_text(head, natural / 2 + 3.0, TABLE_TEXT_MM, bold=True)[:2])
            cells = max((text_width_mm(row[i], TABLE_TEXT_MM) for row in self.rows), default=0.0)
            widths.append(max(min(natural, two_lines), cells) + CELL_PAD_MM)
        stretch = max(1.0, MIN_TABLE_MM / sum(widths)) if widths else 1.0
        return tuple(round(w * stretch, 1) for w in widths)

    @property
    def width_mm(self) -> float:
        return round(sum(self.column_widths_mm), 1)

    @property
    def height_mm(self) -> float:
        """Estimated height: caption, two-line heads, rows, notes (wrapped to the width)."""
        from loopdocs.draw.text import wrap_text

        line = TABLE_TEXT_MM * 1.15
        inner = max(self.width_mm - CELL_PAD_MM, 10.0)
        caption = 4.5 + (line * len(wrap_text(f"tolerance {self.tolerance}", inner, TABLE_TEXT_MM)) if self.tolerance else 0)
        notes = sum(len(wrap_text(n, inner, TABLE_TEXT_MM)) for n in self.notes) * line
        # rows: line, padding 0.8 mm and rule; 10 % to spare (checked against rendered tables)
        return 1.1 * (caption + 2 * line + len(self.rows) * (line + 1.05) + notes) + 3.0


def fmt_number(value: float | None, decimals: int | None = None) -> str:
    """A number for the sheet: given decimals, else up to 4 significant figures; a minus
    sign, not a hyphen; no negative zero.

    >>> fmt_number(11.68), fmt_number(-5.0), fmt_number(0.1234567), fmt_number(12, 3), fmt_number(-0.0001, 2)
    ('11.68', '\u22125', '0.1235', '12.000', '0.00')
    """
    if value is None:
        return ""
    if decimals is None:
        text = f"{value:.4g}" if abs(value) < 1e4 else f"{value:.0f}"
        if "e" in text:
            text = f"{value:.6f}".rstrip("0").rstrip(".")
    else:
        text = f"{value:.{decimals}f}"
    if text.startswith("-"):
        text = "\u2212" + text[1:] if text.strip("-0.") else text[1:]
    return text


def _column(values: Sequence[float | None], unit: str) -> list[str]:
    """A column of values in one unit, with the decimals of the calibration module."""
    present = [v for v in values if v is not None]
    span = (max(present) - min(present)) if present else 0.0
    decimals = display_decimals(span, unit)
    return [fmt_number(v, decimals) for v in values]


def distinct_points(points: Sequence[Point]) -> list[Point]:
    """The test points in first-seen order, each (percent, input, output, simulated) once."""
    seen: set[tuple] = set()
    rows = []
    for point in points:
        key = (point.percent, point.input.value, point.output.value,
               tuple((s.unit, s.value, s.reference_junction_c) for s in point.simulate))
        if key not in seen:
            seen.add(key)
            rows.append(point)
    return rows


def _simulated_head(basis: str, unit: str, junction: float | None) -> str:
    if basis == SIGNAL_BASIS:
        return f"Signal {unit}"
    if basis == DP_BASIS:
        return f"Apply DP {unit}" if unit != DP_PCT_UNIT else f"Apply {unit}"
    head = f"Simulate {unit}"
    if junction is not None:
        head += f" (ref. junction {fmt_number(junction)} degC)"
    return head


def tolerance_text(table: CalibrationTable) -> str:
    """``±0.1125 degC ±0.04 mA (0.25 % of span)``; empty without a tolerance."""
    tol = table.tolerance
    if tol is None:
        return ""
    parts = [f"\u00b1{fmt_number(q.value)} {q.unit}" for q in (tol.input, tol.output) if q is not None]
    return " ".join(parts) + f" ({fmt_number(tol.percent_of_span)} % of span)"


def _extra_notes(table: CalibrationTable) -> list[str]:
    notes = []
    bases = []
    for point in table.points:
        for sim in point.simulate:
            if sim.basis not in (SIGNAL_BASIS, DP_BASIS, "calibrator unit") and (sim.unit, sim.basis) not in bases:
                bases.append((sim.unit, sim.basis))
    notes += [f"simulated {unit}: {basis}" for unit, basis in bases]
    if table.ne43 is not None:
        notes.append(ne43_note(table.ne43))
    if table.dcs_scaling is not None and table.kind == "final element":
        sc = table.dcs_scaling
        notes.append(f"control system: {sc.text()}")
    return notes


def single_table(table: CalibrationTable) -> DisplayTable:
    """One calibration table: %, apply (input), simulated values, expect (output)."""
    points = distinct_points(table.points)
    in_unit, out_unit = table.input_range[0].unit, table.output_range[0].unit
    percents = [p.percent for p in points]
    redundant = (in_unit.startswith("%") and percents == [p.input.value for p in points]) or (
        out_unit.startswith("%") and percents == [p.output.value for p in points])
    heads: list[str] = []
    columns: list[list[str]] = []
    if not redundant:
        heads.append(PERCENT_HEADS.get(table.kind, "% span"))
        columns.append([fmt_number(p) for p in percents])
    sim_keys: list[tuple[str, str, float | None]] = []
    for p in points:
        for s in p.simulate:
            if (s.basis, s.unit, s.reference_junction_c) not in sim_keys:
                sim_keys.append((s.basis, s.unit, s.reference_junction_c))
    # a square-root flow table: the input column is the flow, the DP column is applied
    heads.append(f"Flow {in_unit}" if any(k[0] == DP_BASIS for k in sim_keys) else f"Apply {in_unit}")
    columns.append(_column([p.input.value for p in points], in_unit))
    for basis, unit, junction in sim_keys:
        values = [next((s.value for s in p.simulate if (s.basis, s.unit, s.reference_junction_c) == (basis, unit, junction)), None)
                  for p in points]
        heads.append(_simulated_head(basis, unit, junction))
        columns.append(_column(values, unit))
    heads.append(f"Expect {out_unit}")
    columns.append(_column([p.output.value for p in points], out_unit))
    return DisplayTable(
        tag=table.tag, title=table.kind, heads=tuple(heads), rows=tuple(zip(*columns)),
        tolerance=tolerance_text(table), notes=tuple([*table.notes, *_extra_notes(table)]),
    )


def merged_loop_check(tables: Sequence[CalibrationTable]) -> DisplayTable:
    """Loop checks of one split group side by side: CO, signal(s), travel of each element."""
    point_lists = [distinct_points(t.points) for t in tables]
    tags = [t.tag for t in tables]
    co_unit = tables[0].input_range[0].unit
    heads = [co_unit]
    columns = [_column([p.input.value for p in point_lists[0]], co_unit)]
    signals = [[p.simulate[0].value if p.simulate else None for p in points] for points in point_lists]
    signal_unit = next((p.simulate[0].unit for p in point_lists[0] if p.simulate), "")
    if all(s == signals[0] for s in signals):
        if any(v is not None for v in signals[0]):
            heads.append(f"Signal {signal_unit}")
            columns.append(_column(signals[0], signal_unit))
    else:
        for tag, values in zip(tags, signals):
            heads.append(f"{tag} {signal_unit}")
            columns.append(_column(values, signal_unit))
    for tag, points, table in zip(tags, point_lists, tables):
        unit = table.output_range[0].unit
        heads.append(f"{tag} {unit}")
        columns.append(_column([p.output.value for p in points], unit))
    notes: list[str] = []
    for tag, table in zip(tags, tables):
        for note in table.notes:
            text = f"{tag}: {note}" if note.startswith("intent") else note
            if text not in notes:
                notes.append(text)
    return DisplayTable(
        tag=", ".join(tags), title=LOOP_CHECK, heads=tuple(heads), rows=tuple(zip(*columns)),
        tolerance=tolerance_text(tables[0]), notes=tuple(notes),
    )


def display_tables(tables: Sequence[CalibrationTable]) -> list[DisplayTable]:
    """The printed tables of one loop in the order given; loop checks with the same CO
    points are merged into one table at the place of the first."""
    result: list[DisplayTable | list[CalibrationTable]] = []
    groups: dict[tuple, list[CalibrationTable]] = {}
    for table in tables:
        if table.kind == LOOP_CHECK:
            key = tuple(p.input.value for p in distinct_points(table.points))
            if key not in groups:
                groups[key] = []
                result.append(groups[key])
            groups[key].append(table)
        else:
            result.append(single_table(table))
    return [merged_loop_check(item) if isinstance(item, list) else item for item in result]


def packing_order(tables: Sequence[DisplayTable], room_mm: float) -> list[DisplayTable]:
    """The order to lay the tables out in, as floats under the diagram: those that fit the
    height left on the page first, each group tallest first (floats never go above an
    earlier one, so tall-first packs tightest and a table too tall for the page does not
    drag the others onto the next one)."""
    fits = [t for t in tables if t.height_mm <= room_mm]
    rest = [t for t in tables if t.height_mm > room_mm]
    return sorted(fits, key=lambda t: -t.height_mm) + sorted(rest, key=lambda t: -t.height_mm)
