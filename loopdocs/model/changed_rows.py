"""Two issues of the index cut down to the rows a comparison of them needs (pure; the
tables come from the reader, nothing is read here).

On a live project most rows of two successive issues are the same; turning every one of
them into records, twice, only to find them equal is most of what a comparison costs.
:func:`rows_to_compare` compares the rows as read (every cell, its value and its type,
the row number aside) and keeps, in each issue, only:

- the rows of every tag whose rows differ between the issues or that is in one issue
  only (a tag on more than one row counts by all its rows, in order), and
- the rows of every tag *linked* to a kept tag in either issue, followed to the end:
  two tags are linked when they are in the same loop (so each kept loop is whole), or
  when one names the other in its Driven By cell (so a split group kept is whole: its
  controller, converters and every element, and everything they lead to).

Every result of :func:`loopdocs.model.changes.compare_projects` and of the calibration
comparison rests on a tag's own row and on the rows of its loop and split group, so the
cut tables give the same answer as the whole ones; a tag left out is in both issues
with equal rows and equal neighbours, and is reported by neither. Two issues read with
different tag grammars are not cut (``loopdocs.model.loading.load_pair``): the same row
may then be another tag.

Example: two issues of 10,000 rows with 40 cells edited keep about 150 rows each.
"""

from __future__ import annotations

import re
from collections import defaultdict
from dataclasses import replace
from typing import Any, Iterable

from loopdocs.model.from_rows import loop_id_for, tag_of_cell
from loopdocs.model.tagname import DEFAULT_TAG_PATTERN, parse_tag
from loopdocs.read.table import IndexRow, IndexTable


#: The last run of digits in a text: the number of a tag in the default grammar.
_LAST_DIGITS = re.compile(r"([0-9]+)[^0-9]*$")


def _types_match(a: dict[str, Any], b: dict[str, Any], same_order: bool) -> bool:
    """Of two equal dicts of cells, every value of the same type too (``1`` and ``True``
    compare equal in Python but are different cells). ``same_order``: both hold their keys
    in the same order (rows of two tables with the same columns): two lists of types."""
    if same_order:
        return list(map(type, a.values())) == list(map(type, b.values()))
    return all(type(value) is type(b[key]) for key, value in a.items())


def _tag_names(table: IndexTable, known: dict[str, str]) -> list[str | None]:
    """The tag each row's record will have (``None``: no Tag cell); ``known``: text of a
    Tag cell -> the tag, shared by both issues (most rows are in both)."""
    names: list[str | None] = []
    for row in table.rows:
        raw = row.values.get("tag")
        if raw is None:
            names.append(None)
        elif type(raw) is str:
            name = known.get(raw)
            if name is None:
                name = known[raw] = tag_of_cell(raw)
            names.append(name)
        else:
            names.append(tag_of_cell(raw))
    return names


