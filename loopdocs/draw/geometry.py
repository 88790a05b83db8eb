"""Drawing data: what a layout places, in mm, before any SVG is written.

A layout (loop diagram, range chart) is a :class:`Drawing`: placed symbols, texts,
signal lines, plain paths, frames and junction dots, each with its box, so overlaps can
be checked from the data (``loopdocs.draw.svg`` turns a drawing into SVG text).
Coordinates are mm, origin top left, y down (as in SVG).

>>> Rect(0, 0, 10, 5).overlaps(Rect(10, 0, 5, 5))
False
>>> Rect(0, 0, 10, 5).overlaps(Rect(9.5, 4, 5, 5))
True
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

from loopdocs.draw.symbols import Symbol
from loopdocs.draw.text import text_box

Point = tuple[float, float]

#: Line widths of the drawing set, mm (docs/design.md §8.4; ISO 128 series, from memory).
THIN_MM = 0.25
MEDIUM_MM = 0.35
WIDE_MM = 0.5
HEAVY_MM = 0.7
PEN_WIDTHS_MM = (THIN_MM, MEDIUM_MM, WIDE_MM, HEAVY_MM)


@dataclass(frozen=True)
class Rect:
    """Axis-aligned box, mm: top-left ``x``, ``y`` and size."""

    x: float
    y: float
    width: float
    height: float

    @property
    def right(self) -> float:
        return self.x + self.width

    @property
    def bottom(self) -> float:
        return self.y + self.height

    @property
    def centre(self) -> Point:
        return (self.x + self.width / 2, self.y + self.height / 2)

    def overlaps(self, other: "Rect", clearance_mm: float = 0.0) -> bool:
        """True when the interiors come closer than ``clearance_mm`` (touching is not overlap)."""
        eps = 1e-6
        return (
            self.x < other.right + clearance_mm - eps
            and other.x < self.right + clearance_mm - eps
            and self.y < other.bottom + clearance_mm - eps
            and other.y < self.bottom + clearance_mm - eps
        )

    def contains(self, other: "Rect", tolerance_mm: float = 1e-6) -> bool:
        return (
            other.x >= self.x - tolerance_mm
            and other.y >= self.y - tolerance_mm
            and other.right <= self.right + tolerance_mm
            and other.bottom <= self.bottom + tolerance_mm
        )

    def moved(self, dx: float, dy: float) -> "Rect":
        return Rect(self.x + dx, self.y + dy, self.width, self.height)

    def grown(self, pad_mm: float) -> "Rect":
        return Rect(self.x - pad_mm, self.y - pad_mm, self.width + 2 * pad_mm, self.height + 2 * pad_mm)

    @staticmethod
    def around(points: Iterable[Point], pad_mm: float = 0.0) -> "Rect":
        pts = list(points)
        xs = [p[0] for p in pts]
        ys = [p[1] for p in pts]
        return Rect(min(xs) - pad_mm, min(ys) - pad_mm, max(xs) - min(xs) + 2 * pad_mm, max(ys) - min(ys) + 2 * pad_mm)

    @staticmethod
    def union(rects: Iterable["Rect"]) -> "Rect":
        items = list(rects)
        if not items:
            return Rect(0.0, 0.0, 0.0, 0.0)
        x0 = min(r.x for r in items)
        y0 = min(r.y for r in items)
        x1 = max(r.right for r in items)
        y1 = max(r.bottom for r in items)
        return Rect(x0, y0, x1 - x0, y1 - y0)


def _rotate(point: Point, degrees: float) -> Point:
    if degrees % 360 == 0:
        return point
    a = math.radians(degrees)
    c, s = math.cos(a), math.sin(a)
    x, y = point
    return (round(x * c - y * s, 9) + 0.0, round(x * s + y * c, 9) + 0.0)


@dataclass(frozen=True)
class PlacedSymbol:
    """A library symbol placed so that its port ``anchor`` (or its top-left corner) lands
    on ``(x, y)``, rotated ``rotate_deg`` clockwise about that point."""

    symbol: Symbol
    x: float
    y: float
    anchor: str | None = None
    rotate_deg: float = 0.0
    role: str = ""
    tag: str | None = None
    ports_used: tuple[str, ...] = ()
    stroke_pad_mm: float = HEAVY_MM / 2
    name: str = ""
    """Unique within a drawing; texts drawn inside the symbol give it as ``owner``."""

    def _local_to_world(self, point: Point) -> Point:
        ax, ay = self.symbol.port(self.anchor) if self.anchor else (0.0, 0.0)
        rx, ry = _rotate((point[0] - ax, point[1] - ay), self.rotate_deg)
        return (self.x + rx, self.y + ry)

    def port(self, name: str) -> Point:
        """Where port ``name`` lands, mm."""
        return self._local_to_world(self.symbol.port(name))

    @property
    def box(self) -> Rect:
        """Bounding box of the symbol's viewBox after placing, plus half the widest pen."""
        w, h = self.symbol.width_mm, self.symbol.height_mm
        corners = [self._local_to_world(p) for p in ((0, 0), (w, 0), (0, h), (w, h))]
        return Rect.around(corners, self.stroke_pad_mm)

    def moved(self, dx: float, dy: float) -> "PlacedSymbol":
        return PlacedSymbol(self.symbol, self.x + dx, self.y + dy, self.anchor, self.rotate_deg,
                            self.role, self.tag, self.ports_used, self.stroke_pad_mm, self.name)


