"""What a loop diagram writes and draws beside its devices from the installation columns
of the index (issue 11, items 1-4): wiring as built (cores, terminal polarity, screen
earth, 4-wire supply, IS barrier, area class), instrument air (supply line, regulator,
solenoid valve and limit switches with their own rows) and settings (switch trip and
reset, alarms, interlocks). Each index is written as a workbook in the test; the checks
read the layout data (where every line, symbol and text is placed)."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import pytest

from loopdocs.draw.annotations import alarm_text, switch_setting_text
from loopdocs.draw.layout import layout_loop
from loopdocs.model.loading import load_project

sys.path.insert(0, str(Path(__file__).resolve().parent))
from drawing_helpers import crossing_problems, overlap_problems, write_xlsx  # noqa: E402

FIELD = {"location": "field", "platform": "device"}


def _layout(tmp_path: Path, rows: list[dict], loop_id: str):
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    layout = layout_loop(project, loop_id)
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []
    return project, layout


def _texts(layout, role: str | None = None) -> list[str]:
    return [t.text for t in layout.texts if role is None or t.role == role]


def _bubble(layout, tag: str):
    return next(s for s in layout.symbols if s.name == f"bubble:{tag}")


# --- item 4: set points, alarms, interlocks ---------------------------------------------------

@pytest.mark.parametrize(("tag", "set_point", "reset", "expected"), [
    # ISA-5.1 succeeding letters (from memory): H high, L low; a high switch trips on a
    # rising value and resets below its set point, a low one the other way round (common practice).
    ("PSH-820", 5.0, 4.5, "trip 5 barg rising, reset 4.5"),
    ("PSL-821", 1.2, 1.5, "trip 1.2 barg falling, reset 1.5"),
    ("PSLL-822", 0.8, None, "trip 0.8 barg falling"),
    # letters say neither: the Reset's side tells (reset below = trips rising)
    ("PS-823", 3.0, 3.4, "trip 3 barg falling, reset 3.4"),
])
def test_switch_setting_shows_trip_reset_and_direction(tmp_path, tag, set_point, reset, expected):
    rows = [{"tag": tag, **FIELD, "signal": "discrete", "set_point": set_point, "reset": reset, "units": "barg",
             "interlock": "C&E 7", "io_address": "R1-S1-CH1", "cabinet": "CAB1", "cabinet_terminals": "X1:1-2"}]
    project, layout = _layout(tmp_path, rows, project_loop(tag))
    assert switch_setting_text(project.tags[tag]) == expected
    bubble = _bubble(layout, tag)
    setting = next(t for t in layout.texts if t.text == expected)
    interlock = next(t for t in layout.texts if t.text == "interlock C&E 7")
    for text in (setting, interlock):  # beside its bubble, above it
        assert abs(text.x - bubble.port("centre")[0]) < 1e-6 and text.y < bubble.box.y


def project_loop(tag: str) -> str:
    letters, number = tag.split("-")
    return f"{letters[0]}-{number}"


def test_alarm_settings_beside_transmitter_and_controller(tmp_path):
    # ISA-5.1 alarm letters (from memory): LL, L, H, HH, written low to high with the unit.
    rows = [{"tag": "PT-830", **FIELD, "signal": "4-20 mA", "range_low": 0, "range_high": 10, "units": "barg",
             "alarm_h": 8, "alarm_hh": 9, "io_address": "R1-S1-CH2"},
            {"tag": "PIC-830", "location": "control room", "platform": "dcs", "signal": "4-20 mA", "units": "barg",
             "range_low": 0, "range_high": 10, "set_point": 6.5, "alarm_l": 2, "alarm_ll": 1}]
    project, layout = _layout(tmp_path, rows, "P-830")
    assert alarm_text(project.tags["PT-830"]) == "H 8 / HH 9 barg"
    assert alarm_text(project.tags["PIC-830"]) == "LL 1 / L 2 barg"
    texts = _texts(layout, "annotation")
    assert {"H 8 / HH 9 barg", "LL 1 / L 2 barg", "SP 6.5 barg"} <= set(texts)


# --- item 2: wiring as built ----------------------------------------------------------------------

def _wired(**extra) -> dict:
    return {"tag": "AT-840", **FIELD, "signal": "4-20 mA", "range_low": 2, "range_high": 12, "units": "pH",
            "device_type": "pH", "cable": "C-840-1", "cores": "1+ 2- S", "jb": "JB-4", "jb_terminals": "5-6",
            "cabinet": "CAB1", "cabinet_terminals": "X2:11-12", "io_address": "CAB1-R1-S2-CH3", **extra}


@pytest.mark.parametrize(("shield", "at_cabinet", "at_field"), [
    ("cabinet", True, False), ("field", False, True), ("both", True, True), ("none", False, False)])
def test_screen_earthed_at_the_end_the_shield_column_says(tmp_path, shield, at_cabinet, at_field):
    # Common practice (single-point screen earthing of instrument cables): the screen is
    # earthed at one end, normally the cabinet; both ends only where stated.
    _, layout = _layout(tmp_path, [_wired(shield=shield)], "A-840")
    earths = [s for s in layout.symbols if s.symbol.name == "earth"]
    bubble = _bubble(layout, "AT-840")
    cabinet_unit = next(s for s in layout.symbols if s.symbol.name == "terminal-cabinet")
    field = [e for e in earths if abs(e.port("tap")[0] - bubble.port("centre")[0]) < 1e-6]
    cabinet = [e for e in earths if cabinet_unit.box.x < e.port("tap")[0] < cabinet_unit.box.right]
    assert (len(field), len(cabinet), len(earths)) == (int(at_field), int(at_cabinet), int(at_field) + int(at_cabinet))
    for e in cabinet:  # hung below the terminal unit on a lead
        assert e.port("tap")[1] > cabinet_unit.box.bottom - 0.5


def test_cores_and_polarity_at_the_terminals(tmp_path):
    # ISA-5.4 loop diagram content (from memory): cable, cores and terminals with polarity.
    _, layout = _layout(tmp_path, [_wired(shield="cabinet")], "A-840")
    # the cable and its cores on one line, or (where the run is short) the cores on a
    # second line right under the cable, centred on the same point
    cable = [t for t in layout.texts if t.role == "cable"]
    if [t.text for t in cable] != ["C-840-1 (1+ 2- S)"]:
        first, second = sorted(cable, key=lambda t: t.y)
        assert (first.text, second.text) == ("C-840-1", "(1+ 2- S)")
        assert first.x == second.x and 0 < second.y - first.y <= 2 * first.size_mm
    for kind in ("terminal-jb", "terminal-cabinet"):
        unit = next(s for s in layout.symbols if s.symbol.name == kind)
        x, y = unit.port("wire-left")
        marks = {t.text: t for t in layout.texts if t.role == "polarity" and t.owner == unit.name}
        assert set(marks) == {"+", "\u2212"}
        assert marks["+"].y < y < marks["\u2212"].y and marks["+"].box.right <= x


def test_no_polarity_marks_without_cores(tmp_path):
    _, layout = _layout(tmp_path, [_wired(cores=None)], "A-840")
    assert not [t for t in layout.texts if t.role == "polarity"]


def test_four_wire_device_gets_its_supply_line_and_two_wire_does_not(tmp_path):
    # ISA-5.1 supply abbreviation ES = electric supply (from memory); a 4-wire transmitter
    # is powered apart from its signal loop (common practice), a 2-wire one by the loop.
    rows = [_wired(wires="4-wire", power_source="24 V DC PSU-3 F4"),
            {**_wired(wires="2-wire", power_source="loop"), "tag": "AT-841", "io_address": "CAB1-R1-S2-CH4",
             "jb_terminals": "7-8", "cabinet_terminals": "X2:13-14", "cable": "C-841-1"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    four = layout_loop(project, "A-840")
    two = layout_loop(project, "A-841")
    assert overlap_problems(four) == [] and crossing_problems(four) == []
    (supply,) = [line for line in four.lines if line.role == "power-supply"]
    top = _bubble(four, "AT-840").port("top")
    assert math.dist(supply.points[0], top) < 1e-6 and supply.points[-1][1] < top[1]
    assert supply.kind == "electrical"
    assert "ES 24 V DC PSU-3 F4" in _texts(four, "power-supply")
    assert not [line for line in two.lines if line.role == "power-supply"]


def test_is_barrier_between_field_cable_and_io_in_the_cabinet(tmp_path):
    # Common practice (IEC 60079-14 installations, from memory): the barrier or isolator
    # sits in the safe-area cabinet between the field cable and the I/O card.
    _, layout = _layout(tmp_path, [_wired(barrier="BR-840 isolator", area_class="Zone 1 IIC T4")], "A-840")
    (barrier,) = [s for s in layout.symbols if s.symbol.name == "barrier"]
    unit = next(s for s in layout.symbols if s.symbol.name == "terminal-cabinet")
    io = next(f for f in layout.frames if f.role == "io")
    assert unit.box.right < barrier.box.x and barrier.box.right < io.rect.x
    cabinet = next(b for b in layout.bands if b.key == "cabinet")
    assert cabinet.x0 < barrier.box.x and barrier.box.right < cabinet.x1
    assert "BR-840 isolator" in _texts(layout, "barrier") and "IS" in _texts(layout, "barrier-mark")
    # the area class at the field device
    area = next(t for t in layout.texts if t.text == "area Zone 1 IIC T4")
    assert abs(area.x - _bubble(layout, "AT-840").port("centre")[0]) < 1e-6


# --- item 3: air ----------------------------------------------------------------------------------------

def _valve(**extra) -> dict:
    return {"tag": "FV-850", **FIELD, "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
            "valve_body": "butterfly", "actuator": "double acting piston", "valve_size": "DN100", "cv": 250,
            "io_address": "R1-S3-CH1", "cabinet": "CAB1", "cabinet_terminals": "X3:1-2", **extra}


def test_air_supply_line_with_regulator_to_the_positioner(tmp_path):
    # ISA-5.1 supply abbreviation IA = instrument air (from memory); the air set (filter
    # regulator) in the supply line to the positioner (common practice).
    _, layout = _layout(tmp_path, [_valve(accessories="AFR", air_supply="header H-2")], "F-850")
    positioner = next(s for s in layout.symbols if s.symbol.name == "positioner")
    afr = next(s for s in layout.symbols if s.symbol.name == "air-filter-regulator")
    supply = [line for line in layout.lines if line.role == "air-supply"]
    assert supply and all(line.kind == "pneumatic" for line in supply)
    ports = [positioner.port(p) for p in ("top", "bottom")]
    assert any(math.dist(supply[0].points[0], p) < 1e-6 for p in ports)  # leaves the positioner at a port
    assert math.dist(supply[0].points[-1], afr.port("out")) < 1e-6 and math.dist(supply[1].points[0], afr.port("in")) < 1e-6
    assert "IA header H-2" in _texts(layout, "air-supply")
    assert "DN100, Cv 250" in _texts(layout, "valve-data")


def test_no_air_supply_drawn_for_an_electric_actuator(tmp_path):
    _, layout = _layout(tmp_path, [_valve(actuator="electric", air_supply="header H-2", accessories="AFR")], "F-850")
    assert not [line for line in layout.lines if line.kind == "pneumatic"]
    assert not [s for s in layout.symbols if s.symbol.name in ("positioner", "air-filter-regulator")]


def test_solenoid_and_limit_switches_carry_their_own_tags(tmp_path):
    # The index links a valve's accessories by their own rows in its loop (ISA-5.1 letters:
    # XY solenoid, ZSO/ZSC open/closed position switches, common practice), each wired to
    # its own I/O; the valve shows the accessory with the tag beside it.
    rows = [_valve(accessories="SOV, limit switches", air_supply="H-2"),
            {"tag": "XY-850", "loop": "F-850", **FIELD, "signal": "discrete", "io_address": "R2-S1-CH4",
             "cabinet": "CAB1", "cabinet_terminals": "X3:3-4"},
            {"tag": "ZSO-850", "loop": "F-850", **FIELD, "signal": "discrete", "io_address": "R2-S2-CH1",
             "cabinet": "CAB1", "cabinet_terminals": "X3:5-6"}]
    _, layout = _layout(tmp_path, rows, "F-850")
    sov = next(s for s in layout.symbols if s.symbol.name == "solenoid-valve")
    switch = next(s for s in layout.symbols if s.symbol.name == "limit-switch")
    valve = next(s for s in layout.symbols if s.name == "valve:FV-850")
    # the solenoid valve in the air line between positioner and actuator
    positioner = next(s for s in layout.symbols if s.symbol.name == "positioner")
    assert valve.port("side-right")[0] < sov.port("air-out")[0] < sov.port("signal-in")[0] < positioner.box.x
    accessory_texts = {t.text: t for t in layout.texts if t.role == "accessory"}
    assert "XY-850" in accessory_texts and accessory_texts["XY-850"].y < sov.box.y
    # ZSO has a row of its own; the closed switch has none, so its letters are written
    assert {"ZSO-850"} <= set(accessory_texts) and "ZSC" not in accessory_texts
    (link,) = [line for line in layout.lines if line.role == "yoke-link"]
    assert math.dist(link.points[-1], valve.port("stem-top")) < 1e-6
    assert math.dist(link.points[0], switch.port("stem")) < 1e-6
    # the solenoid's own row: its own DO channel
    assert any(f.role == "io" for f in layout.frames)
    assert "DO" in " ".join(_texts(layout, "io-heading"))


def test_on_off_valve_takes_its_signal_at_the_solenoid_coil(tmp_path):
    # Common practice: an on/off valve's discrete output energises the solenoid valve,
    # which passes supply air to the actuator; no positioner.
    rows = [{"tag": "HV-860", **FIELD, "signal": "discrete", "valve_body": "ball", "actuator": "spring return piston",
             "accessories": "SOV, limit switches", "air_supply": "H-3", "fail_position": "FC", "air_action": "ATO",
             "io_address": "R2-S1-CH1", "cabinet": "CAB1", "cabinet_terminals": "X4:1-2"}]
    _, layout = _layout(tmp_path, rows, "H-860")
    sov = next(s for s in layout.symbols if s.symbol.name == "solenoid-valve")
    assert not [s for s in layout.symbols if s.symbol.name == "positioner"]
    signal = next(line for line in layout.lines if line.role == "signal")
    assert math.dist(signal.points[0], sov.port("coil")) < 1e-6
    assert signal.kind == "electrical"
    supply = next(line for line in layout.lines if line.role == "air-supply")
    assert math.dist(supply.points[0], sov.port("signal-in")) < 1e-6  # supply air into the solenoid valve
