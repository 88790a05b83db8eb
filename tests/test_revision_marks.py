"""Revision marks on the loop sheet (``loopdocs.draw.revision_marks``, docs/design.md §12.9):
the triangle with the current revision beside each item changed in that revision, on
the loop diagram, the range chart, the Tags table and the captions of the changed tag's
calibration tables; none on a sheet whose current revision changed nothing.

Reference facts, with their sources:
- a revised item of a drawing is flagged by a triangle (the "delta") holding the revision
  letter or number, set beside the item; the flags of the current revision only are kept
  on the sheet (common drafting practice; ASME Y14.35 and ISO 7200 revision practice,
  from memory: the tests rely only on the common-practice form, triangle + revision,
  current revision only);
- lettering on an A3 drawing is at least 2.5 mm capital height (ISO 3098-1, from memory;
  docs/design.md §8.4), and DejaVu Sans capitals are 1493/2048 em high (the font's ``H``);
- an equilateral triangle of side s is s * sin 60 deg high (geometry).
"""

from __future__ import annotations

import math
import re
import sys
from pathlib import Path

import defusedxml.ElementTree as DET
import pytest
from pypdf import PdfReader

from loopdocs.checks import check_project
from loopdocs.draw.geometry import Rect
from loopdocs.draw.layout import layout_loop
from loopdocs.draw.revision_marks import (MARK_ROLE, RevisionMarks, mark_chart, mark_diagram, mark_height_mm,
                                          mark_side_mm, mark_svg, revision_marks)
from loopdocs.draw.text import CAP_HEIGHT_EM
from loopdocs.model.revisions import read_state
from loopdocs.render import builder

sys.path.insert(0, str(Path(__file__).resolve().parent))
from drawing_helpers import chart_overlap_problems, overlap_problems  # noqa: E402
from test_revisions import EXAMPLE, LOOPS3, set_cells, steady_code, write_project  # noqa: E402, F401

SVG = "{http://www.w3.org/2000/svg}"
NEAR_MM = 25.0
"""A mark's centre is at most this far from its bubble's centre: the farthest place tried is
15 mm clear of the bubble's box (``REACH_MM``), slid along its side."""


def _polygon_points(svg_text: str) -> list[list[tuple[float, float]]]:
    root = DET.fromstring(svg_text.encode("utf-8"))
    found = []
    for element in root.iter(f"{SVG}polygon"):
        if element.get("class") == MARK_ROLE:
            found.append([tuple(float(v) for v in p.split(",")) for p in element.get("points").split()])
    return found


# --- the mark itself ----------------------------------------------------------------------

@pytest.mark.parametrize("revision", ["A", "0", "B", "12", "C09"])
def test_mark_is_an_equilateral_triangle_holding_the_revision_in_2_5_mm_capitals(revision):
    (points,) = _polygon_points(mark_svg(revision))
    sides = [math.dist(points[i], points[(i + 1) % 3]) for i in range(3)]
    assert max(sides) - min(sides) < 0.01  # equilateral (geometry)
    assert math.isclose(mark_height_mm(revision), mark_side_mm(revision) * math.sin(math.radians(60)), abs_tol=0.01)
    if len(revision) == 1:
        assert 4.5 <= mark_height_mm(revision) <= 5.5  # "about 5 mm": our size, a single character
    root = DET.fromstring(mark_svg(revision).encode("utf-8"))
    (text,) = list(root.iter(f"{SVG}text"))
    assert text.text == revision
    capital_mm = float(text.get("font-size")) * CAP_HEIGHT_EM
    assert abs(capital_mm - 2.5) < 0.02  # ISO 3098 lettering, 2.5 mm capitals (from memory)
    # the capitals stand inside the triangle: at their top the triangle is wider than the text
    from loopdocs.draw.revision_marks import BASELINE_MM
    from loopdocs.draw.text import text_width_mm

    top_mm = BASELINE_MM + capital_mm
    width_at_top = mark_side_mm(revision) - 2 * top_mm / math.tan(math.radians(60))
    assert width_at_top >= text_width_mm(revision, float(text.get("font-size"))) - 1e-6


def test_no_change_no_marks():
    assert revision_marks("A", []) is None
    assert revision_marks("", [type("C", (), {"tag": "TT-1"})()]) is None  # a project never issued
    project = check_project(EXAMPLE).project
    layout = layout_loop(project, "T-7401")
    assert mark_diagram(layout, None) == {} and not any(s.role == MARK_ROLE for s in layout.symbols)


# --- on the diagram -----------------------------------------------------------------------

def _item_boxes(layout, skip: str) -> list[Rect]:
    """Every box drawn but the mark ``skip`` and its own text."""
    boxes = [t.box for t in layout.texts if t.owner != skip]
    boxes += [s.box for s in layout.symbols if s.name != skip]
    boxes += layout.line_boxes() + [d.box for d in layout.dots]
    return boxes


