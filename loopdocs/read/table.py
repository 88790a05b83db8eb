"""What the reader hands on: the rows of the index with the cell each value came from.

The reader does not interpret values. Text is stripped of surrounding spaces (blank text
becomes ``None``), whole numbers become ``int``, dates become ISO 8601 text, numbers typed
as text stay text: the model converts them and reports the cell when it cannot.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from loopdocs.core.findings import Location

CellValue = str | float | int | bool | None


@dataclass(frozen=True)
class ReadNotice:
    """Something the reader did or could not do, tied to a cell (a formula with no
    cached value, a spreadsheet error, a file decoded as Windows-1252)."""

    location: Location
    message: str


@dataclass
class IndexRow:
    """One data row: ``values`` by column key, ``extra`` by unknown header text.

    Only non-blank cells are present: ``values.get(key)`` is ``None`` for a blank cell."""

    row: int
    values: dict[str, CellValue]
    extra: dict[str, CellValue] = field(default_factory=dict)


@dataclass
class IndexTable:
    """The index as read: where it came from, its columns (key -> letter) and its rows."""

    path: Path
    sheet: str
    header_row: int
    columns: dict[str, str]
    extra_columns: dict[str, str]
    rows: list[IndexRow]
    notices: list[ReadNotice] = field(default_factory=list)

    def location(self, row: int, key: str) -> Location | None:
        """The cell of column ``key`` (a column key or an unknown header) in ``row``.

        >>> t = IndexTable(Path("i.xlsx"), "Index", 5, {"tag": "B"}, {"Spare": "AB"}, [])
        >>> str(t.location(7, "tag")), str(t.location(7, "Spare")), t.location(7, "cv")
        ('Index!B7', 'Index!AB7', None)
        """
        letter = self.columns.get(key) or self.extra_columns.get(key)
        if letter is None:
            return None
        return Location(self.sheet, row, letter)
