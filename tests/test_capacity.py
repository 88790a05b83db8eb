"""Valve characteristics, capacity split points and gain across boundaries (loopdocs.calc.capacity)."""

import math

import pytest
from fluids.control_valve import Cv_char_equal_percentage, Cv_char_linear, Cv_char_quick_opening
from hypothesis import given, settings as hyp_settings
from hypothesis import strategies as st

from loopdocs.calc.capacity import (
    combined_capacity_curve,
    gain_ratios,
    inherent_flow_fraction,
    inherent_slope,
    normalise_characteristic,
    recommended_boundaries_pct,
)
from loopdocs.calc.travel import Intent

GRID = [k / 20 for k in range(21)]


def test_linear_matches_fluids():
    # fluids.control_valve.Cv_char_linear (reference library): f = x.
    for x in GRID:
        assert inherent_flow_fraction(x, "linear") == pytest.approx(Cv_char_linear(x), abs=1e-12)


def test_equal_percentage_definition():
    # IEC 60534-1 inherent equal-percentage characteristic f = R^(x-1): full open is 1,
    # the ideal curve starts at 1/R, and equal travel steps multiply flow by the same
    # factor R^dx (from memory: the defining property of "equal percentage").
    r = 50.0
    assert inherent_flow_fraction(1.0, "equal-percentage", r) == pytest.approx(1.0)
    assert inherent_flow_fraction(1e-12, "equal-percentage", r) == pytest.approx(1 / r)
    ratios = [
        inherent_flow_fraction(x + 0.1, "=%", r) / inherent_flow_fraction(x, "=%", r)
        for x in (0.1, 0.3, 0.5, 0.8)
    ]
    assert ratios == pytest.approx([r**0.1] * 4)
    assert inherent_flow_fraction(0.0, "equal-percentage", r) == 0.0  # shut at zero travel


def test_equal_percentage_against_fluids_curve():
    # fluids.Cv_char_equal_percentage is a spline through a manufacturer's measured
    # equal-percentage trim (Emerson Control Valve Handbook data, per fluids' source),
    # not the ideal law. Where the ideal law applies to a real trim, mid travel, the two
    # agree within 20 % of flow with R = 50; both are shut at 0, full at 1, and below
    # the linear diagonal in between (an equal-percentage trim gives less flow than a
    # linear one at part travel).
    assert inherent_flow_fraction(1.0, "equal-percentage") == pytest.approx(Cv_char_equal_percentage(1.0))
    assert inherent_flow_fraction(0.0, "equal-percentage") == pytest.approx(Cv_char_equal_percentage(0.0), abs=1e-12)
    for x in (0.3, 0.4, 0.5):
        ours = inherent_flow_fraction(x, "equal-percentage", 50)
        ref = Cv_char_equal_percentage(x)
        assert ours == pytest.approx(ref, rel=0.20), x
    for x in GRID[1:-1]:
        assert inherent_flow_fraction(x, "equal-percentage", 50) < x
        assert Cv_char_equal_percentage(x) < x
    # The rangeability implied by the measured curve at mid travel, f^(-1/(1-x)),
    # lies between 30 and 70, around the usual assumption R = 50 (common practice).
    for x in (0.3, 0.4, 0.5):
        implied_r = Cv_char_equal_percentage(x) ** (-1 / (1 - x))
        assert 30 < implied_r < 70


def test_quick_opening_approximation_against_fluids_curve():
    # Our quick-opening law is sqrt(x) (common practice approximation). fluids'
    # measured quick-opening trim (Emerson data) opens faster still; both start shut,
    # end full, and lie above the linear diagonal.
    assert inherent_flow_fraction(0.25, "quick-opening") == pytest.approx(0.5)
    assert inherent_flow_fraction(1.0, "quick-opening") == pytest.approx(Cv_char_quick_opening(1.0))
    for x in GRID[1:-1]:
        assert inherent_flow_fraction(x, "quick-opening") > x
        assert Cv_char_quick_opening(x) > x


def test_slope_is_the_derivative_of_the_curve():
    # d/dx R^(x-1) = ln(R) R^(x-1) (calculus), checked by a central difference.
    h = 1e-6
    for ch in ("linear", "equal-percentage", "quick-opening"):
        for x in (0.2, 0.5, 0.9):
            numeric = (inherent_flow_fraction(x + h, ch, 30) - inherent_flow_fraction(x - h, ch, 30)) / (2 * h)
            assert inherent_slope(x, ch, 30) == pytest.approx(numeric, rel=1e-6)


