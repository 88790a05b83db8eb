"""Checks shared by the drawing tests: SVG 1.1 structure, overlaps and crossings from
layout data, and writing a small index as CSV."""

from __future__ import annotations

import csv
import math
from itertools import combinations
from pathlib import Path

import defusedxml.ElementTree as DET

from loopdocs.read.columns import COLUMNS

SVG_NS = "{http://www.w3.org/2000/svg}"

# SVG 1.1 (Second Edition), Appendix M "Element Index": every element name of the language.
SVG11_ELEMENTS = frozenset("""
a altGlyph altGlyphDef altGlyphItem animate animateColor animateMotion animateTransform circle
clipPath color-profile cursor defs desc ellipse feBlend feColorMatrix feComponentTransfer
feComposite feConvolveMatrix feDiffuseLighting feDisplacementMap feDistantLight feFlood feFuncA
feFuncB feFuncG feFuncR feGaussianBlur feImage feMerge feMergeNode feMorphology feOffset
fePointLight feSpecularLighting feSpotLight feTile feTurbulence filter font font-face
font-face-format font-face-name font-face-src font-face-uri foreignObject g glyph glyphRef hkern
image line linearGradient marker mask metadata missing-glyph mpath path pattern polygon polyline
radialGradient rect script set stop style svg switch symbol text textPath title tref tspan use
view vkern""".split())

# Pens of the drawing set (docs/design.md §8.4; ISO 128-20 line widths, from memory).
PEN_WIDTHS = {0.25, 0.35, 0.5, 0.7}


def write_csv(path: Path, rows: list[dict]) -> Path:
    with path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow([c.header for c in COLUMNS])
        for row in rows:
            writer.writerow(["" if row.get(c.key) is None else row.get(c.key) for c in COLUMNS])
    return path


def write_xlsx(path: Path, rows: list[dict]) -> Path:
    """The same index as :func:`write_csv`, as a real workbook (openpyxl), sheet "Index"."""
    from openpyxl import Workbook

    book = Workbook()
    sheet = book.active
    sheet.title = "Index"
    sheet.append([c.header for c in COLUMNS])
    for row in rows:
        sheet.append([row.get(c.key) for c in COLUMNS])
    book.save(path)
    return path


def overlap_problems(layout) -> list[str]:
    """Every text that overlaps another text, a symbol (other than the one it is drawn
    in) or a line, from the boxes of the layout."""
    problems = []
    texts = layout.texts
    for a, b in combinations(texts, 2):
        if a.box.overlaps(b.box):
            problems.append(f"text {a.text!r} overlaps text {b.text!r}")
    solids = layout.solid_boxes()
    lines = layout.line_boxes()
    for t in texts:
        for name, box in solids:
            if name != t.owner and t.box.overlaps(box):
                problems.append(f"text {t.text!r} overlaps symbol {name}")
        for box in lines:
            if t.box.overlaps(box):
                problems.append(f"text {t.text!r} ({t.role}) crosses a line")
                break
    return problems


def segments(layout):
    for index, line in enumerate(layout.lines):
        for a, b in zip(line.points, line.points[1:]):
            yield index, line.kind, a, b


def _horizontal(a, b) -> bool:
    return abs(a[1] - b[1]) < 1e-6


def crossing_problems(layout) -> list[str]:
    """Lines that are not orthogonal, that cross another line, or that run along another."""
    problems = []
    segs = list(segments(layout))
    for _, kind, a, b in segs:
        if not (_horizontal(a, b) or abs(a[0] - b[0]) < 1e-6):
            problems.append(f"{kind} segment {a}-{b} is not horizontal or vertical")
    eps = 1e-6
    for (i, ki, a, b), (j, kj, c, d) in combinations(segs, 2):
        if i == j:
            continue
        h1, h2 = _horizontal(a, b), _horizontal(c, d)
        if h1 != h2:
            (p, q), (r, s) = ((a, b), (c, d)) if h1 else ((c, d), (a, b))
            x0, x1 = sorted((p[0], q[0]))
            y0, y1 = sorted((r[1], s[1]))
            if x0 + eps < r[0] < x1 - eps and y0 + eps < p[1] < y1 - eps:
                problems.append(f"{ki} line crosses {kj} line at ({r[0]:.1f}, {p[1]:.1f})")
        else:
            axis = 0 if h1 else 1
            if abs(a[1 - axis] - c[1 - axis]) > eps:
                continue
            lo = max(min(a[axis], b[axis]), min(c[axis], d[axis]))
            hi = min(max(a[axis], b[axis]), max(c[axis], d[axis]))
            if hi - lo > eps:
                problems.append(f"{ki} line runs along {kj} line near {a}")
    return problems


