"""Split-range, valve and loop-load rules (docs/design.md §5.6): for each rule a spreadsheet made
to fire it and a clean one that does not, checked with ``loopdocs.checks.check_project``;
each finding's rule, severity, tags and cell are asserted.

Reference values, with their sources:
- 4-20 mA shared output, I = 4 + 16*CO: IEC 60381-1 (the 4 to 20 mA d.c. signal);
- 3-15 psig pneumatic signal: IEC 60382 and ANSI/ISA-50.00.01; 1 psi = 6.894757 kPa
  (NIST SP 811, as in pint), so 3, 9 and 15 psig are 20.684, 62.053 and 103.421 kPa;
- a 50 % split point puts the boundary at 12 mA on the shared output (9 psig pneumatic):
  common practice;
- ATO actuators fail closed, ATC fail open (spring return): a fact of the trade;
- capacity-proportional split points, boundary b = Cv1/(Cv1+Cv2) (Cv 10 and 30 -> 25 %):
  from memory (docs/design.md §6.9 uses the same example);
- equal-percentage inherent characteristic f = R^(x-1) (IEC 60534-1), so the gain ratio
  across a capacity-proportional boundary of two equal-percentage valves is 1/R;
- a transmitter loop is sized for 22 mA (NAMUR NE 43 puts failure at >= 21 mA; 22 mA
  common practice).
"""

from __future__ import annotations

import pytest

CTRL = {"tag": "TIC-101", "service": "Test tank temperature", "platform": "dcs", "signal": "4-20 mA",
        "control_action": "reverse"}


def _row(base: dict, changes: dict) -> dict:
    row = {**base, **changes}
    return {k: v for k, v in row.items() if v is not None}


def cool(**changes) -> dict:
    """Glycol valve: ATC, closes over CO 0-50 %, positioner 4-12 mA (half range, common practice)."""
    return _row({"tag": "TV-101A", "signal": "4-20 mA", "air_action": "ATC", "fail_position": "FO",
                 "positioner_action": "direct", "driven_by": "TIC-101", "split_method": "positioner",
                 "co_start_pct": 0, "co_end_pct": 50, "travel_start_pct": 100, "travel_end_pct": 0,
                 "input_low": 4, "input_high": 12, "input_units": "mA", "effect": "lowers"}, changes)


def heat(**changes) -> dict:
    """Hot water valve: ATO, opens over CO 50-100 %, positioner 12-20 mA."""
    return _row({"tag": "TV-101B", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                 "positioner_action": "direct", "driven_by": "TIC-101", "split_method": "positioner",
                 "co_start_pct": 50, "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100,
                 "input_low": 12, "input_high": 20, "input_units": "mA", "effect": "raises"}, changes)


def single(tag="FV-101", driver="FIC-101", **changes) -> dict:
    """An ordinary control valve on its own output: ATO, FC, 4-20 mA, full CO."""
    return _row({"tag": tag, "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                 "positioner_action": "direct", "driven_by": driver, "input_low": 4, "input_high": 20,
                 "input_units": "mA", "effect": "raises"}, changes)


FIC = {"tag": "FIC-101", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}


