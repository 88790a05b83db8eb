"""Calibration tables whose test points change between two issues of the index.

A table is known by ``(tag, kind)`` (a tag has a stroke table, a fail-action test, a loop
check...); a renamed tag is followed to its new name. A table counts as changed when its
points (percent, input, output, direction, simulated values) differ, or when it exists
in one issue only for a tag present in both (tags added or removed are reported as such).
"""

from __future__ import annotations

from typing import Any

from loopdocs.calibration.project_tables import calibration_set
from loopdocs.model.records import Project


def _tables_by_key(project: Project, rename: dict[str, str]) -> dict[tuple[str, str], Any]:
    tables: dict[tuple[str, str], Any] = {}
    for table in calibration_set(project).tables:
        tables[(rename.get(table.tag, table.tag), table.kind)] = table.points
    return tables


def changed_tables(old: Project, new: Project, rename: dict[str, str] | None = None) -> list[tuple[str, str]]:
    """``(tag, kind)`` of every table whose points differ, in the order of the new issue."""
    rename = rename or {}
    before = _tables_by_key(old, rename)
    after = _tables_by_key(new, {})
    both = {rename.get(name, name) for name in old.tags} & set(new.tags)
    out: list[tuple[str, str]] = []
    for key in list(after) + [k for k in before if k not in after]:
        if key[0] in both and before.get(key) != after.get(key):
            out.append(key)
    return out
