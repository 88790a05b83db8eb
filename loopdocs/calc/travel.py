"""Split range: intended and realised valve travel against controller output (CO).

Pure functions on plain numbers and strings (docs/design.md §4). Percentages run 0 to 100,
fractions 0 to 1. Settings to travel (docs/design.md §4.3)::

    I = low + (high - low) * CO                 shared output (positioner, pneumatic)
    u = clamp01((I - Ilo) / (Ihi - Ilo))        Ilo > Ihi is a reversed calibration
    s = u (direct positioner) or 1 - u (reverse)
    travel = s (ATO) or 1 - s (ATC)

For a ``dcs`` split each element has its own output, scaled in the control system
(:class:`DcsScaling`), feeding a positioner normally set to the full span.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

from loopdocs.calc.signals import MA_4_20, SignalSpan, clamp01

METHODS = ("positioner", "pneumatic", "dcs")
AIR_ACTIONS = ("ATO", "ATC")
POSITIONER_ACTIONS = ("direct", "reverse")

#: Neighbouring CO starts and ends within this many % CO count as a shared range (docs/design.md §4.2).
SHARED_TOLERANCE_PCT = 5.0
#: Realised travel must match intent within this many % travel (docs/design.md §4.4).
TRAVEL_TOLERANCE_PCT = 1.0

_EPS = 1e-9


def _norm_air(air_action: str) -> str:
    value = str(air_action).strip().upper()
    if value not in AIR_ACTIONS:
        raise ValueError(f"air action must be ATO or ATC, got {air_action!r}")
    return value


def _norm_positioner(positioner_action: str) -> str:
    value = str(positioner_action).strip().lower()
    if value not in POSITIONER_ACTIONS:
        raise ValueError(f"positioner action must be direct or reverse, got {positioner_action!r}")
    return value


def _norm_method(method: str) -> str:
    value = str(method).strip().lower()
    if value not in METHODS:
        raise ValueError(f"split method must be one of {', '.join(METHODS)}, got {method!r}")
    return value


def _travel_is_u(air_action: str, positioner_action: str) -> bool:
    """True when travel fraction = u, False when travel fraction = 1 - u."""
    return (air_action == "ATO") == (positioner_action == "direct")


# --------------------------------------------------------------------------- intent


@dataclass(frozen=True)
class Intent:
    """What one element should do: travel ``t_a`` at CO ``a``, ``t_b`` at CO ``b``.

    Linear between, held at the end values outside ``[a, b]`` (docs/design.md §4.1). All in %.
    Values are stored as floats. Raises ValueError unless ``co_start_pct < co_end_pct``.
    """

    co_start_pct: float
    co_end_pct: float
    travel_start_pct: float
    travel_end_pct: float

    def __post_init__(self) -> None:
        for name in ("co_start_pct", "co_end_pct", "travel_start_pct", "travel_end_pct"):
            object.__setattr__(self, name, float(getattr(self, name)))
        values = (self.co_start_pct, self.co_end_pct, self.travel_start_pct, self.travel_end_pct)
        if not all(math.isfinite(v) for v in values):
            raise ValueError(f"intent values must be finite numbers, got {values}")
        if not self.co_start_pct < self.co_end_pct:
            raise ValueError(
                f"CO start ({self.co_start_pct} %) must be below CO end ({self.co_end_pct} %)"
            )

    @property
    def direction(self) -> int:
        """+1 when travel rises with CO, -1 when it falls, 0 when it does not change."""
        delta = self.travel_end_pct - self.travel_start_pct
        return (delta > 0) - (delta < 0)

    @property
    def slope(self) -> float:
        """Travel change per CO change inside the segment, % travel per % CO."""
        return (self.travel_end_pct - self.travel_start_pct) / (self.co_end_pct - self.co_start_pct)


def intended_travel_pct(intent: Intent, co_pct: float) -> float:
    """Intended travel, %, at a CO, %: linear in ``[a, b]``, held at the ends outside.

    >>> intended_travel_pct(Intent(50, 100, 0, 100), 75)
    50.0
    >>> intended_travel_pct(Intent(50, 100, 0, 100), 20)
    0.0
    """
    a, b = intent.co_start_pct, intent.co_end_pct
    if co_pct <= a:
        return float(intent.travel_start_pct)
    if co_pct >= b:
        return float(intent.travel_end_pct)
    return intent.travel_start_pct + intent.slope * (co_pct - a)


# --------------------------------------------------------------------------- settings


@dataclass(frozen=True)
class DcsScaling:
    """Control-system output scaling: output 0 % at CO ``co_at_0_pct``, 100 % at ``co_at_100_pct``.

    Linear between, clamped to 0..100 %; reversed when ``co_at_0_pct > co_at_100_pct``.

    >>> DcsScaling(100, 50).reversed
    True
    >>> DcsScaling(50, 100).output_pct(75)
    50.0
    """

    co_at_0_pct: float
    co_at_100_pct: float

    def __post_init__(self) -> None:
        object.__setattr__(self, "co_at_0_pct", float(self.co_at_0_pct))
        object.__setattr__(self, "co_at_100_pct", float(self.co_at_100_pct))
        if not (math.isfinite(self.co_at_0_pct) and math.isfinite(self.co_at_100_pct)):
            raise ValueError("DCS scaling values must be finite")
        if self.co_at_0_pct == self.co_at_100_pct:
            raise ValueError(f"DCS scaling has zero width (both ends at CO {self.co_at_0_pct} %)")

    @property
    def reversed(self) -> bool:
        """True when output falls as CO rises."""
        return self.co_at_0_pct > self.co_at_100_pct

    def output_pct(self, co_pct: float) -> float:
        """Output, %, at a CO, %: ``100 * clamp01((CO - c0) / (c100 - c0))``."""
        return 100.0 * clamp01((co_pct - self.co_at_0_pct) / (self.co_at_100_pct - self.co_at_0_pct))

    def text(self) -> str:
        """The scaling in words, the same on every output.

        >>> DcsScaling(50, 100).text()
        'output signal 0 % at controller output 50 %, 100 % at controller output 100 %'
        >>> DcsScaling(50, 0).text()
        'output signal 0 % at controller output 50 %, 100 % at controller output 0 % (reversed: the output signal falls as the controller output rises)'
        """
        words = (f"output signal 0 % at controller output {self.co_at_0_pct:.6g} %, 100 % at controller output "
                 f"{self.co_at_100_pct:.6g} %")
        return words + (" (reversed: the output signal falls as the controller output rises)" if self.reversed else "")


#: Unscaled output (output = CO), used when a ``dcs`` element has no scaling given.
DCS_UNSCALED = DcsScaling(0.0, 100.0)


@dataclass(frozen=True)
class Settings:
    """How one element is set up (docs/design.md §4.3).

    ``input_low``/``input_high`` are the positioner input range (or actuator spring
    range) in ``span.unit``; ``input_low > input_high`` is a reversed calibration.
    Strings are normalised: method and positioner action to lower case, air action to
    upper case. Raises ValueError on unknown strings or a zero-width input range.
    """

    method: str
    air_action: str
    positioner_action: str
    input_low: float
    input_high: float
    span: SignalSpan

    def __post_init__(self) -> None:
        object.__setattr__(self, "method", _norm_method(self.method))
        object.__setattr__(self, "air_action", _norm_air(self.air_action))
        object.__setattr__(self, "positioner_action", _norm_positioner(self.positioner_action))
        object.__setattr__(self, "input_low", float(self.input_low))
        object.__setattr__(self, "input_high", float(self.input_high))
        if not (math.isfinite(self.input_low) and math.isfinite(self.input_high)):
            raise ValueError("input range must be finite numbers")
        if self.input_low == self.input_high:
            raise ValueError(
                f"input range has zero width ({self.input_low} to {self.input_high} {self.span.unit})"
            )


def _u_at_signal(settings: Settings, signal: float) -> float:
    return clamp01((signal - settings.input_low) / (settings.input_high - settings.input_low))


def _travel_from_u(settings: Settings, u: float) -> float:
    return u if _travel_is_u(settings.air_action, settings.positioner_action) else 1.0 - u


def _output_fraction(settings: Settings, co_pct: float, dcs_scaling: DcsScaling | None) -> float:
    """Fraction of span on this element's output for a CO (unclamped for a shared output)."""
    if settings.method == "dcs":
        return (dcs_scaling or DCS_UNSCALED).output_pct(co_pct) / 100.0
    return co_pct / 100.0