def staged(method="dcs", boundary=25.0, cvs=(10, 30), characteristic="linear", **changes) -> list[dict]:
    """LIC-201 filling a tank through a small then a large valve (staged, same direction)."""
    rows = [{"tag": "LIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}]
    for suffix, cv, (a, b) in zip("AB", cvs, [(0, boundary), (boundary, 100)]):
        low, high = (4, 20) if method == "dcs" else (4 + 0.16 * a, 4 + 0.16 * b)
        rows.append(_row({"tag": f"LV-201{suffix}", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                          "positioner_action": "direct", "driven_by": "LIC-201", "split_method": method,
                          "co_start_pct": a, "co_end_pct": b, "travel_start_pct": 0, "travel_end_pct": 100,
                          "input_low": low, "input_high": high, "input_units": "mA", "effect": "raises", "cv": cv,
                          "characteristic": characteristic, "io_address": f"AO-{suffix}"}, changes.get(suffix, {})))
    return rows


def of(result, rule: str) -> list:
    return [f for f in result.findings if f.rule == rule]


def only(result, rule: str):
    found = of(result, rule)
    assert len(found) == 1, [f.as_json() for f in result.findings]
    return found[0]


# --------------------------------------------------------------------------- clean reference


def test_clean_heat_cool_split_gives_no_finding(index_files):
    # Half-range split on one shared 4-20 mA output: 4-12 mA and 12-20 mA (IEC 60381-1;
    # the 12 mA boundary is common practice); two 9.5 V positioners on a 22 V output.
    rows = [dict(CTRL, loop_volts=22), cool(device_volts=9.5, io_address="AO-7"), heat(device_volts=9.5, io_address="AO-7")]
    result = index_files.check(rows)
    assert [f.as_json() for f in result.findings] == []
    assert [g.mode for g in result.splits] == ["staged-opposed"]


# --------------------------------------------------------------------------- split.driver


def test_driver_not_in_index(index_files):
    rows = [FIC, single(driver="FIC-109")]
    f = only(index_files.check(rows), "split.driver")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("FV-101",), index_files.cell("driven_by", 1))
    assert "FIC-109, which is not in the index" in f.message and "loop F-101 is FIC-101" in f.message


def test_driver_is_not_a_controller(index_files):
    rows = [FIC, {"tag": "FT-101", "signal": "4-20 mA"}, single(driver="FT-101")]
    f = only(index_files.check(rows), "split.driver")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("FV-101",), index_files.cell("driven_by", 2))
    assert "transmitter" in f.message


def test_driver_controller_or_relay_is_clean(index_files):
    # A valve driven by an I/P (relay) that is driven by the controller is fine.
    rows = [{"tag": "PIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"},
            {"tag": "PY-201", "signal": "3-15 psig", "driven_by": "PIC-201"},
            single(tag="PV-201", driver="PY-201", signal="3-15 psig", input_low=3, input_high=15, input_units="psig"),
            FIC, single()]
    result = index_files.check(rows)
    assert of(result, "split.driver") == []
    assert [g.controller for g in result.splits] == ["FIC-101", "PIC-201"]


# --------------------------------------------------------------------------- split.orphan


def test_orphan_split_element(index_files):
    rows = [CTRL, heat()]
    f = only(index_files.check(rows), "split.orphan")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("TIC-101", "TV-101B"), index_files.cell("co_start_pct", 1))
    assert "CO 50 to 100 % only" in f.message and "nothing moves over CO 0 to 50 %" in f.message


def test_single_valve_over_the_full_co_is_not_an_orphan(index_files):
    assert of(index_files.check([FIC, single()]), "split.orphan") == []


# --------------------------------------------------------------------------- split.segment


@pytest.mark.parametrize("changes, key, words", [
    ({"co_start_pct": 80, "co_end_pct": 40}, "co_end_pct", "CO Start 80 % is not below CO End 40 %"),
    ({"co_end_pct": 120}, "co_end_pct", "outside 0 to 100 %"),
    ({"travel_end_pct": 0}, "travel_end_pct", "never moves"),
])
def test_unusable_intent(index_files, changes, key, words):
    f = only(index_files.check([CTRL, cool(), heat(**changes)]), "split.segment")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("TV-101B",), index_files.cell(key, 2))
    assert words in f.message


# --------------------------------------------------------------------------- split.method


def test_method_differs_within_a_group(index_files):
    rows = staged(method="positioner", boundary=50)
    rows.append(_row(rows[2], {"tag": "LV-201C", "split_method": "dcs", "input_low": 4, "input_high": 20}))
    f = only(index_files.check(rows), "split.method")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("LIC-201", "LV-201C"), index_files.cell("split_method", 3))


def test_positioner_split_on_two_outputs(index_files):
    rows = [CTRL, cool(io_address="AO-1"), heat(io_address="AO-2")]
    f = only(index_files.check(rows), "split.method")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("TIC-101", "TV-101A", "TV-101B"), index_files.cell("io_address", 2))
    assert "TV-101A on AO-1" in f.message and "TV-101B on AO-2" in f.message


def test_one_method_one_output_is_clean(index_files):
    result = index_files.check([CTRL, cool(io_address="AO-1"), heat(io_address="AO-1")])
    assert of(result, "split.method") == [] and of(result, "io.shared-channel") == []


# --------------------------------------------------------------------------- split.gap