def test_names_and_bad_input():
    assert normalise_characteristic("Quick Opening") == "quick-opening"
    assert normalise_characteristic("equal_percentage") == "equal-percentage"
    with pytest.raises(ValueError, match="unknown valve characteristic"):
        inherent_flow_fraction(0.5, "butterfly")
    with pytest.raises(ValueError, match="rangeability"):
        inherent_flow_fraction(0.5, "equal-percentage", 1.0)


def test_capacity_proportional_boundaries():
    # Staged split on one stream: boundaries in proportion to cumulative Cv keep the
    # loop gain even; Cv 10 and 30 split at 25 % (docs/design.md §6.9; common practice).
    assert recommended_boundaries_pct([10, 30]) == pytest.approx([25.0])
    assert recommended_boundaries_pct([10, 20, 70]) == pytest.approx([10.0, 30.0])
    assert recommended_boundaries_pct([25, 25]) == pytest.approx([50.0])
    assert recommended_boundaries_pct([40]) == []
    with pytest.raises(ValueError):
        recommended_boundaries_pct([10, 0])


def test_linear_gain_ratio_formula():
    # docs/design.md §6.9 linear gain g_i = Cv_i/(b_i - a_i). Half-range split of Cv 10 and 30:
    # g = 10/50 and 30/50, ratio 3, outside 0.5..2 (common practice limits).
    assert gain_ratios([10, 30], [(0, 50), (50, 100)]) == pytest.approx([3.0])
    assert gain_ratios([10, 30], [(0, 25), (25, 100)]) == pytest.approx([1.0])
    with pytest.raises(ValueError, match="CO order"):
        gain_ratios([10, 30], [(50, 100), (0, 50)])


@hyp_settings(max_examples=100, deadline=None)
@given(st.lists(st.floats(min_value=0.5, max_value=500), min_size=2, max_size=4))
def test_proportional_boundaries_give_even_gain_and_a_straight_line(cvs):
    # Why the rule holds (docs/design.md §6.9; common practice): with linear trims and
    # boundaries at cumulative Cv, every gain ratio is 1 and the combined Cv rises in a
    # straight line from 0 to sum(Cv) over the CO.
    bounds = [0.0, *recommended_boundaries_pct(cvs), 100.0]
    segs = [(bounds[k], bounds[k + 1]) for k in range(len(cvs))]
    assert gain_ratios(cvs, segs, "linear") == pytest.approx([1.0] * (len(cvs) - 1))
    intents = [Intent(a, b, 0, 100) for a, b in segs]
    for co, total_cv in combined_capacity_curve(cvs, intents, "linear", step_pct=5):
        assert total_cv == pytest.approx(sum(cvs) * co / 100, rel=1e-9, abs=1e-9)


def test_equal_percentage_gain_ratio_at_proportional_boundary():
    # From the slope of the inherent curve (IEC 60534-1 law, by hand): at the boundary
    # the first valve is full open, slope ln(R); the next is just cracked, slope ln(R)/R.
    # With Cv-proportional segments the Cv-per-%CO terms cancel and the ratio is 1/R.
    ratio = gain_ratios([10, 30], [(0, 25), (25, 100)], "equal-percentage", 50)
    assert ratio == pytest.approx([1 / 50])
    # Mixed trims per element: linear small valve, equal-percentage large valve.
    mixed = gain_ratios([10, 30], [(0, 25), (25, 100)], ["linear", "equal-percentage"], [50, 20])
    assert mixed == pytest.approx([math.log(20) / 20])


def test_gain_ratio_for_closing_staged_group():
    # A staged group that closes as CO rises: the first element ends shut (x = 0),
    # the next starts full open (x = 1); linear gains are as for opening.
    closing = [Intent(0, 25, 100, 0), Intent(25, 100, 100, 0)]
    assert gain_ratios([30, 10], closing) == pytest.approx([(10 / 75) / (30 / 25)])