def realised_travel_pct(settings: Settings, co_pct: float, dcs_scaling: DcsScaling | None = None) -> float:
    """Travel, %, that the settings give at a CO, % (docs/design.md §4.3).

    Shared output ``I = low + width * CO``; for ``dcs`` the output is first scaled by
    ``dcs_scaling`` (None means unscaled, output = CO). Then ``u``, ``s``, travel as in
    the module docstring.

    >>> s = Settings("positioner", "ATO", "direct", 12.0, 20.0, MA_4_20)
    >>> realised_travel_pct(s, 75.0), realised_travel_pct(s, 30.0)
    (50.0, 0.0)
    >>> realised_travel_pct(Settings("positioner", "ATC", "direct", 20.0, 12.0, MA_4_20), 75.0)
    50.0
    """
    signal = settings.span.low + settings.span.width * _output_fraction(settings, co_pct, dcs_scaling)
    return 100.0 * _travel_from_u(settings, _u_at_signal(settings, signal))


# --------------------------------------------------------------------------- required settings


def _target_u(intent: Intent, air_action: str, positioner_action: str) -> tuple[float, float]:
    """``u`` needed at CO start and CO end of the intent."""
    if intent.travel_start_pct == intent.travel_end_pct:
        raise ValueError(
            f"intent has no travel change (travel {intent.travel_start_pct} % at both CO "
            f"{intent.co_start_pct} % and {intent.co_end_pct} %): no setting can be derived"
        )
    ta, tb = intent.travel_start_pct / 100.0, intent.travel_end_pct / 100.0
    if _travel_is_u(air_action, positioner_action):
        return ta, tb
    return 1.0 - ta, 1.0 - tb


