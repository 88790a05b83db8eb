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
