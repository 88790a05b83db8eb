"""Signal spans, linear and square-root laws, NAMUR NE 43 levels (loopdocs.calc.signals)."""

import math

import pint
import pytest
from fluids.flow_meter import flow_meter_discharge
from hypothesis import given
from hypothesis import strategies as st

from loopdocs.calc.signals import (
    BAR_02_10,
    KPA_20_100,
    MA_4_20,
    PSIG_3_15,
    SignalSpan,
    clamp01,
    fraction_at_signal,
    fraction_of_range,
    ne43_levels,
    ne43_state,
    pneumatic_span,
    signal_at_fraction,
    sqrt_transfer,
)

UREG = pint.UnitRegistry()


def test_standard_spans():
    # IEC 60381-1: analog direct-current signal 4 to 20 mA.
    assert (MA_4_20.low, MA_4_20.high, MA_4_20.unit) == (4.0, 20.0, "mA")
    # ANSI/ISA-50.00.01 and IEC 60382: pneumatic 3 to 15 psig.
    assert (PSIG_3_15.low, PSIG_3_15.high, PSIG_3_15.unit) == (3.0, 15.0, "psig")
    # IEC 60382: pneumatic 20 to 100 kPa, also written 0.2 to 1.0 bar.
    assert (KPA_20_100.low, KPA_20_100.high) == (20.0, 100.0)
    assert (BAR_02_10.low, BAR_02_10.high) == (0.2, 1.0)


def test_bar_and_kpa_spans_are_the_same_pressures():
    # Unit conversion by pint (reference library): 0.2 bar = 20 kPa, 1.0 bar = 100 kPa.
    low = UREG.Quantity(BAR_02_10.low, "bar").to("kPa").magnitude
    high = UREG.Quantity(BAR_02_10.high, "bar").to("kPa").magnitude
    assert low == pytest.approx(KPA_20_100.low)
    assert high == pytest.approx(KPA_20_100.high)


def test_si_pneumatic_span_is_the_rounded_counterpart_of_3_15_psig():
    # pint: 3 psi = 20.68 kPa, 15 psi = 103.4 kPa; the SI span 20-100 kPa is the
    # rounded metric counterpart, not an exact conversion (common practice).
    low = UREG.Quantity(PSIG_3_15.low, "psi").to("kPa").magnitude
    high = UREG.Quantity(PSIG_3_15.high, "psi").to("kPa").magnitude
    assert low == pytest.approx(20.684, abs=0.01)
    assert high == pytest.approx(103.42, abs=0.01)
    assert abs(low - KPA_20_100.low) / low < 0.04
    assert abs(high - KPA_20_100.high) / high < 0.04


def test_pneumatic_span_lookup():
    # IEC 60382 / ANSI/ISA-50.00.01 ranges by unit.
    assert pneumatic_span("psig") is PSIG_3_15
    assert pneumatic_span(" PSI ") is PSIG_3_15
    assert pneumatic_span("kPa") is KPA_20_100
    assert pneumatic_span("bar") is BAR_02_10
    with pytest.raises(ValueError, match="no standard pneumatic span"):
        pneumatic_span("inH2O")


def test_half_of_4_20_ma_is_12_ma():
    # IEC 60381-1 span is linear: 50 % of 4-20 mA = 4 + 16 * 0.5 = 12 mA.
    assert signal_at_fraction(MA_4_20, 0.5) == pytest.approx(12.0)


def test_quarter_of_3_15_psig_is_6_psig():
    # ANSI/ISA-50.00.01: 25 % of 3-15 psig = 3 + 12 * 0.25 = 6 psig.
    assert signal_at_fraction(PSIG_3_15, 0.25) == pytest.approx(6.0)


def test_five_point_calibration_values():
    # Five-point check at 0/25/50/75/100 % (common practice): 4, 8, 12, 16, 20 mA
    # and 3, 6, 9, 12, 15 psig.
    fractions = [0.0, 0.25, 0.5, 0.75, 1.0]
    assert [signal_at_fraction(MA_4_20, p) for p in fractions] == pytest.approx([4, 8, 12, 16, 20])
    assert [signal_at_fraction(PSIG_3_15, p) for p in fractions] == pytest.approx([3, 6, 9, 12, 15])