def parse_svg(text: str):
    return DET.fromstring(text.encode("utf-8"), forbid_dtd=True)


def check_svg11(text: str) -> None:
    """Root ``svg`` in the SVG namespace, version 1.1, width/height in mm equal to the
    viewBox size (SVG 1.1, 7.7 "The viewBox attribute"), only SVG 1.1 element names."""
    root = parse_svg(text)
    assert root.tag == f"{SVG_NS}svg"
    assert root.get("version") == "1.1"
    w, h = root.get("width"), root.get("height")
    assert w.endswith("mm") and h.endswith("mm")
    vb = [float(v) for v in root.get("viewBox").split()]
    assert vb[:2] == [0.0, 0.0]
    assert math.isclose(vb[2], float(w[:-2])) and math.isclose(vb[3], float(h[:-2]))
    for element in root.iter():
        assert element.tag.startswith(SVG_NS), element.tag
        assert element.tag[len(SVG_NS):] in SVG11_ELEMENTS, element.tag
    return root


# Lines of a range chart a text must keep off: the element lines, the intent and
# capacity lines, the boundary verticals, the plot frame and the signal axis (grid lines
# and shading are pale and may run under a text).
CHART_SOLID_ROLES = ("curve:", "intent:", "capacity", "boundary", "recommended-boundary", "plot-frame",
                     "signal-axis")


def chart_overlap_problems(chart) -> list[str]:
    """Every text of a range chart that overlaps another text, leaves the canvas, or
    crosses one of the chart's dark lines, from the boxes of the chart data."""
    problems = [f"text {a.text!r} ({a.role}) overlaps text {b.text!r} ({b.role})"
                for a, b in combinations(chart.texts, 2) if a.box.overlaps(b.box)]
    for t in chart.texts:
        box = t.box
        if box.x < -1e-6 or box.y < -1e-6 or box.right > chart.width_mm + 1e-6 or box.bottom > chart.height_mm + 1e-6:
            problems.append(f"text {t.text!r} ({t.role}) outside the canvas")
    dark = [p for p in chart.paths if p.stroke_mm is not None and p.role.startswith(CHART_SOLID_ROLES)]
    for t in chart.texts:
        for path in dark:
            pts = list(path.points) + ([path.points[0]] if path.closed else [])
            box = t.box.grown(path.stroke_mm / 2)
            if any(segment_meets_box(a, b, box) for a, b in zip(pts, pts[1:])):
                problems.append(f"text {t.text!r} ({t.role}) crosses the {path.role} line")
                break
    return problems


def segment_meets_box(a, b, box) -> bool:
    """Whether the straight segment a-b passes through the inside of ``box``
    (Liang-Barsky clipping of a segment to a rectangle)."""
    (x0, y0), (x1, y1) = a, b
    dx, dy = x1 - x0, y1 - y0
    lo, hi = 0.0, 1.0
    for p, q in ((-dx, x0 - box.x), (dx, box.right - x0), (-dy, y0 - box.y), (dy, box.bottom - y0)):
        if abs(p) < 1e-12:
            if q <= 1e-9:
                return False
            continue
        r = q / p
        if p < 0:
            lo = max(lo, r)
        else:
            hi = min(hi, r)
        if lo >= hi - 1e-9:
            return False
    return True
