"""Trip tests: the values at which a switch must trip and reset, and at which each alarm
must come in. The technician moves the input slowly through the setting and writes the
value at which the switch or the alarm acts; the expected value is the setting.

Switch (``switch_table``), for a high switch (a low one the other way round)::

    rising  -> trips at the Set Point      (kind "switch", direction "up")
    falling -> resets at the Reset          (direction "down")
    dead band = |Set Point - Reset|

Alarm (``alarm_table``): per alarm setting ``x``, approached from the normal side (rising
for H and HH, falling for L and LL); the signal to inject at the input card for a
4-20 mA transmitter is ``4 + 16 * (x - LRV) / (URV - LRV)`` mA (IEC 60381-1).
Tolerance: Accuracy % of the calibrated span in engineering units (docs/design.md §6.7);
without a range or an accuracy there is none, and the table says so.

>>> t = switch_table("PSH-1", 5.0, 4.5, "barg", "high", (0.0, 10.0), 1.0)
>>> [(p.direction, p.output.value) for p in t.points], t.tolerance.output.value
([('up', 5.0), ('down', 4.5)], 0.1)
"""

from __future__ import annotations

from collections.abc import Sequence

from loopdocs.calc.signals import MA_4_20, SignalSpan, signal_at_fraction
from loopdocs.calc.tables import CalibrationTable, Point, Quantity, tolerance_of

#: Direction an alarm is approached from: highs from below, lows from above.
ALARM_DIRECTION = {"LL": "down", "L": "down", "H": "up", "HH": "up"}


def _range_tolerance(range_lh: tuple[float, float] | None, accuracy_pct: float | None, unit: str):
    if range_lh is None or accuracy_pct is None:
        return None
    span = abs(range_lh[1] - range_lh[0])
    return tolerance_of(accuracy_pct, span, unit, span, unit)


def switch_table(
    tag: str,
    set_point: float,
    reset: float | None,
    unit: str,
    direction: str | None,
    range_lh: tuple[float, float] | None = None,
    accuracy_pct: float | None = None,
) -> CalibrationTable:
    """The set-point test of a switch (module docstring). ``direction`` is ``high``, ``low``
    or ``None`` (the letters say neither: the trip is approached rising, said in a note).
    ``range_lh`` is the switch's range (its adjustable range), for the tolerance."""
    rising_trip = direction != "low"
    trip_dir, reset_dir = ("up", "down") if rising_trip else ("down", "up")
    points = [Point(0.0, Quantity(set_point, unit), Quantity(set_point, unit), trip_dir)]
    if reset is not None:
        points.append(Point(0.0, Quantity(reset, unit), Quantity(reset, unit), reset_dir))
    moving = "rising" if rising_trip else "falling"
    notes = [f"move the input slowly, {moving}, until the switch trips, and write the value it tripped at; then "
             f"back until it resets"]
    if reset is not None:
        notes.append(f"dead band {abs(set_point - reset):g} {unit} (Set Point {set_point:g}, Reset {reset:g})")
    if direction is None:
        notes.append("the tag's letters say neither high nor low: the trip is approached rising")
    out_range = range_lh if range_lh is not None else (set_point, set_point)
    return CalibrationTable(
        tag=tag,
        kind="switch",
        points=tuple(points),
        tolerance=_range_tolerance(range_lh, accuracy_pct, unit),
        input_range=(Quantity(out_range[0], unit), Quantity(out_range[1], unit)),
        output_range=(Quantity(out_range[0], unit), Quantity(out_range[1], unit)),
        notes=tuple(notes),
    )


def alarm_table(
    tag: str,
    alarms: Sequence[tuple[str, float]],
    lrv: float,
    urv: float,
    unit: str,
    output: SignalSpan | None = MA_4_20,
    accuracy_pct: float | None = None,
) -> CalibrationTable:
    """The alarm test of a transmitter: per ``(name, setting)`` with name LL, L, H or HH,
    the value at which the alarm must come in, approached from the normal side, and the
    signal to inject for it when the output is analog (module docstring).

    >>> t = alarm_table("PT-1", [("H", 8.0)], 0.0, 10.0, "barg")
    >>> p = t.points[0]; (p.direction, p.input.value, p.output.value)
    ('up', 16.8, 8.0)
    """
    points = []
    for name, setting in alarms:
        fraction = (setting - lrv) / (urv - lrv)
        if output is not None:
            applied = Quantity(signal_at_fraction(output, fraction), output.unit)
        else:
            applied = Quantity(setting, unit)
        points.append(Point(100.0 * fraction, applied, Quantity(setting, unit), ALARM_DIRECTION[name]))
    settings = ", ".join(f"{name} {setting:g}" for name, setting in alarms)
    notes = [f"alarms {settings} {unit}: inject the signal at the input (or move the process value) slowly through "
             "each setting from the normal side; write the value at which the alarm came in, read on the host"]
    if output is not None:
        input_range = (Quantity(output.low, output.unit), Quantity(output.high, output.unit))
        tolerance = None if accuracy_pct is None else tolerance_of(
            accuracy_pct, output.width, output.unit, abs(urv - lrv), unit)
    else:
        input_range = (Quantity(lrv, unit), Quantity(urv, unit))
        tolerance = _range_tolerance((lrv, urv), accuracy_pct, unit)
    return CalibrationTable(
        tag=tag,
        kind="alarm",
        points=tuple(points),
        tolerance=tolerance,
        input_range=input_range,
        output_range=(Quantity(lrv, unit), Quantity(urv, unit)),
        notes=tuple(notes),
    )