@pytest.mark.parametrize("loop_id", ["T-7401", "F-1201", "P-4120", "L-2101"])
def test_every_bubble_of_a_crowded_diagram_can_be_marked_clear_of_everything(loop_id):
    """The hardest case: every tag of the loop changed. Each mark is nearer its own bubble
    than any other, overlaps nothing and adds no problem to the diagram's own no-overlap
    checks (tests/drawing_helpers.overlap_problems)."""
    project = check_project(EXAMPLE).project
    layout = layout_loop(project, loop_id)
    before = set(overlap_problems(layout))
    corner = layout.free_corner_mm
    bubbles = {s.tag: s for s in layout.symbols if s.name.startswith("bubble:")}
    placed = mark_diagram(layout, RevisionMarks("B", tuple(bubbles)))
    assert set(placed) == set(bubbles)
    assert set(overlap_problems(layout)) == before
    for tag, mark in placed.items():
        box = mark.box
        (text,) = [t for t in layout.texts if t.owner == mark.name]
        assert Rect(0, 0, layout.width_mm, layout.height_mm).contains(box)
        assert not any(box.overlaps(other) or text.box.overlaps(other)
                       for other in _item_boxes(layout, mark.name)), tag
        assert math.dist(box.centre, bubbles[tag].box.centre) <= NEAR_MM, tag
        nearest = min(bubbles, key=lambda t: math.dist(box.centre, bubbles[t].box.centre))
        gaps = {t: _gap(box, b.box) for t, b in bubbles.items()}
        assert min(gaps, key=gaps.get) == tag, (tag, nearest)
        assert text.text == "B" and mark.box.contains(Rect(*text.box.centre, 0, 0))
        if layout.free_corner_mm is not None:  # the tables the sheet sets there stay clear
            fx, fy = layout.free_corner_mm
            assert not box.overlaps(Rect(fx, fy, layout.width_mm - fx, layout.height_mm - fy))
    if corner is not None and layout.free_corner_mm is not None:
        assert layout.free_corner_mm[1] >= corner[1]


def _gap(a: Rect, b: Rect) -> float:
    return math.hypot(max(a.x - b.right, b.x - a.right, 0.0), max(a.y - b.bottom, b.y - a.bottom, 0.0))


# --- on the range chart -------------------------------------------------------------------

def test_a_changed_valve_is_marked_beside_its_line_label_on_the_range_chart():
    from loopdocs.draw.range_chart import chart_layout, split_groups_to_chart
    from loopdocs.model.groups import groups_for

    project = check_project(EXAMPLE).project
    (group,) = [g for g in split_groups_to_chart(groups_for(project)) if g.loop == "P-4120"]
    chart = chart_layout(group)
    before = set(chart_overlap_problems(chart))
    labels = {t.text: t.box for t in chart.texts if t.role == "curve-label"}
    placed = mark_chart(chart, RevisionMarks("1", ("PV-4120B", "PIC-4120")))
    assert set(placed) == {"PV-4120B"}  # the controller has no line of its own
    box = placed["PV-4120B"].box
    assert _gap(box, labels["PV-4120B"]) <= 15.0
    assert set(chart_overlap_problems(chart)) == before  # the revision stays clear of the chart's lines
    assert not any(box.overlaps(t.box) for t in chart.texts if t.owner != placed["PV-4120B"].name)


# --- on the issued sheet ------------------------------------------------------------------

def _revision_runs(pdf: Path, revision: str) -> list[tuple[float, float]]:
    """Where a text run that is only ``revision`` at the marks' type size (3.43 mm: 2.5 mm
    capitals) stands on the first page, in the coordinates of the drawing it is in."""
    runs = []

    def visit(text, cm, tm, font, size):
        scale = abs(tm[3] * cm[3] + tm[2] * cm[1])
        if text.strip() == revision and abs(size * scale - 3.43) < 0.01:
            runs.append((tm[4] * cm[0] + tm[5] * cm[2] + cm[4], tm[4] * cm[1] + tm[5] * cm[3] + cm[5]))

    PdfReader(pdf).pages[0].extract_text(visitor_text=visit)
    return runs


def _sheet_pieces(result, project: Path, loop_id: str):
    """The pieces the build drew for one sheet, with the marks the build gave it."""
    from loopdocs.render.pieces import loop_findings, loop_pieces

    checked = check_project(project)
    state = read_state(project)
    marks = revision_marks(result.revisions[loop_id], state.loops[loop_id].changed)
    findings = loop_findings(checked.findings, checked.project)[loop_id]
    pieces, _ = loop_pieces(checked.project, loop_id, findings, list(checked.splits or []), {}, marks)
    return checked.project, pieces, marks


