"""Cells that hold only what they show: no text from the index becomes a live formula.

openpyxl stores any text that starts with ``=`` as a formula, and a spreadsheet program
also evaluates cells that begin with ``+``, ``-``, ``@``, a tab or a carriage return (the
OWASP guidance on CSV and formula injection). loopdocs writes no formulas into cells of its
own (conditional formats and validations carry theirs separately), so before a workbook
is saved every formula cell is turned back into text, and every text cell that a program
could read as a formula is stored as a text value.
"""

from __future__ import annotations

from typing import Any

#: First characters a spreadsheet program may evaluate (OWASP formula injection).
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def keep_as_text(workbook: Any) -> int:
    """Store every formula-looking cell of ``workbook`` (openpyxl) as plain text; the count.

    >>> from openpyxl import Workbook
    >>> wb = Workbook(); wb.active["A1"] = "=HYPERLINK(\\"http://x\\")"; wb.active["A2"] = 5
    >>> keep_as_text(wb), wb.active["A1"].data_type, wb.active["A2"].data_type
    (1, 's', 'n')
    """
    changed = 0
    for ws in workbook.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if cell.data_type == "f" or (isinstance(cell.value, str) and cell.value.startswith(FORMULA_STARTS)
                                             and cell.data_type != "s"):
                    cell.data_type = "s"
                    changed += 1
    return changed


def cell_style(ws: Any, **style: Any) -> Any:
    """The style of a cell with ``style`` (font, fill, border, alignment, protection,
    number_format), made once for many cells (``loopdocs.sheets.sheet_rows.CellStyle``):
    openpyxl looks each style object up in the workbook's tables when it is set, which
    costs more than writing the cell."""
    from openpyxl.cell import WriteOnlyCell

    prototype = WriteOnlyCell(ws)
    for name, setting in style.items():
        setattr(prototype, name, setting)
    return prototype._style
