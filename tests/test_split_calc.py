"""Split range: intent, settings, required settings, cross-check, arrangements (loopdocs.calc.travel)."""

import pytest
from hypothesis import given, settings as hyp_settings
from hypothesis import strategies as st

from loopdocs.calc.signals import KPA_20_100, MA_4_20, PSIG_3_15, signal_at_fraction
from loopdocs.calc.travel import (
    TRAVEL_TOLERANCE_PCT,
    DcsScaling,
    Intent,
    Settings,
    classify,
    intended_travel_pct,
    max_travel_error,
    realised_travel_pct,
    required_dcs_scaling,
    required_input_range,
    spring_fail_travel_pct,
    travel_on_signal_loss_pct,
    uncovered_co,
)

AIRS = ("ATO", "ATC")
POSITIONERS = ("direct", "reverse")


# ---------------------------------------------------------------- intent and settings


def test_intended_travel_is_linear_inside_and_held_outside():
    # docs/design.md §4.1: linear between (a, t_a) and (b, t_b), held at the end values outside.
    intent = Intent(20, 60, 100, 0)
    assert intended_travel_pct(intent, 0) == 100.0
    assert intended_travel_pct(intent, 40) == pytest.approx(50.0)
    assert intended_travel_pct(intent, 90) == 0.0


def test_intent_needs_rising_co():
    with pytest.raises(ValueError, match="CO start"):
        Intent(60, 20, 0, 100)


def test_realised_travel_follows_design_formula():
    # docs/design.md §4.3, by hand: CO 75 % -> I = 4 + 16*0.75 = 16 mA; range 12..20 -> u = 0.5.
    assert realised_travel_pct(Settings("positioner", "ATO", "direct", 12, 20, MA_4_20), 75) == pytest.approx(50)
    # Below the range u clamps at 0: ATO direct shut, ATC direct open.
    assert realised_travel_pct(Settings("positioner", "ATO", "direct", 12, 20, MA_4_20), 25) == 0.0
    assert realised_travel_pct(Settings("positioner", "ATC", "direct", 12, 20, MA_4_20), 25) == 100.0
    # Reverse positioner flips s = 1 - u: CO 87.5 % -> 18 mA -> u = 0.75 -> s = 0.25, ATO 25 %.
    assert realised_travel_pct(Settings("positioner", "ATO", "reverse", 12, 20, MA_4_20), 87.5) == pytest.approx(25)
    # Pneumatic on 3-15 psig: CO 50 % -> 9 psig; spring range 9..15 -> u = 0 -> ATO 0 %.
    assert realised_travel_pct(Settings("pneumatic", "ATO", "direct", 9, 15, PSIG_3_15), 50) == 0.0
    assert realised_travel_pct(Settings("pneumatic", "ATO", "direct", 9, 15, PSIG_3_15), 75) == pytest.approx(50)


def test_settings_strings_are_normalised_and_checked():
    s = Settings(" Positioner", "ato", "Direct", 4, 20, MA_4_20)
    assert (s.method, s.air_action, s.positioner_action) == ("positioner", "ATO", "direct")
    with pytest.raises(ValueError, match="air action"):
        Settings("positioner", "FC", "direct", 4, 20, MA_4_20)
    with pytest.raises(ValueError, match="split method"):
        Settings("relay", "ATO", "direct", 4, 20, MA_4_20)
    with pytest.raises(ValueError, match="zero width"):
        Settings("positioner", "ATO", "direct", 12, 12, MA_4_20)


# ---------------------------------------------------------------- required settings


def test_half_range_split_boundary_is_12_ma():
    # Half-range split: a 50 % split point puts the boundary at 12 mA on the shared
    # output (common practice; 4 + 16*0.5 = 12, IEC 60381-1 span).
    low_half = required_input_range(Intent(0, 50, 0, 100), "positioner", "ATO", "direct", MA_4_20)
    high_half = required_input_range(Intent(50, 100, 0, 100), "positioner", "ATO", "direct", MA_4_20)
    assert low_half == pytest.approx((4.0, 12.0))
    assert high_half == pytest.approx((12.0, 20.0))
    assert low_half[1] == pytest.approx(signal_at_fraction(MA_4_20, 0.5))


def test_half_range_split_on_3_15_psig_is_9_psig():
    # Pneumatic half-range split: 3-9 and 9-15 psig (common practice; 3 + 12*0.5 = 9).
    assert required_input_range(Intent(0, 50, 0, 100), "pneumatic", "ATO", "direct", PSIG_3_15) == pytest.approx((3, 9))
    assert required_input_range(Intent(50, 100, 0, 100), "pneumatic", "ATO", "direct", PSIG_3_15) == pytest.approx((9, 15))