def test_gap_between_staged_elements_is_a_dead_zone(index_files):
    # Staged on 4-20 mA: CO 0-40 % -> 4-10.4 mA, CO 60-100 % -> 13.6-20 mA (IEC 60381-1).
    rows = staged(method="positioner", boundary=40,
                  B={"co_start_pct": 60, "input_low": 13.6})
    f = only(index_files.check(rows), "split.gap")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("LV-201A", "LV-201B"), index_files.cell("co_start_pct", 2))
    assert "CO 40 to 60 %" in f.message and "20 % of CO" in f.message


def test_gap_between_heat_and_cool_is_a_dead_band(index_files):
    # 48 % of 16 mA above 4 mA = 11.68 mA; 52 % = 12.32 mA (IEC 60381-1 span).
    rows = [CTRL, cool(co_end_pct=48, input_high=11.68), heat(co_start_pct=52, input_low=12.32)]
    f = only(index_files.check(rows), "split.gap")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "info", ("TV-101A", "TV-101B"), index_files.cell("co_start_pct", 2))
    assert "dead band of 4 % CO" in f.message


def test_gap_at_the_top_of_the_co(index_files):
    rows = staged(method="positioner", boundary=50, B={"co_end_pct": 90, "input_high": 18.4})
    f = only(index_files.check(rows), "split.gap")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("LV-201B",), index_files.cell("co_end_pct", 2))
    assert "CO 90 to 100 %" in f.message


def test_touching_segments_leave_no_gap(index_files):
    assert of(index_files.check(staged(method="positioner", boundary=50)), "split.gap") == []


# --------------------------------------------------------------------------- split.overlap


def test_overlap_of_heat_and_cool_acts_at_once(index_files):
    # CO 55 % -> 4 + 16*0.55 = 12.8 mA; CO 45 % -> 11.2 mA.
    rows = [CTRL, cool(co_end_pct=55, input_high=12.8), heat(co_start_pct=45, input_low=11.2)]
    f = only(index_files.check(rows), "split.overlap")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("TV-101A", "TV-101B"), index_files.cell("co_start_pct", 2))
    assert "CO 45 to 55 % (10 % of CO)" in f.message


def test_overlap_of_staged_elements_is_information(index_files):
    rows = staged(method="dcs", boundary=50, A={"co_end_pct": 60})
    f = only(index_files.check(rows), "split.overlap")
    assert (f.severity.value, f.tags) == ("info", ("LV-201A", "LV-201B"))


def test_opposed_elements_share_their_range_by_design(index_files):
    rows = [CTRL, cool(co_end_pct=100, input_high=20, air_action="ATC"),
            heat(co_start_pct=0, input_low=4)]
    result = index_files.check(rows)
    assert [g.mode for g in result.splits] == ["opposed"]
    assert of(result, "split.overlap") == [] and of(result, "split.gap") == []


# --------------------------------------------------------------------------- split.settings


def test_positioner_range_does_not_realise_the_segment(index_files):
    f = only(index_files.check([CTRL, cool(), heat(input_high=18)]), "split.settings")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("TV-101B",), index_files.cell("input_high", 2))
    assert "TV-101B positioner is set 12.00 to 18.00 mA; its CO segment 50 to 100 %" in f.message
    assert "needs 12.00 to 20.00 mA" in f.message
    # At CO 87.5 % the output is 18 mA: open 100 % instead of 75 %.
    assert "off by 25.0 % at CO 87.5 %" in f.message


def test_wrong_air_action_shows_the_reversed_range_needed(index_files):
    # An ATC valve on a direct positioner opening over CO 50-100 % needs 20 -> 12 mA.
    f = only(index_files.check([CTRL, cool(), heat(air_action="ATC", fail_position="FO")]), "split.settings")
    assert "needs 20.00 to 12.00 mA" in f.message and f.severity.value == "error"


def test_finding_resting_on_a_default_is_a_warning(index_files):
    f = only(index_files.check([CTRL, cool(), heat(input_high=18, input_units=None)]), "split.settings")
    assert f.severity.value == "warning"
    assert "rests on defaults: Input Units blank, read as mA" in f.message