class _Issue:
    """One issue's rows by tag (as its record will name it), and the links between its
    tags (module docstring)."""

    def __init__(self, table: IndexTable, known: dict[str, str]) -> None:
        self.table = table
        self.known = known
        self.names = _tag_names(table, known)
        self.rows: dict[str, list[IndexRow]] = defaultdict(list)
        for name, row in zip(self.names, table.rows):
            if name is not None:
                self.rows[name].append(row)

    def differs_from(self, other: "_Issue") -> set[str]:
        """Tags whose rows are not the same in both issues (every cell, value and type)."""
        same_order = (self.table.columns == other.table.columns
                      and self.table.extra_columns == other.table.extra_columns)
        out = set(self.rows.keys() ^ other.rows.keys())
        theirs_by_name = other.rows
        for name, rows in self.rows.items():
            theirs = theirs_by_name.get(name)
            if theirs is None:
                continue
            if len(rows) != len(theirs):
                out.add(name)
                continue
            for a, b in zip(rows, theirs):
                if (a.values != b.values or a.extra != b.extra or not _types_match(a.values, b.values, same_order)
                        or (a.extra and not _types_match(a.extra, b.extra, same_order))):
                    out.add(name)
                    break
        return out

    def order_of(self, names: set[str]) -> list[str]:
        """The tags in ``names`` in the order of their rows."""
        return [name for name in self.names if name in names]

    def link(self, pattern: Any, loop_ids: dict[tuple[str, Any, type], str | None]) -> None:
        """Index the links: Driven By both ways, and the candidates for each loop's tags.

        A loop's tags are found from two indexes, worked out for every row without parsing
        its tag: by the last run of digits of the tag, and by the text of the Loop cell.
        With the default tag grammar the number is the tag's last run of digits, and a loop
        id is either the area, variable and number of its tags (so it ends with that
        number) or, where the Loop cell disagrees with its tag, the cell's text: every tag
        of loop L is under L's last digits or under L itself. Only these candidates are
        parsed (:meth:`loop_members`). With a project's own grammar every tag is parsed.
        ``loop_ids``: (tag, Loop cell, its type) -> loop id, shared by both issues."""
        # by tag, a list: a tag on two rows links through both (the model keeps the first)
        self.pattern, self.loop_ids = pattern, loop_ids
        self.drivers: dict[str, list[str]] = defaultdict(list)
        self.driven: dict[str, list[str]] = defaultdict(list)
        self.candidates: dict[str, list[str]] = defaultdict(list)
        every_tag = pattern.pattern != DEFAULT_TAG_PATTERN
        last_digits = _LAST_DIGITS.search
        known = self.known
        for name, row in zip(self.names, self.table.rows):
            if name is None:
                continue
            values = row.values
            driver = values.get("driven_by")
            if driver is not None:
                target = known.get(driver) if type(driver) is str else None
                if target is None:
                    target = tag_of_cell(driver)
                self.drivers[name].append(target)
                self.driven[target].append(name)
            if every_tag:
                loop = self.loop_of(name, values.get("loop"))
                if loop is not None:
                    self.candidates[loop].append(name)
                continue
            digits = last_digits(name)
            if digits is not None:
                self.candidates[digits.group(1)].append(name)
            given = values.get("loop")
            if given is not None:
                self.candidates[tag_of_cell(given, upper=False)].append(name)

    def loop_of(self, name: str, given: Any) -> str | None:
        """The loop id of a row (its tag and Loop cell), None when the tag does not parse."""
        key = (name, given, type(given))
        loop = self.loop_ids.get(key, "")
        if loop == "":
            try:
                parts = parse_tag(name, self.pattern)
            except ValueError:
                loop = None
            else:
                loop = loop_id_for(tag_of_cell(given, upper=False) if given is not None else None, parts)[0]
            self.loop_ids[key] = loop
        return loop

    def loop_members(self, name: str) -> list[str]:
        """Every tag in the loop (or loops, for a tag on two rows) of ``name``."""
        members: list[str] = []
        for row in self.rows.get(name, ()):
            loop = self.loop_of(name, row.values.get("loop"))
            if loop is None:
                continue
            digits = _LAST_DIGITS.search(loop)
            seen = set(self.candidates.get(loop, ()))
            if digits is not None:
                seen.update(self.candidates.get(digits.group(1), ()))
            members += [other for other in seen
                        if any(self.loop_of(other, r.values.get("loop")) == loop for r in self.rows.get(other, ()))]
        return members

    def spread(self, names: Iterable[str], keep: set[str]) -> set[str]:
        """Add to ``keep`` every tag linked to one of ``names`` in this issue, followed to
        the end; the tags added."""
        added: set[str] = set()
        waiting = list(names)
        while waiting:
            name = waiting.pop()
            for other in (*self.drivers.get(name, ()), *self.driven.get(name, ()), *self.loop_members(name)):
                if other not in keep:
                    keep.add(other)
                    added.add(other)
                    waiting.append(other)
        return added

    def cut(self, keep: set[str]) -> IndexTable:
        """The table with only the rows of the tags in ``keep``, in their order."""
        return replace(self.table, rows=[row for name, row in zip(self.names, self.table.rows) if name in keep])


def rows_to_compare(old: IndexTable, new: IndexTable, pattern: Any) -> tuple[IndexTable, IndexTable]:
    """``old`` and ``new`` cut down to the rows their comparison needs (module docstring);
    ``pattern``: the compiled tag grammar both issues are read with. When the tags both
    issues share are not in the same order in both (the index sorted another way), nothing
    is cut: the order of the rows decides some of what the records hold (which row of a
    tag written twice counts, the service a loop takes from its first controller).

    >>> from pathlib import Path
    >>> from loopdocs.model.tagname import compile_tag_pattern
    >>> def issue(*rows):
    ...     return IndexTable(Path("i.xlsx"), "Index", 1, {"tag": "A", "range_high": "B"}, {},
    ...                       [IndexRow(n + 2, dict(values)) for n, values in enumerate(rows)])
    >>> old = issue({"tag": "TT-1", "range_high": 150}, {"tag": "TIC-1"}, {"tag": "PT-2", "range_high": 10})
    >>> new = issue({"tag": "TT-1", "range_high": 200}, {"tag": "TIC-1"}, {"tag": "PT-2", "range_high": 10})
    >>> [[row.values["tag"] for row in t.rows] for t in rows_to_compare(old, new, compile_tag_pattern())]
    [['TT-1', 'TIC-1'], ['TT-1', 'TIC-1']]
    """
    known: dict[str, str] = {}
    before, after = _Issue(old, known), _Issue(new, known)
    keep = before.differs_from(after)
    same = (before.rows.keys() & after.rows.keys()) - keep
    if before.order_of(same) != after.order_of(same):
        return old, new
    loop_ids: dict[tuple[str, Any, type], str | None] = {}
    before.link(pattern, loop_ids)
    after.link(pattern, loop_ids)
    frontier = set(keep)
    while frontier:  # a tag kept in one issue is kept in the other, with everything it links to there
        added = before.spread(frontier, keep)
        frontier = added | after.spread(frontier | added, keep)
    return before.cut(keep), after.cut(keep)
