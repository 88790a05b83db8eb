"""Text measuring and wrapping for drawings, without a renderer.

Every label of a drawing is placed from a box computed here, so overlaps can be checked
from the layout alone. Widths come from the advance widths of DejaVu Sans Book and Bold
(``hmtx`` table of ``DejaVuSans.ttf`` / ``DejaVuSans-Bold.ttf``, 2048 units per em, read
with fontTools; the test compares this table with the font file when it is installed).
Drawings name ``DejaVu Sans`` first in ``font-family``. A character not in the table is
measured as the widest glyph of the table (1 em), so unknown text is over-, never
under-estimated.

Vertical extent: DejaVu Sans capitals are 1493/2048 = 0.729 em high, the ascender of
``d`` 0.76 em and the descender of ``p`` 0.208 em, so a line of text at size ``s`` is
boxed from ``0.76 s`` above its baseline to ``0.24 s`` below it.

>>> round(text_width_mm("TIC", 2.5), 3)
4.01
>>> wrap_text("Fermenter FV-5 jacket glycol cooling", 30.0, 2.5)
['Fermenter FV-5 jacket', 'glycol cooling']
"""

from __future__ import annotations

from dataclasses import dataclass

#: Font stack written into every drawing; the width table below is DejaVu Sans.
FONT_FAMILY = "DejaVu Sans, Bitstream Vera Sans, Verdana, sans-serif"

UNITS_PER_EM = 2048
_CHARS = " !\"#$%&'()*+,-./0123456789:;<=>?@ABCDEFGHIJKLMNOPQRSTUVWXYZ[\\]^_`abcdefghijklmnopqrstuvwxyz{|}~°µ±–−×ΩΔ²³·"
# Advance widths in font units, in the order of _CHARS (DejaVu Sans 2.37, hmtx table).
_BOOK = (
    651, 821, 942, 1716, 1303, 1946, 1597, 563, 799, 799, 1024, 1716, 651, 739, 651, 690,
    1303, 1303, 1303, 1303, 1303, 1303, 1303, 1303, 1303, 1303, 690, 690, 1716, 1716, 1716, 1087,
    2048, 1401, 1405, 1430, 1577, 1294, 1178, 1587, 1540, 604, 604, 1343, 1141, 1767, 1532, 1612,
    1235, 1612, 1423, 1300, 1251, 1499, 1401, 2025, 1403, 1251, 1403, 799, 690, 799, 1716, 1024,
    1024, 1255, 1300, 1126, 1300, 1260, 721, 1300, 1298, 569, 569, 1186, 569, 1995, 1298, 1253,
    1300, 1300, 842, 1067, 803, 1298, 1212, 1675, 1212, 1212, 1075, 1303, 690, 1303, 1716,
    1024, 1303, 1716, 1024, 1716, 1716, 1565, 1401, 821, 821, 651,
)
_BOLD = (
    713, 934, 1067, 1716, 1425, 2052, 1786, 627, 936, 936, 1071, 1716, 778, 850, 778, 748,
    1425, 1425, 1425, 1425, 1425, 1425, 1425, 1425, 1425, 1425, 819, 819, 1716, 1716, 1716, 1188,
    2048, 1585, 1561, 1503, 1700, 1399, 1399, 1681, 1714, 762, 762, 1587, 1305, 2038, 1714, 1741,
    1501, 1741, 1577, 1475, 1397, 1663, 1585, 2259, 1579, 1483, 1485, 936, 748, 936, 1716, 1024,
    1024, 1382, 1466, 1214, 1466, 1389, 891, 1466, 1458, 702, 702, 1362, 702, 2134, 1458, 1407,
    1466, 1466, 1010, 1219, 979, 1458, 1335, 1892, 1321, 1335, 1192, 1458, 748, 1458, 1716,
    1024, 1507, 1716, 1024, 1716, 1716, 1741, 1585, 897, 897, 778,
)
WIDTHS_BOOK: dict[str, int] = dict(zip(_CHARS, _BOOK, strict=True))
WIDTHS_BOLD: dict[str, int] = dict(zip(_CHARS, _BOLD, strict=True))
_UNKNOWN = UNITS_PER_EM  # 1 em: wider than any glyph in the table except W bold

