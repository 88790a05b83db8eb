"""Switch set-point and alarm tests: expected trip values, directions and signals.

Sources: a high switch trips rising through its set point and resets below it, a low one
the other way (ISA-5.1 succeeding letters H and L; common practice for the test); the
signal for a process value on a 4-20 mA input is 4 + 16 * (x - LRV) / span (IEC 60381-1).
"""

from __future__ import annotations

import pytest

from loopdocs.calc.signals import PSIG_3_15
from loopdocs.calc.trip_tables import alarm_table, switch_table


def test_high_switch_trips_rising_and_resets_falling():
    t = switch_table("PSH-1", 5.0, 4.5, "barg", "high", (0.0, 10.0), 1.0)
    assert [(p.direction, p.output.value) for p in t.points] == [("up", 5.0), ("down", 4.5)]
    # 1 % of a 10 barg adjustable range = +/-0.1 barg
    assert t.tolerance.output.value == pytest.approx(0.1) and t.tolerance.output.unit == "barg"
    assert any("dead band 0.5 barg" in n for n in t.notes)


def test_low_switch_trips_falling():
    t = switch_table("LSL-2", 300.0, 350.0, "mm", "low")
    assert [(p.direction, p.output.value) for p in t.points] == [("down", 300.0), ("up", 350.0)]
    assert t.tolerance is None  # no range, no accuracy: nothing to judge against


def test_alarm_signals_and_directions():
    # 0-10 barg on 4-20 mA: H 8 barg -> 16.8 mA approached rising; L 2 barg -> 7.2 mA falling
    t = alarm_table("PT-3", [("LL", 1.0), ("L", 2.0), ("H", 8.0), ("HH", 9.0)], 0.0, 10.0, "barg", accuracy_pct=0.5)
    assert [(p.direction, round(p.input.value, 9), p.output.value) for p in t.points] == [
        ("down", 5.6, 1.0), ("down", 7.2, 2.0), ("up", 16.8, 8.0), ("up", 18.4, 9.0)]
    assert t.tolerance.output.value == pytest.approx(0.05) and t.tolerance.input.value == pytest.approx(0.08)
    # 3-15 psig (ANSI/ISA-50.00.01): 80 % -> 12.6 psig
    p = alarm_table("PT-4", [("H", 8.0)], 0.0, 10.0, "barg", PSIG_3_15).points[0]
    assert (round(p.input.value, 9), p.input.unit) == (12.6, "psig")


def test_switch_and_alarm_tables_from_the_index(index_files):
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.model.loading import load_project

    rows = [
        {"tag": "PSH-501", "signal": "discrete", "set_point": 5, "reset": 4.5, "units": "barg",
         "range_low": 0, "range_high": 10, "accuracy_pct": 1},
        {"tag": "PSL-502", "signal": "discrete", "set_point": 2, "units": "barg"},
        {"tag": "PSH-503", "signal": "discrete", "set_point": 2},
        {"tag": "PT-504", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg",
         "accuracy_pct": 0.5, "alarm_h": 8, "alarm_hh": 9},
    ]
    cset = calibration_set(load_project(index_files.write(rows))[0])
    by = {(t.tag, t.kind): t for t in cset.tables}
    assert [(p.direction, p.output.value) for p in by[("PSH-501", "switch")].points] == [("up", 5.0), ("down", 4.5)]
    assert [(p.direction, p.output.value) for p in by[("PSL-502", "switch")].points] == [("down", 2.0)]
    assert "without Units" in {s.tag: s.reason for s in cset.skipped}["PSH-503"]
    # the transmitter keeps its five-point table and gets an alarm table: H 8 barg at 16.8 mA
    assert ("PT-504", "transmitter") in by
    alarm = by[("PT-504", "alarm")]
    assert [(round(p.input.value, 9), p.output.value) for p in alarm.points] == [(16.8, 8.0), (18.4, 9.0)]


def test_valve_accessory_tests(index_files):
    # solenoid trip: de-energised, an FC valve must close (ISA-5.1 FC; common practice);
    # limit switches make within 5 % of the end of travel (common practice, from memory)
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.model.loading import load_project

    rows = [
        {"tag": "FIC-601", "platform": "dcs", "control_action": "reverse"},
        {"tag": "FV-601", "signal": "4-20 mA", "driven_by": "FIC-601", "air_action": "ATO", "fail_position": "FC",
         "input_low": 4, "input_high": 20, "input_units": "mA",
         "accessories": "solenoid valve, open/closed limit switches"},
        {"tag": "FIC-602", "platform": "dcs", "control_action": "reverse"},
        {"tag": "FV-602", "signal": "4-20 mA", "driven_by": "FIC-602", "air_action": "ATC", "fail_position": "FO",
         "input_low": 4, "input_high": 20, "input_units": "mA", "accessories": "ZSC"},
    ]
    cset = calibration_set(load_project(index_files.write(rows))[0])
    by = {(t.tag, t.kind): t for t in cset.tables}
    t = by[("FV-601", "accessory")]
    assert [(p.direction, p.input.value, p.output.value) for p in t.points] == [
        ("solenoid off", 12.0, 0.0), ("down", 4.0, 0.0), ("up", 20.0, 100.0)]
    assert t.tolerance.output.value == pytest.approx(5.0)
    # ATC: 0 % travel at 20 mA
    t = by[("FV-602", "accessory")]
    assert [(p.direction, p.input.value, p.output.value) for p in t.points] == [("down", 20.0, 0.0)]
