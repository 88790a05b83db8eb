"""Valve capacity across a split: inherent characteristics, capacity split points, loop gain.

Travel and flow are fractions 0 to 1 here; CO is in %. ``Cv`` is the rated flow
coefficient (any consistent scale, Cv or Kv). Inherent characteristics after
IEC 60534-1 (flow coefficient against travel at constant differential pressure).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Sequence

from loopdocs.calc.signals import clamp01
from loopdocs.calc.travel import Intent, intended_travel_pct

CHARACTERISTICS = ("linear", "equal-percentage", "quick-opening")
#: Inherent rangeability assumed for equal-percentage trim when none is given (common practice).
DEFAULT_RANGEABILITY = 50.0
#: Narrowest CO segment the boundary search gives one element, % CO: a valve stroked
#: over less than this leaves its positioner too little signal to resolve (common practice).
MIN_SEGMENT_PCT = 10.0

_ALIASES = {
    "linear": "linear",
    "lin": "linear",
    "equal-percentage": "equal-percentage",
    "equalpercentage": "equal-percentage",
    "equal%": "equal-percentage",
    "eq%": "equal-percentage",
    "=%": "equal-percentage",
    "quick-opening": "quick-opening",
    "quickopening": "quick-opening",
    "qo": "quick-opening",
}


def normalise_characteristic(characteristic: str) -> str:
    """Canonical name: ``linear``, ``equal-percentage`` or ``quick-opening``.

    Case, spaces and underscores are ignored. Raises ValueError for anything else.

    >>> normalise_characteristic("Equal Percentage")
    'equal-percentage'
    """
    key = str(characteristic).strip().lower().replace("_", "-")
    key = "-".join(key.split())
    found = _ALIASES.get(key) or _ALIASES.get(key.replace("-", ""))
    if found is None:
        raise ValueError(
            f"unknown valve characteristic {characteristic!r} (known: {', '.join(CHARACTERISTICS)})"
        )
    return found


def _check_rangeability(rangeability: float) -> float:
    if not (math.isfinite(rangeability) and rangeability > 1.0):
        raise ValueError(f"rangeability must be a number above 1, got {rangeability!r}")
    return float(rangeability)


def inherent_flow_fraction(
    travel_fraction: float, characteristic: str, rangeability: float = DEFAULT_RANGEABILITY
) -> float:
    """Relative flow coefficient ``f = Cv(x) / Cv_rated`` at travel fraction ``x`` (clamped 0..1).

    - linear: ``f = x`` (IEC 60534-1 inherent linear characteristic);
    - equal-percentage: ``f = R^(x - 1)`` with inherent rangeability ``R``
      (IEC 60534-1); at ``x = 0`` the valve is shut and ``f = 0``, the ideal curve
      holding from ``1/R`` just above;
    - quick-opening: ``f = sqrt(x)``, a common-practice approximation (common practice;
      real quick-opening trims open faster still).

    >>> inherent_flow_fraction(0.5, "linear")
    0.5
    >>> round(inherent_flow_fraction(0.5, "equal-percentage", 50), 4)
    0.1414
    >>> inherent_flow_fraction(0.25, "quick-opening")
    0.5
    """
    kind = normalise_characteristic(characteristic)
    x = clamp01(travel_fraction)
    if kind == "linear":
        return x
    if kind == "quick-opening":
        return math.sqrt(x)
    r = _check_rangeability(rangeability)
    return 0.0 if x == 0.0 else r ** (x - 1.0)


def inherent_slope(
    travel_fraction: float, characteristic: str, rangeability: float = DEFAULT_RANGEABILITY
) -> float:
    """``df/dx`` of :func:`inherent_flow_fraction`, relative flow per travel fraction.

    linear 1; equal-percentage ``ln(R) * R^(x - 1)`` (taken on the ideal curve, also at
    ``x = 0``: ``ln(R)/R``); quick-opening ``1 / (2 sqrt(x))`` (infinite at ``x = 0``).

    >>> round(inherent_slope(1.0, "equal-percentage", 50), 4)
    3.912
    """
    kind = normalise_characteristic(characteristic)
    x = clamp01(travel_fraction)
    if kind == "linear":
        return 1.0
    if kind == "quick-opening":
        return math.inf if x == 0.0 else 0.5 / math.sqrt(x)
    r = _check_rangeability(rangeability)
    return math.log(r) * r ** (x - 1.0)


def _check_cvs(cvs: Sequence[float]) -> list[float]:
    values = [float(c) for c in cvs]
    if not values:
        raise ValueError("need at least one Cv")
    bad = [c for c in values if not (math.isfinite(c) and c > 0.0)]
    if bad:
        raise ValueError(f"every Cv must be a positive number, got {bad}")
    return values


def recommended_boundaries_pct(cvs: Sequence[float]) -> list[float]:
    """CO boundaries, %, for a staged group on one stream, in proportion to cumulative Cv.

    ``b_k = 100 * sum(Cv_1..Cv_k) / sum(Cv)`` for k = 1..n-1 (the interior boundaries,
    elements in the order they open). This keeps the gain equal across boundaries for
    linear trims (docs/design.md §6.9; common practice).

    >>> recommended_boundaries_pct([10, 30])
    [25.0]
    """
    values = _check_cvs(cvs)
    total = sum(values)
    out: list[float] = []
    running = 0.0
    for cv in values[:-1]:
        running += cv
        out.append(100.0 * running / total)
    return out


def _per_element(value: object, n: int, name: str) -> list:
    if isinstance(value, (str, int, float)) or value is None:
        return [value] * n
    items = list(value)  # type: ignore[call-overload]
    if len(items) != n:
        raise ValueError(f"{name}: expected {n} values, got {len(items)}")
    return items


def _as_intent(segment: Intent | tuple[float, float]) -> Intent:
    if isinstance(segment, Intent):
        return segment
    a, b = segment
    return Intent(a, b, 0.0, 100.0)


def _gain_per_pct(cv: float, intent: Intent, travel_pct: float, characteristic: str, rangeability: float) -> float:
    """``|dCv/dCO|`` in Cv per % CO at the given travel on the intent's segment."""
    travel_change_pct = abs(intent.travel_end_pct - intent.travel_start_pct)
    return _segment_gain_per_pct(cv, travel_change_pct, intent.co_end_pct - intent.co_start_pct,
                                 inherent_slope(travel_pct / 100.0, characteristic, rangeability))


