"""Where the boxes of a loop sheet go: the diagram, the range charts and the tables
placed on the page at their own size, none scaled, none overlapping.

:func:`pack` is a bottom-left packer over candidate corners (the classic heuristic for
rectangle packing: each box, in the order given, goes to the highest, then leftmost,
corner of the boxes already placed where it fits inside the area without touching
another box). The diagram goes first, at the top left; the range charts next; the
tables, tallest first, fill the columns beside and under them. Boxes that do not fit
go to the next page, where the same packer continues them. Pure: sizes in mm in,
positions in mm out.

>>> placed, rest = pack([Box("d", 100, 50), Box("t1", 40, 30), Box("t2", 40, 30), Box("t3", 40, 40), Box("t4", 160, 10)], 150, 100)
>>> [(p.box.key, p.x_mm, p.y_mm) for p in placed], [b.key for b in rest]
([('d', 0.0, 0.0), ('t1', 104.0, 0.0), ('t2', 104.0, 34.0), ('t3', 0.0, 54.0)], ['t4'])
"""

from __future__ import annotations

import random
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, replace
from typing import Any

GAP_MM = 4.0
"""Space between two boxes (right of and below each box)."""


@dataclass(frozen=True)
class Box:
    """One thing to place: its key (what the template shows there) and its size in mm."""

    key: Any
    width_mm: float
    height_mm: float
    free_corner_mm: tuple[float, float] | None = None
    """A point inside the box (from its top left) from which the box holds nothing to
    its right and bottom edges: other boxes may go there (a loop diagram's empty corner)."""
    variants: tuple[tuple[float, float], ...] = ()
    """Other sizes the same thing can be printed at (a table set wider, so lower), tried in
    order where the box fits nowhere at its own size."""
    variant: int = 0
    """Which size was placed: 0 its own, ``k`` the ``k``-th of ``variants``."""


@dataclass(frozen=True)
class Placed:
    box: Box
    x_mm: float
    y_mm: float

    @property
    def right_mm(self) -> float:
        return self.x_mm + self.box.width_mm

    @property
    def bottom_mm(self) -> float:
        return self.y_mm + self.box.height_mm


def _overlaps(x: float, y: float, box: Box, other: Placed, gap_mm: float) -> bool:
    corner = other.box.free_corner_mm
    if corner is not None and x >= other.x_mm + corner[0] + gap_mm - 1e-6 and y >= other.y_mm + corner[1] + gap_mm - 1e-6:
        return False
    # 1 µm of slack: the candidate corners are rounded to 0.001 mm
    eps = 1e-6
    return (x < other.right_mm + gap_mm - eps and other.x_mm < x + box.width_mm + gap_mm - eps
            and y < other.bottom_mm + gap_mm - eps and other.y_mm < y + box.height_mm + gap_mm - eps)


def place(box: Box, placed: Sequence[Placed], width_mm: float, height_mm: float,
          gap_mm: float = GAP_MM) -> Placed | None:
    """The highest, then leftmost, free corner where ``box`` fits (``None``: nowhere)."""
    corners = {(0.0, 0.0)}
    for p in placed:
        corners.add((round(p.right_mm + gap_mm, 3), p.y_mm))
        corners.add((p.x_mm, round(p.bottom_mm + gap_mm, 3)))
        # under a box, flush with the left edge; beside it, flush with the top
        corners.add((0.0, round(p.bottom_mm + gap_mm, 3)))
        corners.add((round(p.right_mm + gap_mm, 3), 0.0))
    # in a free corner: at its top, beside any box; at its left, under any box
    for q in placed:
        if q.box.free_corner_mm is None:
            continue
        cx, cy = round(q.x_mm + q.box.free_corner_mm[0] + gap_mm, 3), round(q.y_mm + q.box.free_corner_mm[1] + gap_mm, 3)
        corners.add((cx, cy))
        corners |= {(round(p.right_mm + gap_mm, 3), cy) for p in placed if p.right_mm + gap_mm > cx}
        corners |= {(cx, round(p.bottom_mm + gap_mm, 3)) for p in placed if p.bottom_mm + gap_mm > cy}
    for x, y in sorted(corners, key=lambda c: (c[1], c[0])):
        if x + box.width_mm > width_mm + 1e-6 or y + box.height_mm > height_mm + 1e-6:
            continue
        if not any(_overlaps(x, y, box, p, gap_mm) for p in placed):
            return Placed(box, x, y)
    return None


def place_any(box: Box, placed: Sequence[Placed], width_mm: float, height_mm: float,
              gap_mm: float = GAP_MM) -> Placed | None:
    """:func:`place` at the box's own size, else at the first of its ``variants`` that fits.

    >>> wide = Box("t", 40, 30, variants=((90, 18),))
    >>> p = place_any(wide, [Placed(Box("d", 100, 70), 0.0, 0.0)], 100, 100)
    >>> (p.x_mm, p.y_mm, p.box.width_mm, p.box.height_mm, p.box.variant)
    (0.0, 74.0, 90, 18, 1)
    """
    spot = place(box, placed, width_mm, height_mm, gap_mm)
    for k, (w, h) in enumerate(box.variants, start=1):
        if spot is not None:
            break
        spot = place(replace(box, width_mm=w, height_mm=h, variants=(), variant=k), placed, width_mm, height_mm, gap_mm)
    return spot


