"""The boundary search of three-element staged groups (``calc.capacity._search_three``).

The gain model is the one of tests/test_capacity.py: the gain of an element is
``Cv * df/dx / width`` with the inherent equal-percentage curve ``f = R^(x-1)``, slope
``ln(R) R^(x-1)`` (IEC 60534-1 inherent characteristic, from memory); across a boundary the
element before is full open (slope ``ln R``) and the next just cracked (slope ``ln(R)/R``).
"""

from __future__ import annotations

import itertools
import math
import random

import pytest

from loopdocs.calc.capacity import best_boundaries_pct, gain_ratios, largest_gain_jump, staged_segments


def _jump(cvs, boundaries, chars, ranges):
    return largest_gain_jump(gain_ratios(cvs, staged_segments(boundaries), chars, ranges))


def test_three_equal_percentage_valves_meet_the_closed_form_where_both_ratios_are_one():
    # By hand from the IEC 60534-1 slopes: the ratio across boundary k is
    # (Cv_{k+1} / R / w_{k+1}) / (Cv_k / w_k), so both ratios are 1 when
    # w1 = w0 Cv1 / (R Cv0) and w2 = w1 Cv2 / (R Cv1). Cv 1 / 75 / 4500 with R = 50:
    # w1 = 1.5 w0, w2 = 1.2 w1, widths 100/4.3, 150/4.3, 180/4.3 (each above 10 % CO).
    cvs, r = [1.0, 75.0, 4500.0], 50.0
    w0 = 100.0 / (1 + 1.5 + 1.5 * 1.2)
    expected = [w0, w0 * 2.5]
    bounds, jump = best_boundaries_pct(cvs, "equal-percentage", r)
    assert bounds == pytest.approx(expected, abs=0.02)
    assert jump == pytest.approx(1.0, abs=2e-3)
    assert jump == pytest.approx(_jump(cvs, bounds, "equal-percentage", r))
    # The cumulative-Cv boundaries are far worse (both ratios about 1/R, common practice
    # for linear trims only): the search must not fall back to them here.
    assert _jump(cvs, [100 * 1 / 4576, 100 * 76 / 4576], "equal-percentage", r) > 40


def _brute_force(cvs, chars, ranges, step=0.5, min_width=10.0):
    """Smallest jump over every boundary pair on a grid ``step`` % CO apart with each
    segment at least ``min_width`` wide: scored with ``gain_ratios`` (no search code)."""
    best = math.inf
    points = [min_width + step * i for i in range(int((100 - 2 * min_width) / step) + 1)]
    for p, q in itertools.combinations(points, 2):
        if q - p < min_width - 1e-9 or 100 - q < min_width - 1e-9:
            continue
        best = min(best, _jump(cvs, [p, q], chars, ranges))
    return best


@pytest.mark.parametrize("seed", range(6))
def test_three_element_search_is_never_worse_than_an_exhaustive_grid(seed):
    # Random valve sets of the kind an index holds (mixed trims, rangeability 20 to 100):
    # the search, scored independently with gain_ratios, is at least as good as trying
    # every boundary pair 0.5 % CO apart (segments at least 10 % CO wide, the search's
    # default: calc.capacity.MIN_SEGMENT_PCT, common practice).
    rng = random.Random(seed)
    cvs = [rng.choice([2.5, 4, 6.3, 10, 16, 25, 40, 63, 100, 160, 250]) * rng.uniform(0.8, 1.2) for _ in range(3)]
    chars = [rng.choice(["linear", "equal-percentage"]) for _ in range(3)]
    if chars == ["linear"] * 3:
        chars[seed % 3] = "equal-percentage"
    ranges = [rng.choice([20.0, 30.0, 50.0, 100.0]) for _ in range(3)]
    bounds, jump = best_boundaries_pct(cvs, chars, ranges)
    assert len(bounds) == 2 and bounds[1] - bounds[0] >= 10 - 1e-3 and bounds[0] >= 10 - 1e-3
    assert jump == pytest.approx(_jump(cvs, bounds, chars, ranges))
    assert jump <= _brute_force(cvs, chars, ranges) * (1 + 1e-9)
