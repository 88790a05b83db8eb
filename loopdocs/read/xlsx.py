"""Read an instrument index from an ``.xlsx`` / ``.xlsm`` workbook (python-calamine).

Cells are read as the workbook last saved them: a formula gives its cached value. A
formula cell with no cached value (a workbook written by a program that does not
calculate, never opened in a spreadsheet program) and a cell holding a spreadsheet error
(``#N/A``) read as blank, each with a :class:`ReadNotice` at that cell. Merged cells: the
top-left value is repeated down the rows of the merged range (one Loop or Service cell
spanning the rows of a loop).
"""

from __future__ import annotations

import datetime as dt
import posixpath
import re
import zipfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterator

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Location
from loopdocs.read.grid import (
    HEADER_SEARCH_ROWS,
    build_table,
    find_header_row,
    headers_seen,
    lookup_for,
    no_header_error,
)
from loopdocs.read.table import CellValue, IndexTable, ReadNotice

ZIP_MAGIC = b"PK\x03\x04"
OLE_MAGIC = bytes.fromhex("D0CF11E0A1B11AE1")
"""An OLE compound file: a password-protected (encrypted) .xlsx, or a legacy .xls."""

NO_CACHED_VALUE = (
    "formula cell has no cached value, read as blank (open and save the workbook in a "
    "spreadsheet program to compute it)"
)


def cell_value(value: Any) -> CellValue:
    """A calamine cell as loopdocs keeps it.

    Text stripped (blank -> None), whole-number floats -> int, dates and times -> ISO 8601
    text, booleans kept.

    >>> cell_value("  TIC-3105  "), cell_value(""), cell_value(3105.0), cell_value(11.68)
    ('TIC-3105', None, 3105, 11.68)
    >>> cell_value(dt.datetime(2025, 3, 4, 9, 30)), cell_value(dt.date(2025, 3, 4)), cell_value(True)
    ('2025-03-04T09:30:00', '2025-03-04', True)
    """
    kind = type(value)
    if kind is str:
        return value.strip() or None
    if kind is float:
        return int(value) if value.is_integer() else value
    if kind is int or kind is bool or value is None:
        return value
    if isinstance(value, dt.datetime):
        return _to_second(value).isoformat()
    if isinstance(value, dt.time):
        return _to_second(dt.datetime.combine(dt.date(2000, 1, 1), value)).time().isoformat()
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, dt.timedelta):
        return str(value)
    return str(value).strip() or None


cell_value.keeps_text = True  # type: ignore[attr-defined]  # text: stripped, blank -> None (read.grid)


def _to_second(value: dt.datetime) -> dt.datetime:
    """Nearest whole second (spreadsheet times are day fractions and rarely land exactly)."""
    return (value + dt.timedelta(microseconds=500_000)).replace(microsecond=0)


def check_workbook_file(path: Path) -> None:
    """One-line InputError for a file that cannot be a readable workbook (by its first bytes)."""
    try:
        with path.open("rb") as handle:
            head = handle.read(8)
    except OSError as exc:
        raise InputError(f"{path}: cannot open ({exc.strerror or exc})") from None
    if not head:
        raise InputError(f"{path}: the file is empty")
    if head == OLE_MAGIC:
        raise InputError(
            f"{path}: the workbook is password-protected (encrypted) or a legacy .xls file; "
            "save it unprotected as .xlsx"
        )
    if head[:4] != ZIP_MAGIC:
        raise InputError(f"{path}: not an .xlsx workbook (not a zip archive); save it as .xlsx or .csv")


#: Bounds on what a workbook may hold before anything is parsed. Each can be raised with an
#: environment variable of the same name (``LOOPDOCS_MAX_ROWS=500000``) for a real index
#: beyond it; the defaults are well above any instrument index.
LIMITS = {"LOOPDOCS_MAX_ROWS": 200_000, "LOOPDOCS_MAX_COLUMNS": 1_000, "LOOPDOCS_MAX_PART_MB": 500}
#: Compression ratio beyond which a large part is taken for a zip bomb (real sheet XML
#: compresses 10 to 30 times).
MAX_RATIO = 200

_DIMENSION = re.compile(rb"""<(?:\w+:)?dimension\s+ref\s*=\s*["']([A-Z]{1,3})?([0-9]+)?(?::([A-Z]{1,3})([0-9]+))?["']""")


