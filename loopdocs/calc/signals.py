"""Standard analog signal spans and the linear and square-root laws between them.

Fractions run 0 to 1 (0 % to 100 % of span). Signal values carry the unit of their
:class:`SignalSpan`. Sources: IEC 60381-1 (4-20 mA), IEC 60382 and ANSI/ISA-50.00.01
(3-15 psig, 20-100 kPa, 0.2-1.0 bar), NAMUR NE 43 (signal levels for failure
information), ISO 5167-1 (flow through a differential-pressure device).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from loopdocs.calc.units import canonical_unit


@dataclass(frozen=True)
class SignalSpan:
    """A live-zero analog signal span: ``low`` is 0 %, ``high`` is 100 %.

    >>> MA_4_20.width
    16.0
    """

    low: float
    high: float
    unit: str

    def __post_init__(self) -> None:
        object.__setattr__(self, "low", float(self.low))
        object.__setattr__(self, "high", float(self.high))
        if not (math.isfinite(self.low) and math.isfinite(self.high)):
            raise ValueError(f"signal span {self.low} to {self.high} {self.unit} is not finite")
        if self.high <= self.low:
            raise ValueError(
                f"signal span needs low < high, got {self.low} to {self.high} {self.unit}"
            )

    @property
    def width(self) -> float:
        """``high - low``, in the span's unit."""
        return self.high - self.low


#: 4 to 20 mA direct current, IEC 60381-1.
MA_4_20 = SignalSpan(4.0, 20.0, "mA")
#: 3 to 15 psig pneumatic, ANSI/ISA-50.00.01 and IEC 60382.
PSIG_3_15 = SignalSpan(3.0, 15.0, "psig")
#: 20 to 100 kPa (gauge) pneumatic, IEC 60382.
KPA_20_100 = SignalSpan(20.0, 100.0, "kPa")
#: 0.2 to 1.0 bar (gauge) pneumatic, IEC 60382 (the same range as 20 to 100 kPa).
BAR_02_10 = SignalSpan(0.2, 1.0, "bar")

#: Standard pneumatic span by signal unit (spellings read by ``calc.units.canonical_unit``).
_PNEUMATIC_BY_UNIT: dict[str, SignalSpan] = {"psig": PSIG_3_15, "kPa": KPA_20_100, "bar": BAR_02_10}


def pneumatic_span(unit: str) -> SignalSpan:
    """The standard pneumatic span for a pressure unit (case-insensitive).

    ``psig``/``psi`` -> 3-15 psig, ``kPa``/``kPag`` -> 20-100 kPa, ``bar``/``barg`` ->
    0.2-1.0 bar (IEC 60382, ANSI/ISA-50.00.01). Raises ValueError for any other unit.

    >>> pneumatic_span("PSIG")
    SignalSpan(low=3.0, high=15.0, unit='psig')
    """
    try:
        return _PNEUMATIC_BY_UNIT[canonical_unit(unit)]
    except KeyError:
        known = "psi or psig, kPa or kPag, bar or barg"
        raise ValueError(f"no standard pneumatic span for unit {unit!r} (known: {known})") from None


def clamp01(x: float) -> float:
    """``x`` limited to the closed interval [0, 1].

    >>> clamp01(-0.2), clamp01(0.4), clamp01(1.5)
    (0.0, 0.4, 1.0)
    """
    return min(1.0, max(0.0, float(x)))


def signal_at_fraction(span: SignalSpan, fraction: float) -> float:
    """Signal value at a fraction of span: ``S = low + (high - low) * p``.

    Units: ``span.unit``. Not clamped, so fractions outside 0 to 1 extrapolate.
    Source: IEC 60381-1 / IEC 60382 (the span is linear between its two limits).

    >>> signal_at_fraction(MA_4_20, 0.5)
    12.0
    >>> signal_at_fraction(PSIG_3_15, 0.25)
    6.0
    """
    return span.low + span.width * fraction