def required_input_range(
    intent: Intent,
    method: str,
    air_action: str,
    positioner_action: str,
    span: SignalSpan,
) -> tuple[float, float]:
    """Positioner input range ``(input_low, input_high)`` in ``span.unit`` that realises the intent.

    ``input_low`` is the signal at ``u = 0`` and ``input_high`` at ``u = 1``;
    ``input_low > input_high`` means a reversed calibration. Solves
    ``u(I(a)) = u_a`` and ``u(I(b)) = u_b`` with ``I(co) = low + width * co``:
    ``Ihi - Ilo = (I(b) - I(a)) / (u_b - u_a)``, ``Ilo = I(a) - u_a * (Ihi - Ilo)``.
    For ``dcs`` the positioner takes the full span, ``(span.low, span.high)``; the
    split is in :func:`required_dcs_scaling`. Raises ValueError for an intent with no
    travel change. A travel held outside the segment at a value other than 0 or
    100 % cannot be realised by a clamped range; :func:`max_travel_error` shows it.

    >>> required_input_range(Intent(50, 100, 0, 100), "positioner", "ATO", "direct", MA_4_20)
    (12.0, 20.0)
    >>> required_input_range(Intent(50, 100, 0, 100), "positioner", "ATC", "direct", MA_4_20)
    (20.0, 12.0)
    """
    method = _norm_method(method)
    ua, ub = _target_u(intent, _norm_air(air_action), _norm_positioner(positioner_action))
    if method == "dcs":
        return (float(span.low), float(span.high))
    i_a = span.low + span.width * intent.co_start_pct / 100.0
    i_b = span.low + span.width * intent.co_end_pct / 100.0
    width = (i_b - i_a) / (ub - ua)
    low = i_a - ua * width
    return (low, low + width)


def required_dcs_scaling(intent: Intent, air_action: str, positioner_action: str) -> DcsScaling:
    """Control-system output scaling that realises the intent on a full-span positioner.

    With output fraction ``o = (CO - c0) / (c100 - c0)`` equal to ``u``: solves
    ``o(a) = u_a``, ``o(b) = u_b``: ``c100 - c0 = (b - a) / (u_b - u_a)``,
    ``c0 = a - u_a * (c100 - c0)``. Raises ValueError for an intent with no travel change.

    >>> required_dcs_scaling(Intent(50, 100, 0, 100), "ATO", "direct")
    DcsScaling(co_at_0_pct=50.0, co_at_100_pct=100.0)
    >>> required_dcs_scaling(Intent(0, 50, 100, 0), "ATO", "direct").reversed
    True
    """
    ua, ub = _target_u(intent, _norm_air(air_action), _norm_positioner(positioner_action))
    width = (intent.co_end_pct - intent.co_start_pct) / (ub - ua)
    c0 = intent.co_start_pct - ua * width
    return DcsScaling(float(c0), float(c0 + width))


# --------------------------------------------------------------------------- cross-check


def _co_at_output_fraction(settings: Settings, fraction: float, dcs_scaling: DcsScaling | None) -> list[float]:
    """CO values, %, where this element's output reaches ``fraction`` of span."""
    if settings.method == "dcs":
        sc = dcs_scaling or DCS_UNSCALED
        if 0.0 <= fraction <= 1.0:
            return [sc.co_at_0_pct + fraction * (sc.co_at_100_pct - sc.co_at_0_pct)]
        return []
    return [100.0 * fraction]