def _pneumatic(a_kpa: tuple[float, float], b_kpa: tuple[float, float], units="kPa") -> list[dict]:
    """PIC-301 through the I/P PY-301 (3-15 psig) to two valves staged at 50 % CO."""
    rows = [{"tag": "PIC-301", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"},
            {"tag": "PY-301", "signal": "3-15 psig", "driven_by": "PIC-301"}]
    for suffix, (a, b), (low, high) in zip("AB", [(0, 50), (50, 100)], [a_kpa, b_kpa]):
        rows.append({"tag": f"PV-301{suffix}", "signal": "3-15 psig", "air_action": "ATO", "fail_position": "FC",
                     "positioner_action": "direct", "driven_by": "PIC-301", "split_method": "pneumatic",
                     "co_start_pct": a, "co_end_pct": b, "travel_start_pct": 0, "travel_end_pct": 100,
                     "input_low": low, "input_high": high, "input_units": units, "effect": "raises"})
    return rows


def test_input_range_in_kpa_is_converted_to_the_psig_signal(index_files):
    # 3, 9, 15 psig = 20.684, 62.053, 103.421 kPa (1 psi = 6.894757 kPa, NIST SP 811 / pint).
    result = index_files.check(_pneumatic((20.684, 62.053), (62.053, 103.421)))
    assert of(result, "split.settings") == []
    group = result.splits[0]
    assert [e.required_input_range for e in group.elements] == [
        pytest.approx((20.684, 62.053), abs=1e-3), pytest.approx((62.053, 103.421), abs=1e-3)]


def test_input_range_in_kpa_that_misses_the_split_point(index_files):
    # 20-60 kPa was set as if the signal were 20-100 kPa; on 3-15 psig it needs 20.7-62.1 kPa.
    f = only(index_files.check(_pneumatic((20, 60), (62.053, 103.421))), "split.settings")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("PV-301A",), index_files.cell("input_high", 2))
    assert "set 20.0 to 60.0 kPa" in f.message and "needs 20.7 to 62.1 kPa" in f.message


def test_psi_and_psig_are_the_same_signal(index_files):
    # Half of 3-15 psig is 9 psig (IEC 60382 / ANSI/ISA-50.00.01; split point common practice).
    assert of(index_files.check(_pneumatic((3, 9), (9, 15), units="psi")), "split.settings") == []


def test_input_units_of_another_kind(index_files):
    f = only(index_files.check([CTRL, cool(), heat(input_units="psig")]), "split.settings")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("TV-101B",), index_files.cell("input_units", 2))
    assert "'psig' do not fit the 4.00 to 20.00 mA signal" in f.message


# --------------------------------------------------------------------------- split.double-split


def test_dcs_split_with_a_split_positioner(index_files):
    rows = staged(method="dcs", B={"input_low": 9})
    f = only(index_files.check(rows), "split.double-split")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("LV-201B",), index_files.cell("input_low", 2))
    assert "set 9.00 to 20.00 mA instead of the full 4.00 to 20.00 mA" in f.message
    assert "output signal 0 % at controller output 25 %, 100 % at controller output 100 %" in f.message


def test_dcs_split_on_full_span_positioners_is_clean(index_files):
    result = index_files.check(staged(method="dcs"))
    assert of(result, "split.double-split") == [] and of(result, "split.settings") == []


# --------------------------------------------------------------------------- split.capacity


def test_half_range_boundary_for_unequal_valves(index_files):
    # Linear trims Cv 10 and 30 at 50 %: gains 10/50 and 30/50, ratio 3 (docs/design.md §6.9
    # linear formula); proportional boundary 10/(10+30) = 25 % (from memory).
    result = index_files.check(staged(boundary=50))
    f = only(result, "split.capacity")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("LV-201A", "LV-201B"), index_files.cell("co_end_pct", 1))
    assert " is 3.00, outside 0.5 to 2" in f.message and "cumulative Cv: 25 %" in f.message
    assert result.splits[0].recommended_boundaries_pct == pytest.approx((25.0,))


def test_capacity_proportional_boundary_is_clean(index_files):
    result = index_files.check(staged(boundary=25))
    assert of(result, "split.capacity") == []
    assert result.splits[0].gain_ratios == pytest.approx((1.0,))