def test_atc_needs_reversed_calibration_or_reverse_positioner():
    # Intent CO 50-100 %, travel 0 -> 100 on an ATC valve: a direct positioner needs
    # 20 mA at u = 0 and 12 mA at u = 1 (reversed calibration); a reverse-acting
    # positioner gives the same with 12 to 20 mA (common practice).
    intent = Intent(50, 100, 0, 100)
    assert required_input_range(intent, "positioner", "ATC", "direct", MA_4_20) == pytest.approx((20.0, 12.0))
    assert required_input_range(intent, "positioner", "ATC", "reverse", MA_4_20) == pytest.approx((12.0, 20.0))


def test_partial_split_point_from_design_example():
    # docs/design.md §4.3 example row: CO 0-48 %, travel 100 -> 0, input 4 to 11.68 mA;
    # 4 + 16*0.48 = 11.68 mA (arithmetic on the IEC 60381-1 span).
    low, high = required_input_range(Intent(0, 48, 100, 0), "positioner", "ATC", "direct", MA_4_20)
    assert (low, high) == pytest.approx((4.0, 11.68))


def test_dcs_split_scaling_and_full_span_positioner():
    # docs/design.md §4.5: the positioner takes the full 4-20 mA, the control system scales.
    intent = Intent(50, 100, 0, 100)
    assert required_input_range(intent, "dcs", "ATO", "direct", MA_4_20) == (4.0, 20.0)
    assert required_dcs_scaling(intent, "ATO", "direct") == DcsScaling(50, 100)
    atc = required_dcs_scaling(intent, "ATC", "direct")
    assert atc == DcsScaling(100, 50) and atc.reversed
    closing = required_dcs_scaling(Intent(0, 50, 100, 0), "ATO", "direct")
    assert closing == DcsScaling(50, 0) and closing.reversed


def test_no_travel_change_is_a_clear_error():
    with pytest.raises(ValueError, match="no travel change"):
        required_input_range(Intent(0, 50, 30, 30), "positioner", "ATO", "direct", MA_4_20)
    with pytest.raises(ValueError, match="no travel change"):
        required_dcs_scaling(Intent(0, 50, 0, 0), "ATO", "direct")


# ---------------------------------------------------------------- cross-check


def test_max_travel_error_finds_a_wrong_split_point():
    # Hand calculation with docs/design.md §4.4: intent CO 0-48 %, positioner set 4-12 mA
    # (CO 0-50 %). At CO 48 % intent is 100 %, realised 48/50 = 96 %: error 4 %.
    err, co = max_travel_error(Intent(0, 48, 0, 100), Settings("positioner", "ATO", "direct", 4, 12, MA_4_20))
    assert err == pytest.approx(4.0)
    assert co == pytest.approx(48.0)
    assert err > TRAVEL_TOLERANCE_PCT


def test_max_travel_error_finds_wrong_air_action():
    # Settings for ATO used on an ATC valve: full reversal, 100 % error at the segment ends.
    intent = Intent(50, 100, 0, 100)
    low, high = required_input_range(intent, "positioner", "ATO", "direct", MA_4_20)
    err, _ = max_travel_error(intent, Settings("positioner", "ATC", "direct", low, high, MA_4_20))
    assert err == pytest.approx(100.0)


def test_partial_travel_held_outside_segment_cannot_be_realised():
    # A clamped input range keeps moving until u reaches 0 or 1, so "hold 20 % below
    # CO 50 %" is impossible: the cross-check reports it (docs/design.md §4.4 formula).
    intent = Intent(50, 100, 20, 80)
    low, high = required_input_range(intent, "positioner", "ATO", "direct", MA_4_20)
    err, co = max_travel_error(intent, Settings("positioner", "ATO", "direct", low, high, MA_4_20))
    assert err == pytest.approx(20.0)  # at CO <= 33.3 % the valve is shut instead of 20 % open
    assert co <= 100 / 3 + 1e-9


def test_double_split_dcs_is_detected():
    # docs/design.md §5.6: a dcs split whose positioner is not set to the full span splits twice.
    intent = Intent(50, 100, 0, 100)
    scaling = required_dcs_scaling(intent, "ATO", "direct")
    good = Settings("dcs", "ATO", "direct", 4, 20, MA_4_20)
    double = Settings("dcs", "ATO", "direct", 12, 20, MA_4_20)
    assert max_travel_error(intent, good, scaling)[0] == pytest.approx(0.0, abs=1e-9)
    assert max_travel_error(intent, double, scaling)[0] == pytest.approx(50.0)


