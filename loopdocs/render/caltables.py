"""Calibration tables as the sheet prints them: the views of
``loopdocs.calibration.presentation`` (heads, rows, tolerance and notes, the same the
terminal and the workbook show) with their widths and heights on the sheet.

Nothing is worded or computed here beyond layout: column widths are measured with the
font's advance widths (``loopdocs.draw.text``), heights estimated from the wrapped
caption and notes; ``render.packing`` places them on the sheet by these sizes.

A note (or a tolerance basis) that two or more tables of one sheet would print word for
word is printed once among the sheet's numbered notes, and each of those tables refers
to it by its number (:func:`share_notes`); the terminal and the workbook keep every
table's notes in full.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, replace

from loopdocs.calc.tables import CalibrationTable
from loopdocs.calibration.presentation import TableView, present_tables

TABLE_TEXT_MM = 2.5
"""Font size of the calibration tables (dense tables: 1.82 mm capitals)."""
CAPTION_TAG_MM = 3.5
"""Font size of the tag at the head of a table's caption (``sheet.css`` ``table.cal caption .tag``)."""
SPARE_MM = 1.0
"""Added to the estimated height of a table: for every table of the example project the
estimate was at most 0.3 mm short of the rendered height (and at most one line over)."""
CELL_PAD_MM = 2.6
"""Left and right cell padding plus the rule, per column (``sheet.css`` ``table.dense``)."""
MIN_TABLE_MM = 54.0
"""Narrowest table, so that its caption and notes do not wrap into a tall column; two
side by side fit beside a 160 mm range chart in the A3 drawing area (278.6 mm wide,
4 mm gaps: 160 + 4 + 54 + 4 + 54 = 276)."""
LONG_HEAD_MM = 40.0
"""A column head longer than this may break into three lines (``Simulate mV (ref. junction
0 degC)``), so that its table stays narrow."""
LINE_HEIGHT = 1.1
"""Line height of the calibration tables, x the type (``sheet.css`` ``table.cal``)."""
ROW_PAD_MM = 0.25 + 0.25 + 0.25
"""Top and bottom cell padding and one 0.25 mm rule per row (``sheet.css`` ``table.cal``)."""
NOTE_PAD_MM = 2.3
"""Left and right padding of the notes cell under a table and its rules (1 + 1 + 0.25 mm,
``sheet.css`` ``table.cal td``; 0.05 mm spare)."""
BODY_LINE_HEIGHT = 1.0
"""Line height of a table's value rows (``sheet.css`` ``table.cal tbody td``): figures have
no descenders, the rules between rows keep them apart; captions, heads and notes keep
``LINE_HEIGHT``."""
BODY_PAD_MM = 0.15 + 0.15 + 0.25
"""Top and bottom padding of a value cell and its 0.25 mm rule (``sheet.css`` ``table.cal tbody td``)."""
WRAP_SLACK_MM = 0.4
"""Added to the longest word of a wrapped column (:meth:`DisplayTable.wrapped`): the
renderer's measure of a word may differ a little from ours, and a word must never break."""


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
    note_emphasis: tuple[str, ...] = ()
    """``presentation.Note.emphasis`` of each note (``action``, ``error``: kept with the table)."""
    tolerance_basis: str = ""
    """The basis in brackets at the end of ``tolerance`` (``presentation.TableView``)."""
    note_refs: tuple[int, ...] = ()
    """Numbers of the sheet notes that hold this table's shared notes (:func:`share_notes`)."""
    min_width_mm: float = MIN_TABLE_MM
    """Narrowest the table is printed: its columns are stretched to it (:meth:`widened`)."""
    wrap_mm: float = 0.0
    """Widest a column of words is set, its cells wrapped at their spaces (0: each cell on
    one line; :meth:`wrapped`)."""
    caption_mark_mm: tuple[float, float] = (0.0, 0.0)
    """Width and height of the revision marks beside the caption's tags (``draw.revision_marks``)."""

    @property
    def refs_text(self) -> str:
        """``'see note 5'``, ``'see notes 5, 6'``, or ``''``."""
        if not self.note_refs:
            return ""
        return f"see note{'s' if len(self.note_refs) > 1 else ''} {', '.join(str(n) for n in self.note_refs)}"

    @property
    def tag_parts(self) -> tuple[str, ...]:
        """The tag heading the caption in words (``PV-1A,``, ``PV-1B``): the caption may
        break between them, never inside one (at the hyphen of a tag)."""
        return tuple(self.tag.split())

    @property
    def foot_lines(self) -> tuple[str, ...]:
        """The notes printed under the table: its own, the last followed by the
        reference to the sheet notes in brackets (``... (see note 5)``), or the
        reference alone."""
        if not self.refs_text:
            return tuple(self.notes)
        if not self.notes:
            return (self.refs_text,)
        return (*self.notes[:-1], f"{self.notes[-1]} ({self.refs_text})")

    def align(self, column: int) -> str:
        """``text`` or ``num``: the CSS class of a column's cells."""
        return "text" if column in self.text_columns else "num"

    @property
    def column_widths_mm(self) -> tuple[float, ...]:
        """Each column as wide as its widest cell (a head may break at its spaces into
        two lines, a head longer than ``LONG_HEAD_MM`` into three), measured with the font's advance widths."""
        from loopdocs.draw.text import text_width_mm, wrap_text

        widths = []
        for i, head in enumerate(self.heads):
            natural = text_width_mm(head, TABLE_TEXT_MM, bold=True)
            broken = [max(text_width_mm(line, TABLE_TEXT_MM, bold=True)
                          for line in wrap_text(head, natural / n + 3.0, TABLE_TEXT_MM, bold=True)[:n])
                      for n in ((2, 3) if natural > LONG_HEAD_MM else (2,))]
            cells = max((text_width_mm(row[i], TABLE_TEXT_MM) for row in self.rows), default=0.0)
            if self.wrap_mm and i in self.text_columns:
                longest = max((text_width_mm(w, TABLE_TEXT_MM) for row in self.rows for w in row[i].split()), default=0.0)
                cells = max(longest + WRAP_SLACK_MM, min(cells, self.wrap_mm - CELL_PAD_MM))
            # a head breaks at its spaces only (not after the hyphen of a tag): its longest word fits
            word = max(text_width_mm(w, TABLE_TEXT_MM, bold=True) for w in head.split()) if head.strip() else 0.0
            widths.append(max(min(natural, *broken), word, cells) + CELL_PAD_MM)
        stretch = max(1.0, self.min_width_mm / sum(widths)) if widths else 1.0
        return tuple(round(w * stretch, 1) for w in widths)

    @property
    def width_mm(self) -> float:
        return round(sum(self.column_widths_mm), 1)

    def wrapped(self, column_mm: float) -> "DisplayTable":
        """The same table with its columns of words at most ``column_mm`` wide (a longer
        cell on two or more lines): narrower, a little taller."""
        return replace(self, wrap_mm=column_mm)

    def row_lines(self, row: tuple[str, ...]) -> int:
        """Lines a row takes: one, or as many as its longest wrapped cell (:meth:`wrapped`)."""
        if not self.wrap_mm:
            return 1
        from loopdocs.draw.text import wrap_text

        widths = self.column_widths_mm
        return max([1] + [len(wrap_text(row[i], widths[i] - CELL_PAD_MM + WRAP_SLACK_MM / 2, TABLE_TEXT_MM))
                          for i in self.text_columns if row[i]])

    def narrowed(self, width_mm: float) -> "DisplayTable":
        """The same table printed as narrow as its columns allow, at least ``width_mm``:
        its caption and notes wrap into more lines, so it is taller."""
        return replace(self, min_width_mm=width_mm)

    def widened(self, width_mm: float) -> "DisplayTable":
        """The same table printed at least ``width_mm`` wide: its caption and notes wrap
        into fewer lines, so it is shorter (a wide, low table fits under a range chart)."""
        return replace(self, min_width_mm=max(self.min_width_mm, width_mm))

    @property
    def height_mm(self) -> float:
        """Height as printed (``sheet.css`` ``table.dense``, ``table.cal``): the caption
        (tag in 3.5 mm type, words and tolerance wrapped to the width), the heads at
        their column widths, the value rows (``BODY_LINE_HEIGHT``, ``BODY_PAD_MM``; a wrapped
        cell's lines, :meth:`row_lines`), the notes wrapped; each other line ``LINE_HEIGHT``
        x the type, 0.5 mm padding and a 0.25 mm rule per row (with ``SPARE_MM`` added: never
        below the rendered height and at most 7 mm over, tests/test_sheet_layout.py)."""
        from loopdocs.draw.text import text_width_mm, wrap_text

        line = TABLE_TEXT_MM * LINE_HEIGHT
        rule = ROW_PAD_MM
        inner = max(self.width_mm - NOTE_PAD_MM, 10.0)
        # the tag in larger type heads the caption, each of its words unbroken: a word as
        # wide stands in for each (wrap_text drops leading spaces)
        n_mm = text_width_mm("n", TABLE_TEXT_MM)
        stand_ins = ["n" * math.ceil(text_width_mm(part, CAPTION_TAG_MM, bold=True) / n_mm) for part in self.tag_parts]
        stand_ins += ["n" * math.ceil(self.caption_mark_mm[0] / n_mm)] if self.caption_mark_mm[0] else []
        title_lines = wrap_text(" ".join([*stand_ins, self.title]), self.width_mm, TABLE_TEXT_MM)
        tag_lines = sum(1 for text in title_lines if "nnn" in text) or 1
        caption = CAPTION_TAG_MM * LINE_HEIGHT * tag_lines + line * (len(title_lines) - tag_lines) + 0.6
        caption += max(0.0, self.caption_mark_mm[1] - CAPTION_TAG_MM * LINE_HEIGHT)  # a mark is taller than the tag
        if self.tolerance:
            caption += line * len(wrap_text(f"tolerance {self.tolerance}", self.width_mm, TABLE_TEXT_MM))
        head_lines = max((len(wrap_text(h, w - CELL_PAD_MM + 0.2, TABLE_TEXT_MM, bold=True))
                          for h, w in zip(self.heads, self.column_widths_mm)), default=1)
        foot = self.foot_lines
        notes = sum(len(wrap_text(n, inner, TABLE_TEXT_MM)) for n in foot) * line + (rule if foot else 0.0)
        rows = sum(self.row_lines(row) * TABLE_TEXT_MM * BODY_LINE_HEIGHT + BODY_PAD_MM for row in self.rows)
        return round(caption + head_lines * line + rule + rows + notes + SPARE_MM, 1)