def _limit(name: str) -> int:
    import os

    try:
        return int(os.environ.get(name, LIMITS[name]))
    except ValueError:
        return LIMITS[name]


def _column_number(letters: str) -> int:
    """``A`` -> 1, ``Z`` -> 26, ``AA`` -> 27, ``XFD`` -> 16384."""
    number = 0
    for char in letters:
        number = number * 26 + ord(char) - 64
    return number


def check_workbook_bounds(path: Path) -> None:
    """Refuse, before any parse, a workbook that would take the reader past sane memory: a
    part that decompresses past ``LOOPDOCS_MAX_PART_MB`` or at a zip-bomb ratio, a sheet
    whose used range runs beyond ``LOOPDOCS_MAX_ROWS`` rows or ``LOOPDOCS_MAX_COLUMNS``
    columns, or XML with entity declarations. One ``InputError`` line naming the limit."""
    max_bytes = _limit("LOOPDOCS_MAX_PART_MB") * 1_000_000
    try:
        with zipfile.ZipFile(path) as archive:
            for info in archive.infolist():
                if info.file_size > max_bytes or (
                        info.file_size > 20_000_000 and info.file_size > MAX_RATIO * max(info.compress_size, 1)):
                    raise InputError(
                        f"{path}: part {info.filename} unpacks to {info.file_size / 1e6:.0f} MB "
                        f"({info.file_size / max(info.compress_size, 1):.0f} times its packed size), beyond what "
                        f"an index holds (limit LOOPDOCS_MAX_PART_MB={max_bytes // 1_000_000})")
                if info.filename.endswith(".xml") or info.filename.endswith(".rels"):
                    with archive.open(info) as part:
                        head = part.read(65536)
                    if b"<!ENTITY" in head or b"<!DOCTYPE" in head:
                        raise InputError(f"{path}: part {info.filename} declares XML entities; a workbook saved by a "
                                         "spreadsheet program has none, so it is not read")
                    if info.filename.startswith("xl/worksheets/"):
                        _check_dimension(path, info.filename, head)
    except InputError:
        raise
    except (OSError, zipfile.BadZipFile, ValueError, RuntimeError, NotImplementedError):
        return  # the reader reports a damaged workbook in its own words


def _check_dimension(path: Path, part: str, head: bytes) -> None:
    match = _DIMENSION.search(head)
    if match is None or match.group(3) is None:
        return
    rows, columns = int(match.group(4)), _column_number(match.group(3).decode())
    max_rows, max_columns = _limit("LOOPDOCS_MAX_ROWS"), _limit("LOOPDOCS_MAX_COLUMNS")
    if rows > max_rows or columns > max_columns:
        corner = f"{match.group(3).decode()}{match.group(4).decode()}"
        raise InputError(
            f"{path}: {part} has its used range to cell {corner} ({rows} rows, {columns} columns), beyond "
            f"LOOPDOCS_MAX_ROWS={max_rows} or LOOPDOCS_MAX_COLUMNS={max_columns}; delete the cells beyond the data "
            "and save again, or raise the limit")


def read_xlsx(path: Path, sheet: str | None = None, column_map: dict[str, str] | None = None,
              scan_formulas: bool = True) -> IndexTable:
    """The index in sheet ``sheet`` (default: the first sheet with a Tag header)."""
    return read_open_sheet(open_sheet(path, sheet, column_map), scan_formulas)


@dataclass
class OpenSheet:
    """A workbook's index sheet parsed by calamine, its header row found, its rows not yet
    read (:func:`open_sheet`, then :func:`read_open_sheet`)."""

    path: Path
    name: str
    sheet: Any
    """The ``CalamineSheet``."""
    header_index: int
    header: list[Any]
    merged: Any
    lookup: dict[str, str]


