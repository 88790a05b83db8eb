"""Every tolerance, decimals rule and threshold of the checks and tables, tested at its
boundary: a value just inside gives one behaviour, a value just outside the other, so a
change of the constant (5 -> 10 %, 1 -> 5 %, 1 -> 2 decimals ...) makes a test fail.
Nothing here reads the constant itself; each case is written from its source.

Sources, as cited beside each test:
- docs/design.md §4.2: CO starts and ends within 5 % CO make a shared range (one stream
  split between parallel or opposed valves); further apart, staged;
- docs/design.md §4.4: realised valve travel must match the intended travel within 1 %
  of travel; the same 1 % is the default stroke-check tolerance (common practice) and the
  range chart draws the intent beside the settings only when they differ by more;
- docs/design.md §4.2: gap/overlap narrower than 0.01 % CO is rounding, not a finding;
  gain ratio across a staged boundary outside 0.5 to 2 is a jump (docs/design.md §5.6,
  common practice); the range chart, docs/design.md §8.2;
- 4 to 20 mA loop sized for 22 mA (NAMUR NE 43 puts failure at >= 21 mA; 22 mA is
  common practice for the top of a transmitter's saturation);
- I = 4 + 16 p for 4-20 mA (IEC 60381-1); 3 to 15 psig pneumatic (IEC 60382);
- display decimals: the resolution a process calibrator reads (common practice): mA,
  psig, mV and ohm to 0.001, kPa to 0.01, valve travel to 0.1 %, controller output to
  0.01 %;
- Pt100 limits -200 to 850 degC (IEC 60751 table range); thermocouple tolerance classes
  (IEC 60584-1:2013); table values read back only within the table's rounding;
- a reading exactly at its tolerance passes (common practice: limits are inclusive).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from typer.testing import CliRunner

from loopdocs.calc.travel import Intent, classify
from loopdocs.cli import app
from loopdocs.sheets.index_template import write_index_workbook

runner = CliRunner()

CTRL = {"tag": "TIC-801", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}


def number(value: str) -> str:
    """A regex for ``value`` as a whole number: not part of a longer one (``50.0`` does not
    match in ``50.00`` or ``150.0``)."""
    return r"(?<![\d.])" + re.escape(value) + r"(?![\d])"


def of(result, rule: str) -> list:
    return [f for f in result.findings if f.rule == rule]


def valve(tag: str, co: tuple[float, float], travel: tuple[float, float], inputs: tuple[float, float], **extra) -> dict:
    """A positioner-split valve on TIC-801's 4-20 mA output: one that opens as CO rises is
    ATO and raises the temperature (heating), one that closes is ATC and lowers it (cooling),
    which suits a reverse-acting controller."""
    air = "ATO" if travel[1] > travel[0] else "ATC"
    return {"tag": tag, "signal": "4-20 mA", "air_action": air, "fail_position": "FC" if air == "ATO" else "FO",
            "positioner_action": "direct", "driven_by": CTRL["tag"], "split_method": "positioner",
            "co_start_pct": co[0], "co_end_pct": co[1], "travel_start_pct": travel[0],
            "travel_end_pct": travel[1], "input_low": inputs[0], "input_high": inputs[1], "input_units": "mA",
            "effect": "raises" if air == "ATO" else "lowers", **extra}


# --------------------------------------------------------------------------- shared ranges: 5 % CO


@pytest.mark.parametrize("offset_pct, ranges", [(4.9, "shared"), (5.1, "staged")])
def test_shared_range_tolerance_5_pct_co(offset_pct, ranges):
    # docs/design.md §4.2: starts and ends within 5 % CO of each other are one shared range
    # (two valves on the same stream move together: parallel); 5.1 % apart they are staged.
    arrangement = classify([Intent(0, 100, 0, 100), Intent(offset_pct, 100 + offset_pct, 0, 100)])
    assert arrangement.pairs[0].ranges == ranges
    assert arrangement.mode == ("parallel" if ranges == "shared" else "staged")


@pytest.mark.parametrize("offset_pct, mode", [(4.9, "opposed"), (5.1, "staged-opposed")])
def test_shared_range_tolerance_through_the_index(index_files, offset_pct, mode):
    # docs/design.md §4.2, through a real workbook: a closing and an opening valve whose CO
    # ranges differ by 4.9 % are opposed on one shared range, by 5.1 % staged-opposed.
    end = 100 - offset_pct
    rows = [CTRL, valve("TV-801A", (0, end), (100, 0), (4, 4 + 0.16 * end)),
            valve("TV-801B", (offset_pct, 100), (0, 100), (4 + 0.16 * offset_pct, 20))]
    assert index_files.check(rows).splits[0].mode == mode


@pytest.mark.parametrize("co_end_pct, orphan", [(95.1, False), (94.9, True)])
def test_single_valve_on_part_of_the_co_is_an_orphan_beyond_5_pct(index_files, co_end_pct, orphan):
    # docs/design.md §4.2: one valve alone on a controller over CO 0 to 95.1 % is within the
    # 5 % CO tolerance of the full range (not a split); over 0 to 94.9 % it is a split range
    # that lost its partner (split.orphan).
    rows = [CTRL, valve("TV-801A", (0, co_end_pct), (0, 100), (4, 4 + 0.16 * co_end_pct))]
    result = index_files.check(rows)
    assert bool(of(result, "split.orphan")) is orphan
    assert of(result, "split.gap") == []  # a lone valve's idle CO is named by split.orphan, not as a gap


# --------------------------------------------------------------------------- travel: 1 % of travel

# TV-802B strokes 0 -> 100 % over CO 52 to 100 %, so it needs 12.32 to 20 mA
# (I = 4 + 16 * 0.52, IEC 60381-1). Set to start at 12.32 + d mA it stays shut until the
# signal reaches it: the travel error at CO 52 % + is 100 d / 7.68 % of travel
# (docs/design.md §4.4): 12.389 mA -> 0.90 %, 12.405 mA -> 1.11 %.
def _two_valves(input_low_b: float) -> list[dict]:
    return [CTRL, valve("TV-802A", (0, 48), (100, 0), (4, 11.68)),
            valve("TV-802B", (52, 100), (0, 100), (input_low_b, 20))]


@pytest.mark.parametrize("input_low_ma, error_pct, fires", [(12.389, 0.90, False), (12.405, 1.11, True)])
def test_settings_tolerance_1_pct_travel(index_files, input_low_ma, error_pct, fires):
    # docs/design.md §4.4: the input range must realise the intended travel within 1 % travel.
    result = index_files.check(_two_valves(input_low_ma))
    element = next(e for e in result.splits[0].elements if e.tag == "TV-802B")
    assert element.travel_error[0] == pytest.approx(error_pct, abs=0.01)
    found = of(result, "split.settings")
    assert [f.tags for f in found] == ([("TV-802B",)] if fires else [])
    if fires:
        assert re.search(r"travel off by " + number("1.1") + " % at CO 52", found[0].message)


@pytest.mark.parametrize("input_high_ma, fires", [(19.86, False), (19.82, True)])
def test_double_split_tolerance_1_pct_travel(index_files, input_high_ma, fires):
    # docs/design.md §4.4: a dcs split's positioner takes the full 4 to 20 mA; set to
    # 4 to 19.86 mA, full travel is reached 0.14 mA early: 100 * 0.14 / 15.86 = 0.88 % travel
    # at most (inside 1 %); at 19.82 mA, 100 * 0.18 / 15.82 = 1.14 % (split.double-split).
    rows = [CTRL,
            {**valve("TV-803A", (0, 50), (0, 100), (4, input_high_ma)), "split_method": "dcs", "io_address": "AO-1"},
            {**valve("TV-803B", (50, 100), (0, 100), (4, 20)), "split_method": "dcs", "io_address": "AO-2"}]
    found = of(index_files.check(rows), "split.double-split")
    assert [f.tags for f in found] == ([("TV-803A",)] if fires else [])


def test_range_chart_draws_the_intent_only_beyond_1_pct(index_files):
    # docs/design.md §8.2 and §4.4: the chart draws the intended travel beside the settings' travel
    # only when they differ by more than 1 % of travel (0.90 %: not drawn; 1.11 %: drawn).
    from loopdocs.draw.range_chart import chart_layout

    roles = {}
    for input_low_ma in (12.389, 12.405):
        result = index_files.check(_two_valves(input_low_ma))
        chart = chart_layout(result.splits[0], result.findings)
        roles[input_low_ma] = {p.role for p in chart.paths}
    assert "intent:TV-802B" not in roles[12.389]
    assert "intent:TV-802B" in roles[12.405]
    assert "intent:TV-802A" not in roles[12.405]  # set as needed: no intent line


# --------------------------------------------------------------------------- gap and overlap: 0.01 % CO


@pytest.mark.parametrize("gap_pct, rule", [(0.005, None), (0.02, "split.gap"), (-0.005, None), (-0.02, "split.overlap")])
def test_gap_and_overlap_narrower_than_0_01_pct_co_are_rounding(index_files, gap_pct, rule):
    # docs/design.md §4.2: two staged valves leaving 0.02 % CO uncovered (or both moving
    # over 0.02 % CO) are reported; 0.005 % is rounding in the index and is not.
    b_start = 50 + gap_pct
    rows = [CTRL, valve("TV-804A", (0, 50), (0, 100), (4, 12)),
            valve("TV-804B", (b_start, 100), (0, 100), (4 + 0.16 * b_start, 20))]
    result = index_files.check(rows)
    found = {f.rule for f in result.findings if f.rule in ("split.gap", "split.overlap")}
    assert found == ({rule} if rule else set())


# --------------------------------------------------------------------------- capacity: gain ratio 0.5 to 2


def _staged_linear(cv_a: float, cv_b: float) -> list[dict]:
    rows = [{"tag": "LIC-805", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}]
    for suffix, cv, (a, b) in zip("AB", (cv_a, cv_b), [(0, 50), (50, 100)]):
        rows.append({"tag": f"LV-805{suffix}", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                     "positioner_action": "direct", "driven_by": "LIC-805", "split_method": "dcs",
                     "co_start_pct": a, "co_end_pct": b, "travel_start_pct": 0, "travel_end_pct": 100,
                     "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises", "cv": cv,
                     "characteristic": "linear", "io_address": f"AO-{suffix}"})
    return rows


@pytest.mark.parametrize("cv_a, cv_b, fires", [(10, 19, False), (10, 20, False), (10, 21, True),
                                                (19, 10, False), (20, 10, False), (21, 10, True)])
def test_gain_ratio_band_half_to_double(index_files, cv_a, cv_b, fires):
    # Two linear valves staged at CO 50 %: each gives Cv / 50 % CO, so the loop gain changes
    # by Cv_B / Cv_A across the boundary (linear inherent characteristic, IEC 60534-1).
    # Outside 0.5 to 2 it is a jump (docs/design.md §5.6, common practice): 1.9, 2 and their
    # inverses pass (the band includes its ends), 2.1 and 1/2.1 are reported.
    result = index_files.check(_staged_linear(cv_a, cv_b))
    assert result.splits[0].gain_ratios == pytest.approx((cv_b / cv_a,))
    assert bool(of(result, "split.capacity")) is fires


# --------------------------------------------------------------------------- loop load: 22 mA


@pytest.mark.parametrize("device_volts, fires", [(18.5, False), (18.6, True)])
def test_transmitter_loop_sized_for_22_ma(index_files, device_volts, fires):
    # 24 V supply, 250 ohm load: at 22 mA (a loop is sized for 22 mA, common practice above
    # NAMUR NE 43's 21 mA failure level) the load takes 0.022 * 250 = 5.5 V and leaves
    # 18.5 V: a transmitter needing 18.5 V works, one needing 18.6 V does not (loop.load).
    rows = [{"tag": "TT-806", "signal": "4-20 mA", "device_volts": device_volts, "loop_volts": 24, "load_ohm": 250}]
    found = of(index_files.check(rows), "loop.load")
    assert bool(found) is fires
    if fires:
        assert re.search(r"leaves " + number("18.50") + " V", found[0].message)


# --------------------------------------------------------------------------- Pt100 range (IEC 60751)


@pytest.mark.parametrize("low_c, high_c, fires", [(0, 850, False), (0, 851, True), (-200, 100, False), (-201, 100, True)])
def test_pt100_range_limits_minus_200_to_850_degc(index_files, low_c, high_c, fires):
    # IEC 60751 defines the Pt100 resistance from -200 to 850 degC: a range ending at
    # 850 degC (or starting at -200 degC) is within it, one degree beyond is not (sensor.range).
    rows = [{"tag": "TT-807", "signal": "4-20 mA", "range_low": low_c, "range_high": high_c, "units": "degC",
             "sensor": "Pt100"}]
    found = of(index_files.check(rows), "sensor.range")
    assert [f.tags for f in found] == ([("TT-807",)] if fires else [])


@pytest.mark.parametrize("resistance_ohm, accepted", [(390.48, True), (390.49, False)])
def test_pt100_resistance_read_to_the_table_end_and_no_further(resistance_ohm, accepted):
    # IEC 60751 table: Pt100 at 850 degC is 390.48 ohm (printed to 0.01 ohm; the function gives
    # 390.4811). A printed end value reads back (to 850 degC within 0.01); 390.49 ohm is
    # beyond the printed end by more than its rounding and is refused.
    from loopdocs.calc.rtd import rtd_temperature_c

    if accepted:
        assert rtd_temperature_c(resistance_ohm) == pytest.approx(850.0, abs=0.01)
    else:
        with pytest.raises(ValueError, match="-200 to 850 degC"):
            rtd_temperature_c(resistance_ohm)


@pytest.mark.parametrize("emf_mv, accepted", [(54.886, True), (54.888, False)])
def test_type_k_emf_read_to_the_table_end_and_no_further(emf_mv, accepted):
    # NIST Monograph 175 type K table: 54.886 mV at 1372 degC (printed to 0.001 mV, from
    # memory). The printed end value reads back to 1372 degC within 0.05; 0.002 mV beyond
    # it is more than the table's rounding and is refused.
    from loopdocs.calc.thermocouple import temperature_c

    if accepted:
        assert temperature_c("K", emf_mv) == pytest.approx(1372.0, abs=0.05)
    else:
        with pytest.raises(ValueError, match="-270 to 1372 degC"):
            temperature_c("K", emf_mv)


# IEC 60584-1:2013 tolerance classes (as reproduced in manufacturers' tables; from memory):
# the widest span any class of each type covers, degC.
TC_CLASS_SPAN_C = {"TC-T": (-200, 350), "TC-J": (-40, 750), "TC-E": (-200, 900), "TC-K": (-200, 1200),
                   "TC-N": (-200, 1200), "TC-R": (0, 1600), "TC-S": (0, 1600), "TC-B": (600, 1700)}


@pytest.mark.parametrize("sensor", sorted(TC_CLASS_SPAN_C))
def test_thermocouple_tolerance_class_ends(sensor):
    # A range ending exactly at the end of the type's tolerance classes has no finding; one
    # degree beyond (still inside the reference function) is outside every class.
    from loopdocs.checks.consistency import class_range_problems
    from loopdocs.model.vocab import Sensor

    low_c, high_c = TC_CLASS_SPAN_C[sensor]
    s = Sensor(sensor)
    assert class_range_problems(s, low_c, high_c, "degC") == []
    assert [p.key for p in class_range_problems(s, low_c, high_c + 1, "degC")] == ["range_high"]
    assert [p.key for p in class_range_problems(s, low_c - 1, high_c, "degC")] == ["range_low"]
    if low_c == -200:  # only class 3 reaches down to -200 degC (T, E, K, N)
        assert "(class 3, IEC 60584-1)" in class_range_problems(s, low_c - 1, high_c, "degC")[0].text


# --------------------------------------------------------------------------- CO and travel within 0 to 100 %


@pytest.mark.parametrize("key, end, fires", [("co_end_pct", 100, False), ("co_end_pct", 100.5, True),
                                             ("travel_end_pct", 100, False), ("travel_end_pct", 100.5, True)])
def test_co_and_travel_beyond_100_pct_are_refused(index_files, key, end, fires):
    # Controller output and valve travel are 0 to 100 % by definition (common practice);
    # 100 % is accepted, 100.5 % is an unusable segment (split.segment, docs/design.md §5.6),
    # not rounded into range.
    heating = valve("TV-808B", (50, 100), (0, 100), (12, 20))
    heating[key] = end
    rows = [CTRL, valve("TV-808A", (0, 50), (100, 0), (4, 12)), heating]
    found = of(index_files.check(rows), "split.segment")
    assert [f.tags for f in found] == ([("TV-808B",)] if fires else [])


# --------------------------------------------------------------------------- decimals and default tolerances


@pytest.fixture(scope="module")
def calibrate_text(tmp_path_factory) -> str:
    """``loopdocs calibrate`` of a small index: a 4-20 mA valve, a 3-15 psig valve, a
    20-100 kPa valve, a Pt100 and a type K transmitter, an I/P converter and a two-valve
    positioner split; Accuracy % blank except on the transmitters."""
    path = tmp_path_factory.mktemp("calibrate") / "index.xlsx"
    rows = [
        {"tag": "FIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"},
        {"tag": "FV-201", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
         "positioner_action": "direct", "driven_by": "FIC-201", "input_low": 4, "input_high": 20,
         "input_units": "mA", "effect": "raises"},
        {"tag": "PIC-301", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"},
        {"tag": "PV-301", "signal": "3-15 psig", "air_action": "ATO", "fail_position": "FC", "driven_by": "PIC-301"},
        {"tag": "HIC-401", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"},
        {"tag": "HV-401", "signal": "20-100 kPa", "air_action": "ATO", "fail_position": "FC", "driven_by": "HIC-401"},
        {"tag": "TT-101", "signal": "4-20 mA", "range_low": 0, "range_high": 100, "units": "degC",
         "sensor": "Pt100", "accuracy_pct": 0.25},
        {"tag": "TT-102", "signal": "4-20 mA", "range_low": 0, "range_high": 400, "units": "degC",
         "sensor": "TC-K", "accuracy_pct": 0.5},
        {"tag": "TY-130", "signal": "3-15 psig", "range_low": 3, "range_high": 15, "units": "psig"},
        *_two_valves(12.32),
    ]
    write_index_workbook(path, rows)
    result = runner.invoke(app, ["calibrate", str(path)], env={"COLUMNS": "240"})
    assert result.exit_code == 0, result.output
    return result.stdout


def _table(text: str, title_start: str) -> str:
    """The part of the terminal output from ``title_start`` to the next table title."""
    start = text.index(title_start)
    body = text.index("\n", start) + 1
    following = re.search(r"^[A-Z]+-\d+ ", text[body:], re.M)
    return text[start: body + following.start()] if following else text[start:]


SEP = r"[\s│┃|]+"


def test_valve_stroke_decimals_mA_three_travel_one(calibrate_text):
    # 50 % travel at I = 4 + 16 * 0.5 = 12 mA (IEC 60381-1); mA read to 0.001 mA, valve
    # travel to 0.1 % (calibrator and travel-gauge resolution, common practice).
    stroke = _table(calibrate_text, "FV-201 valve stroke")
    assert re.search(number("12.000") + SEP + number("50.0") + SEP + number("49.0") + " to " + number("51.0"), stroke)
    assert not re.search(number("50.00"), stroke)


def test_valve_stroke_default_tolerance_1_pct_travel(calibrate_text):
    # Accuracy % blank on a valve: +/-1 % of travel (docs/design.md §4.4, common practice),
    # which on 4-20 mA is 16 mA * 1 % = 0.16 mA, on 3-15 psig 0.12 psig.
    assert re.search(r"±" + number("0.16") + " mA = ±1 % travel", _table(calibrate_text, "FV-201 valve stroke"))
    assert re.search(r"±" + number("0.12") + " psig = ±1 % travel", _table(calibrate_text, "PV-301 valve stroke"))


def test_pneumatic_decimals_psig_three_kpa_two(calibrate_text):
    # 50 % of 3-15 psig is 9 psig (IEC 60382), read to 0.001 psig; 50 % of 20-100 kPa is
    # 60 kPa, read to 0.01 kPa (common practice).
    assert re.search(number("9.000") + SEP + number("50.0"), _table(calibrate_text, "PV-301 valve stroke"))
    assert re.search(number("60.00") + SEP + number("50.0"), _table(calibrate_text, "HV-401 valve stroke"))


def test_transmitter_decimals_ohm_and_ma_three(calibrate_text):
    # Pt100 at 50 degC: R = 100 (1 + A t + B t^2) = 119.397 ohm (IEC 60751, A = 3.9083e-3,
    # B = -5.775e-7), read to 0.001 ohm; 12.000 mA with limits 12 +/- 0.04 mA (0.25 % of 16 mA).
    table = _table(calibrate_text, "TT-101 transmitter")
    assert re.search(number("119.397") + SEP + number("12.000") + SEP + number("11.960") + " to " + number("12.040"), table)


def test_fail_action_holds_the_valve_at_half_travel(calibrate_text):
    # The fail-action test first holds the valve mid-stroke (50 % travel: 12 mA on 4-20 mA,
    # 9 psig on 3-15 psig, I = 4 + 16 * 0.5, IEC 60381-1/60382) so the spring's stroke to
    # its fail position is seen (common practice); ATO fails closed, 0 % travel.
    assert re.search(r"hold " + number("12") + " mA", _table(calibrate_text, "FV-201 fail action"))
    assert re.search(r"hold " + number("9") + " psig", _table(calibrate_text, "PV-301 fail action"))


def test_thermocouple_decimals_mv_three(calibrate_text):
    # Type K at 200 degC: 8.138 mV (IEC 60584-1 reference table, from memory), read to
    # 0.001 mV; 50 % of 0 to 400 degC -> 12.000 mA.
    table = _table(calibrate_text, "TT-102 transmitter")
    assert re.search(number("8.138") + SEP + number("12.000"), table), table


def test_converter_default_tolerance_1_pct_of_span(calibrate_text):
    # I/P converter, Accuracy % blank: +/-1 % of span taken (common practice), 0.16 mA on
    # the 4-20 mA input and 0.12 psig on the 3-15 psig output; 12 mA -> 9 psig.
    table = _table(calibrate_text, "TY-130")
    assert re.search(r"±1 % of span = ±" + number("0.16") + " mA = ±" + number("0.12") + " psig", table), table
    assert re.search(number("12.000") + SEP + number("9.000") + SEP + number("8.880") + " to " + number("9.120"), table)


def test_loop_check_controller_output_decimals_two(calibrate_text):
    # Loop check of TIC-801's split: controller output read to 0.01 % CO (common practice),
    # valve travel to 0.1 %: TV-802B starts at CO 52 % (0 % travel) and is fully open at 100 %.
    table = _table(calibrate_text, "TV-802A, TV-802B split-range loop check")
    assert re.search(number("52.00") + SEP, table), table
    assert not re.search(number("52.0") + SEP, table)


# --------------------------------------------------------------------------- grading: limits inclusive


@pytest.mark.parametrize("reading_ma, status", [(12.04, "pass"), (11.96, "pass"), (12.0416, "fail"), (11.9584, "fail")])
def test_reading_exactly_at_the_tolerance_passes(reading_ma, status):
    # Tolerance 0.25 % of a 16 mA span = +/-0.04 mA around 12 mA: 12.04 and 11.96 mA are at
    # the limit and pass (limits are inclusive, common practice); 0.26 % off fails.
    from loopdocs.calibration.grading import judge_reading

    assert judge_reading(reading_ma, 12.0, 16.0, 0.25).status == status


# --------------------------------------------------------------------------- survivors of tests/mutants.py
# Behaviour a mutant changed without any test noticing (docs/testing.md); each is checked here
# against its own source.


def test_acceptance_needs_both_its_rule_and_its_tag(tmp_path):
    # An engineering acceptance names one rule on one tag (docs/design.md §2.5, loopdocs.toml
    # [[accept]]); the same rule on another tag, and another rule on the same tag, stay open
    # (common practice for a reviewed exception: it covers what was reviewed, nothing more).
    from loopdocs.checks import check_project

    rows = [{"tag": "PT-7", "signal": "4-20 mA", "range_low": 0, "range_high": 10},
            {"tag": "PT-8", "signal": "4-20 mA", "range_low": 0, "range_high": 10}]
    write_index_workbook(tmp_path / "index.xlsx", rows)
    (tmp_path / "loopdocs.toml").write_text(
        '[[accept]]\nrule = "range.no-units"\ntag = "PT-7"\nreason = "spare, range set at site"\nby = "A. Engineer"\n')
    checked = check_project(tmp_path)
    accepted = {(f.rule, f.tags) for f in checked.findings if f.accepted is not None}
    assert accepted == {("range.no-units", ("PT-7",))}
    assert any(f.rule == "range.no-units" and f.tags == ("PT-8",) and f.accepted is None for f in checked.findings)


def test_stroke_note_says_closes_for_a_valve_that_closes(calibrate_text):
    # ATC with a direct positioner: more signal, more air, the valve closes (a fact of the
    # trade: air to close); the table says so, the ATO valve's says it opens.
    assert "ATC, direct positioner: travel closes as the signal rises from 4 to 11.68 mA" in " ".join(
        _table(calibrate_text, "TV-802A valve stroke").split())
    assert "ATO, direct positioner: travel opens as the signal rises from 4 to 20 mA" in " ".join(
        _table(calibrate_text, "FV-201 valve stroke").split())


def test_valve_table_errors_are_in_percent_of_travel():
    # Valve travel spans 0 to 100 % (common practice), so a valve table's "% of span" error
    # is an error in % travel: a stroke, fail-action and loop-check table all span 100.
    from loopdocs.calc.fail_action import fail_action_table
    from loopdocs.calc.signals import MA_4_20
    from loopdocs.calc.tables import loop_check_table, stroke_table
    from loopdocs.calc.travel import Settings

    settings = Settings("positioner", "ATO", "direct", 4.0, 20.0, MA_4_20)
    tables = [stroke_table("FV-1", settings), fail_action_table("FV-1", "FC", settings, None),
              loop_check_table("FV-1", Intent(0, 100, 0, 100), settings)]
    assert [t.output_span for t in tables] == [100.0, 100.0, 100.0]


@pytest.mark.parametrize("unit, length", [("mm", True), ("m", True), ("ft", True), ("kPa", False), ("degC", False)])
def test_length_units_are_told_from_others(unit, length):
    # mm, m and ft are lengths (SI brochure; 1 ft = 0.3048 m by definition): a level range in
    # them is calibrated against a length; kPa and degC are not lengths.
    from loopdocs.calc.units import is_length

    assert is_length(unit) is length


def test_settings_error_is_found_where_the_realised_travel_bends(index_files):
    # TV-809A (staged before TV-809B) should stroke 0 -> 100 % over CO 0 to 50 % (4 to 12 mA) but its positioner is
    # set 4 to 11 mA: it is fully open at 11 mA, CO (11 - 4) / 16 = 43.75 % (I = 4 + 16 CO,
    # IEC 60381-1), where the intended travel is 43.75 / 50 = 87.5 %: off by 12.5 % at
    # CO 43.75 % exactly (the corner of the realised travel, not a grid point near it).
    rows = [CTRL, valve("TV-809A", (0, 50), (0, 100), (4, 11)), valve("TV-809B", (50, 100), (0, 100), (12, 20))]
    found = of(index_files.check(rows), "split.settings")
    assert [f.tags for f in found] == [("TV-809A",)]
    assert re.search(r"travel off by " + number("12.5") + " % at CO " + number("43.75") + " %", found[0].message)


@pytest.mark.parametrize("co, key", [((0, 100.5), "co_end_pct"), ((-0.5, 100), "co_start_pct")])
def test_segment_outside_0_to_100_is_located_at_the_end_that_is_out(index_files, co, key):
    # A finding names the cell to fix (docs/design.md §3.5): CO 0 to 100.5 % is wrong at
    # CO End (0 is a valid start), CO -0.5 to 100 % at CO Start.
    (f,) = of(index_files.check([CTRL, valve("TV-810", co, (0, 100), (4, 20))]), "split.segment")
    assert index_files.where(f) == index_files.cell(key, 1)


@pytest.mark.parametrize("device_volts, fires", [(11, False), (11.1, True)])
def test_positioners_in_series_up_to_the_loop_volts(index_files, device_volts, fires):
    # Two positioners in series on one 4-20 mA output with 22 V available: 2 x 11 V = 22 V
    # fits exactly, 2 x 11.1 V = 22.2 V does not (voltages in series add, Kirchhoff's voltage
    # law; docs/design.md §6.8).
    rows = [dict(CTRL, loop_volts=22), valve("TV-811A", (0, 50), (100, 0), (4, 12), device_volts=device_volts),
            valve("TV-811B", (50, 100), (0, 100), (12, 20), device_volts=device_volts)]
    found = of(index_files.check(rows), "loop.load")
    assert bool(found) is fires
    if fires:
        assert re.search(r"= " + number("22.20") + " V in series", found[0].message)


def test_loop_load_with_device_volts_blank_is_not_verified(index_files):
    # Loop Volts given on the controller but Device Volts blank on the valves: the load cannot
    # be checked and the report says so instead of passing it (docs/design.md §2.3: blanks are
    # not verified, never guessed).
    rows = [dict(CTRL, loop_volts=22), valve("TV-812A", (0, 50), (100, 0), (4, 12)),
            valve("TV-812B", (50, 100), (0, 100), (12, 20))]
    notes = [f for f in index_files.check(rows).findings if f.rule == "check.not-verified"]
    assert any("loop load" in f.message and "Device Volts blank" in f.message for f in notes)


@pytest.mark.parametrize("blank", ["", "   "])
def test_a_blank_unit_is_no_unit(blank):
    # A blank Units cell names no unit: no quantity, and asking pint for it is refused with
    # that reason (pint itself reads "" as dimensionless, which would pass a blank as a ratio).
    from loopdocs.calc.units import parse_unit, quantity_of

    assert quantity_of(blank) is None
    with pytest.raises(ValueError, match="no unit given"):
        parse_unit(blank)


def test_fail_open_pneumatic_valve_that_goes_open_has_no_finding(index_files):
    # ATC on a 3-15 psig signal, FO: on loss of air or of the pneumatic signal the spring opens
    # it to 100 % travel (air to close, fail open: a fact of the trade), as declared; nothing
    # to report, and the same valve declared FC is a contradiction (valve.air-fail).
    ctrl = {"tag": "PIC-901", "platform": "dcs", "signal": "4-20 mA", "control_action": "direct"}
    good = {"tag": "PV-901", "signal": "3-15 psig", "air_action": "ATC", "fail_position": "FO", "driven_by": "PIC-901"}
    assert [f.rule for f in index_files.check([ctrl, good]).findings if f.rule.startswith("valve.")] == []
    bad = {**good, "fail_position": "FC"}
    assert "valve.air-fail" in {f.rule for f in index_files.check([ctrl, bad]).findings}


@pytest.mark.parametrize("low, high", [(None, 10), (0, None), (0, 10)])
def test_a_range_with_either_end_and_no_units_is_reported(index_files, low, high):
    # A range without units cannot be calibrated (common practice: a number without its unit
    # is no value); one end given is already a range to question (range.no-units).
    row = {"tag": "PT-902", "signal": "4-20 mA", "range_low": low, "range_high": high}
    found = of(index_files.check([{k: v for k, v in row.items() if v is not None}]), "range.no-units")
    assert [f.tags for f in found] == [("PT-902",)]
