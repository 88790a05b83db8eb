"""Revision marks: the drafting mark set beside each item changed in a sheet's current
revision, a triangle with the revision inside it (docs/design.md §12.9).

Drafting practice (common practice, the "delta"; ASME Y14.35 and ISO 7200 revision
practice, from memory): a revised item is flagged by a triangle holding the revision
letter or number, beside the item, for the current revision only; the marks of earlier
revisions are taken off when the sheet is revised again. Our own drawing: an
equilateral triangle about 5 mm high (its side :func:`mark_side_mm`, 6 mm for one
character, wider when a revision of several characters needs it), the revision in
2.5 mm capitals (``TEXT_MM``, 3.43 mm type), a 0.35 mm line. No cloud is drawn.

What is marked, from the revision state's ``changed`` items (``loopdocs.model.revisions``):

- on the loop diagram, beside the bubble of each changed tag (:func:`mark_diagram`),
  where the triangle overlaps no text, symbol, line, band boundary nor the diagram's free
  corner (the sheet may set tables there);
- on a range chart, beside the line label of each changed element (:func:`mark_chart`),
  clear of every text and dark line of the chart;
- on the sheet, beside the changed tags in the Tags table and in the captions of their
  calibration tables (:func:`mark_svg`, inline in the HTML).

A loop whose current revision changed nothing (its first issue, or a loop not issued
again) has no marks; ``loopdocs draw`` (no revision) never marks.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from xml.sax.saxutils import escape, quoteattr

from loopdocs.draw.clusters import TEXT_MM
from loopdocs.draw.geometry import MEDIUM_MM, Drawing, PlacedSymbol, PlacedText, Rect, polyline_boxes
from loopdocs.draw.symbols import Symbol, fmt_mm
from loopdocs.draw.text import CAP_HEIGHT_EM, text_width_mm

MIN_SIDE_MM = 6.0
"""Side of the triangle for a revision of one character (5.2 mm high: about 5 mm); the
widest capital of DejaVu Sans at 3.43 mm type fits it (:func:`mark_side_mm`)."""
BASELINE_MM = 0.5
"""From the triangle's base up to the revision's baseline."""
TEXT_CLEAR_MM = 0.1
"""Room left between the revision's capitals and the triangle's sloping sides."""
CLEARANCE_MM = 0.5
"""A mark keeps this far from everything else drawn."""
REACH_MM = (0.8, 2.0, 3.5, 5.0, 7.0, 9.0, 12.0, 15.0)
"""Gaps from the item's box at which a place for the mark is tried, nearest first."""
MARK_ROLE = "revision-mark"


@dataclass(frozen=True)
class RevisionMarks:
    """What a sheet marks: its current ``revision`` and the ``tags`` changed in it."""

    revision: str
    tags: tuple[str, ...] = ()

    def __bool__(self) -> bool:
        return bool(self.revision and self.tags)

    def marks(self, tag: str) -> bool:
        return bool(self) and tag in self.tags


def revision_marks(revision: str, changes: Iterable[object]) -> RevisionMarks | None:
    """The marks of a sheet from its revision and the changed items of that revision
    (objects with a ``tag``; every changed column of a tag gives one mark per tag);
    ``None`` when nothing changed.

    >>> from types import SimpleNamespace as C
    >>> revision_marks("B", [C(tag="TT-1", field="range_high"), C(tag="TT-1", field="units"), C(tag="TV-1", field="tag")])
    RevisionMarks(revision='B', tags=('TT-1', 'TV-1'))
    >>> revision_marks("A", []) is None
    True
    """
    tags = tuple(dict.fromkeys(str(getattr(c, "tag")) for c in changes))
    return RevisionMarks(revision, tags) if revision and tags else None


# --------------------------------------------------------------------------- the mark


def mark_side_mm(revision: str) -> float:
    """Side of the triangle holding ``revision``, mm: the revision's width, plus what the
    sloping sides take at the height of its capitals (2 h / tan 60°, h = baseline height
    + capital height), at least ``MIN_SIDE_MM``.

    >>> mark_side_mm("B"), mark_side_mm("1"), mark_side_mm("10")
    (6.02, 6.0, 8.03)
    """
    top = BASELINE_MM + CAP_HEIGHT_EM * TEXT_MM
    side = text_width_mm(revision, TEXT_MM) + 2 * TEXT_CLEAR_MM + 2 * top / math.tan(math.radians(60))
    return round(max(MIN_SIDE_MM, side), 2)


def mark_height_mm(revision: str) -> float:
    """Height of the triangle: side x sin 60°."""
    return round(mark_side_mm(revision) * math.sin(math.radians(60)), 2)


