"""Valve capacity across a split: inherent characteristics, capacity split points, loop gain.

Travel and flow are fractions 0 to 1 here; CO is in %. ``Cv`` is the rated flow
coefficient (any consistent scale, Cv or Kv). Inherent characteristics after
IEC 60534-1 (flow coefficient against travel at constant differential pressure).
"""

from __future__ import annotations

import math
from typing import Sequence

from loopdocs.calc.signals import clamp01
from loopdocs.calc.split import Intent, intended_travel_pct

CHARACTERISTICS = ("linear", "equal-percentage", "quick-opening")
#: Inherent rangeability assumed for equal-percentage trim when none is given (common practice).
DEFAULT_RANGEABILITY = 50.0

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
    linear trims (DESIGN §3.3; common practice).

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
    cv_per_pct = cv * travel_change_pct / (100.0 * (intent.co_end_pct - intent.co_start_pct))
    return cv_per_pct * inherent_slope(travel_pct / 100.0, characteristic, rangeability)


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
    flagging (DESIGN §3.3; common practice).

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
    (:func:`loopdocs.calc.split.intended_travel_pct`) and the inherent curve
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
