"""What changed between two issues of the index: two :class:`Project` records in, a list of
changes out (pure; no file is read here).

- **added / removed**: tags in one issue only;
- **renamed**: a removed and an added tag whose other values (every column except the
  Tag, ignoring the row number) are all equal, matched one to one in natural tag order;
- **changed**: per tag in both issues, the columns whose value differs, old and new,
  written plainly (vocabulary words as the index writes them, numbers with ``:g``);
- **loops**: the loop ids of every added, removed, renamed and changed tag, in both issues;
- **splits**: per controller, the split-group values that differ (arrangement,
  required input range and control-system scaling of each element, recommended
  boundaries), from ``loopdocs.model.groups.build_groups`` of each issue; a renamed
  controller or element is followed to its new name.

Calibration values are compared in ``loopdocs.calibration.table_changes`` (a later stage).
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field
from enum import Enum
from functools import cache
from typing import Any

from loopdocs.model.records import Project, Tag

#: Tag fields that are not index cells of their own (derived from the Tag or the row) or are
#: compared separately (``extra``, ``tag``); ``loop_given`` is the Loop cell as written.
_NOT_COMPARED = frozenset({"tag", "row", "parts", "kind", "loop", "extra"})


@dataclass(frozen=True)
class FieldChange:
    """One cell of one tag: its column header, the old and the new value ('' when blank)."""

    key: str
    column: str
    old: str
    new: str

    def as_json(self) -> dict[str, str]:
        return {"column": self.column, "old": self.old, "new": self.new}


@dataclass(frozen=True)
class TagChange:
    """A tag in both issues whose cells differ."""

    tag: str
    loop: str
    fields: tuple[FieldChange, ...]

    def as_json(self) -> dict[str, Any]:
        return {"tag": self.tag, "loop": self.loop, "fields": [f.as_json() for f in self.fields]}


@dataclass(frozen=True)
class Rename:
    """A tag whose row is otherwise unchanged but whose Tag changed."""

    old: str
    new: str
    old_loop: str
    new_loop: str

    def as_json(self) -> dict[str, str]:
        return {"old": self.old, "new": self.new, "old_loop": self.old_loop, "new_loop": self.new_loop}


@dataclass(frozen=True)
class SplitChange:
    """One value of a split group that differs: ``what`` names it for a person."""

    controller: str
    loop: str
    what: str
    old: str
    new: str

    def as_json(self) -> dict[str, str]:
        return {"controller": self.controller, "loop": self.loop, "what": self.what, "old": self.old, "new": self.new}


@dataclass(frozen=True)
class ProjectChanges:
    added: tuple[Tag, ...]
    removed: tuple[Tag, ...]
    renamed: tuple[Rename, ...]
    changed: tuple[TagChange, ...]
    loops: tuple[str, ...]
    splits: tuple[SplitChange, ...] = field(default=())
    touched: frozenset[str] = frozenset()
    """Tags (as named in the new issue) whose calibration may change: every added, renamed
    and changed tag, and every member (controller, converters, elements) of a split group,
    in either issue, that holds one of them or a removed tag."""

    @property
    def any(self) -> bool:
        return bool(self.added or self.removed or self.renamed or self.changed or self.splits)


# --------------------------------------------------------------------------- values


def plain(value: Any) -> str:
    """A value as a person reads it in the index: blank '', vocabulary words by their
    value, numbers with ``:g``, lists joined with ', '.

    >>> plain(None), plain(150.0), plain(0.25), plain((1.0, 2.5))
    ('', '150', '0.25', '1, 2.5')
    """
    if value is None:
        return ""
    if isinstance(value, Enum):
        return str(value.value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return f"{float(value):g}"
    if isinstance(value, (tuple, list)):
        return ", ".join(plain(v) for v in value)
    return str(value)


@cache
def _compared_keys() -> tuple[str, ...]:
    return tuple(k for k in Tag.model_fields if k not in _NOT_COMPARED)


def _header(key: str) -> str:
    from loopdocs.read.columns import BY_KEY

    column = BY_KEY.get("loop" if key == "loop_given" else key)
    return column.header if column is not None else key


def _cells(tag: Tag) -> dict[str, Any]:
    """Column key -> value of every compared cell of ``tag`` (unknown columns by header)."""
    cells = {key: getattr(tag, key) for key in _compared_keys()}
    for header, value in tag.extra.items():
        cells[f"extra:{header}"] = value
    return cells


@cache
def _compared_values() -> Any:
    from operator import attrgetter

    return attrgetter(*_compared_keys())


def field_changes(old: Tag, new: Tag) -> tuple[FieldChange, ...]:
    """The cells of one tag that differ between two issues, in column order."""
    values = _compared_values()
    if values(old) == values(new) and old.extra == new.extra:
        return ()  # the usual case, every cell equal: one comparison of two tuples
    a, b = _cells(old), _cells(new)
    out = []
    for key in list(a) + [k for k in b if k not in a]:
        va, vb = a.get(key), b.get(key)
        if va == vb or plain(va) == plain(vb):
            continue
        column = key.partition(":")[2] if key.startswith("extra:") else _header(key)
        out.append(FieldChange(key, column, plain(va), plain(vb)))
    return tuple(out)


def _signature(tag: Tag) -> tuple:
    cells = _cells(tag)
    return tuple(sorted((k, plain(v)) for k, v in cells.items()))


def plain_cells(tag: Tag) -> dict[str, str]:
    """The compared cells of ``tag`` that are not blank, as text (:func:`plain`), by column
    key (unknown columns as ``extra:<header>``): a snapshot of the row that can be kept as
    plain text and compared later with :func:`cell_changes`."""
    cells = {}
    for key in _compared_keys():
        value = getattr(tag, key)
        if value is not None and (text := plain(value)) != "":
            cells[key] = text
    for header, value in tag.extra.items():
        if (text := plain(value)) != "":
            cells[f"extra:{header}"] = text
    return cells


def cell_changes(old: dict[str, str], new: dict[str, str]) -> tuple[FieldChange, ...]:
    """The cells that differ between two snapshots of one tag (:func:`plain_cells`), in the
    order of the Tag record's fields, then unknown columns by header.

    >>> [(c.column, c.old, c.new) for c in cell_changes({"range_high": "150"}, {"range_high": "200"})]
    [('Range High', '150', '200')]
    """
    order = {key: i for i, key in enumerate(_compared_keys())}
    keys = sorted(set(old) | set(new), key=lambda k: (order.get(k, len(order)), k))
    out = []
    for key in keys:
        a, b = old.get(key, ""), new.get(key, "")
        if a != b:
            column = key.partition(":")[2] if key.startswith("extra:") else _header(key)
            out.append(FieldChange(key, column, a, b))
    return tuple(out)


def cell_of(project: Project, tag: str, key: str = "tag") -> str:
    """Where an engineer finds column ``key`` (a column key, ``loop_given`` or
    ``extra:<header>``) of ``tag`` in ``project``'s index: ``"Index!I7"``; the row's Tag cell
    when that issue has no such column; '' when the tag is not in it.

    >>> from pathlib import Path
    >>> from loopdocs.model.from_rows import build_project
    >>> from loopdocs.read.table import IndexRow, IndexTable
    >>> table = IndexTable(Path("i.xlsx"), "Index", 4, {"tag": "B", "range_high": "I"}, {"Spare": "AC"},
    ...                    [IndexRow(7, {"tag": "TT-1203", "range_high": 200}, {"Spare": "x"})])
    >>> project = build_project(table)[0]
    >>> cell_of(project, "TT-1203", "range_high"), cell_of(project, "TT-1203", "extra:Spare"), cell_of(project, "TT-9")
    ('Index!I7', 'Index!AC7', '')
    """
    record = project.tags.get(tag)
    if record is None:
        return ""
    if key.startswith("extra:"):
        letter = project.extra_columns.get(key.partition(":")[2])
        if letter is not None:
            return f"{project.sheet}!{letter}{record.row}"
        key = "tag"
    location = project.cell(record, "loop" if key == "loop_given" else key)
    return str(location) if location is not None else ""


# --------------------------------------------------------------------------- tags


def match_renames(removed: list[Tag], added: list[Tag]) -> list[tuple[Tag, Tag]]:
    """Pairs ``(old, new)`` of a removed and an added tag with all other cells equal, one to
    one, in natural tag order of the removed tags."""
    from loopdocs.model.from_rows import natural_key

    waiting: dict[tuple, list[Tag]] = defaultdict(list)
    for tag in sorted(added, key=lambda t: natural_key(t.tag)):
        waiting[_signature(tag)].append(tag)
    pairs = []
    for tag in sorted(removed, key=lambda t: natural_key(t.tag)):
        candidates = waiting.get(_signature(tag))
        if candidates:
            pairs.append((tag, candidates.pop(0)))
    return pairs


def compare_projects(old: Project, new: Project) -> ProjectChanges:
    """Every change from ``old`` to ``new`` (module docstring)."""
    from loopdocs.model.from_rows import natural_key

    order = lambda t: natural_key(t.tag)  # noqa: E731
    removed = [t for name, t in old.tags.items() if name not in new.tags]
    added = [t for name, t in new.tags.items() if name not in old.tags]
    pairs = match_renames(removed, added)
    gone = {a.tag for a, _ in pairs}
    came = {b.tag for _, b in pairs}
    removed = sorted((t for t in removed if t.tag not in gone), key=order)
    added = sorted((t for t in added if t.tag not in came), key=order)
    renamed = [Rename(a.tag, b.tag, a.loop, b.loop) for a, b in pairs]
    changed = []
    for name in sorted((n for n in old.tags if n in new.tags), key=natural_key):
        fields = field_changes(old.tags[name], new.tags[name])
        if fields:
            changed.append(TagChange(name, new.tags[name].loop, fields))
    loops: set[str] = set()
    for t in (*added, *removed):
        loops.add(t.loop)
    for r in renamed:
        loops.update((r.old_loop, r.new_loop))
    for c in changed:
        loops.update((old.tags[c.tag].loop, new.tags[c.tag].loop))
    rename = {r.old: r.new for r in renamed}
    from loopdocs.model.groups import build_groups, controllers_of

    # Only the split groups a changed, added, removed or renamed tag can take part in are
    # built and compared: every other group rests on equal rows and comes out equal. The
    # controllers are named in both issues' spellings, renames mapped both ways.
    named = controllers_of(old, {t.tag for t in removed} | set(rename) | {c.tag for c in changed})
    named |= controllers_of(new, {t.tag for t in added} | set(rename.values()) | {c.tag for c in changed})
    named |= {rename[n] for n in named if n in rename} | {o for o, n in rename.items() if n in named}
    before = build_groups(old, named)
    after = build_groups(new, named)
    splits = _split_changes(before, after, rename)
    seeds = {t.tag for t in (*added, *removed)} | {r.new for r in renamed} | {c.tag for c in changed}
    touched = set(seeds - {t.tag for t in removed})
    for groups, names in ((before, rename), (after, {})):
        for group in groups:
            members = {names.get(m, m) for m in _members(group)}
            if members & seeds:
                touched |= members
    return ProjectChanges(tuple(added), tuple(removed), tuple(renamed), tuple(changed),
                          tuple(sorted(loops, key=natural_key)), tuple(splits), frozenset(touched))


def _members(group: Any) -> set[str]:
    """Every tag a split group's settings and tables rest on."""
    return {group.controller, *(r.tag for r in group.converters), *(e.tag for e in group.elements)}