def open_sheet(
    path: Path, sheet: str | None = None, column_map: dict[str, str] | None = None,
    parsed: dict[str, Any] | None = None,
) -> OpenSheet:
    """Check and parse the workbook, find the index sheet and its header row.
    ``parsed``: sheets of this workbook already parsed (name -> ``CalamineSheet``, see
    :func:`parse_first_sheet`), used instead of parsing them again."""
    from python_calamine import CalamineError, CalamineWorkbook, SheetTypeEnum, ZipError

    lookup = lookup_for(column_map)
    check_workbook_file(path)
    check_workbook_bounds(path)
    try:
        with CalamineWorkbook.from_path(str(path)) as book:
            names = list(book.sheet_names)
            if sheet is not None:
                if sheet not in names:
                    listed = ", ".join(repr(n) for n in names)
                    raise InputError(f"{path}: no sheet named {sheet!r}; the sheets are {listed}")
                candidates = [sheet]
            else:
                kinds = {m.name: m.typ for m in book.sheets_metadata}
                candidates = [n for n in names if kinds.get(n, SheetTypeEnum.WorkSheet) == SheetTypeEnum.WorkSheet]
            seen: list[tuple[str, str]] = []
            for name in candidates:
                calamine_sheet = (parsed or {}).pop(name, None) or book.get_sheet_by_name(name)
                top = calamine_sheet.to_python(skip_empty_area=False, nrows=HEADER_SEARCH_ROWS)
                header_index = find_header_row(top, lookup)
                if header_index is None:
                    seen.append((name, headers_seen(top)))
                    continue
                merged = calamine_sheet.merged_cell_ranges or ()
                break
            else:
                raise no_header_error(path, seen)
    except InputError:
        raise
    except ZipError as exc:
        raise InputError(
            f"{path}: the workbook is damaged or incomplete ({_one_line(exc)}); copy it again or re-save it"
        ) from None
    except CalamineError as exc:
        raise InputError(f"{path}: cannot read the workbook ({type(exc).__name__}: {_one_line(exc)})") from None
    except (OSError, ValueError, RuntimeError) as exc:
        raise InputError(f"{path}: cannot read the workbook ({_one_line(exc)})") from None

    return OpenSheet(path, name, calamine_sheet, header_index, top[header_index], merged, lookup)


def parse_first_sheet(path: Path) -> dict[str, Any]:
    """``{name: CalamineSheet}`` of the workbook's first worksheet, where most indexes
    are, parsed ahead while the command imports the rest of loopdocs (the parse runs
    without the interpreter lock; ``loopdocs.read.background``). The same checks as
    :func:`open_sheet` come first; any trouble gives ``{}`` and :func:`open_sheet` then
    meets and reports it."""
    try:
        from python_calamine import CalamineWorkbook, SheetTypeEnum

        check_workbook_file(path)
        check_workbook_bounds(path)
        with CalamineWorkbook.from_path(str(path)) as book:
            for meta in book.sheets_metadata:
                if meta.typ == SheetTypeEnum.WorkSheet:
                    return {meta.name: book.get_sheet_by_name(meta.name)}
    except Exception:  # reported by open_sheet, which does the same again
        pass
    return {}


def read_open_sheet(opened: OpenSheet, scan_formulas: bool = True) -> IndexTable:
    """The index table of an opened sheet. Row by row: the sheet is never held twice (once
    by calamine, once as Python lists), the peak memory of a large index (docs/performance.md).
    ``scan_formulas``: add the notices of :func:`formula_notices` (``read_index``)."""
    path, name, header_index = opened.path, opened.name, opened.header_index
    rows = data_rows(opened.sheet, header_index, opened.merged)
    table = build_table(path, name, rows, header_index, opened.lookup, cell_value, header=opened.header)
    cells = (opened.sheet.height or 0) * (opened.sheet.width or 0)
    opened.sheet = None
    del rows
    if cells > TRIM_AFTER_CELLS:
        return_freed_memory()
    if not scan_formulas:
        return table
    letters = set(table.columns.values()) | set(table.extra_columns.values())
    table.notices.extend(
        notice for notice in formula_notices(path, name) if notice.location.row > table.header_row and notice.location.column in letters
    )
    return table


#: Cells in a sheet past which the memory calamine held is handed back to the system
#: once the sheet is read (about 50 MB at 30,000 loops; docs/performance.md).
TRIM_AFTER_CELLS = 2_000_000


def return_freed_memory() -> None:
    """Ask the C library to hand memory it holds free back to the system (glibc's
    ``malloc_trim``): what the workbook parse freed otherwise stays in the process for
    the rest of the command. Does nothing where there is no such call."""
    try:
        import ctypes

        ctypes.CDLL("libc.so.6").malloc_trim(0)
    except (OSError, AttributeError):
        pass