def display_table(view: TableView) -> DisplayTable:
    """The printed form of one view: caption words, heads with units, rows, tolerance, notes."""
    return DisplayTable(tag=view.tag, title=view.words, heads=view.heads, rows=view.rows,
                        tolerance=view.tolerance, notes=view.note_texts,
                        note_emphasis=tuple(n.emphasis for n in view.notes), tolerance_basis=view.tolerance_basis)


def display_tables(tables: Sequence[CalibrationTable]) -> list[DisplayTable]:
    """The printed tables of one loop in the order given (loop checks of one split group
    side by side, ``presentation.present_tables``); the fail-action tests of the loop's
    valves in one table, a row per valve (:func:`merge_fail_actions`); their stroke tests
    at the same travel points in one table, a signal column per valve (:func:`merge_strokes`)."""
    views = present_tables(tables)
    printed = [display_table(view) for view in views]
    final = {id(table) for view, table in zip(views, printed) if view.kind == FINAL_ELEMENT}
    kept = merge_fail_actions(printed, [view.kind == FAIL_ACTION for view in views])
    return merge_strokes(kept, [id(table) in final for table in kept])


FINAL_ELEMENT = "final element"
TRAVEL_HEAD = "Expect % travel"
_TOLERANCE_PARTS = re.compile(r"^(.*? = )(±\S+ \S+)( = .*)$")