def test_a_changed_range_is_marked_on_its_sheet_only(tmp_path, steady_code):
    from loopdocs.commands.build import issue_build

    project = write_project(tmp_path / "p", LOOPS3)
    out = tmp_path / "out"
    first = issue_build(project, out, "Issued for review", "2026-12-01", workers=2)
    assert sorted(first.rendered) == sorted(LOOPS3)
    for loop_id in LOOPS3:  # first issue: nothing marked
        assert _revision_runs(first.loop_files[loop_id], "A") == []
        assert read_state(project).loops[loop_id].changed == ()

    write_project(project, LOOPS3, edit=set_cells("TT-7401C", range_high=1700))
    second = issue_build(project, out, "Issued for construction", "2026-12-08", workers=2)
    assert second.rendered == ["T-7401"] and second.revisions["T-7401"] == "0"

    # the diagram drawn for the sheet: one mark, beside TT-7401C's bubble, holding "0"
    part, pieces, marks = _sheet_pieces(second, project, "T-7401")
    assert marks == RevisionMarks("0", ("TT-7401C",))
    (triangle,) = _polygon_points(pieces.diagram_svg)
    layout = layout_loop(part, "T-7401")
    bubble = next(s for s in layout.symbols if s.name == "bubble:TT-7401C")
    placed = mark_diagram(layout, marks)
    offset = re.search(r'<g transform="translate\(([-0-9.]+) ([-0-9.]+)\)"><polygon class="revision-mark"',
                       pieces.diagram_svg)
    x0, y0 = float(offset.group(1)), float(offset.group(2))
    centre = (x0 + sum(p[0] for p in triangle) / 3, y0 + sum(p[1] for p in triangle) / 3)
    assert math.dist(centre, bubble.box.centre) <= NEAR_MM
    assert placed["TT-7401C"].box.contains(Rect(centre[0] - 0.1, centre[1] - 0.1, 0.2, 0.2))
    assert overlap_problems(layout) == []
    mark = placed["TT-7401C"]
    assert not any(mark.box.overlaps(b) for b in _item_boxes(layout, mark.name))

    # the rendered sheet: the revision "0" at 2.5 mm capitals beside the bubble on the
    # diagram, in the Tags table and in each caption of TT-7401C's tables
    html_marks = pieces.revision_marks
    assert html_marks is marks
    runs = _revision_runs(second.loop_files["T-7401"], "0")
    on_diagram = [r for r in runs if math.dist(r, bubble.box.centre) <= NEAR_MM]
    assert len(on_diagram) == 1
    from loopdocs.render.sheet import SheetFrame, sheet_html

    frame = SheetFrame(part.config.title_block, second.settings, 1, 3)
    html = sheet_html(pieces, frame)
    tags_row = re.search(r'<td class="tag">TT-7401C<span class="rev-mark">.*?</span></td>', html, re.S)
    assert tags_row and ">0</text>" in tags_row.group(0)
    captions = re.findall(r"<caption>(.*?)</caption>", html, re.S)
    marked = [c for c in captions if 'class="rev-mark"' in c]
    assert marked and all("TT-7401C" in c for c in marked)
    assert len([c for c in captions if '<span class="tag">TT-7401C' in c]) == len(marked)
    assert len(runs) == 1 + 1 + len(marked)  # diagram, Tags table, captions: nothing else
    for other in ("TT-7401A", "TT-7401B"):  # untouched tags of the same loop
        assert f'<td class="tag">{other}</td>' in html

    # untouched loops keep their sheet, unmarked
    assert sorted(second.reused) == ["L-2105", "T-3110"]
    for loop_id in ("L-2105", "T-3110"):
        assert _revision_runs(second.loop_files[loop_id], "A") == []
        assert read_state(project).loops[loop_id].changed == ()

    # a rebuild renders nothing; a third issue changing another loop renders that sheet
    # only: T-7401 keeps its marks of revision 0 (its current revision), so its key
    again = builder.build(project, out, workers=2)
    assert again.rendered == []
    write_project(project, LOOPS3, edit=lambda r: set_cells("TT-3110", range_high=130)(
        set_cells("TT-7401C", range_high=1700)(r)))
    third = issue_build(project, out, "Issued for construction", "2026-12-15", workers=2)
    assert third.rendered == ["T-3110"] and "T-7401" in third.reused
    assert len(_revision_runs(third.loop_files["T-3110"], "0")) >= 2  # T-3110's first revision for construction
    assert len(_revision_runs(third.loop_files["T-7401"], "0")) == len(runs)


def test_loopdocs_draw_writes_unmarked_drawings(tmp_path, steady_code):
    from loopdocs.commands.build import issue_build
    from loopdocs.draw.export import drawing_files

    project = write_project(tmp_path / "p", LOOPS3)
    issue_build(project, tmp_path / "out", "Issued for review", "2026-12-01", workers=1)
    write_project(project, LOOPS3, edit=set_cells("TT-7401C", range_high=1700))
    issue_build(project, tmp_path / "out", "Issued for review", "2026-12-08", workers=1)
    checked = check_project(project)
    files = drawing_files(checked.project, checked.findings)
    assert files and not any(MARK_ROLE in f.svg for f in files)
