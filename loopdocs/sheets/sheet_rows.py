"""Rows of a streaming (write-only) openpyxl sheet written as SpreadsheetML text.

openpyxl's write-only mode makes an object per cell and serialises it through
ElementTree, about 15 us a cell; the technicians' workbook of 10,000 loops has some 14
million cells. Here a row is formatted as one string, the text openpyxl itself writes for
the same cells (ECMA-376 Part 1 §18.3.1.73 ``row``, §18.3.1.4 ``c`` with ``r``, ``s``
and ``t``, §18.3.1.53 ``is`` and §18.4.12 ``t`` for inline text, §18.3.1.96 ``v``):

    <row r="12"><c r="A12" s="13" t="inlineStr"><is><t>TE-1/02</t></is></c><c r="D12" s="14" t="n"><v>25</v></c></row>

Merged ranges are kept as text too (:meth:`RowWriter.merge`). Everything else of the
sheet (properties, panes, columns, protection, validations, conditional formats, page
setup) and of the package (styles, workbook, defined names) is still written by openpyxl. Cell styles are openpyxl ``StyleArray``
objects (:func:`loopdocs.sheets.cells.cell_style`) numbered in the workbook's style table
at their first use, as openpyxl numbers them. Values are bound as openpyxl binds them
(``openpyxl.cell.cell.Cell._bind_value``): text longer than 32,767 characters is cut,
characters XML forbids are refused (``IllegalCharacterError``), an error code such as
``#N/A`` is an error cell; text is always written as text, never as a formula (the OWASP
formula-injection guidance, as :func:`loopdocs.sheets.cells.keep_as_text` does for a
whole workbook).
"""

from __future__ import annotations

from math import isinf, isnan
from typing import Any, Sequence


class CellStyle:
    """A cell style made once (font, fill, border, alignment, protection, number format)
    and numbered in the workbook's style table when a cell first uses it."""

    __slots__ = ("array", "index")

    def __init__(self, array: Any) -> None:
        self.array = array
        self.index: int | None = None if array is not None and any(array) else 0  # a default style writes no s=


_INFINITE = (float("inf"), float("-inf"))


def _escape(text: str) -> str:
    """Text as XML character data (ElementTree's ``_escape_cdata``: ``&``, ``<``, ``>``)."""
    if "&" in text:
        text = text.replace("&", "&amp;")
    if "<" in text:
        text = text.replace("<", "&lt;")
    if ">" in text:
        text = text.replace(">", "&gt;")
    return text


#: Column letters by column number (index 0 unused), extended as wider rows come.
_LETTERS = [""]


def _more_letters(n_columns: int) -> None:
    from openpyxl.utils import get_column_letter

    _LETTERS.extend(get_column_letter(c) for c in range(len(_LETTERS), max(n_columns, 26) + 1))


