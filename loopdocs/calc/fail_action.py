"""Fail-action test of a final element: remove the air supply (or the signal), read the travel reached.

The valve is first held at ``HOLD_TRAVEL_PCT`` (50 % travel, the signal from the stroke
settings), then the instrument air supply is removed (for an electric actuator, the
signal or power). The travel it comes to rest at is read and judged against the fail
position (ISA-5.1 letters; the travel each one means is common practice):

- FC: closes, travel 0 %;
- FO: opens, travel 100 %;
- FL: stays where it was, travel 50 % (the hold position);
- FAI: indeterminate (fail as is, may drift): no position to judge, so no test row;
  the table says so.

A blank Fail Position is taken from the air action where there is one (spring return:
ATO fails closed, ATC fails open, common practice). Tolerance: the stroke's.
"""

from __future__ import annotations

from dataclasses import replace

from loopdocs.calc.tables import (
    TRAVEL_UNIT,
    CalibrationTable,
    Point,
    Quantity,
    Tolerance,
    signal_for_travel,
)
from loopdocs.calc.travel import Settings

#: Travel held before the air is removed, %.
HOLD_TRAVEL_PCT = 50.0
#: Travel at the fail position, % (FL: the hold position).
FAIL_TRAVEL_PCT = {"FC": 0.0, "FO": 100.0, "FL": HOLD_TRAVEL_PCT}
#: Fail position of a spring-return actuator without a Fail Position entry (common practice).
FAIL_FROM_AIR_ACTION = {"ATO": "FC", "ATC": "FO"}
#: Direction column of the test row: what is done to reach the point.
AIR_OFF = "air off"
KIND = "fail action"

_WORDS = {"FC": "closed, 0 % travel", "FO": "open, 100 % travel", "FL": "stays at 50 % travel"}


def fail_position_of(fail_position: str | None, air_action: str | None) -> tuple[str | None, str | None]:
    """(fail position, note): the index's entry, else the one a spring-return actuator gives.

    >>> fail_position_of(None, "ATO")
    ('FC', 'Fail Position blank: FC taken from the air action ATO (spring return)')
    >>> fail_position_of("FO", "ATC")
    ('FO', None)
    """
    if fail_position:
        return fail_position, None
    taken = FAIL_FROM_AIR_ACTION.get(air_action or "")
    if taken is None:
        return None, None
    return taken, f"Fail Position blank: {taken} taken from the air action {air_action} (spring return)"


def fail_action_table(
    tag: str, fail_position: str | None, settings: Settings, tolerance: Tolerance | None
) -> CalibrationTable | str:
    """One test row: hold 50 % travel, remove the air, expect the fail position's travel.

    Returns the reason there is no row (FAI, or no fail position) instead of a table.

    >>> from loopdocs.calc.signals import MA_4_20
    >>> t = fail_action_table("TV-1", "FC", Settings("positioner", "ATO", "direct", 4.0, 20.0, MA_4_20), None)
    >>> p = t.points[0]
    >>> (p.percent, p.input.value, p.output.value, p.direction)
    (50.0, 12.0, 0.0, 'air off')
    """
    if fail_position == "FAI":
        return "fail position FAI (fail as is): indeterminate, no fail position to test"
    expected = FAIL_TRAVEL_PCT.get(fail_position or "")
    if expected is None:
        return "Fail Position blank and no air action: the fail position to test is not known"
    unit = settings.span.unit
    if tolerance is not None:
        tolerance = replace(tolerance, input=None)  # judged on travel only
    hold_signal = signal_for_travel(settings, HOLD_TRAVEL_PCT)
    point = Point(HOLD_TRAVEL_PCT, Quantity(hold_signal, unit), Quantity(expected, TRAVEL_UNIT), AIR_OFF)
    notes = (
        f"set the signal to {hold_signal:.4g} {unit} (valve travel {HOLD_TRAVEL_PCT:g} %), then remove the "
        f"instrument air supply (or the signal, for an electric actuator); read the valve travel it comes to rest at",
        f"{fail_position}: the valve must end {_WORDS[fail_position]}",
    )
    return CalibrationTable(
        tag=tag,
        kind=KIND,
        points=(point,),
        tolerance=tolerance,
        input_range=(Quantity(hold_signal, unit), Quantity(hold_signal, unit)),
        output_range=(Quantity(0.0, TRAVEL_UNIT), Quantity(100.0, TRAVEL_UNIT)),
        notes=notes,
    )