def _end_travel(is_inside: bool):
    """Travel at a segment end: free inside 0..100 only at CO 0 or 100, else 0 or 100 %."""
    return st.floats(min_value=0, max_value=100) if is_inside else st.sampled_from([0.0, 100.0])


@st.composite
def realisable_intents(draw):
    """Segments and travels a clamped linear range can realise (ends held at 0 or 100 %)."""
    a = draw(st.one_of(st.just(0.0), st.floats(min_value=0, max_value=90)))
    b = draw(st.one_of(st.just(100.0), st.floats(min_value=a + 2, max_value=100)))
    ta = draw(_end_travel(a == 0.0))
    tb = draw(_end_travel(b == 100.0).filter(lambda t: abs(t - ta) >= 2))
    return Intent(a, b, ta, tb)


CASES = [("positioner", MA_4_20), ("pneumatic", PSIG_3_15), ("pneumatic", KPA_20_100), ("dcs", MA_4_20)]


@hyp_settings(max_examples=300, deadline=None)
@given(
    realisable_intents(),
    st.sampled_from(CASES),
    st.sampled_from(AIRS),
    st.sampled_from(POSITIONERS),
)
def test_required_settings_realise_the_intent(intent, case, air, positioner):
    # Property of docs/design.md §4.4: the computed settings give the intended travel within
    # 1 % of travel at every CO (the design tolerance); in fact to rounding error.
    method, span = case
    low, high = required_input_range(intent, method, air, positioner, span)
    scaling = required_dcs_scaling(intent, air, positioner) if method == "dcs" else None
    s = Settings(method, air, positioner, low, high, span)
    err, _ = max_travel_error(intent, s, scaling)
    assert err <= TRAVEL_TOLERANCE_PCT
    assert err < 1e-6
    for co in (0.0, intent.co_start_pct, (intent.co_start_pct + intent.co_end_pct) / 2, intent.co_end_pct, 100.0):
        assert realised_travel_pct(s, co, scaling) == pytest.approx(intended_travel_pct(intent, co), abs=1e-6)



@hyp_settings(max_examples=400, deadline=None)
@given(
    realisable_intents(),
    st.sampled_from(CASES),
    st.sampled_from(AIRS),
    st.sampled_from(POSITIONERS),
    st.floats(min_value=-0.5, max_value=1.5),
    st.floats(min_value=-0.5, max_value=1.5),
    st.floats(min_value=-50, max_value=150),
    st.floats(min_value=-50, max_value=150),
)
def test_breakpoints_alone_find_the_largest_travel_error(intent, case, air, positioner, u_low, u_high, co0, co100):
    # Both travel curves are piecewise linear in CO (docs/design.md §4.1 and §4.4), and the
    # difference of two piecewise-linear functions is linear between their breakpoints, so
    # its largest magnitude lies on a breakpoint (elementary analysis; the grid search is the
    # independent check): the fine 0.1 % CO grid finds no
    # larger error and no earlier CO. The split group's figure (breakpoints only) is what
    # the loop-check table reports, so the two must agree for settings of any kind, right
    # or wrong (input range anywhere across and beyond the span, any control-system scaling).
    method, span = case
    if abs(u_high - u_low) < 0.01 or abs(co100 - co0) < 1.0:
        return
    low, high = span.low + u_low * span.width, span.low + u_high * span.width
    scaling = DcsScaling(co0, co100) if method == "dcs" else None
    s = Settings(method, air, positioner, low, high, span)
    exact = max_travel_error(intent, s, scaling, grid_step_pct=100.0)
    gridded = max_travel_error(intent, s, scaling)
    assert exact[0] == pytest.approx(gridded[0], abs=1e-9)
    assert exact[1] == pytest.approx(gridded[1], abs=1e-9)

# ---------------------------------------------------------------- failure positions


def test_spring_fail_position():
    # Spring-return actuators: air-to-open fails closed, air-to-close fails open
    # (fact of the trade, ATO/FC and ATC/FO).
    assert spring_fail_travel_pct("ATO") == 0.0
    assert spring_fail_travel_pct("ATC") == 100.0


def test_position_on_signal_loss():
    # docs/design.md §4.6: input below 4 mA, u = 0. A direct positioner follows the spring
    # position; a reverse-acting one drives the valve the other way (common practice).
    assert travel_on_signal_loss_pct("ATO", "direct") == spring_fail_travel_pct("ATO")
    assert travel_on_signal_loss_pct("ATC", "direct") == spring_fail_travel_pct("ATC")
    assert travel_on_signal_loss_pct("ATO", "reverse") == 100.0
    assert travel_on_signal_loss_pct("ATC", "reverse") == 0.0
    # With a reversed calibration the same formula gives u = 1 below the span.
    assert travel_on_signal_loss_pct("ATO", "direct", input_low=20, input_high=12) == 100.0
    s = Settings("positioner", "ATO", "direct", 20, 12, MA_4_20)
    assert realised_travel_pct(s, -25.0) == 100.0  # CO -25 % -> 0 mA, as a broken loop