def merge_strokes(tables: Sequence[DisplayTable], stroke: Sequence[bool]) -> list[DisplayTable]:
    """The valve stroke tables (``stroke[i]``) of the loop's valves that expect the same
    travel at the same rows, with their signal in the same unit, as one table at the place
    of the first: a signal column per valve (``Apply mA LV-1A``), the travel column once.
    A tolerance that differs only in the signal's units is given per valve, in brackets
    after each; each valve's notes are kept, headed by its tag where they do not name it
    (a note all of them print word for word, once). The terminal, the workbook and
    ``verify`` keep one stroke test per valve: only the printing is shared.

    >>> a = DisplayTable("PV-1A", "valve stroke", ("Apply psig", "Expect % travel"), (("3.0", "0.0"), ("4.0", "100.0")),
    ...                  "±1 % of span = ±0.01 psig = ±1 % travel", ("opens 3 to 4 psig",))
    >>> b = replace(a, tag="PV-1B", rows=(("4.0", "0.0"), ("7.0", "100.0")), tolerance="±1 % of span = ±0.03 psig = ±1 % travel",
    ...             notes=("opens 4 to 7 psig",))
    >>> (m,) = merge_strokes([a, b], [True, True])
    >>> m.tag, m.heads, m.rows
    ('PV-1A, PV-1B', ('Apply psig PV-1A', 'Apply psig PV-1B', 'Expect % travel'), (('3.0', '4.0', '0.0'), ('4.0', '7.0', '100.0')))
    >>> m.tolerance, m.notes
    ('±1 % of span = ±0.01 psig (PV-1A), ±0.03 psig (PV-1B) = ±1 % travel', ('PV-1A: opens 3 to 4 psig', 'PV-1B: opens 4 to 7 psig'))
    """
    groups: dict[tuple, list[int]] = {}
    for i, (table, merge) in enumerate(zip(tables, stroke)):
        if not merge or len(table.heads) != 2 or table.heads[1] != TRAVEL_HEAD or table.text_columns:
            continue
        parts = _TOLERANCE_PARTS.match(table.tolerance) if table.tolerance else None
        tolerance_key = (parts.group(1), parts.group(3)) if parts else (table.tolerance,)
        travel = tuple(row[1] for row in table.rows)
        groups.setdefault((table.heads, travel, tolerance_key, table.tolerance_basis, table.title), []).append(i)
    merged: dict[int, DisplayTable] = {}
    dropped: set[int] = set()
    for members in groups.values():
        if len(members) < 2:
            continue
        parts = [tables[i] for i in members]
        first = parts[0]
        tolerance = first.tolerance
        if len({t.tolerance for t in parts}) > 1:
            pieces = [_TOLERANCE_PARTS.match(t.tolerance) for t in parts]
            tolerance = pieces[0].group(1) + ", ".join(f"{m.group(2)} ({t.tag})" for m, t in zip(pieces, parts)) \
                + pieces[0].group(3)
        shared = set.intersection(*(set(t.notes) for t in parts))
        notes: list[str] = []
        emphasis: list[str] = []
        for table in parts:
            for note, e in zip(table.notes, table.note_emphasis or ("",) * len(table.notes)):
                text = note if note in shared or table.tag in note else f"{table.tag}: {note}"
                if text not in notes:
                    notes.append(text)
                    emphasis.append(e)
        merged[members[0]] = replace(
            first, tag=", ".join(t.tag for t in parts), heads=(*(f"{first.heads[0]} {t.tag}" for t in parts), TRAVEL_HEAD),
            rows=tuple((*(t.rows[k][0] for t in parts), row[1]) for k, row in enumerate(first.rows)),
            tolerance=tolerance, notes=tuple(notes), note_emphasis=tuple(emphasis))
        dropped |= set(members[1:])
    return [merged.get(i, table) for i, table in enumerate(tables) if i not in dropped]


