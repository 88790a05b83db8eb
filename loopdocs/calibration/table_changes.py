"""Calibration tables whose test points change between two issues of the index.

A table is known by ``(tag, kind)`` (a tag has a stroke table, a fail-action test, a loop
check...); a renamed tag is followed to its new name. A table counts as changed when its
points (percent, input, output, direction, simulated values) differ, or when it exists
in one issue only for a tag present in both (tags added or removed are reported as such).
"""

from __future__ import annotations

from collections.abc import Collection
from typing import Any

from loopdocs.calibration.project_tables import calibration_set
from loopdocs.model.from_rows import natural_key
from loopdocs.model.records import Loop, Project


def _only(project: Project, names: set[str]) -> Project:
    """``project`` cut down to the tags in ``names`` (their tables come out the same when
    ``names`` holds every member of each split group concerned)."""
    tags = {name: tag for name, tag in project.tags.items() if name in names}
    loops = {}
    for lid, loop in project.loops.items():
        kept = tuple(t for t in loop.tags if t in tags)
        if kept:
            loops[lid] = Loop(id=lid, tags=kept, service=loop.service)
    return project.model_copy(update={"tags": tags, "loops": loops})


def _tables_by_key(project: Project, rename: dict[str, str]) -> dict[tuple[str, str], Any]:
    tables: dict[tuple[str, str], Any] = {}
    for table in calibration_set(project).tables:
        tables[(rename.get(table.tag, table.tag), table.kind)] = table.points
    return tables


def changed_tables(old: Project, new: Project, rename: dict[str, str] | None = None,
                   touched: Collection[str] | None = None) -> list[tuple[str, str]]:
    """``(tag, kind)`` of every table whose points differ, in natural tag order, then by
    kind: the same list however the rows are sorted.

    ``touched`` (new names; ``ProjectChanges.touched``) limits the work to the tags whose
    tables may change: the other tags' records and split groups are the same in both issues."""
    rename = rename or {}
    if touched is not None:
        wanted = set(touched)
        back = {v: k for k, v in rename.items()}
        old = _only(old, {back.get(name, name) for name in wanted} | (set(old.tags) - set(rename) - set(new.tags)))
        new = _only(new, wanted)
    before = _tables_by_key(old, rename)
    after = _tables_by_key(new, {})
    both = {rename.get(name, name) for name in old.tags} & set(new.tags)
    out: list[tuple[str, str]] = []
    for key in list(after) + [k for k in before if k not in after]:
        if key[0] in both and before.get(key) != after.get(key):
            out.append(key)
    return sorted(out, key=lambda key: (natural_key(key[0]), key[1]))