@dataclass(frozen=True)
class PlacedText:
    """One line of text: ``(x, y)`` is the anchor point on the baseline.

    ``fit_width_mm`` squeezes the line to that width (SVG ``textLength``) when the
    measured width is larger. ``owner`` names the symbol or frame the text is drawn
    inside (a tag in its bubble), or is empty.
    """

    text: str
    x: float
    y: float
    size_mm: float
    anchor: str = "start"
    bold: bool = False
    role: str = ""
    owner: str = ""
    fit_width_mm: float | None = None
    rotate_deg: float = 0.0

    @property
    def squeezed(self) -> bool:
        return self.fit_width_mm is not None and text_box(self.text, 0, 0, self.size_mm, "start", self.bold).width > self.fit_width_mm

    @property
    def box(self) -> Rect:
        tb = text_box(self.text, self.x, self.y, self.size_mm, self.anchor, self.bold)
        rect = Rect(tb.x, tb.y, tb.width, tb.height)
        if self.squeezed:
            assert self.fit_width_mm is not None
            shift = {"start": 0.0, "middle": 0.5, "end": 1.0}[self.anchor] * self.fit_width_mm
            rect = Rect(self.x - shift, tb.y, self.fit_width_mm, tb.height)
        if self.rotate_deg % 360:
            corners = [(rect.x, rect.y), (rect.right, rect.y), (rect.x, rect.bottom), (rect.right, rect.bottom)]
            rotated = []
            for px, py in corners:
                rx, ry = _rotate((px - self.x, py - self.y), self.rotate_deg)
                rotated.append((self.x + rx, self.y + ry))
            rect = Rect.around(rotated)
        return rect

    def moved(self, dx: float, dy: float) -> "PlacedText":
        return PlacedText(self.text, self.x + dx, self.y + dy, self.size_mm, self.anchor, self.bold,
                          self.role, self.owner, self.fit_width_mm, self.rotate_deg)


#: Half the width of the band a signal line of each kind occupies, marks included, mm.
LINE_HALF_WIDTH_MM = {"electrical": 0.3, "pneumatic": 1.6, "data": 0.9, "process": 0.45, "connection": 0.25}


