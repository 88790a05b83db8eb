"""Calibration tables (loopdocs.calc.tables, loopdocs.calc.units, loopdocs.calibration.project_tables)
and the ``calibrate`` command, checked against published values.

Published values marked "from memory" were recalled from the tables named beside them
(NIST Monograph 175 for thermocouples, IEC 60751 for platinum RTDs, NIST SP 811 for
unit factors) and then compared with the code, not taken from it.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pint
import pytest
from typer.testing import CliRunner

from loopdocs.calc.tables import (
    CO_UNIT,
    TRAVEL_UNIT,
    converter_table,
    loop_check_table,
    rising_falling,
    sensor_table,
    signal_for_travel,
    stroke_table,
    temperature_simulation,
    tolerance_of,
    transmitter_table,
    zero_note,
)
from loopdocs.calc.signals import KPA_20_100, MA_4_20, PSIG_3_15
from loopdocs.calc.travel import DcsScaling, Intent, Settings
from loopdocs.calc.units import convert, convert_difference, is_pressure, parse_unit, registry, unit_expression
from loopdocs.cli import app

EXAMPLE = Path(__file__).resolve().parent.parent / "project_example"
UREG = pint.UnitRegistry()  # an independent registry, not the one loopdocs builds
runner = CliRunner()


def at(table, percent, direction="up"):
    """The point of ``table`` at ``percent`` read in ``direction``."""
    (point,) = [p for p in table.points if p.percent == percent and p.direction == direction]
    return point


# --- signals: IEC 60381-1 (4-20 mA), IEC 60382 / ANSI/ISA-50.00.01 (3-15 psig, 20-100 kPa) ----------


def test_five_points_rising_then_falling():
    # docs/design.md §7.2: 0, 25, 50, 75, 100 % of span, rising then falling (each read both ways).
    t = transmitter_table("TT-1", 0.0, 150.0, "degC", MA_4_20)
    assert [(p.percent, p.direction) for p in t.points] == rising_falling()
    assert [p.percent for p in t.points] == [0, 25, 50, 75, 100, 100, 75, 50, 25, 0]


def test_half_span_of_4_20_ma_is_12_ma():
    # IEC 60381-1: 4-20 mA is linear between its ends, so 50 % of span = 12 mA.
    t = transmitter_table("PT-1", 0.0, 10.0, "barg", MA_4_20)
    assert at(t, 50).output.value == pytest.approx(12.0)
    assert at(t, 50).input.value == pytest.approx(5.0)
    assert (at(t, 0).output.value, at(t, 100).output.value) == (4.0, 20.0)


def test_quarter_span_of_3_15_psig_is_6_psig():
    # IEC 60382 / ANSI/ISA-50.00.01: 3-15 psig, 25 % of span = 3 + 0.25 * 12 = 6 psig.
    t = transmitter_table("PT-2", 0.0, 100.0, "kPa", PSIG_3_15)
    assert at(t, 25).output.value == pytest.approx(6.0)
    assert at(t, 25).output.unit == "psig"


def test_i_p_converter_table():
    # I/P: 4-20 mA in, 3-15 psig out (IEC 60381-1, IEC 60382): 12 mA -> 9 psig, 8 mA -> 6 psig.
    t = converter_table("PY-1", MA_4_20, PSIG_3_15, accuracy_pct=0.5)
    assert (at(t, 50).input.value, at(t, 50).output.value) == (12.0, 9.0)
    assert (at(t, 25).input.value, at(t, 25).output.value) == (8.0, 6.0)
    assert t.kind == "converter" and t.ne43 is None  # NE 43 is for 4-20 mA transmitter outputs
    # 0.5 % of the 12 psi span = 0.06 psi; of the 16 mA span = 0.08 mA.
    assert t.tolerance.output.value == pytest.approx(0.06)
    assert t.tolerance.input.value == pytest.approx(0.08)


def test_20_100_kpa_output():
    # IEC 60382: 20-100 kPa; 75 % of span = 20 + 0.75 * 80 = 80 kPa.
    t = transmitter_table("LT-3", 0.0, 2.0, "m", KPA_20_100)
    assert at(t, 75).output.value == pytest.approx(80.0)


def test_square_root_quarter_dp_is_half_flow_is_12_ma():
    # ISO 5167-1: flow is proportional to sqrt(DP), so 25 % of DP = 50 % of flow;
    # on 4-20 mA, 50 % = 12 mA (common practice check of a square-root transmitter).
    t = transmitter_table("FT-1", 0.0, 250.0, "mbar", MA_4_20, "sqrt", 0.25)
    assert at(t, 25).input.value == pytest.approx(62.5)
    assert at(t, 25).output.value == pytest.approx(12.0)
    # 50 % DP -> sqrt(0.5) = 70.71 % flow -> 4 + 16 * 0.7071 = 15.314 mA (arithmetic)
    assert at(t, 50).output.value == pytest.approx(4 + 16 * math.sqrt(0.5))
    assert any("square root" in n for n in t.notes)


def test_tolerance_is_accuracy_of_span_in_input_and_output_units():
    # docs/design.md §6.7: tolerance = Accuracy % of span. 0.25 % of 45 degC = 0.1125 degC; of 16 mA = 0.04 mA.
    t = transmitter_table("TT-2", -5.0, 40.0, "degC", MA_4_20, accuracy_pct=0.25)
    assert t.tolerance.input.value == pytest.approx(0.1125)
    assert t.tolerance.input.unit == "degC"
    assert t.tolerance.output.value == pytest.approx(0.04)
    assert t.tolerance.output.unit == "mA"
    assert tolerance_of(None, 45.0, "degC", 16.0, "mA") is None
    with pytest.raises(ValueError):
        tolerance_of(-1.0, 45.0, "degC", 16.0, "mA")


def test_ne43_levels_on_4_20_ma_transmitters():
    # NAMUR NE 43: measuring 3.8 to 20.5 mA; failure at or below 3.6 mA or at or above 21 mA.
    t = transmitter_table("PT-4", 0.0, 4.0, "bar", MA_4_20)
    n = t.as_json()["ne43"]
    assert (n["measuring_low_ma"], n["measuring_high_ma"]) == (3.8, 20.5)
    assert (n["failure_at_or_below_ma"], n["failure_at_or_above_ma"]) == (3.6, 21.0)
    assert transmitter_table("PT-5", 0.0, 4.0, "bar", PSIG_3_15).ne43 is None


# --- reverse range, elevated and suppressed zero (own examples, physics stated) ---------------


def test_reverse_range_vacuum_transmitter():
    # Own example: a transmitter on a vacuum line ranged 0 to -80 kPa(g), so its output
    # rises as the vacuum deepens (the gauge pressure falls). LRV 0 > URV -80 is a
    # reverse range: p = (x - LRV) / (URV - LRV); at -20 kPa, p = 0.25 -> 8 mA.
    t = transmitter_table("PT-9", 0.0, -80.0, "kPa", MA_4_20, accuracy_pct=0.5)
    assert at(t, 25).input.value == pytest.approx(-20.0)
    assert at(t, 25).output.value == pytest.approx(8.0)
    assert at(t, 100).input.value == pytest.approx(-80.0)
    assert at(t, 100).output.value == pytest.approx(20.0)
    # tolerance on the span magnitude: 0.5 % of 80 kPa = 0.4 kPa
    assert t.tolerance.input.value == pytest.approx(0.4)
    assert any("reverse range" in n for n in t.notes)


def test_elevated_zero_dp_level_with_wet_leg():
    # Own example (common practice, hydrostatics): a DP level transmitter on a closed tank
    # of water (SG 1.0), HP tap at the bottom, LP side on a wet reference leg filled with
    # water 3000 mm above the HP tap. DP = rho*g*level - rho*g*3000 mm, so in mm of water
    # column: empty -> -3000 mmH2O, full (2500 mm) -> -500 mmH2O. The zero of DP lies
    # above the whole range: elevated zero (ISA-51.1 term, from memory).
    lrv, urv = 0.0 - 3000.0, 2500.0 - 3000.0
    t = transmitter_table("LT-7", lrv, urv, "mmH2O", MA_4_20, accuracy_pct=0.25, calibrator_unit="kPa")
    half = at(t, 50)  # level 1250 mm -> DP 1250 - 3000 = -1750 mmH2O -> 12 mA
    assert half.input.value == pytest.approx(-1750.0)
    assert half.output.value == pytest.approx(12.0)
    # in the calibrator's kPa: 1 mmH2O (conventional) = 9.80665 Pa (NIST SP 811, from memory)
    (sim,) = half.simulate
    assert sim.unit == "kPa"
    assert sim.value == pytest.approx(-1750.0 * 9.80665e-3, rel=1e-9)
    assert sim.value == pytest.approx(UREG.Quantity(-1750.0, "mmH2O").to("kPa").magnitude)
    assert any(n.startswith("elevated zero") for n in t.notes)


def test_suppressed_zero_note_and_none_for_a_zero_based_range():
    # ISA-51.1 terms (from memory): 2 to 10 barg starts above zero: suppressed zero.
    t = transmitter_table("PT-8", 2.0, 10.0, "barg", MA_4_20)
    assert any(n.startswith("suppressed zero") for n in t.notes)
    assert zero_note(0.0, 10.0, "barg") is None
    # temperature ranges below zero are not called elevated zero
    assert not any("zero" in n for n in transmitter_table("TT-8", -30.0, 20.0, "degC", MA_4_20).notes)


# --- units: pint, and independent literals -------------------------------------------------


def test_unit_conversions_against_pint_and_literals():
    # NIST SP 811 (from memory): 1 bar = 100 kPa exactly; 1 psi = 6.894757 kPa.
    assert convert(1.0, "bar", "kPa") == pytest.approx(100.0, rel=1e-12)
    assert convert(1.0, "psi", "kPa") == pytest.approx(6.894757, rel=1e-6)
    assert convert(1.0, "psig", "kPag") == pytest.approx(UREG.Quantity(1.0, "psi").to("kPa").magnitude)
    assert convert(250.0, "mbarg", "kPa") == pytest.approx(25.0)
    # 1 inH2O (conventional) = 249.0889 Pa (NIST SP 811, from memory)
    assert convert(1.0, "inH2O", "Pa") == pytest.approx(249.0889, rel=1e-6)
    assert convert(1.0, "mmWC", "Pa") == pytest.approx(9.80665, rel=1e-12)
    # flow: 1 m3/h = 1000 L / 60 min; 1 US gpm = 3.785411784 L/min (NIST SP 811, from memory)
    assert convert(1.0, "m3/h", "L/min") == pytest.approx(1000.0 / 60.0)
    assert convert(1.0, "gpm", "L/min") == pytest.approx(3.785411784)
    assert convert(1.0, "Nm³/h", "m3/h") == 1.0
    # temperature as a point and as a difference: -40 degC = -40 degF; 1 K difference = 1.8 degF
    assert convert(-40.0, "°C", "degF") == pytest.approx(-40.0)
    assert convert(100.0, "degC", "K") == pytest.approx(373.15)
    assert convert_difference(1.0, "degC", "degF") == pytest.approx(1.8)
    # level in length units
    assert convert(3200.0, "mm", "ft") == pytest.approx(3.2 / 0.3048)


def test_gauge_to_absolute_is_refused_and_unknown_units_are_named():
    # gauge and absolute differ by the atmospheric pressure, which the index does not give
    with pytest.raises(ValueError, match="atmospheric"):
        convert(1.0, "barg", "bara")
    with pytest.raises(ValueError, match="furlong2x"):
        parse_unit("furlong2x")
    with pytest.raises(ValueError):
        convert(1.0, "mm", "kPa")
    assert unit_expression("m3/h") == "m**3/h"
    assert is_pressure("inH2O") and not is_pressure("mm")


def test_one_registry_built_once():
    assert registry() is registry()


# --- temperature: IEC 60751 and ITS-90 (NIST Monograph 175 / IEC 60584-1) ----------------------


def test_pt100_published_values():
    # IEC 60751 Pt100 table: 100 degC = 138.51 ohm, -100 degC = 60.26 ohm (both CVD branches).
    t = sensor_table("TE-1", "Pt100", -100.0, 100.0, "degC")
    assert at(t, 0).output.value == pytest.approx(60.26, abs=0.005)
    assert at(t, 100).output.value == pytest.approx(138.51, abs=0.005)
    assert at(t, 50).output.value == pytest.approx(100.0, abs=1e-9)  # R0 at 0 degC
    (sim,) = temperature_simulation("Pt100", 100.0)
    assert (round(sim.value, 2), sim.unit) == (138.51, "ohm")
    # Pt1000 scales with R0: 10 x the Pt100 values (IEC 60751)
    assert temperature_simulation("Pt1000", -100.0)[0].value == pytest.approx(602.6, abs=0.05)


def test_thermocouple_published_values_and_reference_junction():
    # NIST Monograph 175: type K at 100 degC = 4.096 mV; type J at 100 degC = 5.269 mV.
    k = temperature_simulation("TC-K", 100.0)
    assert len(k) == 1 and k[0].reference_junction_c == 0.0
    assert k[0].value == pytest.approx(4.096, abs=0.0005)
    assert temperature_simulation("TC-J", 100.0)[0].value == pytest.approx(5.269, abs=0.0005)
    # Law of intermediate temperatures with the NIST K table: E(25) = 1.000 mV (from memory),
    # so with the terminals at 25 degC the calibrator injects 4.096 - 1.000 = 3.096 mV.
    k0, k25 = temperature_simulation("TC-K", 100.0, 25.0)
    assert k25.reference_junction_c == 25.0
    assert k25.value == pytest.approx(3.096, abs=0.001)


def test_temperature_in_degf_is_converted_before_the_sensor_functions():
    # 212 degF = 100 degC: the Pt100 input at 100 % of a 32-212 degF range is 138.51 ohm (IEC 60751).
    t = transmitter_table("TT-F", 32.0, 212.0, "degF", MA_4_20, sensor="Pt100")
    assert at(t, 100).simulate[0].value == pytest.approx(138.51, abs=0.005)
    assert at(t, 0).simulate[0].value == pytest.approx(100.0, abs=1e-6)


def test_sensor_out_of_range_is_an_error():
    # IEC 60751 covers -200 to 850 degC; type T tops out at 400 degC (NIST Monograph 175).
    with pytest.raises(ValueError):
        temperature_simulation("Pt100", 900.0)
    with pytest.raises(ValueError):
        transmitter_table("TT-9", 0.0, 500.0, "degC", MA_4_20, sensor="TC-T")


# --- final elements: positioner, pneumatic and dcs splits (docs/design.md §7.1) -------------------------


def test_half_range_positioner_stroke():
    # Common practice: a positioner calibrated 4-12 mA takes the lower half of the CO;
    # its 50 % travel is at 8 mA; ATC reverses the travel, not the signal.
    ato = stroke_table("FV-1", Settings("positioner", "ATO", "direct", 4.0, 12.0, MA_4_20))
    assert at(ato, 50.0).input.value == pytest.approx(8.0)
    assert at(ato, 100.0).input.value == pytest.approx(12.0)
    atc = stroke_table("FV-2", Settings("positioner", "ATC", "direct", 4.0, 12.0, MA_4_20))
    assert at(atc, 100.0).input.value == pytest.approx(4.0)  # rising signal closes an ATC valve
    assert at(atc, 0.0).input.value == pytest.approx(12.0)
    # reverse positioner on an ATO valve behaves like ATC direct
    rev = stroke_table("FV-3", Settings("positioner", "ATO", "reverse", 4.0, 12.0, MA_4_20))
    assert [p.output.value for p in rev.points] == [p.output.value for p in atc.points]
    # 1 % of travel when Accuracy % is blank (docs/design.md §6.7 tolerance)
    assert ato.tolerance.output.value == pytest.approx(1.0) and "blank" in ato.tolerance.basis
    assert signal_for_travel(Settings("positioner", "ATO", "direct", 12.0, 20.0, MA_4_20), 25.0) == pytest.approx(14.0)


def test_pneumatic_spring_range_stroke():
    # Pneumatic split on 3-15 psig: a valve set 7-15 psig is at 50 % travel at 11 psig (arithmetic).
    t = stroke_table("PV-1", Settings("pneumatic", "ATO", "direct", 7.0, 15.0, PSIG_3_15))
    assert at(t, 50.0).input.value == pytest.approx(11.0)
    assert at(t, 50.0).input.unit == "psig"


def test_dcs_stroke_is_full_span_and_carries_the_scaling():
    sc = DcsScaling(45.0, 0.0)
    t = stroke_table("PV-2", Settings("dcs", "ATO", "direct", 4.0, 20.0, MA_4_20), dcs_scaling=sc)
    assert at(t, 50.0).input.value == pytest.approx(12.0)
    assert t.as_json()["dcs_scaling"] == {"co_at_0_pct": 45.0, "co_at_100_pct": 0.0, "reversed": True}


def test_loop_check_every_10_pct_of_co():
    # A valve closing over CO 0-48 % (100 % travel at CO 0): at CO 10 %, travel = 100 - 100 * 10/48.
    intent = Intent(0.0, 48.0, 100.0, 0.0)
    s = Settings("positioner", "ATC", "direct", 4.0, 11.68, MA_4_20)
    t = loop_check_table("TV-1", intent, s)
    assert [p.percent for p in t.points if p.direction == "up"] == [float(10 * k) for k in range(11)]
    assert at(t, 10.0).output.value == pytest.approx(100.0 - 100.0 * 10.0 / 48.0)
    assert at(t, 60.0).output.value == 0.0  # held outside its segment
    assert at(t, 10.0).simulate[0].value == pytest.approx(5.6)  # shared output 4 + 16 * 0.10 mA
    assert (t.input_range[0].unit, t.output_range[0].unit) == (CO_UNIT, TRAVEL_UNIT)
    # settings that miss the intent are flagged on the table (split.max_travel_error)
    wrong = loop_check_table("TV-1", intent, Settings("positioner", "ATC", "direct", 4.0, 12.0, MA_4_20))
    assert any("do not realise" in n for n in wrong.notes)


# --- the calibrate command on the example project ---------------------------------------------


def calibrate_json(*args: str) -> dict:
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--format", "json", *args])
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout)


@pytest.fixture(scope="module")
def example_json() -> dict:
    return calibrate_json("--ref-junction-c", "25")


def instrument(data: dict, tag: str, kind: str | None = None) -> dict:
    (found,) = [i for i in data["instruments"] if i["tag"] == tag and (kind is None or i["kind"] == kind)]
    return found


def json_point(inst: dict, percent: float, direction: str = "up") -> dict:
    (p,) = [p for p in inst["points"] if p["percent"] == percent and p["direction"] == direction]
    return p


def test_json_contract_of_design_5(example_json):
    # docs/design.md §9.2: {instruments: [{tag, kind, points: [{percent, input: {value, unit}, output: {value, unit}}], tolerance}]}
    assert isinstance(example_json["instruments"], list) and example_json["instruments"]
    for inst in example_json["instruments"]:
        assert {"tag", "kind", "points", "tolerance"} <= set(inst)
        for p in inst["points"]:
            assert {"percent", "input", "output"} <= set(p)
            assert set(p["input"]) >= {"value", "unit"} and set(p["output"]) >= {"value", "unit"}
    kinds = {i["kind"] for i in example_json["instruments"]}
    assert kinds == {"transmitter", "sensor", "converter", "final element", "fail action", "loop check", "switch", "alarm",
                     "accessory"}
    # every tag of the index is either tabulated or listed with a reason
    tabulated = {i["tag"] for i in example_json["instruments"]}
    skipped = {s["tag"] for s in example_json["skipped"]}
    assert len(tabulated | skipped) == 46 and not tabulated & skipped


# (tag, sensor, [(temperature degC, published value)]): NIST Monograph 175 thermocouple tables (mV,
# reference junction 0 degC) and the IEC 60751 table (ohm); recalled from the tables (from memory).
PUBLISHED = [
    ("TT-3105", "Pt100", [(-5.0, 98.04), (40.0, 115.54)]),
    ("TE-3105", "Pt100", [(-5.0, 98.04), (40.0, 115.54)]),
    ("TT-3110", "Pt1000", [(-10.0, 960.86), (0.0, 1000.00), (10.0, 1039.03), (20.0, 1077.94), (30.0, 1116.73)]),
    ("TT-5310", "TC-T", [(0.0, 0.000), (25.0, 0.992), (50.0, 2.036), (100.0, 4.279)]),
    ("TE-5310", "TC-T", [(25.0, 0.992), (50.0, 2.036), (100.0, 4.279)]),
    ("TT-8801A", "TC-T", [(-30.0, -1.121), (-5.0, -0.193), (20.0, 0.790)]),
    ("TT-8801B", "TC-E", [(-30.0, -1.709), (-5.0, -0.292), (20.0, 1.192)]),
    ("TT-7402A", "TC-K", [(0.0, 0.000), (150.0, 6.138), (300.0, 12.209), (450.0, 18.516), (600.0, 24.905)]),
    ("TT-7402B", "TC-N", [(300.0, 9.341), (600.0, 20.613), (900.0, 32.371), (1200.0, 43.846)]),
    ("TT-7402C", "TC-J", [(100.0, 5.269), (200.0, 10.779), (300.0, 16.327), (400.0, 21.848)]),
    ("TT-7401A", "TC-R", [(0.0, 0.000), (1400.0, 16.040)]),
    ("TT-7401B", "TC-S", [(0.0, 0.000), (1400.0, 14.373)]),
    ("TT-7401C", "TC-B", [(600.0, 1.792), (1100.0, 5.780), (1600.0, 11.263)]),
]


@pytest.mark.parametrize("tag, sensor, published", PUBLISHED, ids=[p[0] for p in PUBLISHED])
def test_every_example_sensor_through_the_json(example_json, tag, sensor, published):
    inst = instrument(example_json, tag, "transmitter" if tag.startswith("TT") else None)
    is_rtd = sensor.startswith("Pt")
    by_temp = {}
    for p in inst["points"]:
        value = p["output"]["value"] if inst["kind"] == "sensor" else p["simulate"][0]["value"]
        by_temp[p["input"]["value"]] = value
    for temp_c, value in published:
        assert temp_c in by_temp, f"{tag} has no point at {temp_c} degC"
        # tables are rounded to 0.01 ohm and 0.001 mV
        assert by_temp[temp_c] == pytest.approx(value, abs=0.006 if is_rtd else 0.0006), (tag, temp_c)
    if inst["kind"] == "transmitter" and not is_rtd:
        # with --ref-junction-c 25 the second value is E(t) - E(25 degC) (law of intermediate temperatures)
        p = inst["points"][0]
        zero_rj, site_rj = p["simulate"]
        assert (zero_rj["reference_junction_c"], site_rj["reference_junction_c"]) == (0.0, 25.0)
        e25 = temperature_simulation(sensor, 25.0)[0].value
        assert site_rj["value"] == pytest.approx(zero_rj["value"] - e25, abs=1e-9)


def test_type_k_at_site_reference_junction_through_the_json(example_json):
    # NIST Monograph 175 type K: E(150) = 6.138 mV, E(25) = 1.000 mV (from memory): inject 5.138 mV.
    p = json_point(instrument(example_json, "TT-7402A"), 25.0)
    assert p["input"] == {"value": 150.0, "unit": "degC"}
    assert p["simulate"][1]["value"] == pytest.approx(6.138 - 1.000, abs=0.001)


def test_example_square_root_and_i_p_through_the_json(example_json):
    ft = instrument(example_json, "FT-1201")
    assert json_point(ft, 25.0)["output"] == {"value": 12.0, "unit": "mA"}  # 25 % DP = 50 % flow = 12 mA
    py = instrument(example_json, "PY-4120")
    assert json_point(py, 25.0)["input"]["value"] == 8.0
    assert json_point(py, 25.0)["output"] == {"value": 6.0, "unit": "psig"}  # 25 % of 3-15 psig = 6 psig


def test_example_final_elements_through_the_json(example_json):
    # T-3105 glycol valve: ATC, positioner 4-11.68 mA: 50 % travel at 4 + 7.68 / 2 = 7.84 mA.
    tv = instrument(example_json, "TV-3105A", "final element")
    assert json_point(tv, 50.0)["input"]["value"] == pytest.approx(7.84)
    # P-4120 pneumatic split, valve B set 4-7 psig: 50 % travel at 5.5 psig
    pv = instrument(example_json, "PV-4120B", "final element")
    assert json_point(pv, 50.0)["input"] == {"value": pytest.approx(5.5), "unit": "psig"}
    # L-2101 small valve split in the control system over CO 0-25 %: enter output 0 % at CO 0, 100 % at CO 25
    lv = instrument(example_json, "LV-2101A", "final element")
    assert lv["dcs_scaling"] == {"co_at_0_pct": 0.0, "co_at_100_pct": 25.0, "reversed": False}
    # P-6201 CO2 supply closes over CO 0-45 %: reversed scaling, output 100 % at CO 0
    assert instrument(example_json, "PV-6201A", "final element")["dcs_scaling"]["reversed"] is True
    # loop check of the T-3105 heat/cool split: the 48-52 % dead band leaves both shut at CO 50 %
    for tag in ("TV-3105A", "TV-3105B"):
        assert json_point(instrument(example_json, tag, "loop check"), 50.0)["output"]["value"] == 0.0
    # single valves get a stroke table but no loop check
    assert not [i for i in example_json["instruments"] if i["tag"] == "FV-1201" and i["kind"] == "loop check"]


def test_tag_filter_takes_tags_and_loops():
    data = calibrate_json("--tag", "tt-3105", "--tag", "P-4120")
    tags = {i["tag"] for i in data["instruments"]}
    assert tags == {"TT-3105", "PT-4120", "PY-4120", "PV-4120A", "PV-4120B", "PV-4120C"}
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--tag", "XX-999"])
    assert result.exit_code == 2 and "XX-999" in result.output


def test_calibrate_text_and_bad_inputs(tmp_path):
    result = runner.invoke(app, ["calibrate", str(EXAMPLE), "--tag", "FT-1201", "--pressure-unit", "kPa"])
    assert result.exit_code == 0
    # 62.5 mbar = 6.25 kPa (1 mbar = 0.1 kPa, SI); 25 % of DP span -> 12 mA on a root-extracting transmitter
    # (docs/design.md §4: 50 % flow = 25 % DP = 12 mA): the row of the 25 % point, under its heads
    assert re.search(r"Apply mbar\s*┃\s*Apply kPa\s*┃\s*Expect mA", result.stdout)
    assert re.search(r"│\s+25 │\s+62\.5 │\s+6\.25 │\s+12\.000 │", result.stdout)
    assert "CAUTION" in result.stdout
    bad = runner.invoke(app, ["calibrate", str(EXAMPLE), "--pressure-unit", "mm"])
    assert bad.exit_code == 2 and "Traceback" not in bad.output
    missing = runner.invoke(app, ["calibrate", str(tmp_path / "nothing.xlsx")])
    assert missing.exit_code == 2 and len(missing.output.strip().splitlines()) == 1


def test_check_stays_free_of_pint_and_openpyxl():
    # docs/design.md §10: heavy imports stay out of commands that do not need them; the calibrate and
    # verify commands are registered on the same app as check.
    import subprocess
    import sys

    code = (
        "import sys\n"
        "from typer.testing import CliRunner\n"
        "from loopdocs.cli import app\n"
        f"r = CliRunner().invoke(app, ['check', {str(EXAMPLE)!r}])\n"
        "print(r.exit_code, 'pint' in sys.modules, 'openpyxl' in sys.modules)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out[1:] == ["False", "False"]