def mark_symbol(revision: str) -> Symbol:
    """The triangle as a symbol (apex up; top-left of its box at 0, 0); the revision is
    drawn as a text owned by it (:func:`mark_items`)."""
    side, height = mark_side_mm(revision), mark_height_mm(revision)
    points = f"0,{fmt_mm(height)} {fmt_mm(side / 2)},0 {fmt_mm(side)},{fmt_mm(height)}"
    markup = (f'<polygon class="{MARK_ROLE}" points="{points}" fill="none" stroke="#000000" '
              f'stroke-width="{fmt_mm(MEDIUM_MM)}" stroke-linejoin="miter"/>')
    return Symbol(name=MARK_ROLE, width_mm=side, height_mm=height, ports={"centre": (side / 2, height / 2)},
                  text_areas={}, markup=markup, title=f"Revision {revision}")


def mark_items(revision: str, x_mm: float, y_mm: float, tag: str) -> tuple[PlacedSymbol, PlacedText]:
    """The triangle with its box's top left at (``x_mm``, ``y_mm``) and the revision inside it."""
    symbol = mark_symbol(revision)
    name = f"{MARK_ROLE}:{tag}"
    placed = PlacedSymbol(symbol, x_mm, y_mm, role=MARK_ROLE, tag=tag, stroke_pad_mm=MEDIUM_MM / 2, name=name)
    text = PlacedText(revision, x_mm + symbol.width_mm / 2, y_mm + symbol.height_mm - BASELINE_MM, TEXT_MM,
                      "middle", role=f"{MARK_ROLE}-text", owner=name)
    return placed, text


def mark_svg(revision: str) -> str:
    """The mark as a small SVG of its own, to set inline in the sheet's HTML (beside a tag
    in the Tags table or a table's caption): the same triangle and lettering."""
    side, height = mark_side_mm(revision), mark_height_mm(revision)
    pad = MEDIUM_MM / 2
    width, full = side + 2 * pad, height + 2 * pad
    symbol = mark_symbol(revision)
    return (f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" class="{MARK_ROLE}" '
            f'width="{fmt_mm(width)}mm" height="{fmt_mm(full)}mm" viewBox="0 0 {fmt_mm(width)} {fmt_mm(full)}">'
            f"<title>{escape(f'Revision {revision}')}</title>"
            f'<g transform="translate({fmt_mm(pad)} {fmt_mm(pad)})">{symbol.markup}'
            f'<text x="{fmt_mm(side / 2)}" y="{fmt_mm(height - BASELINE_MM)}" font-size="{fmt_mm(TEXT_MM)}" '
            f'text-anchor="middle" font-family={quoteattr("DejaVu Sans, sans-serif")} fill="#000000">'
            f"{escape(revision)}</text></g></svg>")


HTML_GAP_MM = 0.8 + 1.0
"""Left of a mark set in the sheet's HTML: its padding (``sheet.css`` ``.rev-mark``) and a space."""


def html_mark_mm(revision: str) -> tuple[float, float]:
    """Width (with the room left of it) and height of :func:`mark_svg` set beside a tag."""
    return (round(mark_side_mm(revision) + MEDIUM_MM + HTML_GAP_MM, 2), round(mark_height_mm(revision) + MEDIUM_MM, 2))


# --------------------------------------------------------------------------- placing


def _candidates(anchor: Rect, width: float, height: float) -> list[tuple[float, float]]:
    """Top-left corners of the mark around ``anchor``: right of it, left of it, above and
    below it, at each gap of ``REACH_MM``, slid along that side in 1 mm steps; nearest to
    the anchor's centre first (ties: right, left, above, below; upper before lower)."""
    cx, cy = anchor.centre
    spots: list[tuple[float, int, float, float, float]] = []
    ys = [anchor.y - height + k for k in range(int(anchor.height + height) + 1)]
    xs = [anchor.x - width + k for k in range(int(anchor.width + width) + 1)]
    for gap in REACH_MM:
        sides = ([(anchor.right + gap, y) for y in ys], [(anchor.x - gap - width, y) for y in ys],
                 [(x, anchor.y - gap - height) for x in xs], [(x, anchor.bottom + gap) for x in xs])
        for order, side in enumerate(sides):
            for x, y in side:
                d = math.hypot(x + width / 2 - cx, y + height / 2 - cy)
                spots.append((round(d, 6), order, y, x, y))
    return [(x, y) for *_, x, y in sorted(spots)]


def _nearest_own(box: Rect, tag: str, anchors: Mapping[str, Rect]) -> bool:
    """Whether ``box`` is nearer the anchor of ``tag`` than any other anchor (gap
    between boxes), so that a reader takes the mark for the right item."""
    def gap(a: Rect, b: Rect) -> float:
        dx = max(a.x - b.right, b.x - a.right, 0.0)
        dy = max(a.y - b.bottom, b.y - a.bottom, 0.0)
        return math.hypot(dx, dy)

    own = gap(box, anchors[tag])
    return all(gap(box, other) > own + 1e-6 for name, other in anchors.items() if name != tag)