def _segment_gain_per_pct(cv: float, travel_change_pct: float, width_pct: float, slope: float) -> float:
    """``Cv * (travel change / 100) / width * df/dx``: Cv per % CO on a segment ``width_pct`` wide."""
    return cv * travel_change_pct / (100.0 * width_pct) * slope


def gain_ratios(
    cvs: Sequence[float],
    segments: Sequence[Intent | tuple[float, float]],
    characteristic: str | Sequence[str] = "linear",
    rangeability: float | Sequence[float] = DEFAULT_RANGEABILITY,
) -> list[float]:
    """Gain ratio across each boundary of a staged group: ``g_next / g_prev``.

    ``segments`` are in CO order, each an :class:`Intent` or a CO pair ``(a, b)`` over
    which the element strokes 0 to 100 %. The gain is ``|dCv/dCO|``: the element before
    the boundary is taken at its CO end, the one after at its CO start. Linear:
    ``g_i = Cv_i / (b_i - a_i)``; equal-percentage: ``g = Cv * ln(R) * R^(x - 1) * dx/dCO``
    from the slope of the inherent curve (IEC 60534-1). A ratio outside 0.5 to 2 is worth
    flagging (docs/design.md §6.9; common practice).

    >>> [round(r, 9) for r in gain_ratios([10, 30], [(0, 25), (25, 100)])]
    [1.0]
    >>> [round(r, 9) for r in gain_ratios([10, 30], [(0, 50), (50, 100)])]
    [3.0]
    """
    values = _check_cvs(cvs)
    n = len(values)
    if len(segments) != n:
        raise ValueError(f"need one segment per Cv: {n} Cv, {len(segments)} segments")
    intents = [_as_intent(s) for s in segments]
    if any(intents[k + 1].co_start_pct < intents[k].co_start_pct for k in range(n - 1)):
        raise ValueError("segments must be given in CO order (by CO start)")
    chars = _per_element(characteristic, n, "characteristic")
    ranges = _per_element(rangeability, n, "rangeability")
    out: list[float] = []
    for k in range(n - 1):
        p, q = intents[k], intents[k + 1]
        g_prev = _gain_per_pct(values[k], p, p.travel_end_pct, chars[k], ranges[k])
        g_next = _gain_per_pct(values[k + 1], q, q.travel_start_pct, chars[k + 1], ranges[k + 1])
        if g_prev == 0.0:
            out.append(math.inf if g_next > 0.0 else math.nan)
        else:
            out.append(g_next / g_prev)
    return out


