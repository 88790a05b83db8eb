"""Gather what one loop sheet shows from the stages upstream: the loop diagram and the
range charts (``loopdocs.draw``), the calibration tables (``loopdocs.calibration.project_tables``) and
the findings. No drawing or computing happens here.

``state`` is a per-process dict (the build worker's) that keeps what is computed once
for the whole project (the reverse Driven By index).
"""

from __future__ import annotations

from collections.abc import MutableMapping, Sequence
from typing import Any

from loopdocs.core.findings import Finding
from loopdocs.model.records import Project
from loopdocs.render.sheet import SheetPieces

# Order of the calibration tables on a sheet: measurement first, then what it drives; the
# loop check (the tallest table) last, so the smaller tables fill the page first.
_KIND_ORDER = ("sensor", "transmitter", "converter", "final element", "loop check")


def _kind_rank(kind: str) -> int:
    return next((i for i, k in enumerate(_KIND_ORDER) if k in kind), len(_KIND_ORDER))


def linked_tags(project: Project, loop_id: str, state: MutableMapping[str, Any]) -> list[str]:
    """The loop's tags and every tag linked to them through Driven By, in either
    direction and transitively (controller, its converters and every element it moves),
    in index order."""
    reverse = state.get("driven_reverse")
    if reverse is None:
        reverse = {}
        for tag in project.tags.values():
            if tag.driven_by:
                reverse.setdefault(tag.driven_by.strip().upper(), []).append(tag.tag)
        state["driven_reverse"] = reverse
    found = set(project.loops[loop_id].tags)
    todo = list(found)
    while todo:
        name = todo.pop()
        tag = project.tags.get(name)
        linked = list(reverse.get(name.upper(), ()))
        if tag is not None and tag.driven_by:
            linked.append(tag.driven_by.strip().upper())
        for other in linked:
            if other in project.tags and other not in found:
                found.add(other)
                todo.append(other)
    return sorted(found, key=lambda n: project.tags[n].row)


def loop_findings(findings: Sequence[Finding], project: Project) -> dict[str, list[Finding]]:
    """Findings by loop id: a finding's own loop, else the loops of the tags it names."""
    by_loop: dict[str, list[Finding]] = {loop_id: [] for loop_id in project.loops}
    for finding in findings:
        loops = {finding.loop} if finding.loop in by_loop else {
            project.tags[t].loop for t in finding.tags if t in project.tags}
        for loop_id in loops:
            by_loop[loop_id].append(finding)
    return by_loop


def tag_record(project: Project, name: str) -> dict[str, Any]:
    """A tag as JSON for the cache key and the PDF/A attachment (no spreadsheet row)."""
    tag = project.tags.get(name)
    if tag is None:
        return {"tag": name, "missing": True}
    data = tag.model_dump(mode="json", exclude={"row"})
    return data


def finding_record(finding: Finding) -> dict[str, Any]:
    data = finding.as_json()
    data.pop("location", None)
    return data


def loop_record(project: Project, loop_id: str, findings: Sequence[Finding], splits: Sequence[Any] = (),
                state: dict[str, Any] | None = None) -> dict[str, Any]:
    """What one sheet shows, as JSON: the loop, its tags and the tags linked to them by
    Driven By (``pieces.linked_tags``), its findings and split groups. Hashed for the
    cache; attached to the PDF/A sheet. ``state`` keeps the Driven By index between calls."""
    loop = project.loops[loop_id]
    names = list(dict.fromkeys([*loop.tags, *linked_tags(project, loop_id, {} if state is None else state)]))
    return {
        "loop": loop.model_dump(mode="json"),
        "tags": [tag_record(project, name) for name in names],
        "findings": [finding_record(f) for f in findings],
        "splits": [group.as_json() for group in splits],
    }


def loop_project(project: Project, loop_id: str, state: MutableMapping[str, Any]) -> Project:
    """The part of ``project`` that the calibration tables of ``loop_id`` depend on: its
    linked tags (:func:`linked_tags`) and their loops. Computing on it costs what the
    loop costs, not what the whole index costs (a rebuild of one sheet of a large index)."""
    tags = {name: project.tags[name] for name in linked_tags(project, loop_id, state)}
    loops = {lid: project.loops[lid] for lid in dict.fromkeys(t.loop for t in tags.values())}
    return project.model_copy(update={"tags": tags, "loops": loops})


def loop_calibrations(project: Project, loop_id: str, state: MutableMapping[str, Any],
                      part: Project | None = None) -> list[Any]:
    """Calibration tables (``CalibrationTable``) of the loop's tags, measurement first
    (``part``: the loop's :func:`loop_project`, when already made)."""
    from loopdocs.calibration.project_tables import calibration_set

    part = part or loop_project(project, loop_id, state)
    tables = [t for t in calibration_set(part).tables
              if (t.loop or (part.tags[t.tag].loop if t.tag in part.tags else "")) == loop_id]
    return sorted(tables, key=lambda t: _kind_rank(t.kind))


def group_loop(group: Any) -> str:
    """The loop a split group is shown on: its controller's (the group's own ``loop``
    when the controller is not in the index)."""
    record = getattr(group, "controller_record", None)
    return record.loop if record is not None else group.loop


def loop_groups(project: Project, loop_id: str, splits: Sequence[Any]) -> list[Any]:
    """The split groups shown on the sheet of ``loop_id``."""
    return [group for group in splits if group_loop(group) == loop_id]


def loop_pieces(project: Project, loop_id: str, findings: Sequence[Finding], splits: Sequence[Any],
                state: MutableMapping[str, Any], marks: Any = None) -> tuple[SheetPieces, dict[str, Any]]:
    """The sheet pieces of ``loop_id`` and the JSON record that travels with the sheet
    (attached in PDF/A mode). ``marks`` (``draw.revision_marks.RevisionMarks``): the
    sheet's current revision and the tags changed in it, marked on the drawings and tables.

    Diagram, range charts and calibration tables are made from the loop's part of the
    project (:func:`loop_project`): the same drawings and tables as from the whole
    project (tested), at the cost of one loop, and without rebuilding the whole
    project's split groups for every sheet (``groups_for`` keeps the last project only).
    """
    from loopdocs.draw.export import loop_charts, loop_diagram_svg
    from loopdocs.draw.range_chart import NARROW_CHART_MM

    loop = project.loops[loop_id]
    tags = project.tags_of(loop_id)
    groups = loop_groups(project, loop_id, splits)
    part = loop_project(project, loop_id, state)
    calibrations = loop_calibrations(project, loop_id, state, part)
    own = {t.tag for t in tags}
    pieces = SheetPieces(
        loop=loop,
        tags=tags,
        linked_tags=tuple(part.tags[name] for name in part.tags if name not in own),
        diagram_svg=loop_diagram_svg(part, loop_id, marks),
        range_charts_svg=tuple(svg for _, svg in loop_charts(part, loop_id, findings, marks=marks)),
        narrow_charts_svg=tuple(svg for _, svg in loop_charts(part, loop_id, findings, NARROW_CHART_MM, marks)),
        calibrations=calibrations,
        findings=findings,
        revision_marks=marks,
    )
    record = loop_record(project, loop_id, findings, groups, state)
    record["calibration"] = [table.as_json() for table in calibrations]
    return pieces, record