def data_rows(sheet: Any, header_index: int, merged: Any) -> Iterator[list[Any]]:
    """The rows below the header (0-based ``header_index``) of a calamine sheet, one list
    at a time, cells from column A, merged ranges filled as :func:`fill_merged` does.

    Calamine's row iterator starts at the first row of the sheet but at the first column
    of its used range: rows are padded on the left so that index 0 is column A.
    """
    first_column = (sheet.start or (0, 0))[1]
    pad = [""] * first_column
    starting: dict[int, list[tuple[int, int]]] = {}
    for (row0, col0), (row1, _col1) in merged:
        if row0 > header_index:
            starting.setdefault(row0, []).append((col0, row1))
    filling: list[tuple[int, int, Any]] = []  # (column, last row, value)
    for index, cells in enumerate(sheet.iter_rows()):
        if index <= header_index:
            continue
        if first_column:
            cells = pad + cells
        if filling:
            filling = [fill for fill in filling if fill[1] >= index]
            for column, _last, value in filling:
                if column < len(cells):
                    cells[column] = value
        if index in starting:
            for column, last in starting[index]:
                filling.append((column, last, cells[column] if column < len(cells) else ""))
        yield cells


def fill_merged(grid: list[list[Any]], ranges: Any, header_index: int) -> None:
    """Repeat each merged range's top-left value down the range's rows (data rows only).

    ``ranges`` are calamine's 0-based ``((row, col), (row, col))`` corners. Columns to the
    right of the top-left inside a range stay blank: a merge across columns widens one
    cell, it does not give the neighbouring columns a value.

    >>> grid = [["Tag", "Loop"], ["TT-1", "T-1"], ["TIC-1", ""], ["TV-1", ""]]
    >>> fill_merged(grid, [((1, 1), (3, 1))], 0); [row[1] for row in grid]
    ['Loop', 'T-1', 'T-1', 'T-1']
    """
    for (row0, col0), (row1, _col1) in ranges:
        if row0 <= header_index or row0 >= len(grid):
            continue
        value = grid[row0][col0] if col0 < len(grid[row0]) else ""
        for row in range(row0 + 1, min(row1, len(grid) - 1) + 1):
            cells = grid[row]
            if col0 < len(cells):
                cells[col0] = value


def _one_line(exc: BaseException) -> str:
    return " ".join(str(exc).split()) or type(exc).__name__


# -- cells calamine reads as blank: formulas with no cached value, spreadsheet errors -----

_CELL_REF = re.compile(rb"""\br\s*=\s*["']([A-Z]{1,3})([0-9]+)["']""")
_STR_TYPE = re.compile(rb"""\bt\s*=\s*["']str["']""")
_ROOT_PREFIX = re.compile(rb"<(\w+:)?worksheet\b")


#: Bytes of sheet XML unpacked at a time by :func:`formula_notices`.
SCAN_BLOCK_BYTES = 1 << 20


def formula_notices(path: Path, sheet: str) -> list[ReadNotice]:
    """Notices for formula cells with no cached value and for error cells of ``sheet``.

    Scans the sheet XML with byte searches (no XML parse), a block of whole rows at a
    time so that the sheet's XML is never held whole; returns [] when the sheet has
    neither, or when its part cannot be found (calamine has read it already).
    """
    found: list[tuple[tuple[bytes, bytes], str]] = []
    try:
        with zipfile.ZipFile(path) as archive:
            part = _sheet_part(archive, sheet)
            if part is None:
                return []
            with archive.open(part) as stream:
                for piece, prefix in _row_blocks(stream):
                    found.extend(_formulas_without_value(piece, prefix))
                    found.extend(_error_cells(piece, prefix))
    except (OSError, KeyError, zipfile.BadZipFile, ValueError):
        return []
    notices = [ReadNotice(Location(sheet, int(ref[1]), ref[0].decode()), message) for ref, message in found]
    notices.sort(key=lambda n: (n.location.row, len(n.location.column), n.location.column))
    return notices