def combined_capacity_curve(
    cvs: Sequence[float],
    intents: Sequence[Intent],
    characteristics: str | Sequence[str] = "linear",
    rangeabilities: float | Sequence[float] | None = None,
    step_pct: float = 1.0,
) -> list[tuple[float, float]]:
    """Total flow coefficient against CO for a range chart: ``[(co_pct, total_cv), ...]``.

    ``total_cv(CO) = sum Cv_i * f_i(travel_i(CO) / 100)`` with the intended travel
    (:func:`loopdocs.calc.travel.intended_travel_pct`) and the inherent curve
    (:func:`inherent_flow_fraction`). CO runs 0 to 100 % in ``step_pct`` steps, 100 %
    always included. ``rangeabilities`` None means 50 for every element.

    >>> curve = combined_capacity_curve([10, 30], [Intent(0, 25, 0, 100), Intent(25, 100, 0, 100)], step_pct=25)
    >>> [(co, round(cv, 9)) for co, cv in curve]
    [(0.0, 0.0), (25.0, 10.0), (50.0, 20.0), (75.0, 30.0), (100.0, 40.0)]
    """
    values = _check_cvs(cvs)
    n = len(values)
    if len(intents) != n:
        raise ValueError(f"need one intent per Cv: {n} Cv, {len(intents)} intents")
    if not (math.isfinite(step_pct) and step_pct > 0.0):
        raise ValueError(f"step_pct must be positive, got {step_pct!r}")
    chars = _per_element(characteristics, n, "characteristics")
    ranges = [
        DEFAULT_RANGEABILITY if r is None else r
        for r in _per_element(rangeabilities, n, "rangeabilities")
    ]
    steps = int(math.floor(100.0 / step_pct + 1e-9))
    cos = [round(k * step_pct, 9) for k in range(steps + 1)]
    if cos[-1] < 100.0 - 1e-9:
        cos.append(100.0)
    curve: list[tuple[float, float]] = []
    for co in cos:
        total = sum(
            cv * inherent_flow_fraction(intended_travel_pct(it, co) / 100.0, ch, r)
            for cv, it, ch, r in zip(values, intents, chars, ranges)
        )
        curve.append((float(co), total))
    return curve


# --------------------------------------------------------------------------- capacity advice


def largest_gain_jump(ratios: Sequence[float]) -> float:
    """How much the gain changes across the worst boundary: ``max(max(r, 1/r))`` over the
    gain ratios ``r`` (1 = no jump; a ratio of 0.25 and one of 4 are both a jump of 4).
    A ratio of 0, infinity or NaN is an unbounded jump (``inf``); no boundary gives 1.

    >>> largest_gain_jump([0.25, 2.0])
    4.0
    """
    worst = 1.0
    for r in ratios:
        if not (math.isfinite(r) and r > 0.0):
            return math.inf
        worst = max(worst, r, 1.0 / r)
    return worst


def staged_segments(boundaries_pct: Sequence[float]) -> list[Intent]:
    """The intents of a staged group with these interior boundaries: element k strokes
    0 to 100 % travel from boundary k-1 (or CO 0) to boundary k (or CO 100).

    >>> [(i.co_start_pct, i.co_end_pct) for i in staged_segments([25.0])]
    [(0.0, 25.0), (25.0, 100.0)]
    """
    edges = [0.0, *(float(b) for b in boundaries_pct), 100.0]
    return [Intent(edges[k], edges[k + 1], 0.0, 100.0) for k in range(len(edges) - 1)]


def _grid_step_pct(free_pct: float, boundaries: int) -> float:
    """Coarse step, % CO, so that the grid holds at most about 2 500 boundary sets (the local
    refinement that follows goes down to 0.01 % CO)."""
    for step in (0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 20.0):
        if math.comb(int(free_pct / step) + boundaries, boundaries) <= 2_500:
            return step
    return max(free_pct / 4.0, 1.0)


