"""Reading the instrument index: spreadsheet or CSV to rows, each value with its cell.

``read_index(path)`` finds the sheet and header row, maps headers to column keys
(``loopdocs.read.columns``) and returns an :class:`IndexTable`. Anything that stops the
file being read as a whole raises :class:`loopdocs.core.errors.InputError` with one line.
"""

from __future__ import annotations

from pathlib import Path

from loopdocs.core.errors import InputError
from loopdocs.read.table import CellValue, IndexRow, IndexTable, ReadNotice

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")
CSV_SUFFIXES = (".csv",)

__all__ = ["CellValue", "IndexRow", "IndexTable", "ReadNotice", "read_index"]


def read_index(path: Path, sheet: str | None = None, column_map: dict[str, str] | None = None,
               scan_formulas: bool = True) -> IndexTable:
    """Read the index at ``path`` (.xlsx, .xlsm or .csv).

    ``sheet``: the sheet to read (default: the first with a Tag header in its first 20
    rows). ``column_map``: the project's own headers -> column keys or default headers.
    ``scan_formulas``: look through a workbook's XML for formulas without a cached value
    and error cells, to report them (``IndexTable.notices``); a caller that reports no
    findings (``loopdocs diff``) leaves it out.
    """
    path = Path(path)
    if not path.exists():
        raise InputError(f"{path}: no such file")
    if path.is_dir():
        raise InputError(f"{path}: is a folder, not an index file (.xlsx, .xlsm or .csv)")
    suffix = path.suffix.lower()
    if suffix in WORKBOOK_SUFFIXES:
        from loopdocs.read.xlsx import read_xlsx

        return read_xlsx(path, sheet, column_map, scan_formulas)
    if suffix in CSV_SUFFIXES:
        from loopdocs.read.csvfile import read_csv

        return read_csv(path, sheet, column_map)
    if suffix == ".xls":
        raise InputError(f"{path}: legacy .xls workbooks are not read; save it as .xlsx")
    raise InputError(f"{path}: not an index file loopdocs reads (use .xlsx, .xlsm or .csv)")
