"""Drawings of a project as SVG files: one loop diagram per loop, one range chart per
split group, named from the loop id (``loopdocs.core.names``).

This is what ``loopdocs draw`` writes and what the sheet renderer embeds:

- :func:`loop_diagram_svg` -- the diagram of one loop (natural size
  ``LoopLayout.width_mm`` x ``height_mm``, from :func:`loopdocs.draw.layout.layout_loop`);
- :func:`loop_charts` -- the split groups of one loop that get a range chart, with the
  SVG of each (natural size ``CHART_WIDTH_MM`` x ``CHART_HEIGHT_MM``, 160 x 95 mm);
- :func:`drawing_files` -- every file of a project, names and SVG text;
- :func:`write_drawings` -- write them atomically, leaving files whose bytes are
  unchanged untouched (so caches and file dates stay valid).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from loopdocs.core.findings import Finding
from loopdocs.model.records import Project

if TYPE_CHECKING:
    from loopdocs.draw.revision_marks import RevisionMarks

DIAGRAM_SUFFIX = ".loop.svg"
CHART_SUFFIX = ".range.svg"


@dataclass(frozen=True)
class DrawingFile:
    name: str
    """File name: safe stem plus ``.loop.svg`` or ``.range.svg`` (the two never collide)."""
    kind: str
    """``diagram`` or ``chart``."""
    loop: str
    svg: str
    controller: str | None = None


def loop_diagram_svg(project: Project, loop_id: str, marks: RevisionMarks | None = None) -> str:
    """SVG text of the loop diagram of ``loop_id``; with ``marks`` (a sheet's current
    revision and its changed tags) a revision mark beside each changed tag's bubble."""
    from loopdocs.draw.layout import layout_loop
    from loopdocs.draw.revision_marks import mark_diagram
    from loopdocs.draw.svg import svg_document

    layout = layout_loop(project, loop_id)
    mark_diagram(layout, marks)
    return svg_document(layout)


def _chart_groups(project: Project):
    from loopdocs.draw.range_chart import split_groups_to_chart
    from loopdocs.model.groups import groups_for

    return split_groups_to_chart(groups_for(project))


def loop_charts(project: Project, loop_id: str, findings: Sequence[Finding] = (),
                width_mm: float | None = None, marks: RevisionMarks | None = None) -> list[tuple[str, str]]:
    """``(controller, SVG text)`` of the range chart of each split group of ``loop_id``
    (``width_mm``: drawn that wide, ``range_chart.NARROW_CHART_MM`` for a sheet short of room)."""
    from loopdocs.draw.range_chart import CHART_WIDTH_MM, range_chart_svg

    if marks:  # a revision mark beside the line label of each changed element
        return [(g.controller, marked_chart_svg(g, findings, width_mm or CHART_WIDTH_MM, marks))
                for g in _chart_groups(project) if g.loop == loop_id]
    return [(g.controller, range_chart_svg(g, findings, width_mm or CHART_WIDTH_MM))
            for g in _chart_groups(project) if g.loop == loop_id]


def marked_chart_svg(group, findings: Sequence[Finding], width_mm: float, marks: RevisionMarks) -> str:
    """SVG text of a range chart with the revision marks of ``marks``."""
    from loopdocs.draw.range_chart import chart_layout
    from loopdocs.draw.revision_marks import mark_chart
    from loopdocs.draw.svg import svg_document

    chart = chart_layout(group, findings, width_mm)
    mark_chart(chart, marks)
    return svg_document(chart)


def drawing_files(project: Project, findings: Sequence[Finding] = (),
                  progress: Callable[[str], None] | None = None) -> list[DrawingFile]:
    """Every diagram and chart of the project, in loop order, with collision-free names."""
    from loopdocs.draw.range_chart import range_chart_svg
    from loopdocs.core.names import unique_filenames

    groups = _chart_groups(project)
    per_loop: dict[str, list] = {}
    for g in groups:
        per_loop.setdefault(g.loop, []).append(g)
    chart_stems = {}
    for loop_id, gs in per_loop.items():
        for g in gs:
            chart_stems[(loop_id, g.controller)] = loop_id if len(gs) == 1 else f"{loop_id}_{g.controller}"
    diagram_names = unique_filenames(project.loops)
    chart_names = unique_filenames(chart_stems.values())
    files: list[DrawingFile] = []
    for loop_id in project.loops:
        if progress:
            progress(loop_id)
        files.append(DrawingFile(diagram_names[loop_id] + DIAGRAM_SUFFIX, "diagram", loop_id,
                                 loop_diagram_svg(project, loop_id)))
        for g in per_loop.get(loop_id, []):
            stem = chart_names[chart_stems[(loop_id, g.controller)]]
            files.append(DrawingFile(stem + CHART_SUFFIX, "chart", loop_id, range_chart_svg(g, findings), g.controller))
    return files


def write_drawings(files: Iterable[DrawingFile], out_dir: Path) -> tuple[list[Path], list[Path]]:
    """Write each file into ``out_dir`` atomically; return (written, unchanged) paths."""
    from loopdocs.core.files import atomic_write

    out_dir = Path(out_dir)
    written: list[Path] = []
    unchanged: list[Path] = []
    for f in files:
        path = out_dir / f.name
        data = f.svg.encode("utf-8")
        if path.is_file() and path.read_bytes() == data:
            unchanged.append(path)
            continue
        atomic_write(path, lambda tmp, data=data: tmp.write_bytes(data))
        written.append(path)
    return written, unchanged