def best_boundaries_pct(
    cvs: Sequence[float],
    characteristic: str | Sequence[str] = "linear",
    rangeability: float | Sequence[float] = DEFAULT_RANGEABILITY,
    min_segment_pct: float = MIN_SEGMENT_PCT,
) -> tuple[list[float], float]:
    """Interior boundaries, % CO, of a staged group (each element 0 to 100 % travel over
    its segment) that make the largest gain jump (:func:`largest_gain_jump` of
    :func:`gain_ratios`) smallest, and that jump.

    The gain at a boundary is ``Cv * df/dx / width`` (Cv per % CO) with the slope of the
    inherent curve (:func:`inherent_slope`: linear 1, equal-percentage
    ``ln(R) * R^(x-1)``, IEC 60534-1), the element before at full travel, the one after
    just cracked. Candidates: the cumulative-Cv boundaries (:func:`recommended_boundaries_pct`,
    exact for linear trims), and a bounded grid search over boundary positions with every
    segment at least ``min_segment_pct`` wide (coarse grid, then finer local grids down to
    0.01 % CO). Ties go to the cumulative-Cv boundaries.

    >>> b, jump = best_boundaries_pct([10, 30], "linear")
    >>> [round(x, 6) for x in b], round(jump, 6)
    ([25.0], 1.0)
    >>> b, jump = best_boundaries_pct([10, 30], "equal-percentage", 50)
    >>> [round(x, 2) for x in b], round(jump, 3)
    ([90.0], 1.852)
    """
    values = _check_cvs(cvs)
    n = len(values)
    if n < 2:
        return [], 1.0
    chars = _per_element(characteristic, n, "characteristic")
    ranges = _per_element(rangeability, n, "rangeability")
    bounds, jump = _best_boundaries(tuple(values), tuple(chars), tuple(float(r) for r in ranges), float(min_segment_pct))
    return list(bounds), jump


@lru_cache(maxsize=4096)
def _best_boundaries(
    values: tuple[float, ...], chars: tuple[str, ...], ranges: tuple[float, ...], min_segment_pct: float
) -> tuple[tuple[float, ...], float]:
    """:func:`best_boundaries_pct` on checked, hashable arguments, each distinct set of
    valves searched once per process (an index repeats the same few valve sets)."""
    bounds, jump = _search_boundaries(values, chars, ranges, min_segment_pct)
    return tuple(bounds), jump


def _search_boundaries(
    values: tuple[float, ...], chars: tuple[str, ...], ranges: tuple[float, ...], min_segment_pct: float
) -> tuple[Sequence[float], float]:
    """The search of :func:`best_boundaries_pct` (its docstring)."""
    n = len(values)
    proportional = recommended_boundaries_pct(values)
    proportional_jump = largest_gain_jump(gain_ratios(values, staged_segments(proportional), chars, ranges))
    if proportional_jump <= 1.0 + 1e-9:
        return proportional, proportional_jump
    # gains of a segment 1 % CO wide, full travel: at its top (before a boundary) and bottom (after one)
    top = [_segment_gain_per_pct(cv, 100.0, 1.0, inherent_slope(1.0, c, r)) for cv, c, r in zip(values, chars, ranges)]
    bottom = [_segment_gain_per_pct(cv, 100.0, 1.0, inherent_slope(0.0, c, r)) for cv, c, r in zip(values, chars, ranges)]
    if not all(math.isfinite(g) and g > 0.0 for g in top + bottom):
        return proportional, proportional_jump  # an unbounded slope: no boundary helps
    width_min = min(float(min_segment_pct), 100.0 / (2 * n))

    def jump_of(bounds: Sequence[float]) -> float:
        edges = (0.0, *bounds, 100.0)
        worst = 1.0
        for k in range(n - 1):
            w_prev, w_next = edges[k + 1] - edges[k], edges[k + 2] - edges[k + 1]
            if w_prev < width_min - 1e-9 or w_next < width_min - 1e-9:
                return math.inf
            r = (bottom[k + 1] / w_next) / (top[k] / w_prev)
            worst = max(worst, r, 1.0 / r)
        return worst

    def grid(low: float, k: int, step: float, prefix: tuple[float, ...]):
        if k == n - 1:
            yield prefix
            return
        high = 100.0 - width_min * (n - 1 - k)
        b = low
        while b <= high + 1e-9:
            yield from grid(b + width_min, k + 1, step, (*prefix, b))
            b += step

    best: tuple[float, ...] | None
    if n == 3:
        best, best_jump = _search_three(top, bottom, width_min, _grid_step_pct(100.0 - n * width_min, n - 1))
        if best is None:
            return proportional, proportional_jump
        found3 = [round(b, 4) for b in best]
        found_jump = largest_gain_jump(gain_ratios(values, staged_segments(found3), chars, ranges))
        return (found3, found_jump) if found_jump < proportional_jump else (proportional, proportional_jump)
    if n == 2:
        # one boundary b: the ratio (bottom[1] / (100 - b)) / (top[0] / b) is 1 at
        # b = 100 k / (1 + k), k = top[0] / bottom[1], and grows away from it on each side,
        # so the clamped root is the best boundary (no search needed)
        k = top[0] / bottom[1]
        best = (min(max(100.0 * k / (1.0 + k), width_min), 100.0 - width_min),)
        best_jump, h = jump_of(best), 0.0
    else:
        step = _grid_step_pct(100.0 - n * width_min, n - 1)
        best, best_jump = None, math.inf
        for bounds in grid(width_min, 0, step, ()):
            j = jump_of(bounds)
            if j < best_jump:
                best, best_jump = bounds, j
        h = step / 2.0
    while best is not None and h >= 0.01 - 1e-12:
        improved = True
        while improved:
            improved = False
            for offsets in _offsets(n - 1):
                trial = tuple(b + o * h for b, o in zip(best, offsets))
                j = jump_of(trial)
                if j < best_jump - 1e-12:
                    best, best_jump, improved = trial, j, True
        h /= 2.0
    if best is None:
        return proportional, proportional_jump
    found = [round(b, 4) for b in best]
    found_jump = largest_gain_jump(gain_ratios(values, staged_segments(found), chars, ranges))
    if found_jump < proportional_jump:
        return found, found_jump
    return proportional, proportional_jump