def pack(boxes: Sequence[Box], width_mm: float, height_mm: float, gap_mm: float = GAP_MM,
         placed: Sequence[Placed] = ()) -> tuple[list[Placed], list[Box]]:
    """Place ``boxes`` in order in the area (after those already ``placed``), each at its
    own size or one of its variants (:func:`place_any`); returns the placed boxes (with
    those given) and, in order, those that did not fit."""
    done = list(placed)
    rest = []
    for box in boxes:
        spot = place_any(box, done, width_mm, height_mm, gap_mm)
        if spot is None:
            rest.append(box)
        else:
            done.append(spot)
    return done, rest


def used_height_mm(placed: Sequence[Placed]) -> float:
    """Height of the packed area: the bottom of its lowest box."""
    return max((p.bottom_mm for p in placed), default=0.0)


SHUFFLES = 400
"""Further orders tried, shuffled with a fixed seed, when the first three leave more than
one page (the packer is greedy: another order may fit a page where these do not)."""


def _orders(boxes: Sequence[Box]) -> Iterator[list[Box]]:
    """Orders worth trying for the tables: as given (the reading order, kept when no
    other packs better), tallest first (columns fill evenly), widest first; then
    ``SHUFFLES`` shuffled orders (seeded: the same boxes give the same orders)."""
    yield list(boxes)
    yield sorted(boxes, key=lambda b: -b.height_mm)
    yield sorted(boxes, key=lambda b: -b.width_mm)
    rnd = random.Random(len(boxes))
    for _ in range(SHUFFLES if len(boxes) > 1 else 0):
        order = list(boxes)
        rnd.shuffle(order)
        yield order


def _reading(p: Placed) -> tuple[float, float]:
    """Where a reader meets a placed box: column by column (left edges 10 mm apart count
    as one column), top down."""
    return (round(p.x_mm / 10.0), p.y_mm)


def out_of_order(keys: Sequence[Any], rank: dict[Any, int]) -> int:
    """Pairs of boxes a reader meets in the wrong order (the order given: the loop's
    measurement first, then the split check, then each valve's tables).

    >>> out_of_order(["b", "a", "c"], {"a": 0, "b": 1, "c": 2})
    1
    """
    ranks = [rank[k] for k in keys]
    return sum(1 for i, a in enumerate(ranks) for b in ranks[i + 1:] if a > b)


def pack_pages(first: Sequence[Box], rest: Sequence[Box], width_mm: float, height_mm: float,
               gap_mm: float = GAP_MM, taken: Sequence[Placed] = ()) -> list[list[Placed]]:
    """The pages of one sheet: ``first`` (diagram, charts) placed in order on the first
    page, then ``rest`` (tables) in the order that leaves the fewest pages, packs the
    first page fullest and is read most nearly in the order given (:func:`_orders`,
    :func:`out_of_order`); what does not fit continues on the next pages (a box larger than
    an empty page gets a page of its own, at the top left). ``taken``: parts of every
    page that hold something else (the side column's text), left free; not returned."""
    best: list[list[Placed]] | None = None
    best_score: tuple[float, ...] = ()
    plain_first = [replace(b, free_corner_mm=None) for b in first]
    start, first_left = pack(plain_first, width_mm, height_mm, gap_mm, taken)
    # a free corner (of the diagram) opens to the tables only, once the charts are placed
    corners = {b.key: b.free_corner_mm for b in first}
    start = [replace(p, box=replace(p.box, free_corner_mm=corners.get(p.box.key))) if i >= len(taken) else p
             for i, p in enumerate(start)]
    rank = {b.key: i for i, b in enumerate(rest)}
    for k, order in enumerate(_orders(rest)):
        if k == 3 and best is not None and len(best) == 1:
            break  # the shuffled orders only where the first three leave a second page
        page, more = pack(order, width_mm, height_mm, gap_mm, start)
        pages = [page[len(taken):]]
        left = first_left + more
        while left:
            page, still = pack(left, width_mm, height_mm, gap_mm, taken)
            if len(page) == len(taken):
                page, still = [*taken, Placed(left[0], 0.0, 0.0)], left[1:]
            pages.append(page[len(taken):])
            left = still
        score = (len(pages), -sum(p.box.width_mm * p.box.height_mm for p in pages[0]),
                 out_of_order([p.box.key for page in pages for p in sorted(page, key=_reading) if p.box.key in rank], rank),
                 used_height_mm(pages[-1]))
        if best is None or score < best_score:
            best, best_score = pages, score
    return best or [[]]