# --------------------------------------------------------------------------- split groups


def _range_text(values: tuple[float, float] | None, units: str) -> str:
    if values is None:
        return ""
    return f"{values[0]:g} to {values[1]:g} {units}".strip()


def _scaling_text(scaling: Any) -> str:
    if scaling is None:
        return ""
    return f"output 0 % at controller output {scaling.co_at_0_pct:g} %, 100 % at {scaling.co_at_100_pct:g} %"


def _group_values(group: Any, rename: dict[str, str]) -> dict[str, str]:
    """What a person compares in one split group: ``what`` -> value as text."""
    values = {"arrangement": group.mode}
    boundaries = group.recommended_boundaries_pct
    values["recommended boundaries"] = (
        ", ".join(f"{b:g} %" for b in boundaries) if boundaries is not None else "")
    for e in group.elements:
        name = rename.get(e.tag, e.tag)
        values[f"{name} required input range"] = _range_text(e.required_input_range, e.input_units)
        if e.method == "dcs":
            values[f"{name} control-system scaling"] = _scaling_text(e.required_dcs_scaling)
    return values


def split_changes(old: Project, new: Project, rename: dict[str, str] | None = None) -> list[SplitChange]:
    """Split-group values that differ, per controller (a renamed controller or element is
    followed to its new name). The groups of ``old`` are built before those of ``new``, so
    ``groups_for`` (which keeps the last project's) still serves ``new`` afterwards."""
    from loopdocs.model.groups import groups_for

    before = groups_for(old)
    return _split_changes(before, groups_for(new), rename or {})


def _split_changes(before_groups: list[Any], after_groups: list[Any], rename: dict[str, str]) -> list[SplitChange]:
    from loopdocs.model.from_rows import natural_key

    before = {rename.get(g.controller, g.controller): g for g in before_groups}
    after = {g.controller: g for g in after_groups}
    out = []
    for controller in sorted(set(before) | set(after), key=natural_key):
        a, b = before.get(controller), after.get(controller)
        loop = (b or a).loop
        if a is None or b is None:
            out.append(SplitChange(controller, loop, "group", a.mode if a else "", b.mode if b else ""))
            continue
        va, vb = _group_values(a, rename), _group_values(b, {})
        for what in list(va) + [k for k in vb if k not in va]:
            if va.get(what, "") != vb.get(what, ""):
                out.append(SplitChange(controller, loop, what, va.get(what, ""), vb.get(what, "")))
    return out