def test_equal_percentage_boundary_with_default_rangeability(index_files):
    # f = R^(x-1) (IEC 60534-1): slope ln(R)/R at x = 0 and ln(R) at x = 1, so across a
    # capacity-proportional boundary the gain falls to 1/R = 1/50 (R blank: 50).
    f = only(index_files.check(staged(boundary=25, characteristic="equal-percentage")), "split.capacity")
    assert " is 0.02," in f.message
    # best single boundary with segments >= 10 % CO: 90 %, ratio 30*90/(50*10*10) = 0.54
    assert "recommended boundaries 90 % (largest gain change across a boundary: factor 1.85 there, 50.00 now" in f.message
    assert "Rangeability blank, taken as 50" in f.message


def _three_stage(edges, cvs=(10, 60, 250), characteristic="equal-percentage") -> list[dict]:
    rows = [{"tag": "LIC-201", "platform": "dcs", "signal": "4-20 mA", "control_action": "reverse"}]
    for k, suffix in enumerate("ABC"):
        rows.append({"tag": f"LV-201{suffix}", "signal": "4-20 mA", "air_action": "ATO", "fail_position": "FC",
                     "positioner_action": "direct", "driven_by": "LIC-201", "split_method": "dcs",
                     "co_start_pct": edges[k], "co_end_pct": edges[k + 1], "travel_start_pct": 0,
                     "travel_end_pct": 100, "input_low": 4, "input_high": 20, "input_units": "mA",
                     "effect": "raises", "cv": cvs[k], "characteristic": characteristic, "rangeability": 50,
                     "io_address": f"AO-{suffix}"})
    return rows


def test_equal_percentage_staging_is_never_advised_worse(index_files):
    # Cv 10/60/250, equal-percentage R = 50, set at 33.33/66.67 %: ratios 0.12 and 0.083
    # (Cv_next w_prev / (R Cv_prev w_next), IEC 60534-1 inherent law). Cumulative-Cv boundaries
    # (3.13, 21.88 %) would give 1/R = 0.02 at both: worse, so they are not recommended.
    from loopdocs.calc.capacity import gain_ratios, largest_gain_jump, staged_segments

    result = index_files.check(_three_stage([0, 33.33, 66.67, 100]))
    group = result.splits[0]
    recommended = group.recommended_boundaries_pct
    jump = largest_gain_jump(gain_ratios([10, 60, 250], staged_segments(recommended), "equal-percentage", 50))
    assert jump < largest_gain_jump(group.gain_ratios) == pytest.approx(12.0, rel=1e-3)
    found = of(result, "split.capacity")
    assert [f.tags for f in found] == [("LV-201A", "LV-201B"), ("LV-201B", "LV-201C")]
    text = found[0].message
    assert "recommended boundaries 60.48, 90 %" in text and "factor 4.07 there, 12.00 now" in text
    # no boundaries bring it within 0.5 to 2: say what does, with the figures
    assert "no boundary setting keeps every ratio within the band" in text
    assert "linear trims on the staged valves (factor 1.00" in text and "deliberate overlap" in text


def test_best_equal_percentage_staging_says_what_helps(index_files):
    found = of(index_files.check(_three_stage([0, 60.4844, 90, 100])), "split.capacity")
    assert len(found) == 2
    assert "no boundary setting does better than the one set" in found[0].message
    assert "linear trims on the staged valves" in found[0].message


# --------------------------------------------------------------------------- valve.air-fail


@pytest.mark.parametrize("air, fail, expected", [("ATO", "FO", "FC"), ("ATC", "FC", "FO")])
def test_air_action_against_fail_position(index_files, air, fail, expected):
    # A valve with no Driven By is checked too: every valve.
    rows = [{"tag": "XV-401", "air_action": air, "fail_position": fail}]
    f = only(index_files.check(rows), "valve.air-fail")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("XV-401",), index_files.cell("fail_position", 0))
    assert f"fails {'closed' if expected == 'FC' else 'open'} ({expected})" in f.message


@pytest.mark.parametrize("air, fail", [("ATO", "FC"), ("ATC", "FO"), ("ATO", "FL"), ("ATC", "FAI")])
def test_air_and_fail_that_agree(index_files, air, fail):
    assert of(index_files.check([{"tag": "XV-401", "air_action": air, "fail_position": fail}]), "valve.air-fail") == []


# --------------------------------------------------------------------------- valve.signal-loss


