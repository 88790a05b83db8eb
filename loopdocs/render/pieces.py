"""Gather what one loop sheet shows from the stages upstream: the loop diagram and the
range charts (``loopdocs.draw``), the calibration tables (``loopdocs.calibration``) and
the findings. No drawing or computing happens here.

``state`` is a per-process dict (the build worker's) that keeps what is computed once
for the whole project: the calibration tables by loop.
"""

from __future__ import annotations

from collections.abc import MutableMapping, Sequence
from typing import Any

from loopdocs.findings import Finding
from loopdocs.model.records import Project
from loopdocs.render.sheet import SheetPieces

# Order of the calibration tables on a sheet: measurement first, then what it drives; the
# loop check (the tallest table) last, so the smaller tables fill the page first.
_KIND_ORDER = ("sensor", "transmitter", "converter", "final element", "loop check")


def _kind_rank(kind: str) -> int:
    return next((i for i, k in enumerate(_KIND_ORDER) if k in kind), len(_KIND_ORDER))


def calibrations_by_loop(project: Project, state: MutableMapping[str, Any]) -> dict[str, list[Any]]:
    """Calibration tables (``CalibrationTable``) of every loop, computed once per process."""
    cached = state.get("calibrations")
    if cached is None:
        from loopdocs.calibration import calibration_set

        cached = {}
        for table in calibration_set(project).tables:
            loop = table.loop or (project.tags[table.tag].loop if table.tag in project.tags else "")
            cached.setdefault(loop, []).append(table)
        for tables in cached.values():
            tables.sort(key=lambda t: _kind_rank(t.kind))
        state["calibrations"] = cached
    return cached


def group_loop(group: Any) -> str:
    """The loop a split group is shown on: its controller's (the group's own ``loop``
    when the controller is not in the index)."""
    record = getattr(group, "controller_record", None)
    return record.loop if record is not None else group.loop


def loop_groups(project: Project, loop_id: str, splits: Sequence[Any]) -> list[Any]:
    """The split groups shown on the sheet of ``loop_id``."""
    return [group for group in splits if group_loop(group) == loop_id]


def loop_pieces(project: Project, loop_id: str, findings: Sequence[Finding], splits: Sequence[Any],
                state: MutableMapping[str, Any]) -> tuple[SheetPieces, dict[str, Any]]:
    """The sheet pieces of ``loop_id`` and the JSON record that travels with the sheet
    (attached in PDF/A mode)."""
    from loopdocs.render.build import loop_record

    from loopdocs.draw.export import loop_charts, loop_diagram_svg

    loop = project.loops[loop_id]
    tags = project.tags_of(loop_id)
    groups = loop_groups(project, loop_id, splits)
    calibrations = calibrations_by_loop(project, state).get(loop_id, [])
    pieces = SheetPieces(
        loop=loop,
        tags=tags,
        diagram_svg=loop_diagram_svg(project, loop_id),
        range_charts_svg=tuple(svg for _, svg in loop_charts(project, loop_id, findings)),
        calibrations=calibrations,
        findings=findings,
    )
    record = loop_record(project, loop_id, findings, groups)
    record["calibration"] = [table.as_json() for table in calibrations]
    return pieces, record