FAIL_ACTION = "fail action"
SET_SIGNAL = re.compile(r"^set the signal to [^(]+\(")
SET_SIGNAL_ROWS = "set the signal to the Apply value of its row ("
"""How the merged fail-action table words its instruction: each row has its own signal."""


def merge_fail_actions(tables: Sequence[DisplayTable], fail_action: Sequence[bool]) -> list[DisplayTable]:
    """The fail-action tables (``fail_action[i]``) that share their heads and tolerance as
    one table at the place of the first: a ``Tag`` column, a row per valve, each note once
    (the instruction ``set the signal to 3.5 psig (...), then remove the air ...`` worded
    for every row: ``set the signal to the Apply value of its row (...)``). One fail-action
    test per valve, as in the workbook: only the printing is shared. Tables whose
    instruction is worded otherwise are left as they are.

    >>> a = DisplayTable("PV-1A", "fail action", ("Apply psig",), (("3.5",),), "±1 %",
    ...                  ("set the signal to 3.5 psig (valve travel 50 %), then remove the air", "FC: closed"))
    >>> b = replace(a, tag="PV-1B", rows=(("5.5",),), notes=("set the signal to 5.5 psig (valve travel 50 %), then remove the air", "FC: closed"))
    >>> (m,) = merge_fail_actions([a, b], [True, True])
    >>> m.tag, m.heads, m.rows, m.notes, m.text_columns
    ('PV-1A, PV-1B', ('Tag', 'Apply psig'), (('PV-1A', '3.5'), ('PV-1B', '5.5')), ('set the signal to the Apply value of its row (valve travel 50 %), then remove the air', 'FC: closed'), (0,))
    """
    groups: dict[tuple, list[int]] = {}
    for i, (table, merge) in enumerate(zip(tables, fail_action)):
        if merge and table.notes and SET_SIGNAL.match(table.notes[0]):
            groups.setdefault((table.heads, table.tolerance, table.tolerance_basis), []).append(i)
    merged: dict[int, DisplayTable] = {}
    dropped: set[int] = set()
    for members in groups.values():
        if len(members) < 2:
            continue
        parts = [tables[i] for i in members]
        notes: list[str] = []
        emphasis: list[str] = []
        for table in parts:
            for k, (note, e) in enumerate(zip(table.notes, table.note_emphasis or ("",) * len(table.notes))):
                text = SET_SIGNAL.sub(SET_SIGNAL_ROWS, note) if k == 0 else note
                if text not in notes:
                    notes.append(text)
                    emphasis.append(e)
        first = parts[0]
        merged[members[0]] = replace(
            first, tag=", ".join(t.tag for t in parts), heads=("Tag", *first.heads),
            rows=tuple((t.tag, *row) for t in parts for row in t.rows),
            text_columns=(0, *(c + 1 for c in first.text_columns)), notes=tuple(notes), note_emphasis=tuple(emphasis))
        dropped |= set(members[1:])
    return [merged.get(i, table) for i, table in enumerate(tables) if i not in dropped]