def test_reverse_pneumatic_positioner_opens_on_signal_loss(index_files):
    # ATO with a reverse pneumatic positioner: the 3-15 psig signal falls to zero, u = 0 ->
    # s = 1 -> open, though the spring closes it (FC). IEC 60382: 3-15 psig live zero.
    rows = [{"tag": "FV-402", "air_action": "ATO", "fail_position": "FC", "positioner_action": "reverse",
             "signal": "3-15 psig"}]
    f = only(index_files.check(rows), "valve.signal-loss")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "warning", ("FV-402",), index_files.cell("positioner_action", 0))
    assert "goes open when its pneumatic signal falls to zero (below 3 psig)" in f.message


def test_reverse_electronic_positioner_goes_to_its_spring_position(index_files):
    # A two-wire 4-20 mA positioner loses its power with its signal and vents: the spring
    # closes an ATO valve whatever the positioner's action (common practice).
    rows = [{"tag": "FV-402", "air_action": "ATO", "fail_position": "FC", "positioner_action": "reverse",
             "signal": "4-20 mA"}]
    assert of(index_files.check(rows), "valve.signal-loss") == []


def test_reversed_input_range_closes_an_fo_valve_on_signal_loss(index_files):
    # Pneumatic positioner set 15 to 3 psig (reversed): zero signal is u = 1 -> ATC closes, against FO.
    rows = [FIC, single(signal="3-15 psig", air_action="ATC", fail_position="FO", input_low=15, input_high=3,
                        input_units="psig")]
    f = only(index_files.check(rows), "valve.signal-loss")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("warning", ("FV-101",), index_files.cell("input_low", 1))


def test_direct_positioners_go_to_their_fail_position(index_files):
    assert of(index_files.check([CTRL, cool(), heat()]), "valve.signal-loss") == []


# --------------------------------------------------------------------------- loop.control-sense


def test_single_valve_pushing_the_wrong_way(index_files):
    rows = [dict(FIC, control_action="direct"), single(co_start_pct=0, co_end_pct=100, travel_start_pct=0, travel_end_pct=100)]
    f = only(index_files.check(rows), "loop.control-sense")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("FIC-101", "FV-101"), index_files.cell("effect", 1))
    # direct action, opens as CO rises, opening raises the measurement: a rising measurement
    # opens it and drives the measurement further up (control sense, common practice)
    assert "a rising measurement opens it and pushes the measurement further up" in f.message
    assert "k*d*e" not in f.message  # no internal notation in a message for people


def test_control_sense_on_default_travel_is_a_warning(index_files):
    f = only(index_files.check([dict(FIC, control_action="direct"), single()]), "loop.control-sense")
    assert f.severity.value == "warning" and "rests on defaults: travel blank" in f.message


def test_whole_group_wrong_points_at_the_controller(index_files):
    rows = [dict(CTRL, control_action="direct"), cool(), heat()]
    f = only(index_files.check(rows), "loop.control-sense")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "error", ("TIC-101", "TV-101A", "TV-101B"), index_files.cell("control_action", 0))


def test_one_element_wrong_points_at_its_effect(index_files):
    f = only(index_files.check([CTRL, cool(), heat(effect="lowers")]), "loop.control-sense")
    assert (f.tags, index_files.where(f)) == (("TIC-101", "TV-101B"), index_files.cell("effect", 2))


# --------------------------------------------------------------------------- loop.load


def test_positioners_in_series_exceed_the_output(index_files):
    rows = [dict(CTRL, loop_volts=22), cool(device_volts=12), heat(device_volts=12)]
    f = only(index_files.check(rows), "loop.load")
    assert (f.severity.value, f.tags, index_files.where(f)) == (
        "error", ("TIC-101", "TV-101A", "TV-101B"), index_files.cell("loop_volts", 0))
    assert "TV-101A 12.00 V + TV-101B 12.00 V = 24.00 V" in f.message and " 22.00 V" in f.message


def test_positioners_in_series_within_the_output(index_files):
    rows = [dict(CTRL, loop_volts=22), cool(device_volts=9.5), heat(device_volts=9.5)]
    assert of(index_files.check(rows), "loop.load") == []


def test_dcs_element_on_its_own_output(index_files):
    rows = staged(method="dcs", A={"device_volts": 9.5, "loop_volts": 8}, B={"device_volts": 9.5, "loop_volts": 22})
    f = only(index_files.check(rows), "loop.load")
    assert (f.tags, index_files.where(f)) == (("LIC-201", "LV-201A"), index_files.cell("loop_volts", 1))