def _breakpoints_co(intent: Intent, settings: Settings, dcs_scaling: DcsScaling | None) -> list[float]:
    """Every CO in 0..100 where the intended or the realised travel can change slope."""
    points = [0.0, 100.0, intent.co_start_pct, intent.co_end_pct]
    if settings.method == "dcs":
        sc = dcs_scaling or DCS_UNSCALED
        points += [sc.co_at_0_pct, sc.co_at_100_pct]
    for signal in (settings.input_low, settings.input_high):
        fraction = (signal - settings.span.low) / settings.span.width
        points += _co_at_output_fraction(settings, fraction, dcs_scaling)
    return [p for p in points if 0.0 <= p <= 100.0]


def max_travel_error(
    intent: Intent,
    settings: Settings,
    dcs_scaling: DcsScaling | None = None,
    grid_step_pct: float = 0.1,
) -> tuple[float, float]:
    """Largest ``|realised - intended|`` travel, %, over CO 0..100 %, and the CO, %, where it occurs.

    Both curves are piecewise linear, so the maximum is at a breakpoint (segment ends,
    clamp points of the input range and of the DCS scaling, CO 0 and 100); those are
    evaluated exactly, plus a grid of ``grid_step_pct`` as a safeguard. Ties go to the
    lowest CO. Compare with :data:`TRAVEL_TOLERANCE_PCT` (1 %, docs/design.md §4.4).

    >>> intent = Intent(0, 48, 0, 100)
    >>> err, co = max_travel_error(intent, Settings("positioner", "ATO", "direct", 4.0, 12.0, MA_4_20))
    >>> round(err, 6), round(co, 6)
    (4.0, 48.0)
    """
    n = max(1, int(round(100.0 / grid_step_pct)))
    candidates = set(_breakpoints_co(intent, settings, dcs_scaling))
    candidates.update(100.0 * k / n for k in range(n + 1))
    best_err, best_co = -1.0, 0.0
    for co in sorted(candidates):
        err = abs(realised_travel_pct(settings, co, dcs_scaling) - intended_travel_pct(intent, co))
        if err > best_err + _EPS:
            best_err, best_co = err, co
    return best_err, best_co


# --------------------------------------------------------------------------- failure positions


#: What carries the signal to a valve's positioner: a 4-20 mA loop or air (3-15 psig, 20-100 kPa).
SIGNAL_KINDS = ("electronic", "pneumatic")


def travel_on_signal_loss_pct(
    air_action: str,
    positioner_action: str,
    input_low: float | None = None,
    input_high: float | None = None,
    signal_kind: str = "pneumatic",
) -> float:
    """Travel, %, when the input signal is lost (docs/design.md §4.6).

    ``signal_kind`` ``electronic``: a two-wire, loop-powered positioner (4-20 mA) loses
    its power with its signal, its output vents and the spring takes the valve to its
    fail position whatever the positioner's action: :func:`spring_fail_travel_pct`
    (common practice: a loop-powered positioner cannot drive its output without loop
    current).

    ``signal_kind`` ``pneumatic`` (an I/P or pneumatic controller output, 3-15 psig,
    20-100 kPa): the signal falls to zero, below the live zero, so ``u = 0``: ATO
    direct 0, ATO reverse 100, ATC direct 100, ATC reverse 0. When the input range is
    given and reversed (``input_low > input_high``), a signal below both ends gives
    ``u = 1`` under the same formula, and the result flips.

    >>> travel_on_signal_loss_pct("ATO", "direct"), travel_on_signal_loss_pct("ATO", "reverse")
    (0.0, 100.0)
    >>> travel_on_signal_loss_pct("ATO", "reverse", signal_kind="electronic")
    0.0
    """
    air, pos = _norm_air(air_action), _norm_positioner(positioner_action)
    kind = str(signal_kind).strip().lower()
    if kind not in SIGNAL_KINDS:
        raise ValueError(f"signal kind must be one of {', '.join(SIGNAL_KINDS)}, got {signal_kind!r}")
    if kind == "electronic":
        return spring_fail_travel_pct(air)
    u = 0.0
    if input_low is not None and input_high is not None and input_low > input_high:
        u = 1.0
    return 100.0 * (u if _travel_is_u(air, pos) else 1.0 - u)


def spring_fail_travel_pct(air_action: str) -> float:
    """Travel, %, on loss of air for a spring-return actuator: ATO fails closed (0), ATC open (100).

    >>> spring_fail_travel_pct("ATO"), spring_fail_travel_pct("ATC")
    (0.0, 100.0)
    """
    return 0.0 if _norm_air(air_action) == "ATO" else 100.0