def test_combined_capacity_curve_for_a_range_chart():
    # Staged-opposed heat/cool split, linear Cv 20 each: total falls to 0 at 50 % CO and
    # rises again (sum of Cv_i * x_i, docs/design.md §8.2 range chart).
    curve = combined_capacity_curve([20, 20], [Intent(0, 50, 100, 0), Intent(50, 100, 0, 100)], step_pct=25)
    assert [co for co, _ in curve] == [0.0, 25.0, 50.0, 75.0, 100.0]
    assert [cv for _, cv in curve] == pytest.approx([20.0, 10.0, 0.0, 10.0, 20.0])
    # A step that does not divide 100 still ends at 100 %.
    curve = combined_capacity_curve([10], [Intent(0, 100, 0, 100)], "equal-percentage", [50], step_pct=30)
    assert [co for co, _ in curve] == [0.0, 30.0, 60.0, 90.0, 100.0]
    assert curve[-1][1] == pytest.approx(10.0)
    assert curve[2][1] == pytest.approx(10 * 50 ** (0.6 - 1))


# --------------------------------------------------------------------------- capacity advice
# The gain model (docs/design.md §6.9): gain = dCv/dCO = Cv * df/dx * dx/dCO with the inherent
# curve f (linear f = x; equal-percentage f = R^(x-1), IEC 60534-1 / ISA-75.11.01 inherent
# characteristic, from memory); across a boundary the element before is full open, the
# next just cracked. The score is the largest jump max(r, 1/r) over the boundaries.

from loopdocs.calc.capacity import (  # noqa: E402
    MIN_SEGMENT_PCT,
    best_boundaries_pct,
    capacity_advice,
    largest_gain_jump,
    staged_segments,
)


def _staged_from_edges(edges):
    return [Intent(edges[k], edges[k + 1], 0, 100) for k in range(len(edges) - 1)]


@st.composite
def staged_groups(draw):
    n = draw(st.integers(min_value=2, max_value=4))
    cvs = draw(st.lists(st.floats(min_value=0.5, max_value=500), min_size=n, max_size=n))
    chars = draw(st.lists(st.sampled_from(["linear", "equal-percentage", "quick-opening"]), min_size=n, max_size=n))
    ranges = draw(st.lists(st.floats(min_value=5, max_value=100), min_size=n, max_size=n))
    cuts = sorted(draw(st.lists(st.floats(min_value=1, max_value=99), min_size=n - 1, max_size=n - 1, unique=True)))
    if any(b - a < 0.5 for a, b in zip([0.0, *cuts], [*cuts, 100.0])):
        cuts = [100.0 * (k + 1) / n for k in range(n - 1)]
    # optional gap or overlap at each boundary, as found in real indexes
    shifts = draw(st.lists(st.floats(min_value=-0.4, max_value=0.4), min_size=n - 1, max_size=n - 1))
    edges = [0.0, *cuts, 100.0]
    intents = []
    for k in range(n):
        start = edges[k] + (shifts[k - 1] if k > 0 else 0.0)
        intents.append(Intent(start, edges[k + 1], 0, 100))
    return cvs, chars, ranges, intents


@hyp_settings(max_examples=150, deadline=None)
@given(staged_groups())
def test_recommendation_never_scores_worse_than_the_settings(group):
    # Scored independently here with gain_ratios (the model above) on both sides.
    cvs, chars, ranges, intents = group
    advice = capacity_advice(cvs, intents, chars, ranges)
    now = largest_gain_jump(gain_ratios(cvs, intents, chars, ranges))
    assert advice.jump_now == pytest.approx(now)
    if advice.recommended_pct is not None:
        segments = staged_segments(advice.recommended_pct)
        assert all(s.co_end_pct > s.co_start_pct for s in segments)
        recommended = largest_gain_jump(gain_ratios(cvs, segments, chars, ranges))
        assert recommended <= now * (1 + 1e-9)
        assert list(advice.best_ratios) == pytest.approx(gain_ratios(cvs, segments, chars, ranges))


