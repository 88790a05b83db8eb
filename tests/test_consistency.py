"""Cross-column rules of ``loopdocs.checks.consistency``: for each rule a workbook built
here with a row that fires it and a clean neighbour row that does not, checked with
``loopdocs.checks.check_project``; each finding's rule, severity, tag and cell are
asserted.

Reference values, with their sources:
- thermocouple reference-function ranges, degC: NIST Monograph 175 (1993), the ITS-90
  tables, identical to IEC 60584-1:2013: B 0 to 1820, E -270 to 1000, J -210 to 1200,
  K -270 to 1372, N -270 to 1300, R and S -50 to 1768.1, T -270 to 400;
- platinum RTD, Callendar-Van Dusen function: IEC 60751, -200 to 850 degC;
- thermocouple tolerance classes: IEC 60584-1:2013 tolerance table (as reproduced in
  manufacturers' tables): type K class 2 -40 to 1200 degC, class 3 -200 to 40 degC;
- degF = degC * 1.8 + 32 (NIST SP 811), so 1372 degC = 2501.6 degF;
- ISA-5.1 first letters: T temperature, P pressure, F flow, L level; succeeding letters
  S switch, E primary element, W well (ANSI/ISA-5.1-2009 table 4.1, from memory);
- which units each measured variable may be ranged in (level in length, %, pressure;
  DP flow in pressure units): common practice.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import given, settings as hyp_settings
from hypothesis import strategies as st

from loopdocs.checks import consistency
from loopdocs.model.vocab import Sensor, Signal

RULES = {"sensor.range", "sensor.class-range", "sensor.signal", "sensor.variable", "units.variable",
         "switch.range", "element.signal"}


def tt(tag="TT-101", **changes) -> dict:
    row = {"tag": tag, "signal": "4-20 mA", "range_low": 0, "range_high": 100, "units": "degC",
           "sensor": "TC-K", "transfer": "linear", "accuracy_pct": 0.5}
    row.update(changes)
    return {k: v for k, v in row.items() if v is not None}


def _ours(checked, rule=None):
    return [f for f in checked.findings if f.rule in RULES and (rule is None or f.rule == rule)]


def _only(checked, rule):
    found = _ours(checked, rule)
    assert len(found) == 1, [f"{f.rule} {f.tags} {f.message}" for f in _ours(checked)]
    return found[0]


# --------------------------------------------------------------------------- sensor.range


def test_type_k_range_above_1372_degc_is_an_error_at_range_high(index_files):
    rows = [tt("TT-101", range_high=1500), tt("TT-102", range_high=1372)]  # NIST MN 175: K to 1372 degC
    checked = index_files.check(rows)
    finding = _only(checked, "sensor.range")
    assert finding.severity.value == "error"
    assert finding.tags == ("TT-101",)
    assert index_files.where(finding) == index_files.cell("range_high", 0)
    assert "Range High 1500 degC is above the type K reference function's 1372 degC (IEC 60584-1)" in finding.message


def test_range_in_degf_is_quoted_as_written(index_files):
    # 2600 degF = 1426.7 degC > 1372 degC (NIST MN 175 type K); 1372 degC = 2501.6 degF (NIST SP 811)
    rows = [tt("TT-101", range_high=2600, units="degF"), tt("TT-102", range_high=2500, units="degF")]
    finding = _only(index_files.check(rows), "sensor.range")
    assert finding.tags == ("TT-101",)
    assert "Range High 2600 degF is above the type K reference function's 1372 degC (2501.6 degF)" in finding.message


def test_pt100_below_minus_200_is_an_error_at_range_low(index_files):
    rows = [tt("TT-101", sensor="Pt100", range_low=-250), tt("TT-102", sensor="Pt1000", range_low=-200, range_high=850)]
    finding = _only(index_files.check(rows), "sensor.range")  # IEC 60751: -200 to 850 degC
    assert finding.tags == ("TT-101",)
    assert index_files.where(finding) == index_files.cell("range_low", 0)
    assert "Range Low -250 degC is below the Pt100 Callendar-Van Dusen function's -200 degC (IEC 60751)" in finding.message


def test_reverse_range_is_checked_end_by_end(index_files):
    # Low 1400 > High 0 (a reverse range): Low is the end above type K's 1372 degC (NIST MN 175)
    finding = _only(index_files.check([tt("TT-101", range_low=1400, range_high=0)]), "sensor.range")
    assert index_files.where(finding) == index_files.cell("range_low", 0)


# Reference-function ranges, degC: NIST Monograph 175 (= IEC 60584-1:2013) and IEC 60751.
STANDARD_RANGES_C = {
    "TC-B": (0.0, 1820.0),      # NIST MN 175 type B
    "TC-E": (-270.0, 1000.0),   # NIST MN 175 type E
    "TC-J": (-210.0, 1200.0),   # NIST MN 175 type J
    "TC-K": (-270.0, 1372.0),   # NIST MN 175 type K
    "TC-N": (-270.0, 1300.0),   # NIST MN 175 type N
    "TC-R": (-50.0, 1768.1),    # NIST MN 175 type R
    "TC-S": (-50.0, 1768.1),    # NIST MN 175 type S
    "TC-T": (-270.0, 400.0),    # NIST MN 175 type T
    "Pt100": (-200.0, 850.0),   # IEC 60751 Callendar-Van Dusen
    "Pt1000": (-200.0, 850.0),  # IEC 60751 Callendar-Van Dusen
}


@pytest.mark.parametrize("sensor", sorted(STANDARD_RANGES_C))
def test_limits_are_the_published_ones(sensor):
    low_c, high_c = STANDARD_RANGES_C[sensor]
    limits = consistency.sensor_limits(Sensor.parse(sensor))
    assert (limits.low_c, limits.high_c) == (low_c, high_c)
    problems = consistency.sensor_range_problems
    assert problems(Sensor.parse(sensor), low_c, high_c, "degC") == []
    assert [p.key for p in problems(Sensor.parse(sensor), low_c, high_c + 0.1, "degC")] == ["range_high"]
    assert [p.key for p in problems(Sensor.parse(sensor), low_c - 0.1, high_c, "degC")] == ["range_low"]


# --------------------------------------------------------------------------- sensor.class-range


def test_type_k_above_its_tolerance_classes_is_a_warning(index_files):
    # IEC 60584-1:2013 tolerance table: type K class 2 ends at 1200 degC; function holds to 1372
    rows = [tt("TT-101", range_high=1300), tt("TT-102", range_high=1200)]
    checked = index_files.check(rows)
    finding = _only(checked, "sensor.class-range")
    assert finding.severity.value == "warning"
    assert finding.tags == ("TT-101",)
    assert index_files.where(finding) == index_files.cell("range_high", 0)
    assert "1200 degC" in finding.message and "class 2" in finding.message
    assert not _ours(checked, "sensor.range")


def test_no_class_warning_where_the_function_itself_is_exceeded():
    # K to 1500 degC: beyond the function (NIST MN 175, 1372) -> sensor.range only, not both
    assert consistency.class_range_problems(Sensor.TC_K, 0.0, 1500.0, "degC") == []
    # K at -250 degC: inside the function (-270) but below class 3 (-200, IEC 60584-1)
    assert [p.key for p in consistency.class_range_problems(Sensor.TC_K, -250.0, 0.0, "degC")] == ["range_low"]


# --------------------------------------------------------------------------- sensor.signal


def test_rtd_on_a_thermocouple_signal_is_an_error_at_sensor(index_files):
    rows = [tt("TE-101", signal="TC", sensor="Pt100"), tt("TE-102", signal="RTD", sensor="Pt100")]
    finding = _only(index_files.check(rows), "sensor.signal")
    assert finding.severity.value == "error"
    assert finding.tags == ("TE-101",)
    assert index_files.where(finding) == index_files.cell("sensor", 0)
    assert "Signal (Index!{}2) is TC".format(index_files.letter("signal")) in finding.message


def test_thermocouple_on_a_4_wire_rtd_signal_is_an_error(index_files):
    assert Signal.parse("4-wire RTD") is Signal.RTD
    rows = [tt("TE-101", signal="4-wire RTD", sensor="TC-J"), tt("TE-102", signal="TC", sensor="TC-J")]
    finding = _only(index_files.check(rows), "sensor.signal")
    assert finding.tags == ("TE-101",)
    assert index_files.where(finding) == index_files.cell("sensor", 0)


# --------------------------------------------------------------------------- sensor.variable


def test_sensor_on_a_pressure_transmitter_is_a_warning(index_files):
    rows = [tt("PT-101", sensor="Pt100", units="bar", range_high=10), tt("TT-102", sensor="Pt100")]
    finding = _only(index_files.check(rows), "sensor.variable")
    assert finding.severity.value == "warning"
    assert finding.tags == ("PT-101",)
    assert index_files.where(finding) == index_files.cell("sensor", 0)


def test_thermocouple_signal_on_a_level_tag_is_a_warning_at_signal(index_files):
    rows = [tt("LE-101", sensor=None, signal="TC", units="mm", range_high=500), tt("TE-102", signal="TC")]
    finding = _only(index_files.check(rows), "sensor.variable")
    assert finding.tags == ("LE-101",)
    assert index_files.where(finding) == index_files.cell("signal", 0)


# --------------------------------------------------------------------------- units.variable


@pytest.mark.parametrize("bad, severity", [
    (tt("TT-101", units="bar", sensor=None), "error"),           # T ranged in a pressure
    (tt("PT-101", units="degC", sensor=None), "error"),          # P ranged in a temperature
    (tt("FT-101", units="degC", sensor=None), "error"),          # F ranged in a temperature
    (tt("LT-101", units="kg/h", sensor=None), "error"),          # L ranged in a mass flow
    (tt("TT-101", units="%", sensor=None), "warning"),           # T in % of span: may be intended
    (tt("PT-101", units="m", sensor=None), "warning"),           # P as a head of liquid: may be intended
])
def test_units_against_the_measured_variable(index_files, bad, severity):
    clean = tt("TT-102")
    finding = _only(index_files.check([bad, clean]), "units.variable")
    assert finding.severity.value == severity
    assert finding.tags == (bad["tag"],)
    assert index_files.where(finding) == index_files.cell("units", 0)


def test_legitimate_units_give_no_finding(index_files):
    rows = [  # common practice: each of these is how such a tag is ranged
        tt("LT-101", units="mm", sensor=None), tt("LT-102", units="%", sensor=None),
        tt("LT-103", units="kPa", sensor=None), tt("LT-104", units="m3", sensor=None),
        tt("FT-105", units="m3/h", sensor=None), tt("FT-106", units="mbar", sensor=None, transfer="sqrt"),
        tt("FT-107", units="kg/h", sensor=None), tt("FIC-108", units="%", sensor=None),
        tt("PT-109", units="barg", sensor=None), tt("PDT-110", units="inH2O", sensor=None),
        tt("TT-111", units="degF"), tt("TT-112", units="K", range_low=273.15, range_high=373.15),
        tt("PY-113", units="mA", sensor=None, signal="3-15 psig", range_low=4, range_high=20),
    ]
    assert _ours(index_files.check(rows), "units.variable") == []


# --------------------------------------------------------------------------- switch.range


def test_switch_with_a_range_and_4_20_ma_is_a_warning_at_tag(index_files):
    rows = [tt("LSH-101", sensor=None, units="mm", range_high=2000),
            {"tag": "LSHH-102", "signal": "discrete"}]
    finding = _only(index_files.check(rows), "switch.range")
    assert finding.severity.value == "warning"
    assert finding.tags == ("LSH-101",)
    assert index_files.where(finding) == index_files.cell("tag", 0)


# --------------------------------------------------------------------------- element.signal


def test_4_20_ma_on_an_element_is_a_warning_and_on_a_well_an_error(index_files):
    rows = [tt("TE-101", sensor="Pt100"), tt("TW-101", sensor=None, range_low=None, range_high=None, units=None),
            tt("TE-102", sensor="Pt100", signal="RTD")]
    checked = index_files.check(rows)
    found = {f.tags[0]: f for f in _ours(checked, "element.signal")}
    assert set(found) == {"TE-101", "TW-101"}
    assert found["TE-101"].severity.value == "warning"
    assert found["TW-101"].severity.value == "error"
    assert index_files.where(found["TE-101"]) == index_files.cell("signal", 0)
    assert index_files.where(found["TW-101"]) == index_files.cell("signal", 1)


# --------------------------------------------------------------------------- calibration


def test_calibration_skip_reason_quotes_the_index_value_and_unit(index_files):
    from loopdocs.calibration.project_tables import calibration_set
    from loopdocs.model.loading import load_project

    project, _ = load_project(index_files.write([
        tt("TT-101", range_high=2600, units="degF"),
        tt("TE-102", signal="RTD", sensor="Pt100", range_high=900),
    ]))
    skipped = {s.tag: s.reason for s in calibration_set(project).skipped}
    # 1372 degC (NIST MN 175 type K) = 2501.6 degF; 850 degC the IEC 60751 upper end
    assert skipped["TT-101"] == (
        "Range High 2600 degF is above the type K reference function's 1372 degC (2501.6 degF) (IEC 60584-1)")
    assert skipped["TE-102"] == "Range High 900 degC is above the Pt100 Callendar-Van Dusen function's 850 degC (IEC 60751)"


# --------------------------------------------------------------------------- example project


def test_example_project_has_none_of_these_findings():
    from loopdocs.checks import check_project

    example = Path(__file__).resolve().parents[1] / "project_example"
    assert _ours(check_project(example)) == []


# --------------------------------------------------------------------------- property


def _project(rows):
    """A project from rows held in memory (the reader's output, without a file)."""
    from loopdocs.model.from_rows import build_project
    from loopdocs.read import IndexRow, IndexTable
    from loopdocs.read.columns import COLUMNS

    letters = {c.key: f"C{i}" for i, c in enumerate(COLUMNS)}
    table = IndexTable(Path("memory.xlsx"), "Index", 1, letters, {},
                       [IndexRow(row=i + 2, values=r) for i, r in enumerate(rows)])
    return build_project(table)[0]


def _to_unit(value_c: float, unit: str) -> float:
    return {"degC": value_c, "degF": value_c * 1.8 + 32.0, "K": value_c + 273.15}[unit]  # NIST SP 811


@st.composite
def sensor_ranges(draw, reaching_out: bool):
    """A sensor, a unit and a range in that unit; inside the published range, or with one
    end beyond it by 0.01 to 500 degC (not below absolute zero)."""
    sensor = draw(st.sampled_from(sorted(STANDARD_RANGES_C)))
    unit = draw(st.sampled_from(["degC", "degF", "K"]))
    low_c, high_c = STANDARD_RANGES_C[sensor]
    inside = st.floats(low_c, high_c, allow_nan=False)
    a_c, b_c = draw(inside), draw(inside)
    key = None
    if reaching_out:
        side = draw(st.sampled_from(["above", "below"]))
        if side == "above":
            b_c, key = high_c + draw(st.floats(0.01, 500.0)), "range_high"
        else:
            b_c, key = max(low_c - draw(st.floats(0.01, 500.0)), -273.0), "range_high"
        if draw(st.booleans()):  # put the outside end at Range Low (a reverse or odd range)
            a_c, b_c, key = b_c, a_c, "range_low"
    return sensor, unit, _to_unit(a_c, unit), _to_unit(b_c, unit), key


def _range_findings(sensor, unit, low, high):
    project = _project([{"tag": "TT-1", "signal": "4-20 mA", "sensor": sensor, "units": unit,
                         "range_low": low, "range_high": high}])
    return [f for f in consistency.checks(project) if f.rule == "sensor.range"]


@hyp_settings(max_examples=150, deadline=None)
@given(sensor_ranges(reaching_out=False))
def test_any_range_inside_the_sensor_range_gives_no_finding(case):
    sensor, unit, low, high, _ = case
    assert _range_findings(sensor, unit, low, high) == []


@hyp_settings(max_examples=150, deadline=None)
@given(sensor_ranges(reaching_out=True))
def test_any_range_reaching_outside_gives_one_finding_at_that_end(case):
    sensor, unit, low, high, key = case
    found = _range_findings(sensor, unit, low, high)
    assert len(found) == 1
    from loopdocs.read.columns import COLUMNS

    assert found[0].location.column == f"C{[c.key for c in COLUMNS].index(key)}"


# --------------------------------------------------------------------------- units table


@pytest.mark.parametrize("written", [
    "degC", "°C", "deg C", "degF", "°F", "deg F", "K", "Pa", "kPa", "kPag", "kPaa", "MPa", "MPag", "MPaa",
    "bar", "barg", "bara", "mbar", "mbarg", "mbara", "psi", "psig", "psia", "mmH2O", "inH2O", "mmWC", "inWC",
    "ftWC", "mm", "cm", "m", "in", "ft", "m3/h", "m³/h", "Nm3/h", "Nm³/h", "m3/s", "L/s", "L/min", "L/h", "gpm",
    "kg/h", "kg/s", "t/h", "lb/h", "m3", "m³", "L", "%", "mA",
])
def test_common_unit_table_agrees_with_pint(written):
    # pint (general-purpose units library) is the reference; the table only spares loading it,
    # so every spelling an index commonly holds must be in it
    from loopdocs.calc import units

    assert units.unit_expression(written) in units._COMMON_QUANTITIES
    assert units.quantity_of(written) == units.pint_quantity_of(written)


def test_check_of_common_units_does_not_load_pint():
    # docs/design.md §10: heavy imports stay out of commands that do not need them
    import subprocess
    import sys

    example = Path(__file__).resolve().parents[1] / "project_example"
    code = ("import sys\nfrom loopdocs.model.loading import load_project\nfrom loopdocs.checks import consistency\n"
            f"project, _ = load_project({str(example)!r})\nlist(consistency.checks(project))\n"
            "print('pint' in sys.modules)\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out == ["False"]