def fraction_at_signal(span: SignalSpan, value: float) -> float:
    """Fraction of span for a signal value: ``p = (S - low) / (high - low)``.

    Inverse of :func:`signal_at_fraction`; not clamped (3.8 mA gives a negative fraction).

    >>> fraction_at_signal(MA_4_20, 8.0)
    0.25
    """
    return (value - span.low) / span.width


def fraction_of_range(x: float, lrv: float, urv: float) -> float:
    """Fraction of a calibrated range: ``p = (x - LRV) / (URV - LRV)``.

    Works for a reverse range (LRV > URV) and a negative LRV; not clamped.
    Raises ValueError when LRV equals URV. Source: docs/design.md §6.2 (linear transfer).

    >>> fraction_of_range(75.0, 0.0, 150.0)
    0.5
    >>> fraction_of_range(0.0, -50.0, 150.0)
    0.25
    >>> fraction_of_range(25.0, 100.0, 0.0)
    0.75
    """
    if urv == lrv:
        raise ValueError(f"range has zero span (LRV = URV = {lrv})")
    return (x - lrv) / (urv - lrv)


def sqrt_transfer(fraction_in: float) -> float:
    """Square-root extractor: output fraction ``p_out = sqrt(p_in)``, input clamped at 0.

    Flow through an orifice is proportional to the square root of its differential
    pressure (ISO 5167-1), so a DP signal is linearised to flow this way.

    >>> sqrt_transfer(0.25)
    0.5
    >>> sqrt_transfer(-0.01)
    0.0
    """
    return math.sqrt(max(0.0, float(fraction_in)))


#: NAMUR NE 43 measuring range, lower limit, mA.
NE43_MEASURING_LOW_MA = 3.8
#: NAMUR NE 43 measuring range, upper limit, mA.
NE43_MEASURING_HIGH_MA = 20.5
#: NAMUR NE 43: a signal at or below this is failure information, mA.
NE43_FAILURE_LOW_MA = 3.6
#: NAMUR NE 43: a signal at or above this is failure information, mA.
NE43_FAILURE_HIGH_MA = 21.0


@dataclass(frozen=True)
class NE43Levels:
    """NAMUR NE 43 levels on a 4-20 mA loop, all in mA."""

    measuring_low_ma: float
    measuring_high_ma: float
    failure_at_or_below_ma: float
    failure_at_or_above_ma: float


def ne43_levels() -> NE43Levels:
    """NAMUR NE 43 levels: measuring 3.8 to 20.5 mA, failure <= 3.6 mA or >= 21.0 mA.

    >>> lv = ne43_levels()
    >>> (lv.measuring_low_ma, lv.measuring_high_ma, lv.failure_at_or_below_ma, lv.failure_at_or_above_ma)
    (3.8, 20.5, 3.6, 21.0)
    """
    return NE43Levels(
        measuring_low_ma=NE43_MEASURING_LOW_MA,
        measuring_high_ma=NE43_MEASURING_HIGH_MA,
        failure_at_or_below_ma=NE43_FAILURE_LOW_MA,
        failure_at_or_above_ma=NE43_FAILURE_HIGH_MA,
    )


def ne43_state(signal_ma: float) -> str:
    """Classify a loop current by NAMUR NE 43.

    Returns ``'failure-low'`` (<= 3.6 mA), ``'measuring'`` (3.8 to 20.5 mA),
    ``'failure-high'`` (>= 21.0 mA), or ``'undefined'`` for the bands between
    (3.6 to 3.8 mA and 20.5 to 21.0 mA), where NE 43 assigns no meaning.

    >>> [ne43_state(i) for i in (3.5, 3.7, 4.0, 20.5, 20.8, 21.0)]
    ['failure-low', 'undefined', 'measuring', 'measuring', 'undefined', 'failure-high']
    """
    if signal_ma <= NE43_FAILURE_LOW_MA:
        return "failure-low"
    if signal_ma >= NE43_FAILURE_HIGH_MA:
        return "failure-high"
    if NE43_MEASURING_LOW_MA <= signal_ma <= NE43_MEASURING_HIGH_MA:
        return "measuring"
    return "undefined"