def test_three_equal_percentage_valves_get_better_boundaries_than_the_settings():
    # Cv 10/60/250, equal-percentage R = 50, set at 33.33/66.67 % CO. By hand: the ratio
    # across a boundary is (Cv_next ln R / R / w_next) / (Cv_prev ln R / w_prev)
    # = Cv_next w_prev / (R Cv_prev w_next): 60/(50*10) = 0.12 and 250/(50*60) = 0.0833 now.
    cvs, edges = [10, 60, 250], [0, 100 / 3, 200 / 3, 100]
    advice = capacity_advice(cvs, _staged_from_edges(edges), "equal-percentage", 50)
    assert advice.ratios_now == pytest.approx((0.12, 250 / 3000))
    assert advice.jump_now == pytest.approx(12.0)
    # The cumulative-Cv boundaries (3.125 and 21.875 %) are worse: both ratios 1/R = 0.02.
    assert largest_gain_jump(gain_ratios(cvs, staged_segments(advice.proportional_pct), "equal-percentage", 50)) == \
        pytest.approx(50.0)
    # Best with every segment at least 10 % CO wide, by hand: the last segment takes the
    # minimum, w3 = 10, and both ratios are equal: 0.12 w1/w2 = (250/3000) w2/10 with
    # w1 = 90 - w2, so w2^2 + 14.4 w2 - 1296 = 0 and the jump is 120 / w2.
    w2 = (-14.4 + math.sqrt(14.4**2 + 4 * 1296)) / 2
    assert MIN_SEGMENT_PCT == 10.0
    assert advice.recommended_pct == pytest.approx((90 - w2, 90.0), abs=0.02)
    assert advice.jump_best == pytest.approx(120 / w2, rel=1e-3)
    assert advice.jump_best < advice.jump_now and advice.improves
    # Still outside 0.5 to 2: linear trims would give 1 at the cumulative-Cv boundaries.
    assert advice.jump_best > 2.0 and advice.linear_jump == pytest.approx(1.0)


def test_linear_trims_keep_the_cumulative_cv_rule():
    # Cv 10 and 30 split at 25 % (cumulative Cv, common practice): ratio 1 and recommended,
    # whether the settings are at 50 % or already at 25 %.
    for boundary in (50.0, 25.0):
        advice = capacity_advice([10, 30], _staged_from_edges([0, boundary, 100]), "linear")
        assert advice.recommended_pct == pytest.approx((25.0,))
        assert advice.is_proportional and advice.jump_best == pytest.approx(1.0)
    assert best_boundaries_pct([10, 20, 70], "linear")[0] == pytest.approx([10.0, 30.0])


def test_settings_better_than_any_boundary_set_found_are_kept():
    # Equal-percentage Cv 10/30, R = 50, set at 95 %: ratio = 30*95/(50*10*5) = 1.14 by the
    # formula above. The search keeps segments at least 10 % CO wide and finds 90 % (1.85):
    # worse than the settings, so nothing is recommended.
    advice = capacity_advice([10, 30], _staged_from_edges([0, 95, 100]), "equal-percentage", 50)
    assert advice.ratios_now == pytest.approx((30 * 95 / (50 * 10 * 5),))
    assert advice.best_pct == pytest.approx((90.0,)) and advice.jump_best == pytest.approx(1 / (30 * 90 / 5000))
    assert advice.recommended_pct is None and not advice.improves
    # Quick-opening next valve: slope unbounded when cracked, so no boundary helps.
    qo = capacity_advice([10, 30], _staged_from_edges([0, 25, 100]), ["linear", "quick-opening"])
    assert math.isinf(qo.jump_now) and qo.recommended_pct is None


def test_advice_agrees_with_fluids_measured_equal_percentage_trim():
    # Cross-check with fluids.control_valve.Cv_char_equal_percentage (a manufacturer's
    # measured trim, not the ideal law): end slopes over the first and last 10 % of
    # travel. With it too the cumulative-Cv boundary of Cv 10/30 (25 %) jumps by more than
    # 2, and the boundary recommended with the ideal law (90 %) is closer to even gain.
    advice = capacity_advice([10, 30], _staged_from_edges([0, 25, 100]), "equal-percentage", 50)
    (boundary,) = advice.recommended_pct
    assert boundary == pytest.approx(90.0)
    top = (Cv_char_equal_percentage(1.0) - Cv_char_equal_percentage(0.9)) / 0.1
    bottom = (Cv_char_equal_percentage(0.1) - Cv_char_equal_percentage(0.0)) / 0.1

    def measured_jump(b):
        ratio = (30 * bottom / (100 - b)) / (10 * top / b)
        return max(ratio, 1 / ratio)

    assert measured_jump(25.0) > 2.0
    assert measured_jump(boundary) < measured_jump(25.0)