def _search_three(
    top: Sequence[float], bottom: Sequence[float], width_min: float, step: float
) -> tuple[tuple[float, float] | None, float]:
    """The grid and local search of :func:`_search_boundaries` for three elements (two
    boundaries ``p < q``), giving the same boundaries and jump bit for bit, only faster.

    The jump of ``(p, q)`` is ``max(1, r0, 1/r0, r1, 1/r1)`` with the gain ratios
    ``r0 = (bottom[1] / (q - p)) / (top[0] / p)`` and
    ``r1 = (bottom[2] / (100 - q)) / (top[1] / (q - p))``, computed in the same order as
    the general search. For a fixed ``p``, ``r0`` never grows and ``r1`` never shrinks as
    ``q`` grows (divisions by a growing and a shrinking width), so on the coarse grid a
    ``q`` whose ``r0`` is already at least the best jump found is passed over, and once
    ``1/r0`` or ``r1`` reaches it no larger ``q`` can do better: the first best point in
    grid order is the one the full grid finds. The local search then runs as in the
    general case."""
    t0, t1, c1, c2 = top[0], top[1], bottom[1], bottom[2]
    floor = width_min - 1e-9
    inf = math.inf

    def jump(p: float, q: float) -> float:
        w0, w1, w2 = p - 0.0, q - p, 100.0 - q
        if w0 < floor or w1 < floor:
            return inf
        r = (c1 / w1) / (t0 / w0)
        worst = r if r >= 1.0 else 1.0 / r  # max(1, r, 1/r)
        if w2 < floor:
            return inf
        r = (c2 / w2) / (t1 / w1)
        r = r if r >= 1.0 else 1.0 / r
        return r if r > worst else worst

    best: tuple[float, float] | None = None
    best_jump = inf
    high_p, high_q = 100.0 - width_min * 2 + 1e-9, 100.0 - width_min * 1 + 1e-9
    p = width_min
    while p <= high_p:
        gain0 = t0 / (p - 0.0)
        q = p + width_min
        while q <= high_q:
            w1 = q - p
            r0 = (c1 / w1) / gain0
            if r0 >= best_jump:  # the jump is at least r0 here
                q += step
                continue
            if 1.0 / r0 >= best_jump or (c2 / (100.0 - q)) / (t1 / w1) >= best_jump:
                break  # and at least as much at every larger q
            j = jump(p, q)
            if j < best_jump:
                best, best_jump = (p, q), j
            q += step
        p += step
    h = step / 2.0
    while best is not None and h >= 0.01 - 1e-12:
        improved = True
        while improved:
            improved = False
            for o0, o1 in _offsets(2):
                p, q = best[0] + o0 * h, best[1] + o1 * h
                j = jump(p, q)
                if j < best_jump - 1e-12:
                    best, best_jump, improved = (p, q), j, True
        h /= 2.0
    return best, best_jump