@dataclass(frozen=True)
class SignalLine:
    """A polyline drawn in a line style: ``electrical``, ``pneumatic``, ``data``,
    ``process`` (from ``symbols/lines.json``) or ``connection`` (thin solid: leaders,
    impulse lines, connections to the process; ISA-5.1 instrument-to-process line)."""

    kind: str
    points: tuple[Point, ...]
    role: str = ""

    def segment_boxes(self) -> list[Rect]:
        """A box along each segment, ``LINE_HALF_WIDTH_MM`` to either side of it (the
        stroke and the marks across it); a horizontal or vertical segment's box ends where
        the segment ends (butt caps, the SVG default), so a line ending at a symbol's edge
        does not reach inside it."""
        half = LINE_HALF_WIDTH_MM.get(self.kind, 0.4)
        boxes = []
        for a, b in zip(self.points, self.points[1:]):
            if abs(a[1] - b[1]) < 1e-9 and abs(a[0] - b[0]) > 1e-9:
                boxes.append(Rect(min(a[0], b[0]), a[1] - half, abs(b[0] - a[0]), 2 * half))
            elif abs(a[0] - b[0]) < 1e-9 and abs(a[1] - b[1]) > 1e-9:
                boxes.append(Rect(a[0] - half, min(a[1], b[1]), 2 * half, abs(b[1] - a[1])))
            else:
                boxes.append(Rect.around([a, b], half))
        return boxes

    def moved(self, dx: float, dy: float) -> "SignalLine":
        return SignalLine(self.kind, tuple((x + dx, y + dy) for x, y in self.points), self.role)


@dataclass(frozen=True)
class Path:
    """A plain polyline or polygon (chart axes, curves, shading)."""

    points: tuple[Point, ...]
    stroke_mm: float | None = THIN_MM
    dash_mm: tuple[float, ...] | None = None
    closed: bool = False
    fill: str | None = None
    fill_opacity: float | None = None
    stroke: str = "#000000"
    role: str = ""

    def segment_boxes(self) -> list[Rect]:
        if self.stroke_mm is None:
            return []
        pts = list(self.points) + ([self.points[0]] if self.closed else [])
        return [Rect.around([a, b], self.stroke_mm / 2) for a, b in zip(pts, pts[1:])]

    def moved(self, dx: float, dy: float) -> "Path":
        return Path(tuple((x + dx, y + dy) for x, y in self.points), self.stroke_mm, self.dash_mm,
                    self.closed, self.fill, self.fill_opacity, self.stroke, self.role)


@dataclass(frozen=True)
class Frame:
    """A rectangle: an I/O block, a junction-box or cabinet enclosure, a shaded band.

    ``solid`` frames are boxes text must keep out of (unless the text names the frame
    as its owner); enclosures are outlines that only their edges occupy.
    """

    rect: Rect
    stroke_mm: float | None = THIN_MM
    dash_mm: tuple[float, ...] | None = None
    fill: str | None = None
    fill_opacity: float | None = None
    role: str = ""
    name: str = ""
    solid: bool = False

    def edge_boxes(self) -> list[Rect]:
        if self.stroke_mm is None:
            return []
        r, h = self.rect, self.stroke_mm / 2
        return [
            Rect(r.x - h, r.y - h, r.width + 2 * h, 2 * h),
            Rect(r.x - h, r.bottom - h, r.width + 2 * h, 2 * h),
            Rect(r.x - h, r.y - h, 2 * h, r.height + 2 * h),
            Rect(r.right - h, r.y - h, 2 * h, r.height + 2 * h),
        ]

    def moved(self, dx: float, dy: float) -> "Frame":
        return Frame(self.rect.moved(dx, dy), self.stroke_mm, self.dash_mm, self.fill, self.fill_opacity,
                     self.role, self.name, self.solid)


@dataclass(frozen=True)
class Dot:
    """A filled junction dot where lines join (ISA-5.1 connection)."""

    x: float
    y: float
    radius_mm: float = 0.6
    role: str = ""

    @property
    def box(self) -> Rect:
        return Rect(self.x - self.radius_mm, self.y - self.radius_mm, 2 * self.radius_mm, 2 * self.radius_mm)

    def moved(self, dx: float, dy: float) -> "Dot":
        return Dot(self.x + dx, self.y + dy, self.radius_mm, self.role)