# ---------------------------------------------------------------- arrangements


def test_mode_opposed():
    # docs/design.md §4.2 table: opposed directions over a shared range.
    arr = classify([Intent(0, 100, 100, 0), Intent(0, 100, 0, 100)])
    assert arr.mode == "opposed"
    assert arr.pairs[0].direction == "opposed" and arr.pairs[0].ranges == "shared"


def test_mode_staged():
    # docs/design.md §4.2 table: same direction, consecutive ranges (small valve first).
    arr = classify([Intent(40, 100, 0, 100), Intent(0, 40, 0, 100)])
    assert arr.mode == "staged"
    assert arr.order == (1, 0)
    assert (arr.pairs[0].gap_pct, arr.pairs[0].overlap_pct) == (0.0, 0.0)


def test_mode_staged_opposed_heat_cool():
    # docs/design.md §4.2 table: one closes over the low half, the other opens over the high half.
    arr = classify([Intent(0, 50, 100, 0), Intent(50, 100, 0, 100)])
    assert arr.mode == "staged-opposed"


def test_mode_parallel():
    # docs/design.md §4.2 table: duplicated elements, same direction, shared range (ends within 5 %).
    assert classify([Intent(0, 100, 0, 100), Intent(2, 97, 0, 100)]).mode == "parallel"


def test_mode_mixed():
    # docs/design.md §4.2: anything else is mixed (here staged pair, then a shared opposed pair).
    arr = classify([Intent(0, 50, 0, 100), Intent(50, 100, 0, 100), Intent(48, 100, 100, 0)])
    assert arr.mode == "mixed"
    # An element that never moves makes the group mixed as well.
    assert classify([Intent(0, 50, 0, 100), Intent(50, 100, 40, 40)]).mode == "mixed"
    # A segment inside another is neither shared nor staged.
    nested = classify([Intent(0, 100, 0, 100), Intent(30, 70, 0, 100)])
    assert nested.pairs[0].ranges == "nested" and nested.mode == "mixed"


def test_single_element_group():
    assert classify([Intent(0, 100, 0, 100)]).mode == "single"
    with pytest.raises(ValueError):
        classify([])


def test_gap_and_overlap():
    # Gap between staged elements (dead zone) and overlap (both move), docs/design.md §5.6.
    gap = classify([Intent(0, 45, 100, 0), Intent(55, 100, 0, 100)]).pairs[0]
    assert (gap.gap_pct, gap.overlap_pct) == (10.0, 0.0)
    over = classify([Intent(0, 60, 0, 100), Intent(40, 100, 0, 100)]).pairs[0]
    assert (over.gap_pct, over.overlap_pct) == (0.0, 20.0)


intent_st = st.builds(
    lambda a, w, ta, tb: Intent(a, min(100.0, a + w), ta, tb),
    st.floats(min_value=0, max_value=95),
    st.floats(min_value=1, max_value=100),
    st.sampled_from([0.0, 30.0, 100.0]),
    st.sampled_from([0.0, 70.0, 100.0]),
)


@hyp_settings(max_examples=200, deadline=None)
@given(st.lists(intent_st, min_size=1, max_size=5), st.randoms(use_true_random=False))
def test_classify_does_not_depend_on_input_order(intents, rnd):
    shuffled = list(intents)
    rnd.shuffle(shuffled)
    a, b = classify(intents), classify(shuffled)
    assert a.mode == b.mode
    assert a.intents == b.intents
    strip = lambda arr: [(p.direction, p.ranges, p.gap_pct, p.overlap_pct) for p in arr.pairs]  # noqa: E731
    assert strip(a) == strip(b)
    assert [intents[k] for k in a.order] == list(a.intents)
    assert uncovered_co(intents) == uncovered_co(shuffled)


def test_uncovered_co():
    # docs/design.md §4.2 CO coverage: the parts of 0..100 % where nothing moves.
    assert uncovered_co([Intent(0, 40, 0, 100), Intent(45, 100, 0, 100)]) == [(40.0, 45.0)]
    assert uncovered_co([Intent(0, 50, 100, 0), Intent(50, 100, 0, 100)]) == []
    assert uncovered_co([Intent(10, 30, 0, 100), Intent(20, 60, 0, 100)]) == [(0.0, 10.0), (60.0, 100.0)]
    # An element whose travel does not change does not cover anything.
    assert uncovered_co([Intent(0, 100, 50, 50)]) == [(0.0, 100.0)]
