"""Platinum RTD (IEC 60751 Callendar-Van Dusen) against published table values."""

import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from loopdocs.calc.rtd import RTD_MAX_C, RTD_MIN_C, rtd_resistance_ohm, rtd_temperature_c

# (temp_c, Pt100 resistance in ohm, source). The IEC 60751 table gives 0.01 ohm.
PT100_TABLE = [
    (-200.0, 18.52, "IEC 60751 Pt100 table, lower end of range (from memory)"),
    (-100.0, 60.26, "IEC 60751 Pt100 table (from memory)"),
    (0.0, 100.00, "IEC 60751 Pt100 table, R0 by definition"),
    (100.0, 138.51, "IEC 60751 Pt100 table (from memory)"),
    (850.0, 390.48, "IEC 60751 Pt100 table, upper end of range (from memory)"),
]


@pytest.mark.parametrize(("temp_c", "table_ohm", "source"), PT100_TABLE)
def test_pt100_matches_iec_60751_table(temp_c, table_ohm, source):
    assert rtd_resistance_ohm(temp_c) == pytest.approx(table_ohm, abs=0.005), source


@pytest.mark.parametrize(("temp_c", "table_ohm", "source"), PT100_TABLE)
def test_pt1000_is_ten_times_pt100_table(temp_c, table_ohm, source):
    # IEC 60751: Pt1000 uses the same equation with R0 = 1000 ohm, so 10x the Pt100 table
    pt1000_ohm = rtd_resistance_ohm(temp_c, r0_ohm=1000.0)
    assert pt1000_ohm == pytest.approx(10 * table_ohm, abs=0.05), source


@pytest.mark.parametrize(("temp_c", "table_ohm", "source"), PT100_TABLE)
def test_pt100_table_value_reads_back_within_table_rounding(temp_c, table_ohm, source):
    # 0.005 ohm of table rounding is about 0.013 degC at the flattest end (850 degC),
    # where dR/dt is about 0.38 ohm/degC (IEC 60751 table, from memory)
    assert rtd_temperature_c(table_ohm) == pytest.approx(temp_c, abs=0.015), source


def test_alpha_is_0_00385():
    # IEC 60751: alpha = (R100 - R0) / (100 R0) = 0.00385 /degC (rounded)
    alpha = (rtd_resistance_ohm(100.0) - rtd_resistance_ohm(0.0)) / (100 * 100.0)
    assert alpha == pytest.approx(0.00385, abs=0.000005)


def test_below_zero_uses_the_c_term():
    # IEC 60751: below 0 degC R = R0(1 + At + Bt^2 + C(t-100)t^3); at -100 degC the C term
    # is C * (-200) * (-100)^3 * R0 = -0.0837 ohm, the difference between 60.26 (table)
    # and the quadratic alone (60.34).
    quadratic_ohm = 100.0 * (1 + 3.9083e-3 * -100.0 + -5.775e-7 * 100.0**2)
    assert quadratic_ohm - rtd_resistance_ohm(-100.0) == pytest.approx(0.08366, abs=1e-5)


@given(temp_c=st.floats(RTD_MIN_C, RTD_MAX_C), r0_ohm=st.sampled_from([100.0, 1000.0]))
@example(temp_c=RTD_MIN_C, r0_ohm=100.0)
@example(temp_c=RTD_MAX_C, r0_ohm=1000.0)
@example(temp_c=0.0, r0_ohm=100.0)
@example(temp_c=-1e-6, r0_ohm=100.0)
def test_round_trip_within_0_01_degc(temp_c, r0_ohm):
    # inverse of the forward function: temperature_c(R(t)) == t within 0.01 degC (our spec)
    resistance_ohm = rtd_resistance_ohm(temp_c, r0_ohm)
    assert rtd_temperature_c(resistance_ohm, r0_ohm) == pytest.approx(temp_c, abs=0.01)


@pytest.mark.parametrize("temp_c", [-200.1, 850.1, float("nan")])
def test_temperature_outside_iec_60751_range_raises(temp_c):
    # IEC 60751 defines the Callendar-Van Dusen equation from -200 to 850 degC
    with pytest.raises(ValueError, match="-200 to 850 degC"):
        rtd_resistance_ohm(temp_c)


@pytest.mark.parametrize("resistance_ohm", [18.0, 391.0, -5.0])
def test_resistance_outside_range_raises(resistance_ohm):
    # Pt100 spans 18.52 to 390.48 ohm over -200 to 850 degC (IEC 60751 table, from memory)
    with pytest.raises(ValueError, match="18.52 to 390.48 ohm"):
        rtd_temperature_c(resistance_ohm)


def test_bad_r0_raises():
    with pytest.raises(ValueError, match="R0"):
        rtd_resistance_ohm(20.0, r0_ohm=0.0)
