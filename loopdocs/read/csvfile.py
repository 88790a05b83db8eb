"""Read an instrument index from a ``.csv`` file.

Separator: ``,``, ``;`` or tab, whichever gives a Tag header in the first 20 records.
Encoding: UTF-8 (with or without BOM), UTF-16 with BOM, else Windows-1252 with a notice.
The "sheet" is the file name and column letters are those a spreadsheet program shows
when it opens the file, so locations read the same as for a workbook.

A CSV has no cell types, so a field is read the way the same value typed into a
workbook cell reads: plain decimal numbers become numbers (``150`` -> 150, ``0.25`` ->
0.25), ``TRUE``/``FALSE`` become booleans, anything else stays text, including numbers
with leading zeros (``0150``), signs, exponents or thousands separators. In a
``;``-separated file (a comma-decimal locale) ``11,68`` is read as 11.68, with a notice.
"""

from __future__ import annotations

import csv
import io
import re
from itertools import islice
from pathlib import Path

from loopdocs.core.errors import InputError
from loopdocs.core.findings import Location
from loopdocs.read.grid import (
    HEADER_SEARCH_ROWS,
    build_table,
    column_letter,
    find_header_row,
    headers_seen,
    lookup_for,
    no_header_error,
)
from loopdocs.read.table import CellValue, IndexTable, ReadNotice

DELIMITERS = (",", ";", "\t")

_NUMBER = re.compile(r"-?(?:(?:0|[1-9][0-9]*)(?:\.[0-9]*)?|\.[0-9]+)")
_COMMA_NUMBER = re.compile(r"-?(?:0|[1-9][0-9]*),[0-9]+")


def csv_value(text: str, decimal_comma: bool = False) -> CellValue:
    """A CSV field as loopdocs keeps it (see the module docstring).

    >>> [csv_value(t) for t in (" TV-3105A ", "", "3105", "11.68", "150.0", "0150", "1e3", "TRUE")]
    ['TV-3105A', None, 3105, 11.68, 150, '0150', '1e3', True]
    >>> csv_value("11,68", decimal_comma=True), csv_value("11,68")
    (11.68, '11,68')
    """
    text = text.strip()
    if not text:
        return None
    first = text[0]
    if first in "-.0123456789":
        if _NUMBER.fullmatch(text):
            if "." not in text:
                return int(text)
            number = float(text)
            return int(number) if number.is_integer() else number
        if decimal_comma and _COMMA_NUMBER.fullmatch(text):
            return float(text.replace(",", "."))
    elif text == "TRUE":
        return True
    elif text == "FALSE":
        return False
    return text


def _decode(path: Path, raw: bytes) -> tuple[str, str]:
    """(text, encoding used)."""
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return raw.decode("utf-16"), "utf-16"
        except UnicodeDecodeError:
            pass
    try:
        return raw.decode("utf-8-sig"), "utf-8"
    except UnicodeDecodeError:
        pass
    try:
        return raw.decode("cp1252"), "cp1252"
    except UnicodeDecodeError:
        raise InputError(f"{path}: not a text file in UTF-8 or Windows-1252; save it as CSV UTF-8") from None


def _records(text: str, delimiter: str, limit: int | None = None) -> list[list[str]]:
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    return list(islice(reader, limit)) if limit is not None else list(reader)


def read_csv(path: Path, sheet: str | None = None, column_map: dict[str, str] | None = None) -> IndexTable:
    """The index in the CSV file ``path`` (``sheet`` is ignored: a CSV has one)."""
    lookup = lookup_for(column_map)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{path}: cannot open ({exc.strerror or exc})") from None
    if not raw.strip():
        raise InputError(f"{path}: the file is empty")
    text, encoding = _decode(path, raw)
    if "\x00" in text:
        raise InputError(f"{path}: not a text file (it contains NUL bytes); save the index as .csv or .xlsx")
    name = path.name

    try:
        tops = {d: _records(text, d, HEADER_SEARCH_ROWS) for d in DELIMITERS}
        found = {d: find_header_row(top, lookup) for d, top in tops.items()}
        usable = [d for d in DELIMITERS if found[d] is not None]
        if not usable:
            widest = max(DELIMITERS, key=lambda d: max((len(r) for r in tops[d]), default=0))
            raise no_header_error(path, [(name, headers_seen(tops[widest]))])
        delimiter = max(usable, key=lambda d: len(tops[d][found[d]]))
        records = _records(text, delimiter)
    except csv.Error as exc:
        raise InputError(f"{path}: cannot read as CSV ({exc})") from None

    header_index = found[delimiter]
    decimal_comma = delimiter == ";"
    table = build_table(path, name, records, header_index, lookup, lambda v: csv_value(v, decimal_comma))

    if encoding == "cp1252":
        row, col = _first_cell(records, lambda v: not v.isascii())
        table.notices.append(
            ReadNotice(
                Location(name, max(row, 1), column_letter(col)),
                "file is not UTF-8, read as Windows-1252 (cp1252); check accented characters, "
                "or save the file as CSV UTF-8",
            )
        )
    if decimal_comma:
        read = {i for i in range(len(records[header_index])) if column_letter(i) in _read_letters(table)}
        row, col = _first_cell(
            records[header_index + 1 :], lambda v: bool(_COMMA_NUMBER.fullmatch(v.strip())), read, header_index + 1
        )
        if row:
            table.notices.append(
                ReadNotice(
                    Location(name, row, column_letter(col)),
                    "numbers with a decimal comma (as in this cell) read as decimals in this ';'-separated file",
                )
            )
    return table


def _read_letters(table: IndexTable) -> set[str]:
    return set(table.columns.values()) | set(table.extra_columns.values())


def _first_cell(records, test, columns=None, offset: int = 0) -> tuple[int, int]:
    """(1-based row, 0-based column) of the first field passing ``test``; (0, 0) if none."""
    for index, fields in enumerate(records):
        for col, value in enumerate(fields):
            if (columns is None or col in columns) and test(value):
                return index + offset + 1, col
    return 0, 0