def share_notes(tables: Sequence[DisplayTable], first_number: int) -> tuple[list[DisplayTable], list[str]]:
    """Notes printed word for word with two or more of the tables, and tolerance bases
    shared likewise, taken out of the tables and numbered from ``first_number`` in the
    order first met; returns the tables (each with ``note_refs`` to its shared notes,
    a shared tolerance basis replaced by ``(note n)``) and the sheet notes to add.
    Notes to act on or that report index errors stay with their table.

    >>> a = DisplayTable("PV-1", "valve stroke", ("Apply psig",), (("3",),), "±1 % (by practice)",
    ...                  ("pneumatic split", "own"), tolerance_basis="by practice")
    >>> b = replace(a, tag="PV-2", notes=("pneumatic split",))
    >>> tables, notes = share_notes([a, b], 3)
    >>> notes, tables[0].tolerance, tables[0].notes, tables[0].refs_text
    (['Tolerance: by practice.', 'Pneumatic split.'], '±1 % (note 3)', ('own',), 'see note 4')
    """
    def movable(table: DisplayTable) -> list[str]:
        emphasis = table.note_emphasis or ("",) * len(table.notes)
        return [n for n, e in zip(table.notes, emphasis) if not e]

    counts: dict[str, int] = {}
    for table in tables:
        keys = set(movable(table)) | ({table.tolerance_basis + "\0basis"} if table.tolerance_basis else set())
        for note in keys:
            counts[note] = counts.get(note, 0) + 1
    numbers: dict[str, int] = {}
    sheet_notes: list[str] = []

    def number(key: str, text: str) -> int:
        if key not in numbers:
            numbers[key] = first_number + len(sheet_notes)
            sheet_notes.append(text if text.endswith(".") else text + ".")
        return numbers[key]

    result = []
    for table in tables:
        tolerance = table.tolerance
        basis_key = table.tolerance_basis + "\0basis"
        suffix = f" ({table.tolerance_basis})"
        if table.tolerance_basis and tolerance.endswith(suffix) and counts.get(basis_key, 0) > 1:
            n = number(basis_key, f"Tolerance: {table.tolerance_basis}")
            tolerance = tolerance[:-len(suffix)] + f" (note {n})"
        kept, emphasis, refs = [], [], []
        for note, e in zip(table.notes, table.note_emphasis or ("",) * len(table.notes)):
            if not e and counts.get(note, 0) > 1:
                refs.append(number(note, note[:1].upper() + note[1:]))
            else:
                kept.append(note)
                emphasis.append(e)
        result.append(replace(table, tolerance=tolerance, notes=tuple(kept), note_emphasis=tuple(emphasis),
                              note_refs=tuple(refs)))
    return result, sheet_notes
