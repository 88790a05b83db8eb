"""From a grid of cells to an :class:`IndexTable`: header row, columns, data rows.

Shared by the workbook and the CSV reader. A grid is a list of rows (lists of raw cell
values, column A first); each reader passes its own cell converter.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Callable, Iterable, Sequence

from loopdocs.core.errors import InputError
from loopdocs.read.columns import BY_KEY, header_lookup, normalise_header
from loopdocs.read.table import CellValue, IndexRow, IndexTable, ReadNotice

HEADER_SEARCH_ROWS = 20
"""The header row is looked for in this many rows from the top of the sheet."""


def column_letter(index: int) -> str:
    """Spreadsheet column letter of a 0-based column index.

    >>> column_letter(0), column_letter(25), column_letter(26), column_letter(27), column_letter(16383)
    ('A', 'Z', 'AA', 'AB', 'XFD')
    """
    letters = ""
    index += 1
    while index:
        index, rem = divmod(index - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def lookup_for(column_map: dict[str, str] | None) -> dict[str, str]:
    """``header_lookup`` with a bad column map turned into a one-line InputError."""
    try:
        return header_lookup(column_map)
    except ValueError as exc:
        raise InputError(f"project config: {exc}") from None


def _header_text(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    return str(value).strip()


def find_header_row(top: Sequence[Sequence[Any]], lookup: dict[str, str]) -> int | None:
    """0-based index of the first row (of the first 20) with a cell that means Tag."""
    for index, cells in enumerate(top[:HEADER_SEARCH_ROWS]):
        for value in cells:
            if value is not None and value != "" and lookup.get(normalise_header(_header_text(value))) == "tag":
                return index
    return None


def headers_seen(top: Sequence[Sequence[Any]], limit: int = 8) -> str:
    """The texts of the most header-like row (most text cells) of the first 20, for messages.

    >>> headers_seen([["Plant index"], ["Item", "Description", 3, "Range"]])
    "row 2: 'Item', 'Description', 'Range'"
    >>> headers_seen([[], ["", None]])
    'no text at all'
    """
    best_index, best_texts = -1, []
    for index, cells in enumerate(top[:HEADER_SEARCH_ROWS]):
        texts = [_header_text(v) for v in cells if isinstance(v, str) and v.strip()]
        if len(texts) > len(best_texts):
            best_index, best_texts = index, texts
    if not best_texts:
        return "no text at all"
    shown = ", ".join(repr(" ".join(t.split())) for t in best_texts[:limit])
    more = f" and {len(best_texts) - limit} more" if len(best_texts) > limit else ""
    return f"row {best_index + 1}: {shown}{more}"


def layout(
    header: Sequence[Any], lookup: dict[str, str], where: str, header_row: int
) -> tuple[dict[str, int], dict[str, int]]:
    """Column key -> 0-based index, and unknown header text -> index, from the header cells.

    Two headers meaning the same column raise InputError naming both letters. Unknown
    headers repeated keep the first under its own text and the later ones as
    ``"text (letter)"`` so no column is lost. Columns with a blank header are not read.
    """
    columns: dict[str, int] = {}
    extra: dict[str, int] = {}
    for index, value in enumerate(header):
        text = _header_text(value)
        if not text:
            continue
        key = lookup.get(normalise_header(text))
        if key is None:
            name = text if text not in extra else f"{text} ({column_letter(index)})"
            extra[name] = index
        elif key in columns:
            first = columns[key]
            raise InputError(
                f"{where}, header row {header_row}: columns {column_letter(first)} "
                f"({_header_text(header[first])!r}) and {column_letter(index)} ({text!r}) both mean "
                f"{BY_KEY[key].header!r}; rename or delete one of them"
            )
        else:
            columns[key] = index
    return columns, extra


def _present(
    cells: Sequence[Any], wanted: tuple[tuple[str, int], ...], convert: Callable[[Any], CellValue],
    texts: dict[str, str],
) -> dict[str, CellValue]:
    """Key -> value for the non-blank cells among ``wanted`` (blank cells are left out, so
    ``values.get(key)`` is ``None`` for them). A ``convert`` marked ``keeps_text`` turns
    text into the text stripped (blank -> None): such cells are stripped here directly. Most index cells are blank: skipping them
    early is most of the reader's speed on a large index. A text met before is replaced by
    the one kept in ``texts``: an index repeats the same units, signals, cabinets and
    P&IDs on thousands of rows, and one copy of each halves the memory the rows take."""
    width = len(cells)
    present: dict[str, CellValue] = {}
    keeps_text = getattr(convert, "keeps_text", False)
    for key, index in wanted:
        if index < width:
            raw = cells[index]
            if raw is not None and raw != "":
                if keeps_text and type(raw) is str:  # the usual cell: text, stripped, no call
                    value = raw.strip()
                    if value:
                        present[key] = texts.setdefault(value, value)
                    continue
                value = convert(raw)
                if value is not None:
                    present[key] = texts.setdefault(value, value) if type(value) is str else value
    return present


def build_table(
    path: Path,
    sheet: str,
    grid: Iterable[Sequence[Any]],
    header_index: int,
    lookup: dict[str, str],
    convert: Callable[[Any], CellValue],
    notices: list[ReadNotice] | None = None,
    header: Sequence[Any] | None = None,
) -> IndexTable:
    """The table below ``grid[header_index]``; blank data rows (every read cell blank) skipped.

    Grid row ``i`` is spreadsheet row ``i + 1``. With ``header`` (the cells of the header
    row) ``grid`` is the rows below the header only, any iterable, read once: a reader can
    hand its rows over one at a time.
    """
    where = f"{path}, sheet {sheet!r}"
    if header is None:
        rows_below: Iterable[Sequence[Any]] = grid[header_index + 1 :]  # type: ignore[index]
        header = grid[header_index]  # type: ignore[index]
    else:
        rows_below = grid
    columns, extra = layout(header, lookup, where, header_index + 1)
    known = tuple(columns.items())
    unknown = tuple(extra.items())
    rows: list[IndexRow] = []
    first_row = header_index + 2
    texts: dict[str, str] = {}
    for offset, cells in enumerate(rows_below):
        values = _present(cells, known, convert, texts)
        more = _present(cells, unknown, convert, texts) if unknown else {}
        if values or more:
            rows.append(IndexRow(first_row + offset, values, more))
    return IndexTable(
        path=path,
        sheet=sheet,
        header_row=header_index + 1,
        columns={key: column_letter(i) for key, i in columns.items()},
        extra_columns={text: column_letter(i) for text, i in extra.items()},
        rows=rows,
        notices=list(notices or ()),
    )


def no_header_error(path: Path, seen: list[tuple[str, str]]) -> InputError:
    """InputError for a file where no sheet has a Tag header; ``seen`` is (sheet, headers_seen)."""
    sheets = "; ".join(f"sheet {name!r} {texts}" for name, texts in seen) or "no sheets"
    return InputError(
        f"{path}: no 'Tag' column header in the first {HEADER_SEARCH_ROWS} rows ({sheets}); "
        "add a Tag header or map your header to 'tag' in the project config"
    )
