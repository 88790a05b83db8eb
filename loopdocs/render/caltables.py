"""Calibration tables as the sheet prints them: the views of
``loopdocs.calibration.presentation`` (heads, rows, tolerance and notes, the same the
terminal and the workbook show) with their widths and heights on the sheet.

Nothing is worded or computed here beyond layout: column widths are measured with the
font's advance widths (``loopdocs.draw.text``), heights estimated from the wrapped
caption and notes; ``render.packing`` places them on the sheet by these sizes.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from loopdocs.calc.tables import CalibrationTable
from loopdocs.calibration.presentation import TableView, present_tables

TABLE_TEXT_MM = 2.5
"""Font size of the calibration tables (dense tables: 1.82 mm capitals)."""
CAPTION_TAG_MM = 3.5
"""Font size of the tag at the head of a table's caption (``sheet.css`` ``table.cal caption .tag``)."""
SPARE_MM = 3.5
"""Added to the estimated height of a table: the estimate was within 3 mm of the
rendered height for every table of the example project."""
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
    text_columns: tuple[int, ...] = ()
    """Columns of words, set left aligned (the others hold numbers, right aligned)."""

    def align(self, column: int) -> str:
        """``text`` or ``num``: the CSS class of a column's cells."""
        return "text" if column in self.text_columns else "num"

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
        """Height as printed (``sheet.css`` ``table.dense``, ``table.cal``): the caption
        (tag in 3.5 mm type, words and tolerance wrapped to the width), the heads at
        their column widths, one line per row, the notes wrapped; each cell line 1.15 x
        the type, 0.8 mm padding and a 0.25 mm rule per row (within 2 mm of rendered
        tables, tests/test_render.py, with ``SPARE_MM`` added)."""
        from loopdocs.draw.text import text_width_mm, wrap_text

        line = TABLE_TEXT_MM * 1.15
        rule = 0.8 + 0.25
        inner = max(self.width_mm - CELL_PAD_MM, 10.0)
        tag_mm = text_width_mm(self.tag + " ", CAPTION_TAG_MM, bold=True)
        title_lines = wrap_text(" " * round(tag_mm / (TABLE_TEXT_MM * 0.318)) + self.title, self.width_mm,
                                TABLE_TEXT_MM) if self.title else [""]
        caption = CAPTION_TAG_MM * 1.15 + line * (len(title_lines) - 1) + 0.6
        if self.tolerance:
            caption += line * len(wrap_text(f"tolerance {self.tolerance}", self.width_mm, TABLE_TEXT_MM))
        head_lines = max((len(wrap_text(h, w - CELL_PAD_MM + 0.2, TABLE_TEXT_MM, bold=True))
                          for h, w in zip(self.heads, self.column_widths_mm)), default=1)
        notes = sum(len(wrap_text(n, inner, TABLE_TEXT_MM)) for n in self.notes) * line + (rule if self.notes else 0.0)
        return round(caption + head_lines * line + rule + len(self.rows) * (line + rule) + notes + SPARE_MM, 1)


def display_table(view: TableView) -> DisplayTable:
    """The printed form of one view: caption words, heads with units, rows, tolerance, notes."""
    return DisplayTable(tag=view.tag, title=view.words, heads=view.heads, rows=view.rows,
                        tolerance=view.tolerance, notes=view.note_texts)


def display_tables(tables: Sequence[CalibrationTable]) -> list[DisplayTable]:
    """The printed tables of one loop in the order given (loop checks of one split group
    side by side, ``presentation.present_tables``)."""
    return [display_table(view) for view in present_tables(tables)]
