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
with equal rows and equal neighbours, and is reported by neither. When the two issues do
not share one project configuration (another tag grammar, say), nothing is cut.

Example: two issues of 10,000 rows with 40 cells edited keep about 150 rows each.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import replace
from typing import Any, Iterable

from loopdocs.model.from_rows import loop_id_for, tag_of_cell
from loopdocs.model.tagname import parse_tag
from loopdocs.read.table import IndexRow, IndexTable


def _same_cells(a: dict[str, Any], b: dict[str, Any], same_order: bool) -> bool:
    """Every cell equal in value and type (``1`` and ``True`` compare equal in Python but
    are different cells). ``same_order``: both dicts hold their keys in the same order
    (rows of two tables with the same columns), so the types compare as two lists."""
    if a != b:
        return False
    if same_order:
        return list(map(type, a.values())) == list(map(type, b.values()))
    return all(type(value) is type(b[key]) for key, value in a.items())


class _Issue:
    """One issue's rows by tag (as its record will name it), and the links between its
    tags (module docstring)."""

    def __init__(self, table: IndexTable) -> None:
        self.table = table
        self.names: list[str | None] = [
            tag_of_cell(raw) if (raw := row.values.get("tag")) is not None else None for row in table.rows]
        self.rows: dict[str, list[IndexRow]] = defaultdict(list)
        for name, row in zip(self.names, table.rows):
            if name is not None:
                self.rows[name].append(row)

    def differs_from(self, other: "_Issue") -> set[str]:
        """Tags whose rows are not the same in both issues (every cell, value and type)."""
        same_order = (self.table.columns == other.table.columns
                      and self.table.extra_columns == other.table.extra_columns)
        out = set(self.rows.keys() ^ other.rows.keys())
        for name, rows in self.rows.items():
            theirs = other.rows.get(name)
            if theirs is None:
                continue
            if len(rows) != len(theirs) or not all(
                    _same_cells(a.values, b.values, same_order) and _same_cells(a.extra, b.extra, same_order)
                    for a, b in zip(rows, theirs)):
                out.add(name)
        return out

    def order_of(self, names: set[str]) -> list[str]:
        """The tags in ``names`` in the order of their rows."""
        return [name for name in self.names if name in names]

    def link(self, pattern: Any, loop_ids: dict[tuple[str, Any, type], str | None]) -> None:
        """Work out the links: Driven By both ways, and the tags of each loop.
        ``loop_ids``: (tag, Loop cell, its type) -> loop id, shared by both issues (most rows are
        in both: each is parsed once)."""
        # by tag, a list: a tag on two rows links through both (the model keeps the first)
        self.drivers: dict[str, list[str]] = defaultdict(list)
        self.driven: dict[str, list[str]] = defaultdict(list)
        self.loops_of: dict[str, list[str]] = defaultdict(list)
        self.members: dict[str, list[str]] = defaultdict(list)
        for name, row in zip(self.names, self.table.rows):
            if name is None:
                continue
            values = row.values
            driver = values.get("driven_by")
            if driver is not None:
                target = tag_of_cell(driver)
                self.drivers[name].append(target)
                self.driven[target].append(name)
            given = values.get("loop")
            key = (name, given, type(given))
            loop = loop_ids.get(key, "")
            if loop == "":
                try:
                    parts = parse_tag(name, pattern)
                except ValueError:
                    loop = None
                else:
                    loop = loop_id_for(tag_of_cell(given, upper=False) if given is not None else None, parts)[0]
                loop_ids[key] = loop
            if loop is not None:
                self.loops_of[name].append(loop)
                self.members[loop].append(name)

    def linked(self, names: Iterable[str]) -> set[str]:
        """``names`` and every tag linked to one of them, followed to the end."""
        found = set(names)
        waiting = list(found)
        while waiting:
            name = waiting.pop()
            near = [*self.drivers.get(name, ()), *self.driven.get(name, ())]
            for loop in self.loops_of.get(name, ()):
                near += self.members[loop]
            for other in near:
                if other not in found:
                    found.add(other)
                    waiting.append(other)
        return found

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
    before, after = _Issue(old), _Issue(new)
    keep = before.differs_from(after)
    same = (before.rows.keys() & after.rows.keys()) - keep
    if before.order_of(same) != after.order_of(same):
        return old, new
    loop_ids: dict[tuple[str, Any, type], str | None] = {}
    before.link(pattern, loop_ids)
    after.link(pattern, loop_ids)
    while True:  # a tag kept in one issue is kept in the other, with everything it links to there
        grown = before.linked(keep) | after.linked(keep)
        if grown == keep:
            break
        keep = grown
    return before.cut(keep), after.cut(keep)
