"""Calibration tables as the sheet prints them: the views of
``loopdocs.calibration.presentation`` (heads, rows, tolerance and notes, the same the
terminal and the workbook show) with their widths and heights on the sheet.

Nothing is worded or computed here beyond layout: column widths are measured with the
font's advance widths (``loopdocs.draw.text``), heights estimated from the wrapped
caption and notes, and the tables are packed under the diagram (:func:`packing_order`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from loopdocs.calc.tables import CalibrationTable
from loopdocs.calibration.presentation import TableView, present_tables

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


def display_table(view: TableView) -> DisplayTable:
    """The printed form of one view: caption words, heads with units, rows, tolerance, notes."""
    return DisplayTable(tag=view.tag, title=view.words, heads=view.heads, rows=view.rows,
                        tolerance=view.tolerance, notes=view.note_texts)


def display_tables(tables: Sequence[CalibrationTable]) -> list[DisplayTable]:
    """The printed tables of one loop in the order given (loop checks of one split group
    side by side, ``presentation.present_tables``)."""
    return [display_table(view) for view in present_tables(tables)]


def packing_order(tables: Sequence[DisplayTable], room_mm: float) -> list[DisplayTable]:
    """The order to lay the tables out in, as floats under the diagram: those that fit the
    height left on the page first, each group tallest first (floats never go above an
    earlier one, so tall-first packs tightest and a table too tall for the page does not
    drag the others onto the next one)."""
    fits = [t for t in tables if t.height_mm <= room_mm]
    rest = [t for t in tables if t.height_mm > room_mm]
    return sorted(fits, key=lambda t: -t.height_mm) + sorted(rest, key=lambda t: -t.height_mm)