# --------------------------------------------------------------------------- arrangement


@dataclass(frozen=True)
class PairRelation:
    """How one element relates to the next one in CO order.

    ``first``/``second`` index the caller's input sequence. ``direction`` is ``same``,
    ``opposed`` or ``none`` (an element without travel change). ``ranges`` is
    ``shared`` (starts and ends each within 5 % CO), ``staged`` (the second starts
    and ends later, possibly with a gap or overlap) or ``nested`` (the second lies
    inside the first). ``gap_pct``/``overlap_pct`` are in % CO, at most one non-zero.
    """

    first: int
    second: int
    direction: str
    ranges: str
    gap_pct: float
    overlap_pct: float


@dataclass(frozen=True)
class Arrangement:
    """Elements of one split group in CO order and the group mode (docs/design.md §4.2).

    ``mode`` is ``opposed``, ``staged``, ``staged-opposed``, ``parallel``, ``mixed``,
    or ``single`` for a group of one. ``order`` holds input indices in CO order and
    ``intents`` the intents in that order.
    """

    mode: str
    order: tuple[int, ...]
    intents: tuple[Intent, ...]
    pairs: tuple[PairRelation, ...]


def _sort_key(intent: Intent) -> tuple[float, float, float, float]:
    return (intent.co_start_pct, intent.co_end_pct, intent.travel_start_pct, intent.travel_end_pct)


def _relate(i: int, j: int, p: Intent, q: Intent) -> PairRelation:
    if p.direction == 0 or q.direction == 0:
        direction = "none"
    else:
        direction = "same" if p.direction == q.direction else "opposed"
    if (
        abs(p.co_start_pct - q.co_start_pct) <= SHARED_TOLERANCE_PCT
        and abs(p.co_end_pct - q.co_end_pct) <= SHARED_TOLERANCE_PCT
    ):
        ranges = "shared"
    elif q.co_end_pct > p.co_end_pct:
        ranges = "staged"
    else:
        ranges = "nested"
    gap = max(0.0, q.co_start_pct - p.co_end_pct)
    overlap = max(0.0, min(p.co_end_pct, q.co_end_pct) - q.co_start_pct)
    return PairRelation(i, j, direction, ranges, float(gap), float(overlap))


_MODES = {
    ("same", "staged"): "staged",
    ("opposed", "staged"): "staged-opposed",
    ("same", "shared"): "parallel",
    ("opposed", "shared"): "opposed",
}


def classify(intents: Sequence[Intent]) -> Arrangement:
    """Order a split group by CO start and name its mode (docs/design.md §4.2).

    Ties are broken by CO end, then travel at start and end, so the result does not
    depend on input order (except the input indices it reports). A mode holds when
    every neighbouring pair has the same direction/ranges combination; otherwise
    ``mixed``. Raises ValueError for an empty group.

    >>> classify([Intent(50, 100, 0, 100), Intent(0, 50, 100, 0)]).mode
    'staged-opposed'
    """
    if not intents:
        raise ValueError("a split group needs at least one element")
    order = tuple(sorted(range(len(intents)), key=lambda k: _sort_key(intents[k])))
    ordered = tuple(intents[k] for k in order)
    pairs = tuple(
        _relate(order[k], order[k + 1], ordered[k], ordered[k + 1]) for k in range(len(order) - 1)
    )
    if not pairs:
        mode = "single"
    else:
        kinds = {(p.direction, p.ranges) for p in pairs}
        mode = _MODES.get(kinds.pop(), "mixed") if len(kinds) == 1 else "mixed"
    return Arrangement(mode, order, ordered, pairs)


def uncovered_co(intents: Sequence[Intent]) -> list[tuple[float, float]]:
    """CO intervals, %, within 0..100 where no element moves (sorted, merged).

    An element moves over its segment ``[a, b]`` only if its travel changes; touching
    segments leave no gap.

    >>> uncovered_co([Intent(0, 40, 0, 100), Intent(45, 100, 0, 100)])
    [(40.0, 45.0)]
    >>> uncovered_co([Intent(0, 50, 100, 0)])
    [(50.0, 100.0)]
    """
    moving = sorted(
        (max(0.0, float(i.co_start_pct)), min(100.0, float(i.co_end_pct)))
        for i in intents
        if i.direction != 0
    )
    gaps: list[tuple[float, float]] = []
    reached = 0.0
    for start, end in moving:
        if end <= start:
            continue
        if start > reached + _EPS:
            gaps.append((reached, start))
        reached = max(reached, end)
    if reached < 100.0 - _EPS:
        gaps.append((reached, 100.0))
    return gaps