def _row_blocks(stream: Any) -> Iterator[tuple[bytes, bytes]]:
    """``(block, prefix)``: the sheet XML cut after a row end (``</row>``), so that no
    cell is split between blocks, about ``SCAN_BLOCK_BYTES`` at a time; ``prefix`` is the
    namespace prefix of the root element (``x:`` in ``<x:worksheet>``), often empty."""
    carry = b""
    prefix: bytes | None = None
    row_end = b""
    while True:
        block = stream.read(SCAN_BLOCK_BYTES)
        data = carry + block if carry else block
        if prefix is None:
            root = _ROOT_PREFIX.search(data, 0, 4096)
            prefix = (root.group(1) or b"") if root else b""
            row_end = b"</" + prefix + b"row>"
        if not block:
            if data:
                yield data, prefix
            return
        cut = data.rfind(row_end)
        if cut < 0:
            carry = data
            continue
        cut += len(row_end)
        yield data[:cut], prefix
        carry = data[cut:]


def _cell_bounds(data: bytes, inside: int, prefix: bytes) -> tuple[int, int, int] | None:
    """(start of ``<c``, end of its start tag, end of the cell) around position ``inside``."""
    start = data.rfind(b"<" + prefix + b"c ", 0, inside)
    if start < 0:
        return None
    tag_end = data.find(b">", start)
    if tag_end < 0:
        return None
    if data[tag_end - 1 : tag_end] == b"/":
        return start, tag_end, tag_end + 1
    end = data.find(b"</" + prefix + b"c>", tag_end)
    return (start, tag_end, end) if end >= 0 else None


def _formulas_without_value(data: bytes, prefix: bytes):
    opener = b"<" + prefix + b"f"
    if data.find(opener) < 0:  # one byte search: most index sheets hold no formulas
        return
    value_tag = re.compile(rb"<" + re.escape(prefix) + rb"v>([^<]*)<")
    for match in re.finditer(re.escape(opener) + rb"[\s>/]", data):
        bounds = _cell_bounds(data, match.start(), prefix)
        if bounds is None:
            continue
        start, tag_end, end = bounds
        if match.start() < tag_end or match.start() > end:
            continue
        attrs = data[start:tag_end]
        ref = _CELL_REF.search(attrs)
        if ref is None:
            continue
        cached = value_tag.search(data, tag_end, end + 1)
        if cached is not None and (cached.group(1) or _STR_TYPE.search(attrs)):
            continue
        yield ref.groups(), NO_CACHED_VALUE


def _error_cells(data: bytes, prefix: bytes):
    value_tag = re.compile(rb"<" + re.escape(prefix) + rb"v>([^<]*)<")
    for needle in (b't="e"',):  # spreadsheet programs quote attributes with "
        position = data.find(needle)
        while position >= 0:
            bounds = _cell_bounds(data, position, prefix)
            if bounds is not None and bounds[0] < position < bounds[1]:
                start, tag_end, end = bounds
                ref = _CELL_REF.search(data, start, tag_end)
                if ref is not None:
                    value = value_tag.search(data, tag_end, end + 1)
                    error = value.group(1).decode("utf-8", "replace") if value else "error"
                    yield ref.groups(), f"cell holds the spreadsheet error {error}, read as blank"
            position = data.find(needle, position + 1)


def _sheet_part(archive: zipfile.ZipFile, sheet: str) -> str | None:
    """Path inside the zip of the worksheet named ``sheet`` (via the package relationships)."""
    from defusedxml import ElementTree

    def rels_of(part: str) -> dict[str, str]:
        folder, name = posixpath.split(part)
        rels_path = posixpath.join(folder, "_rels", name + ".rels")
        targets = {}
        for rel in ElementTree.fromstring(archive.read(rels_path)):
            target = rel.get("Target", "")
            if rel.get("TargetMode") == "External":
                continue
            resolved = target.lstrip("/") if target.startswith("/") else posixpath.normpath(posixpath.join(folder, target))
            targets[rel.get("Id", "")] = resolved
            targets["type:" + rel.get("Type", "").rsplit("/", 1)[-1]] = resolved
        return targets

    workbook_part = rels_of("").get("type:officeDocument", "xl/workbook.xml")
    workbook_rels = rels_of(workbook_part)
    for element in ElementTree.fromstring(archive.read(workbook_part)).iter():
        if element.tag.rsplit("}", 1)[-1] == "sheet" and element.get("name") == sheet:
            for attribute, value in element.attrib.items():
                if attribute.endswith("}id"):
                    return workbook_rels.get(value)
    return None