@given(st.floats(min_value=-0.5, max_value=1.5), st.sampled_from([MA_4_20, PSIG_3_15, KPA_20_100, BAR_02_10]))
def test_fraction_and_signal_are_inverse(fraction, span):
    # Linear span law (IEC 60381-1 / IEC 60382): the two directions invert each other.
    assert fraction_at_signal(span, signal_at_fraction(span, fraction)) == pytest.approx(fraction, abs=1e-12)


def test_fraction_of_range_normal_negative_and_reverse():
    # Linear transfer p = (x - LRV)/(URV - LRV) (docs/design.md §6.2; common practice).
    assert fraction_of_range(75.0, 0.0, 150.0) == pytest.approx(0.5)
    # Negative LRV: -50..150 degC, 0 degC is a quarter of the 200 K span.
    assert fraction_of_range(0.0, -50.0, 150.0) == pytest.approx(0.25)
    # Reverse range (LRV > URV): 100..0, so 25 is 75 % of span.
    assert fraction_of_range(25.0, 100.0, 0.0) == pytest.approx(0.75)
    with pytest.raises(ValueError, match="zero span"):
        fraction_of_range(1.0, 5.0, 5.0)


def test_square_root_quarter_dp_is_half_flow():
    # Flow through an orifice is proportional to sqrt(DP) (ISO 5167-1), so 25 % DP
    # reads 50 % flow and 1 % DP reads 10 % flow (common practice).
    assert sqrt_transfer(0.25) == pytest.approx(0.5)
    assert sqrt_transfer(0.01) == pytest.approx(0.1)
    assert sqrt_transfer(-0.02) == 0.0


def test_square_root_matches_orifice_equation_in_fluids():
    # fluids.flow_meter_discharge implements the ISO 5167-2 orifice equation; with the
    # discharge coefficient and expansibility held constant, the flow ratio at a
    # fraction of full-scale DP equals our square-root output.
    full_dp_pa = 25_000.0
    q_full = flow_meter_discharge(D=0.1, Do=0.05, P1=2e5, P2=2e5 - full_dp_pa, rho=1000.0, C=0.6)
    for p_in in (0.04, 0.25, 0.5, 0.81):
        q = flow_meter_discharge(D=0.1, Do=0.05, P1=2e5, P2=2e5 - p_in * full_dp_pa, rho=1000.0, C=0.6)
        assert q / q_full == pytest.approx(sqrt_transfer(p_in), rel=1e-12)


def test_namur_ne43_levels():
    # NAMUR NE 43: measuring 3.8 to 20.5 mA; failure at or below 3.6 mA, at or above 21 mA.
    lv = ne43_levels()
    assert (lv.measuring_low_ma, lv.measuring_high_ma) == (3.8, 20.5)
    assert (lv.failure_at_or_below_ma, lv.failure_at_or_above_ma) == (3.6, 21.0)
    assert ne43_state(3.6) == "failure-low"
    assert ne43_state(3.8) == "measuring"
    assert ne43_state(12.0) == "measuring"
    assert ne43_state(20.7) == "undefined"
    assert ne43_state(21.0) == "failure-high"
    # The measuring range extends 1.25 % of span below 4 mA and 3.125 % above 20 mA
    # (arithmetic on the NE 43 levels: 0.2/16 and 0.5/16).
    assert fraction_at_signal(MA_4_20, lv.measuring_low_ma) == pytest.approx(-0.0125)
    assert fraction_at_signal(MA_4_20, lv.measuring_high_ma) == pytest.approx(1.03125)


def test_clamp01():
    # Fractions are limited to [0, 1] (docs/design.md §6.1).
    assert [clamp01(v) for v in (-3.0, 0.0, 0.3, 1.0, 7.0)] == [0.0, 0.0, 0.3, 1.0, 1.0]


def test_bad_span_is_rejected():
    # A span needs low < high (the live zero is the low end, IEC 60381-1).
    with pytest.raises(ValueError):
        SignalSpan(20.0, 4.0, "mA")
    with pytest.raises(ValueError):
        SignalSpan(4.0, math.inf, "mA")
