"""The drawing vocabulary (``loopdocs.draw.devices``): every device kind has a registry
entry, the chooser picks the kind the index implies, and the builder places the entry's
symbols so that lines join them at ports."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import pytest

from loopdocs.draw import devices
from loopdocs.draw.devices import AccessoryKind, ActuatorKind, BodyKind, MeasuringKind
from loopdocs.draw.layout import layout_loop
from loopdocs.model.loading import load_project

sys.path.insert(0, str(Path(__file__).resolve().parent))
from drawing_helpers import crossing_problems, overlap_problems, write_xlsx  # noqa: E402

FAMILIES = [(MeasuringKind, devices.MEASURING), (BodyKind, devices.BODIES), (ActuatorKind, devices.ACTUATORS),
            (AccessoryKind, devices.ACCESSORIES)]


@pytest.mark.parametrize(("kinds", "registry"), FAMILIES, ids=lambda v: getattr(v, "__name__", ""))
def test_every_kind_has_one_entry_naming_itself(kinds, registry):
    assert set(registry) == set(kinds)
    assert all(entry.kind is kind for kind, entry in registry.items())


def _temperature_loop(sensor: str | None) -> list[dict]:
    element = {"tag": "TE-910", "location": "field", "platform": "device", "signal": "RTD" if sensor == "Pt100"
               else "TC", "sensor": sensor}
    return [element,
            {"tag": "TT-910", "location": "field", "platform": "device", "signal": "4-20 mA", "sensor": sensor,
             "range_low": 0, "range_high": 150, "units": "degC", "io_address": "R1-S2-CH3"},
            {"tag": "TI-910", "location": "control room", "platform": "dcs", "signal": "4-20 mA",
             "range_low": 0, "range_high": 150, "units": "degC"}]


@pytest.mark.parametrize(("sensor", "inner"), [("Pt100", "element-rtd"), ("TC-K", "element-thermocouple"),
                                               (None, None)])
def test_a_temperature_element_draws_its_sensor_inside_the_thermowell(tmp_path, sensor, inner):
    # Common practice: a process RTD or thermocouple is inserted in a thermowell; the
    # sensor type (IEC 60751 Pt100, IEC 60584 type K) decides the element symbol.
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", _temperature_loop(sensor)))
    layout = layout_loop(project, "T-910")
    (well,) = [s for s in layout.symbols if s.tag == "TE-910" and s.role == "sensing"]
    parts = well.symbol.name.split("+")
    assert parts == ["element-thermowell"] + ([inner] if inner else [])
    if inner:
        # the element hangs inside the sheath: below the well's head, above its tip,
        # within its width (the stacked symbol keeps the well's box)
        element = devices.MEASURING[devices.sensor_kind(project.tags["TE-910"].sensor)].inner.load()
        assert element.width_mm < 3.0  # the sheath is 3 mm wide (element-thermowell)
        assert well.symbol.width_mm == pytest.approx(6.0) and well.symbol.height_mm == pytest.approx(12.0)
    # the leader from the bubble lands on the well's head port
    (leader,) = [line for line in layout.lines if line.role == "element-leader"]
    assert math.dist(leader.points[-1], well.port("head")) < 1e-6
    assert overlap_problems(layout) == [] and crossing_problems(layout) == []


def test_an_untagged_thermocouple_of_a_transmitter_is_drawn_in_its_well(tmp_path):
    rows = [{"tag": "TT-920", "location": "rack room", "platform": "device", "signal": "4-20 mA", "sensor": "TC-J",
             "range_low": 0, "range_high": 400, "units": "degC", "cabinet": "CAB1", "cabinet_terminals": "X1:1-2"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    layout = layout_loop(project, "T-920")
    (sensor,) = [s for s in layout.symbols if s.name == "sensor:TT-920"]
    assert sensor.symbol.name == "element-thermowell+element-thermocouple"
    assert any(t.text == "TC-J" and t.role == "sensor" for t in layout.texts)


def test_measuring_chooser_follows_the_index(tmp_path):
    # Common practice: a flow element feeding a DP transmitter is its orifice plate (the
    # transmitter takes both impulse lines); a temperature element is its sensor (IEC
    # 60751 RTD, IEC 60584 thermocouple) in a thermowell, the bare well when the sensor
    # is not given; any other element is drawn generic.
    rows = [{"tag": "FE-940", "location": "field", "platform": "device", "signal": "none"},
            {"tag": "TE-941", "location": "field", "platform": "device"},
            {"tag": "AE-942", "location": "field", "platform": "device"},
            {"tag": "TE-943", "location": "field", "platform": "device", "sensor": "Pt100"},
            {"tag": "TE-944", "location": "field", "platform": "device", "sensor": "TC-N"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    tags = project.tags
    assert devices.measuring_kind(tags["FE-940"], feeds_transmitter=True) is MeasuringKind.ORIFICE
    assert devices.measuring_kind(tags["FE-940"], feeds_transmitter=False) is MeasuringKind.GENERIC
    assert devices.measuring_kind(tags["TE-941"], feeds_transmitter=True) is MeasuringKind.THERMOWELL
    assert devices.measuring_kind(tags["AE-942"], feeds_transmitter=True) is MeasuringKind.GENERIC
    assert devices.measuring_kind(tags["TE-943"], feeds_transmitter=False) is MeasuringKind.RTD
    assert devices.measuring_kind(tags["TE-944"], feeds_transmitter=False) is MeasuringKind.THERMOCOUPLE
    assert devices.MEASURING[MeasuringKind.ORIFICE].impulse_taps
    assert not any(devices.MEASURING[k].impulse_taps for k in MeasuringKind if k is not MeasuringKind.ORIFICE)


@pytest.mark.parametrize("actuator", list(ActuatorKind))
@pytest.mark.parametrize("accessories", [(), (AccessoryKind.POSITIONER,), (AccessoryKind.IP_CONVERTER,),
                                         (AccessoryKind.IP_CONVERTER, AccessoryKind.POSITIONER)])
def test_valve_builder_places_body_actuator_and_accessories_joined_at_ports(tmp_path, actuator, accessories):
    # Common practice (ISA-5.1 valve symbols): the actuator sits on the body's stem; the
    # accessories in the signal path take the signal at their input and pass air on to
    # the actuator's side.
    rows = [{"tag": "FV-930", "location": "field", "platform": "device", "signal": "4-20 mA",
             "air_action": "ATO", "fail_position": "FC"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    cluster = devices.valve_cluster(project.tags["FV-930"], None, BodyKind.GLOBE, actuator, accessories)
    symbols = cluster.drawing.symbols
    (valve,) = [s for s in symbols if s.role == "valve"]
    assert valve.symbol.name == f"valve-globe+{devices.ACTUATORS[actuator].symbol.file}"
    placed = [s for s in symbols if s.name.split(":")[0] in {k.name.lower().replace("_", "-") for k in AccessoryKind}]
    assert [s.symbol.name for s in placed] == [devices.ACCESSORIES[k].symbol.file for k in accessories]
    # the row line joins the first accessory's signal input (or the actuator) at (0, 0)
    first = placed[0].port("signal-in") if placed else valve.port("side-right")
    assert math.dist(first, (0.0, 0.0)) < 1e-6
    # each air line runs from an air-out port to the next signal-in or the actuator's side
    air = [line for line in cluster.drawing.lines if line.kind == "pneumatic"]
    assert len(air) == len(placed)
    targets = [s.port("signal-in") for s in placed[1:]] + [valve.port("side-right")]
    for line, source, target in zip(air, placed, targets):
        assert math.dist(line.points[0], source.port("air-out")) < 1e-6
        assert math.dist(line.points[-1], target) < 1e-6
        assert line.points[-1][0] < line.points[0][0]  # air flows left, towards the actuator


def test_ip_converter_letters_stay_upright():
    # The I/P accessory is placed unturned: its signal input faces right by drawing.
    entry = devices.ACCESSORIES[AccessoryKind.IP_CONVERTER]
    symbol = entry.symbol.load()
    assert entry.rotate_deg == 0.0
    assert symbol.ports["signal-in"][0] > symbol.ports["air-out"][0]


# --- issue 11: every Device Type, Valve Body, Actuator and Accessory of the index ------------

from loopdocs.model.vocab import Accessory, Actuator, DeviceType, ValveBody  # noqa: E402

_ROW = {"location": "field", "platform": "device"}


def test_device_type_chooses_the_sensing_part(tmp_path):
    # Common practice (P&ID and loop diagram symbols, ISA-5.1 primary elements, from
    # memory): a meter's body in the line with its type letters, level and analyser
    # probes on their connection; DP and thermowell keep the choice from the letters and
    # the Sensor (orifice for a flow element feeding a transmitter, sensor in its well).
    rows = [{"tag": f"XE-{900 + i}", **_ROW, "device_type": d.value} for i, d in enumerate(DeviceType)]
    rows += [{"tag": "FE-990", **_ROW, "device_type": "DP"}, {"tag": "TE-991", **_ROW, "device_type": "thermowell",
                                                              "sensor": "Pt100"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    for i, d in enumerate(DeviceType):
        kind = devices.measuring_kind(project.tags[f"XE-{900 + i}"], feeds_transmitter=True)
        if d is DeviceType.DP:
            assert devices.device_kind(project.tags[f"XE-{900 + i}"]) is None
            continue
        assert kind.name == d.name, d  # one kind per Device Type, same name
    assert devices.measuring_kind(project.tags["FE-990"], feeds_transmitter=True) is MeasuringKind.ORIFICE
    assert devices.measuring_kind(project.tags["TE-991"], feeds_transmitter=True) is MeasuringKind.RTD
    # an element's own Device Type wins; one without takes its transmitter's
    assert devices.measuring_kind(project.tags["FE-990"], True, project.tags["XE-901"]) is MeasuringKind.ORIFICE
    bare = project.tags["FE-990"].model_copy(update={"device_type": None})
    assert devices.measuring_kind(bare, True, project.tags["XE-901"]) is MeasuringKind.MAGNETIC


@pytest.mark.parametrize("body", list(ValveBody))
def test_valve_body_chooser_follows_the_column(tmp_path, body):
    rows = [{"tag": "FV-931", **_ROW, "signal": "4-20 mA", "valve_body": body.value}, {"tag": "FV-932", **_ROW}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    assert devices.body_kind(project.tags["FV-931"]).name == body.name
    assert devices.body_kind(project.tags["FV-932"]) is BodyKind.GLOBE  # blank: the general two-way body


@pytest.mark.parametrize(("actuator", "kind", "pneumatic"), [
    (Actuator.SPRING_DIAPHRAGM, ActuatorKind.DIAPHRAGM, True), (Actuator.SPRING_PISTON, ActuatorKind.SPRING_PISTON, True),
    (Actuator.DOUBLE_ACTING_PISTON, ActuatorKind.PISTON, True), (Actuator.ELECTRIC, ActuatorKind.ELECTRIC, False),
    (Actuator.HYDRAULIC, ActuatorKind.HYDRAULIC, False)])
def test_actuator_chooser_and_positioner(tmp_path, actuator, kind, pneumatic):
    # Common practice: a pneumatic actuator on a 4-20 mA signal gets an electro-pneumatic
    # positioner; an electric or hydraulic actuator takes the signal itself, no air.
    rows = [{"tag": "FV-933", **_ROW, "signal": "4-20 mA", "actuator": actuator.value}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    tag = project.tags["FV-933"]
    assert devices.actuator_kind(tag) is kind
    assert (AccessoryKind.POSITIONER in devices.accessory_kinds(tag)) is pneumatic


def test_accessories_column_chooses_what_is_drawn_on_the_valve(tmp_path):
    rows = [{"tag": "FV-934", **_ROW, "signal": "4-20 mA",
             "accessories": "SOV, limit switches, booster, lock-up, AFR, position transmitter"},
            {"tag": "HV-935", **_ROW, "signal": "discrete", "accessories": "SOV, ZSO"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    # positioner first, then the air line towards the actuator, the yoke, the supply
    assert devices.accessory_kinds(project.tags["FV-934"]) == (
        AccessoryKind.POSITIONER, AccessoryKind.LOCK_UP, AccessoryKind.SOLENOID, AccessoryKind.BOOSTER,
        AccessoryKind.LIMIT_SWITCH, AccessoryKind.POSITION_TRANSMITTER, AccessoryKind.FILTER_REGULATOR)
    # an on/off valve: its solenoid valve takes the discrete signal, no positioner
    assert devices.accessory_kinds(project.tags["HV-935"]) == (AccessoryKind.SOLENOID, AccessoryKind.LIMIT_SWITCH)


def _every_kind_rows() -> list[dict]:
    """One transmitter per Device Type (with and without an element row) and one valve
    per Valve Body, actuators and accessories going round."""
    rows: list[dict] = []
    letters = {"magnetic": "F", "vortex": "F", "Coriolis": "F", "ultrasonic": "F", "thermal mass": "F",
               "variable area": "F", "turbine": "F", "positive displacement": "F", "DP": "F", "radar": "L",
               "guided-wave radar": "L", "displacer": "L", "hydrostatic": "L", "capacitance": "L", "float": "L",
               "pressure": "P", "thermowell": "T", "pH": "A", "conductivity": "A", "oxygen": "A", "analyser": "A"}
    for i, d in enumerate(DeviceType):
        n = 600 + i
        v = letters[d.value]
        rows.append({"tag": f"{v}T-{n}", **_ROW, "signal": "4-20 mA", "device_type": d.value, "range_low": 0,
                     "range_high": 10, "units": "%", "cabinet": "CAB1", "cabinet_terminals": f"X1:{n}-{n}",
                     "io_address": f"R1-{n}"})
        if i % 2:
            rows.append({"tag": f"{v}E-{n}", **_ROW, "signal": "none", "device_type": d.value})
    accessories = ["SOV, limit switches", "AFR", "booster, lock-up", "position transmitter", "ZSO, ZSC, ZT",
                   "SOV, AFR", "", "booster, SOV, limit switches, AFR"]
    for i, b in enumerate(ValveBody):
        n = 700 + i
        rows.append({"tag": f"FV-{n}", **_ROW, "signal": "4-20 mA", "valve_body": b.value,
                     "actuator": list(Actuator)[i % len(Actuator)].value, "accessories": accessories[i],
                     "air_supply": "IA header 3", "air_action": "ATO", "fail_position": "FC", "valve_size": "DN80",
                     "cv": 120, "cabinet": "CAB1", "cabinet_terminals": f"X2:{n}-{n}", "io_address": f"R2-{n}"})
    return rows


def test_every_device_kind_is_drawn_with_its_symbol_without_overlap_or_crossing(tmp_path):
    # docs/design.md §8.1: every text placed from a measured box, lines orthogonal and
    # never crossing; the symbols named by the registry are the ones placed.
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", _every_kind_rows()))
    drawn_files: set[str] = set()
    for loop_id in project.loops:
        layout = layout_loop(project, loop_id)
        assert overlap_problems(layout) == [], loop_id
        assert crossing_problems(layout) == [], loop_id
        for s in layout.symbols:
            drawn_files.update(s.symbol.name.split("+"))
            assert set(s.ports_used) <= set(s.symbol.ports), (loop_id, s.name)
    # every symbol a Device Type, Valve Body, Actuator or Accessories item can choose is placed
    named = [devices.MEASURING[k] for k in MeasuringKind if k.name in DeviceType.__members__]
    expected = {u.file for m in named for u in m.symbols}
    expected |= {b.symbol.file for b in devices.BODIES.values()} | {a.symbol.file for a in devices.ACTUATORS.values()}
    expected |= {c.symbol.file for k, c in devices.ACCESSORIES.items() if k is not AccessoryKind.IP_CONVERTER}
    assert expected <= drawn_files, sorted(expected - drawn_files)


def test_meter_code_is_written_in_the_meter_body(tmp_path):
    # Common practice (from memory): M magnetic, V vortex, CM Coriolis in the meter symbol.
    rows = [{"tag": "FT-611", **_ROW, "signal": "4-20 mA", "device_type": "Coriolis"},
            {"tag": "FE-612", **_ROW, "signal": "none", "device_type": "magnetic"},
            {"tag": "FT-612", **_ROW, "signal": "4-20 mA"}]
    project, _ = load_project(write_xlsx(tmp_path / "index.xlsx", rows))
    for loop_id, code in (("F-611", "CM"), ("F-612", "M")):
        layout = layout_loop(project, loop_id)
        (meter,) = [s for s in layout.symbols if s.symbol.name == "element-meter"]
        (text,) = [t for t in layout.texts if t.role == "device-code"]
        assert text.text == code and text.owner == meter.name
        assert meter.box.contains(text.box)
    # the transmitter with an integral meter: its line leaves the meter's out port
    layout = layout_loop(project, "F-611")
    (meter,) = [s for s in layout.symbols if s.symbol.name == "element-meter"]
    assert any(math.dist(line.points[0], meter.port("out")) < 1e-6 for line in layout.lines)
