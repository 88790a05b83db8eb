"""Alarm, switch and installation rules on workbooks built in the test, each with the cell
it names and a clean neighbour that gets nothing."""

from __future__ import annotations

import pytest

from loopdocs.model.vocab import Accessory


def _by_rule(checked, prefix):
    return {(f.rule, f.tags[0]): f for f in checked.findings if f.rule.split(".")[0] in prefix}


def test_alarm_order_and_range(index_files):
    rows = [
        # clean: LL < L < H < HH inside 0-10 barg
        {"tag": "PT-101", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg",
         "alarm_ll": 1, "alarm_l": 2, "alarm_h": 8, "alarm_hh": 9},
        # H below L
        {"tag": "PT-102", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg",
         "alarm_l": 6, "alarm_h": 4},
        # HH beyond the range
        {"tag": "PT-103", "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg", "alarm_hh": 12},
    ]
    found = _by_rule(index_files.check(rows), ("alarm",))
    # alarms annunciate in order LL < L < H < HH (ISA-18.2 alarm priority order, common practice)
    assert set(found) == {("alarm.order", "PT-102"), ("alarm.range", "PT-103")}
    assert index_files.where(found[("alarm.order", "PT-102")]) == index_files.cell("alarm_h", 1)
    assert found[("alarm.order", "PT-102")].severity.value == "error"
    # NAMUR NE 43: the signal saturates at 20.5 mA, 103.1 % of span, so 12 barg (120 %) is never seen
    assert index_files.where(found[("alarm.range", "PT-103")]) == index_files.cell("alarm_hh", 2)


@pytest.mark.parametrize("tag,set_point,reset,expected", [
    ("PSH-201", 5.0, 4.5, None),            # high switch resets below its set point (ISA-5.1 SH, common practice)
    ("PSH-202", 5.0, 5.5, "error"),         # resets above: never resets on a falling pressure
    ("PSL-203", 2.0, 2.4, None),            # low switch resets above its set point
    ("PSL-204", 2.0, 1.6, "error"),
    ("LSHH-205", 80.0, 80.0, "warning"),    # no dead band: chatters
    ("PS-206", 5.0, 6.0, None),             # letters say neither high nor low: not judged
])
def test_switch_reset_side(index_files, tag, set_point, reset, expected):
    rows = [{"tag": tag, "signal": "discrete", "set_point": set_point, "reset": reset, "units": "barg"}]
    found = _by_rule(index_files.check(rows), ("switch",))
    if expected is None:
        assert not any(rule == "switch.reset" for rule, _ in found)
    else:
        f = found[("switch.reset", tag)]
        assert f.severity.value == expected
        assert index_files.where(f) == index_files.cell("reset", 0)


def test_reset_without_set_point(index_files):
    found = _by_rule(index_files.check([{"tag": "TSH-207", "signal": "discrete", "reset": 80}]), ("switch",))
    assert index_files.where(found[("switch.set-point", "TSH-207")]) == index_files.cell("set_point", 0)


def test_installation_rules(index_files):
    rows = [
        # 0: 4-wire analyser without power source; 1: with one (clean)
        {"tag": "AT-301", "signal": "4-20 mA", "wires": "4-wire", "device_type": "pH", "air_supply": "IA-1"},
        {"tag": "AT-302", "signal": "4-20 mA", "wires": "four wire", "power_source": "230 VAC DB-3 circuit 14"},
        # 2: pneumatic valve without air; 3: with air (clean); 4: electric actuator (clean)
        {"tag": "FV-303", "signal": "4-20 mA", "actuator": "spring-diaphragm", "air_action": "ATO", "fail_position": "FC"},
        {"tag": "FV-304", "signal": "4-20 mA", "actuator": "piston", "air_action": "ATO", "fail_position": "FC",
         "air_supply": "IA header 3"},
        {"tag": "FV-305", "signal": "4-20 mA", "actuator": "electric"},
        # 5: classified area without barrier; 6: with one (clean); 7: safe area (clean)
        {"tag": "PT-306", "signal": "4-20 mA", "area_class": "Zone 1 IIB T3"},
        {"tag": "PT-307", "signal": "4-20 mA", "area_class": "Zone 1 IIB T3", "barrier": "IS-220 isolator"},
        {"tag": "PT-308", "signal": "4-20 mA", "area_class": "safe area"},
        # 8: shield at both ends
        {"tag": "TT-309", "signal": "4-20 mA", "shield": "both ends"},
    ]
    found = _by_rule(index_files.check(rows), ("supply", "area", "shield"))
    assert {k: index_files.where(f) for k, f in found.items()} == {
        ("supply.power", "AT-301"): index_files.cell("power_source", 0),
        ("supply.air", "FV-303"): index_files.cell("air_supply", 2),
        ("area.protection", "PT-306"): index_files.cell("barrier", 5),
        ("shield.both-ends", "TT-309"): index_files.cell("shield", 8),
    }


def test_columns_not_in_use_are_not_checked(index_files):
    # an index that does not track air supplies (the column blank on every row) is not told
    # that every valve lacks one; power and barriers likewise
    rows = [{"tag": "FV-1", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC"},
            {"tag": "AT-2", "signal": "4-20 mA", "wires": "4-wire", "area_class": "Zone 2"}]
    assert not [f for f in index_files.check(rows).findings if f.rule.startswith(("supply.", "area."))]


def test_new_vocabularies_read_common_spellings(index_files):
    from loopdocs.model.loading import load_project

    rows = [{"tag": "FV-401", "valve_body": "BFV", "actuator": "spring return", "wires": "2w", "shield": "panel",
             "accessories": "SOV + open/closed limit switches; AFR", "device_type": "mag"},
            {"tag": "FT-402", "device_type": "Coriolis", "valve_body": "not a body"}]
    project, findings = load_project(index_files.write(rows))
    fv = project.tags["FV-401"]
    assert (fv.valve_body.value, fv.actuator.value, fv.wires.value, fv.shield.value) == (
        "butterfly", "spring-return piston", "2-wire", "cabinet")
    assert fv.accessories == (Accessory.SOLENOID, Accessory.LIMIT_OPEN, Accessory.LIMIT_CLOSED,
                              Accessory.FILTER_REGULATOR)
    bad = [f for f in findings if f.rule == "index.vocabulary"]
    assert [index_files.where(f) for f in bad] == [index_files.cell("valve_body", 1)]