class RowWriter:
    """Writes the ``sheetData`` of a write-only openpyxl sheet ``ws`` row by row.

    Make it after the sheet's column widths, row heights, panes and page setup are set
    (openpyxl writes them before the rows) and before any ``ws.append``; ``ws.close()``
    (or saving the workbook) ends the rows and writes the rest of the sheet. Row numbers
    count from 1 in the order rows are written.
    """

    def __init__(self, ws: Any) -> None:
        from openpyxl.cell.cell import ERROR_CODES, ILLEGAL_CHARACTERS_RE
        from openpyxl.compat.numbers import NUMERIC_TYPES

        if ws._writer is not None:
            raise ValueError(f"sheet {ws.title!r} already has rows written by openpyxl")
        self._ws = ws
        self._table = ws.parent._cell_styles
        self._illegal = ILLEGAL_CHARACTERS_RE.search
        self._errors = frozenset(ERROR_CODES)
        self._numbers = NUMERIC_TYPES
        self._letters = _LETTERS
        self._row_attrs = {r: "".join(f' {k}="{v}"' for k, v in dim)
                           for r, dim in ws.row_dimensions.items() if dict(dim)}
        self.row = 0  # the last row written
        writer = _TextSheetWriter(ws)
        self._merges = writer.merges
        ws._writer = writer
        writer.write_top()
        self._write = writer.sheet_data()
        ws._rows = _SheetDataEnd(writer)

    @property
    def sheet(self) -> Any:
        """The openpyxl sheet the rows go to."""
        return self._ws

    def merge(self, ref: str) -> None:
        """Merge the cells of ``ref`` (``A7:N7``; ECMA-376 Part 1 §18.3.1.55 ``mergeCell``), kept as
        text, not parsed into openpyxl ranges: the sheet's ranges must not overlap."""
        self._merges.append(ref)

    def style_index(self, style: CellStyle) -> int:
        """``style``'s number in the workbook's cell style table (``cellXfs``), given at first use."""
        if style.index is None:
            style.index = self._table.add(style.array)
        return style.index

    def _text(self, text: str) -> str:
        if len(text) > 32767:
            text = text[:32767]
        if self._illegal(text):
            from openpyxl.utils.exceptions import IllegalCharacterError

            raise IllegalCharacterError(f"{text} cannot be used in worksheets.")
        return text

    def cell(self, ref: str, value: Any, style: CellStyle | None = None) -> str:
        """One ``c`` element (empty text when an unstyled cell holds nothing)."""
        s = ""
        if style is not None:
            index = style.index if style.index is not None else self.style_index(style)
            if index:
                s = f' s="{index}"'
        kind = value.__class__
        if kind is float or kind is int:  # the most frequent, first
            if value != value or value in _INFINITE:  # openpyxl's safe_string: no number
                return f'<c r="{ref}"{s} t="n"><v /></c>'
            return f'<c r="{ref}"{s} t="n"><v>{"%.16g" % value}</v></c>'
        if value is None:
            return f'<c r="{ref}"{s} t="n" />' if s else ""
        if kind is str or isinstance(value, str):
            if not (value.isascii() and value.isprintable()) or len(value) > 32767:
                value = self._text(value)
            if value == "":
                return f'<c r="{ref}"{s} t="inlineStr" />'
            if value in self._errors:
                return f'<c r="{ref}"{s} t="e"><v>{value}</v></c>'
            space = ""
            if value[0].isspace() or value[-1].isspace():
                stripped = value.strip()
                space = ' xml:space="preserve"' if stripped and stripped != value else ""
            return f'<c r="{ref}"{s} t="inlineStr"><is><t{space}>{_escape(value)}</t></is></c>'
        if isinstance(value, bool):
            return f'<c r="{ref}"{s} t="b"><v>{int(value)}</v></c>'
        if isinstance(value, self._numbers):
            if isnan(value) or isinf(value):
                return f'<c r="{ref}"{s} t="n"><v /></c>'
            return f'<c r="{ref}"{s} t="n"><v>{"%.16g" % value}</v></c>'
        raise TypeError(f"cannot write {value!r} ({type(value).__name__}) to a workbook cell")

    def append(self, cells: Sequence[tuple[Any, CellStyle | None] | None]) -> int:
        """Write the next row: ``cells`` holds ``(value, style)`` per column from A, or
        ``None`` for a column left out; the row number."""
        self.row = r = self.row + 1
        letters, cell = self._letters, self.cell
        if len(cells) >= len(letters):
            _more_letters(len(cells))
        parts = [f'<row r="{r}"{self._row_attrs.get(r, "")}>']
        for c, item in enumerate(cells, 1):
            if item is not None:
                parts.append(cell(f"{letters[c]}{r}", item[0], item[1]))
        parts.append("</row>")
        self._write("".join(parts))
        return r

    def append_values(self, values: Sequence[Any]) -> int:
        """Write the next row of unstyled values (``None`` leaves a cell out); the row number."""
        self.row = r = self.row + 1
        letters, cell = self._letters, self.cell
        if len(values) >= len(letters):
            _more_letters(len(values))
        parts = [f'<row r="{r}"{self._row_attrs.get(r, "")}>']
        for c, value in enumerate(values, 1):
            if value is not None:
                parts.append(cell(f"{letters[c]}{r}", value))
        parts.append("</row>")
        self._write("".join(parts))
        return r


def _text_sheet_writer_class() -> type:
    from openpyxl.worksheet._writer import WorksheetWriter
    from openpyxl.xml.constants import SHEET_MAIN_NS
    from openpyxl.xml.functions import tostring

    class TextSheetWriter(WorksheetWriter):  # type: ignore[misc, valid-type]
        """openpyxl's worksheet writer with the part written as text to its temporary file:
        the elements before and after the rows serialised by ElementTree as openpyxl
        serialises them, the rows given as text by :class:`RowWriter`."""

        def get_stream(self):  # type: ignore[no-untyped-def]
            with open(self.out, "w", encoding="utf-8", newline="") as out:
                self._out = out
                out.write(f'<worksheet xmlns="{SHEET_MAIN_NS}">')
                try:
                    while True:
                        element = (yield)
                        if element is True:  # openpyxl asks for the stream of its rows
                            raise RuntimeError("rows of this sheet are written by RowWriter")
                        if element is not None:
                            out.write(tostring(element).decode("utf-8"))
                except GeneratorExit:
                    pass
                out.write("</worksheet>")
            self._out = None  # the closed file is not kept until the workbook is saved

        def __init__(self, ws: Any) -> None:
            self.merges: list[str] = []
            super().__init__(ws)

        def write_merged_cells(self) -> None:
            """``mergeCells`` of the ranges given to :meth:`RowWriter.merge` and any of ``ws.merged_cells``."""
            refs = [str(ref) for ref in self.ws.merged_cells] + self.merges
            if refs:
                self._out.write(f'<mergeCells count="{len(refs)}">'
                                + "".join(f'<mergeCell ref="{ref}" />' for ref in refs) + "</mergeCells>")
            self.merges = []

        def sheet_data(self) -> Any:
            self._out.write("<sheetData>")
            return self._out.write

        def end_sheet_data(self) -> None:
            self._out.write("</sheetData>")

    return TextSheetWriter


class _SheetDataEnd:
    """Stands in for openpyxl's row generator of a write-only sheet: closing it ends ``sheetData``."""

    def __init__(self, writer: Any) -> None:
        self._writer = writer

    def close(self) -> None:
        self._writer.end_sheet_data()

    def send(self, row: Any) -> None:
        raise RuntimeError("rows of this sheet are written by RowWriter, not ws.append")


_WRITER_CLASS: type | None = None


def _TextSheetWriter(ws: Any) -> Any:  # noqa: N802 - constructs the class made on first use
    global _WRITER_CLASS
    if _WRITER_CLASS is None:
        _WRITER_CLASS = _text_sheet_writer_class()
    return _WRITER_CLASS(ws)