#: Band of travel from its end within which a limit switch must make, % (common practice:
#: limit switches are set to make in the last few % of travel; from memory).
LIMIT_SWITCH_BAND_PCT = 5.0
ACCESSORY_KIND = "accessory"
SOLENOID_OFF = "solenoid off"


def accessory_table(
    tag: str, accessories: tuple[str, ...], fail_position: str | None, settings: Settings
) -> CalibrationTable | None:
    """The function tests of a valve's accessories, one row each (``None`` without any):

    - solenoid valve: hold 50 % travel, de-energise the solenoid; the valve must go to its
      fail position (FC 0 %, FO 100 %, FL stays), like the fail-action test but tripped by
      the solenoid;
    - closed / open limit switch: stroke the valve towards 0 % (100 %) travel and write the
      travel at which the switch makes; it must make within ``LIMIT_SWITCH_BAND_PCT`` of the
      end.
    Tolerance ``LIMIT_SWITCH_BAND_PCT`` % of travel.

    >>> from loopdocs.calc.signals import MA_4_20
    >>> t = accessory_table("FV-1", ("solenoid valve", "closed limit switch"), "FC",
    ...                     Settings("positioner", "ATO", "direct", 4.0, 20.0, MA_4_20))
    >>> [(p.direction, p.input.value, p.output.value) for p in t.points]
    [('solenoid off', 12.0, 0.0), ('down', 4.0, 0.0)]
    """
    from loopdocs.calc.tables import tolerance_of

    unit = settings.span.unit
    points: list[Point] = []
    notes: list[str] = []
    if "solenoid valve" in accessories and fail_position in FAIL_TRAVEL_PCT:
        hold = signal_for_travel(settings, HOLD_TRAVEL_PCT)
        points.append(Point(HOLD_TRAVEL_PCT, Quantity(hold, unit), Quantity(FAIL_TRAVEL_PCT[fail_position], TRAVEL_UNIT),
                            SOLENOID_OFF))
        notes.append(f"solenoid: hold {hold:.4g} {unit} (travel {HOLD_TRAVEL_PCT:g} %), de-energise the solenoid; "
                     f"{fail_position}: the valve must end {_WORDS[fail_position]}")
    for name, end, direction in (("closed limit switch", 0.0, "down"), ("open limit switch", 100.0, "up")):
        if name in accessories:
            signal = signal_for_travel(settings, end)
            points.append(Point(end, Quantity(signal, unit), Quantity(end, TRAVEL_UNIT), direction))
            notes.append(f"{name}: stroke towards {end:g} % travel ({signal:.4g} {unit}); write the travel at which "
                         f"the switch makes (within {LIMIT_SWITCH_BAND_PCT:g} % of the end)")
    if not points:
        return None
    return CalibrationTable(
        tag=tag,
        kind=ACCESSORY_KIND,
        points=tuple(points),
        tolerance=tolerance_of(LIMIT_SWITCH_BAND_PCT, None, unit, 100.0, TRAVEL_UNIT,
                               basis=f"{LIMIT_SWITCH_BAND_PCT:g} % of travel (common practice for accessory tests)"),
        input_range=(Quantity(settings.span.low, unit), Quantity(settings.span.high, unit)),
        output_range=(Quantity(0.0, TRAVEL_UNIT), Quantity(100.0, TRAVEL_UNIT)),
        notes=tuple(notes),
    )