def _offsets(count: int) -> list[tuple[int, ...]]:
    """Every combination of -2..2 steps for ``count`` boundaries (the local grid)."""
    out: list[tuple[int, ...]] = [()]
    for _ in range(count):
        out = [(*o, d) for o in out for d in (-2, -1, 0, 1, 2)]
    return out


@dataclass(frozen=True)
class CapacityAdvice:
    """What to do with the boundaries of a staged group (see :func:`capacity_advice`).

    ``ratios_now``/``jump_now``: gain ratio across each boundary as set and the largest
    jump; ``proportional_pct``: boundaries in proportion to cumulative Cv;
    ``best_pct``/``best_ratios``/``jump_best``: the best boundary set found;
    ``recommended_pct``: ``best_pct`` when it scores no worse than the settings, else
    ``None``; ``linear_jump``: the largest jump linear trims on every element would give
    at their best boundaries (1 at the cumulative-Cv ones).
    """

    ratios_now: tuple[float, ...]
    jump_now: float
    proportional_pct: tuple[float, ...]
    best_pct: tuple[float, ...]
    best_ratios: tuple[float, ...]
    jump_best: float
    recommended_pct: tuple[float, ...] | None
    linear_jump: float

    @property
    def is_proportional(self) -> bool:
        """True when the recommendation is the cumulative-Cv one (within 0.01 % CO)."""
        return self.recommended_pct is not None and all(
            abs(a - b) <= 0.01 for a, b in zip(self.recommended_pct, self.proportional_pct))

    @property
    def improves(self) -> bool:
        """True when the recommendation scores strictly better than the settings (by 0.1 %)."""
        return self.recommended_pct is not None and self.jump_best < self.jump_now * (1.0 - 1e-3)


def capacity_advice(
    cvs: Sequence[float],
    intents: Sequence[Intent],
    characteristic: str | Sequence[str] = "linear",
    rangeability: float | Sequence[float] = DEFAULT_RANGEABILITY,
    min_segment_pct: float = MIN_SEGMENT_PCT,
) -> CapacityAdvice:
    """Score the boundaries as set and the best ones by one model, and recommend only
    boundaries that score no worse (docs/design.md §6.9).

    The settings are scored with :func:`gain_ratios` on their intents (gaps, overlaps,
    partial travel as they are); candidates with :func:`gain_ratios` on
    :func:`staged_segments` (:func:`best_boundaries_pct`). The score is
    :func:`largest_gain_jump`. A recommendation scoring worse than the settings is
    dropped (``recommended_pct`` None: keep the settings).

    >>> a = capacity_advice([10, 30], [Intent(0, 50, 0, 100), Intent(50, 100, 0, 100)])
    >>> a.recommended_pct, round(a.jump_now, 6), round(a.jump_best, 6)
    ((25.0,), 3.0, 1.0)
    """
    values = _check_cvs(cvs)
    n = len(values)
    chars = _per_element(characteristic, n, "characteristic")
    ranges = _per_element(rangeability, n, "rangeability")
    ratios_now = tuple(gain_ratios(values, intents, chars, ranges))
    jump_now = largest_gain_jump(ratios_now)
    best, jump_best = best_boundaries_pct(values, chars, ranges, min_segment_pct)
    best_ratios = tuple(gain_ratios(values, staged_segments(best), chars, ranges)) if n > 1 else ()
    usable = math.isfinite(jump_best) and jump_best <= jump_now * (1.0 + 1e-9)
    linear_jump = best_boundaries_pct(values, "linear", DEFAULT_RANGEABILITY, min_segment_pct)[1]
    return CapacityAdvice(
        ratios_now=ratios_now, jump_now=jump_now, proportional_pct=tuple(recommended_boundaries_pct(values)),
        best_pct=tuple(best), best_ratios=best_ratios, jump_best=jump_best,
        recommended_pct=tuple(best) if usable else None, linear_jump=linear_jump,
    )