@dataclass
class Drawing:
    """Everything a layout places. Painted in this order: frames, paths, signal lines,
    dots, symbols, texts."""

    width_mm: float = 0.0
    height_mm: float = 0.0
    title: str = ""
    description: str = ""
    frames: list[Frame] = field(default_factory=list)
    paths: list[Path] = field(default_factory=list)
    lines: list[SignalLine] = field(default_factory=list)
    dots: list[Dot] = field(default_factory=list)
    symbols: list[PlacedSymbol] = field(default_factory=list)
    texts: list[PlacedText] = field(default_factory=list)
    free_corner_mm: tuple[float, float] | None = None
    """A point from which the drawing holds nothing to its right and bottom edges (a
    loop diagram's empty lower right, beside the field band): a sheet may set tables there."""

    def extend(self, other: "Drawing", dx: float = 0.0, dy: float = 0.0) -> None:
        """Add ``other``'s items moved by ``(dx, dy)``."""
        self.frames += [f.moved(dx, dy) for f in other.frames]
        self.paths += [p.moved(dx, dy) for p in other.paths]
        self.lines += [line.moved(dx, dy) for line in other.lines]
        self.dots += [d.moved(dx, dy) for d in other.dots]
        self.symbols += [s.moved(dx, dy) for s in other.symbols]
        self.texts += [t.moved(dx, dy) for t in other.texts]

    def content_box(self) -> Rect:
        """Box around everything drawn."""
        boxes = [s.box for s in self.symbols] + [t.box for t in self.texts]
        boxes += [f.rect.grown((f.stroke_mm or 0) / 2) for f in self.frames]
        for item in (*self.lines, *self.paths):
            boxes += item.segment_boxes()
        boxes += [d.box for d in self.dots]
        return Rect.union(boxes)

    def solid_boxes(self) -> list[tuple[str, Rect]]:
        """Boxes text must not enter, with the owner name a text may carry to be exempt."""
        boxes = [(s.name or f"symbol-{i}", s.box) for i, s in enumerate(self.symbols)]
        boxes += [(f.name, f.rect) for f in self.frames if f.solid]
        return boxes

    def line_boxes(self) -> list[Rect]:
        """Thin boxes along every stroked line and frame edge."""
        boxes: list[Rect] = []
        for item in (*self.lines, *self.paths):
            boxes += item.segment_boxes()
        for f in self.frames:
            if not f.solid:
                boxes += f.edge_boxes()
        return boxes


def overlapping_pairs(rects: Sequence[tuple[str, Rect]], clearance_mm: float = 0.0) -> list[tuple[str, str]]:
    """Every pair of named boxes that overlap (sorted by x; O(n log n + k))."""
    order = sorted(range(len(rects)), key=lambda i: rects[i][1].x)
    found: list[tuple[str, str]] = []
    active: list[int] = []
    for i in order:
        name_i, box_i = rects[i]
        active = [j for j in active if rects[j][1].right + clearance_mm > box_i.x]
        for j in active:
            if box_i.overlaps(rects[j][1], clearance_mm):
                found.append((rects[j][0], name_i))
        active.append(i)
    return found


def polyline_boxes(points: Sequence[Point], half_mm: float, step_mm: float = 0.8) -> list[Rect]:
    """Small squares (``2 * half_mm`` a side, one every ``step_mm`` or closer) along a
    polyline, so that texts and marks can keep clear of sloping lines too, not only of
    their bounding boxes.

    >>> [(b.x, b.y) for b in polyline_boxes([(0.0, 0.0), (1.0, 0.0)], 0.5, 1.0)]
    [(-0.5, -0.5), (0.5, -0.5)]
    """
    boxes = []
    for (x0, y0), (x1, y1) in zip(points, points[1:]):
        n = max(1, int(math.hypot(x1 - x0, y1 - y0) / step_mm))
        for i in range(n + 1):
            f = i / n
            boxes.append(Rect(x0 + f * (x1 - x0) - half_mm, y0 + f * (y1 - y0) - half_mm, 2 * half_mm, 2 * half_mm))
    return boxes