#: Box above and below the baseline, as fractions of the font size (see module docstring).
ASCENT_EM = 0.76
DESCENT_EM = 0.24
#: Capital height of DejaVu Sans as a fraction of the font size (1493/2048).
CAP_HEIGHT_EM = 1493 / 2048


def text_width_mm(text: str, size_mm: float, bold: bool = False) -> float:
    """Advance width, mm, of one line of ``text`` at font size ``size_mm``.

    ``width = size * sum(advance_units) / 2048``.

    >>> text_width_mm("0", 10.0) == 10.0 * 1303 / 2048
    True
    """
    table = WIDTHS_BOLD if bold else WIDTHS_BOOK
    units = sum(table.get(ch, _UNKNOWN) for ch in text)
    return size_mm * units / UNITS_PER_EM


@dataclass(frozen=True)
class TextBox:
    """Box of a text line, mm: ``x``, ``y`` top-left, ``width``, ``height``."""

    x: float
    y: float
    width: float
    height: float


def text_box(text: str, x_mm: float, baseline_mm: float, size_mm: float,
             anchor: str = "start", bold: bool = False) -> TextBox:
    """The box of one text line drawn at ``(x_mm, baseline_mm)`` with an SVG ``text-anchor``.

    >>> text_box("AB", 10, 20, 2.5, anchor="middle").height
    2.5
    """
    width = text_width_mm(text, size_mm, bold)
    if anchor == "middle":
        left = x_mm - width / 2
    elif anchor == "end":
        left = x_mm - width
    elif anchor == "start":
        left = x_mm
    else:
        raise ValueError(f"text anchor must be start, middle or end, got {anchor!r}")
    return TextBox(left, baseline_mm - ASCENT_EM * size_mm, width, (ASCENT_EM + DESCENT_EM) * size_mm)


def _split_long_word(word: str, width_mm: float, size_mm: float, bold: bool) -> list[str]:
    pieces: list[str] = []
    current = ""
    for ch in word:
        if current and text_width_mm(current + ch, size_mm, bold) > width_mm:
            pieces.append(current)
            current = ch
        else:
            current += ch
    if current:
        pieces.append(current)
    return pieces


def wrap_text(text: str, width_mm: float, size_mm: float, bold: bool = False,
              max_lines: int | None = None, balanced: bool = False) -> list[str]:
    """Greedy word wrap of ``text`` into lines no wider than ``width_mm``.

    Breaks at spaces; a word wider than the line is cut between characters. With
    ``max_lines`` the last kept line ends in an ellipsis (``...``) when text was left out.
    ``balanced`` evens out the line lengths (same number of lines, narrowest width).

    >>> wrap_text("LP steam letdown valve A (Cv 5)", 25, 2.5)
    ['LP steam letdown', 'valve A (Cv 5)']
    >>> wrap_text("HLT-1 make-up water, small valve", 36, 2.5, balanced=True)
    ['HLT-1 make-up', 'water, small valve']
    >>> wrap_text("ABCDEFGHIJ", 6, 2.5)
    ['ABC', 'DEF', 'GHIJ']
    """
    if width_mm <= 0:
        raise ValueError(f"wrap width must be positive, got {width_mm}")
    lines: list[str] = []
    current = ""
    for word in str(text).split():
        candidate = f"{current} {word}" if current else word
        if text_width_mm(candidate, size_mm, bold) <= width_mm:
            current = candidate
            continue
        if current:
            lines.append(current)
        if text_width_mm(word, size_mm, bold) <= width_mm:
            current = word
        else:
            *full, current = _split_long_word(word, width_mm, size_mm, bold)
            lines.extend(full)
    if current:
        lines.append(current)
    if balanced and 1 < len(lines) and (max_lines is None or len(lines) <= max_lines):
        # the narrowest width that still gives the same number of lines (no lone last word)
        low = max(text_width_mm(w, size_mm, bold) for w in str(text).split())
        low = min(low, width_mm)
        high = width_mm
        for _ in range(20):
            mid = (low + high) / 2
            if len(wrap_text(text, mid, size_mm, bold)) <= len(lines):
                high = mid
            else:
                low = mid
        return wrap_text(text, high, size_mm, bold)
    if max_lines is not None and len(lines) > max_lines:
        kept = lines[:max_lines]
        last = kept[-1]
        while last and text_width_mm(last + "...", size_mm, bold) > width_mm:
            last = last[:-1]
        kept[-1] = last.rstrip() + "..."
        return kept
    return lines