@pytest.mark.parametrize("load_ohm, fires", [(600, True), (250, False)])
def test_transmitter_supply_after_the_load(index_files, load_ohm, fires):
    # 24 V - 0.022 A * 600 ohm = 10.8 V < 12 V; with 250 ohm 18.5 V is enough.
    rows = [{"tag": "TT-101", "signal": "4-20 mA", "device_volts": 12, "loop_volts": 24, "load_ohm": load_ohm}]
    found = of(index_files.check(rows), "loop.load")
    if not fires:
        assert found == []
        return
    (f,) = found
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("TT-101",), index_files.cell("load_ohm", 0))
    assert "leaves 10.80 V" in f.message


# --------------------------------------------------------------------------- io.shared-channel


def test_two_transmitters_on_one_channel(index_files):
    rows = [{"tag": "TT-101", "signal": "4-20 mA", "io_address": "AI-3"},
            {"tag": "TT-102", "signal": "4-20 mA", "io_address": "ai-3 "}]
    f = only(index_files.check(rows), "io.shared-channel")
    assert (f.severity.value, f.tags, index_files.where(f)) == ("error", ("TT-101", "TT-102"), index_files.cell("io_address", 1))


def test_dcs_split_elements_on_one_channel(index_files):
    rows = staged(method="dcs", B={"io_address": "AO-A"})
    f = only(index_files.check(rows), "io.shared-channel")
    assert (f.tags, index_files.where(f)) == (("LV-201A", "LV-201B"), index_files.cell("io_address", 2))
    assert "a dcs split needs one output per element" in f.message


def test_positioner_split_shares_its_output(index_files):
    assert of(index_files.check([CTRL, cool(io_address="AO-7"), heat(io_address="AO-7")]), "io.shared-channel") == []


# --------------------------------------------------------------------------- check.not-verified


def test_intent_taken_from_the_settings_is_one_info_per_element(index_files):
    rows = [CTRL, cool(travel_start_pct=None, travel_end_pct=None), heat(travel_start_pct=None, travel_end_pct=None)]
    result = index_files.check(rows)
    found = of(result, "check.not-verified")
    assert [(f.severity.value, f.tags) for f in found] == [("info", ("TV-101A",)), ("info", ("TV-101B",))]
    assert all("the intent is taken from the settings, so not cross-checked" in f.message for f in found)
    # The settings still give the arrangement: closes over 0-50 %, opens over 50-100 %.
    assert result.splits[0].mode == "staged-opposed"


def test_missing_data_is_one_info_per_element_not_per_rule(index_files):
    result = index_files.check([CTRL, cool(), heat(air_action=None, effect=None)])
    found = [f for f in of(result, "check.not-verified") if "TV-101B" in f.tags]
    assert len(found) == 1, [f.as_json() for f in result.findings]
    message = found[0].message
    assert "air action against fail position (Air Action blank)" in message
    assert "its settings against its intent (Air Action blank)" in message
    assert "the control sense (Effect blank)" in message


def test_controller_without_action(index_files):
    f = only(index_files.check([dict(CTRL, control_action=None), cool(), heat()]), "check.not-verified")
    assert (f.severity.value, f.tags[0], index_files.where(f)) == ("info", "TIC-101", index_files.cell("control_action", 0))


def test_complete_data_leaves_nothing_unverified(index_files):
    assert of(index_files.check([CTRL, cool(), heat()]), "check.not-verified") == []


def test_driven_valve_without_actuator_data(index_files):
    f = only(index_files.check([FIC, single(air_action=None, fail_position=None)]), "check.not-verified")
    assert (f.tags, index_files.where(f)) == (("FV-101",), index_files.cell("air_action", 1))
    assert "Air Action and Fail Position blank" in f.message


def test_relay_without_a_controller(index_files):
    rows = [{"tag": "PY-201", "signal": "3-15 psig"},
            single(tag="PV-201", driver="PY-201", signal="3-15 psig", input_low=3, input_high=15, input_units="psig")]
    result = index_files.check(rows)
    assert of(result, "split.driver") == []  # a relay may drive valves (docs/design.md §5.6)
    f = only(result, "check.not-verified")
    assert (f.tags, index_files.where(f)) == (("PY-201", "PV-201"), index_files.cell("driven_by", 0))