def place_marks(drawing: Drawing, anchors: Mapping[str, Rect], marked: Sequence[str], revision: str,
                obstacles: Sequence[Rect], bounds: Rect) -> dict[str, PlacedSymbol]:
    """Add a mark beside the item of each ``marked`` tag (``anchors``: tag -> the box of
    every item that may carry a mark) at the nearest place inside ``bounds`` whose box,
    ``CLEARANCE_MM`` around it, meets none of ``obstacles`` nor another mark, and that
    is nearer its own item than any other; returns the marks placed by tag. A tag with
    no such place within ``REACH_MM`` gets none (the caller decides what then)."""
    taken = list(obstacles)
    placed: dict[str, PlacedSymbol] = {}
    side, height = mark_side_mm(revision), mark_height_mm(revision)
    for tag in marked:
        if tag not in anchors:
            continue
        for x, y in _candidates(anchors[tag], side, height):
            symbol, text = mark_items(revision, x, y, tag)
            box = Rect.union([symbol.box, text.box])  # the text's box holds its descent, below the base
            if not bounds.contains(box) or any(box.overlaps(o, CLEARANCE_MM) for o in taken):
                continue
            if not _nearest_own(box, tag, anchors):
                continue
            drawing.symbols.append(symbol)
            drawing.texts.append(text)
            taken.append(box)
            placed[tag] = symbol
            break
    return placed


def diagram_obstacles(drawing: Drawing, corner: bool = True) -> list[Rect]:
    """What a mark must keep off on a loop diagram: every text, symbol, line, dot and
    frame edge, and (``corner``) the free lower right corner the sheet may fill with tables."""
    boxes = [t.box for t in drawing.texts] + [b for _, b in drawing.solid_boxes()] + drawing.line_boxes()
    boxes += [d.box for d in drawing.dots]
    if corner and drawing.free_corner_mm is not None:
        fx, fy = drawing.free_corner_mm
        boxes.append(Rect(fx, fy, max(drawing.width_mm - fx, 0.0), max(drawing.height_mm - fy, 0.0)))
    return boxes


def mark_diagram(layout: Drawing, marks: RevisionMarks | None) -> dict[str, PlacedSymbol]:
    """Mark the bubble of each changed tag on a finished loop diagram (symbols named
    ``bubble:TAG``). Where a bubble has no free place but in the free lower right corner,
    the mark goes there and the corner starts below it (or is given up when too small).
    A changed tag without a bubble, or with no free place near it, is not marked on the
    diagram (the Tags table of the sheet still marks it)."""
    from loopdocs.draw.placement import FREE_CORNER_MIN_MM, FREE_CORNER_PAD_MM

    if not marks:
        return {}
    bubbles = {s.tag: s.box for s in layout.symbols if s.name.startswith("bubble:") and s.tag}
    bounds = Rect(0.0, 0.0, layout.width_mm, layout.height_mm)
    placed = place_marks(layout, bubbles, marks.tags, marks.revision, diagram_obstacles(layout), bounds)
    missing = [tag for tag in marks.tags if tag in bubbles and tag not in placed]
    if missing and layout.free_corner_mm is not None:
        more = place_marks(layout, bubbles, missing, marks.revision, diagram_obstacles(layout, corner=False), bounds)
        if more:
            fx, fy = layout.free_corner_mm
            inside = [m.box.bottom for m in more.values() if m.box.right > fx]
            if inside:
                fy = max(fy, max(inside) + FREE_CORNER_PAD_MM)
                small = layout.width_mm - fx < FREE_CORNER_MIN_MM[0] or layout.height_mm - fy < FREE_CORNER_MIN_MM[1]
                layout.free_corner_mm = None if small else (fx, round(fy, 3))
            placed.update(more)
    return placed


def chart_obstacles(chart: Drawing) -> list[Rect]:
    """What a mark must keep off on a range chart: every text and every stroked line
    other than the pale grid."""
    boxes = [t.box for t in chart.texts] + [b for _, b in chart.solid_boxes()]
    for path in chart.paths:
        if path.stroke_mm is None or path.role == "grid":
            continue
        points = list(path.points) + ([path.points[0]] if path.closed else [])
        boxes += polyline_boxes(points, max(path.stroke_mm / 2, 0.3))
    return boxes


def mark_chart(chart: Drawing, marks: RevisionMarks | None) -> dict[str, PlacedSymbol]:
    """Mark the line label of each changed element on a finished range chart (texts of
    role ``curve-label`` that name the element's tag)."""
    if not marks:
        return {}
    labels = {}
    for text in chart.texts:
        if text.role == "curve-label":
            tag = text.text.split(" (")[0]
            labels.setdefault(tag, text.box)
    bounds = Rect(0.0, 0.0, chart.width_mm, chart.height_mm)
    return place_marks(chart, labels, marks.tags, marks.revision, chart_obstacles(chart), bounds)
