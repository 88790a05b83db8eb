"""Platinum RTD resistance: the Callendar-Van Dusen equation of IEC 60751.

Source: IEC 60751:2022 (and earlier editions), industrial platinum resistance
thermometers, temperature coefficient alpha = (R100 - R0) / (100 * R0) = 0.00385 /degC::

    R(t) = R0 * (1 + A*t + B*t**2)                      0 <= t <= 850 degC
    R(t) = R0 * (1 + A*t + B*t**2 + C*(t - 100)*t**3)   -200 <= t < 0 degC

with A = 3.9083e-3 /degC, B = -5.775e-7 /degC**2, C = -4.183e-12 /degC**4; R in ohm,
t in degC (ITS-90). R0 is the resistance at 0 degC: 100 ohm for Pt100, 1000 ohm for
Pt1000 (the equation scales with R0).
"""

from __future__ import annotations

import math

CVD_A_PER_C = 3.9083e-3
CVD_B_PER_C2 = -5.775e-7
CVD_C_PER_C4 = -4.183e-12
RTD_MIN_C = -200.0
RTD_MAX_C = 850.0

# IEC 60751 tables give Pt100 resistance to 0.01 ohm; a resistance this close beyond
# either end of the range (a table end value typed in) reads as the end temperature.
_END_SLACK_OHM_PER_R0 = 0.005 / 100.0


def _check_r0(r0_ohm: float) -> None:
    if not (math.isfinite(r0_ohm) and r0_ohm > 0):
        raise ValueError(f"R0 must be a positive resistance in ohm (100 for Pt100); got {r0_ohm}")


def _ratio(temp_c: float) -> float:
    """R(t)/R0 from the Callendar-Van Dusen equation (no range check)."""
    ratio = 1.0 + CVD_A_PER_C * temp_c + CVD_B_PER_C2 * temp_c**2
    if temp_c < 0:
        ratio += CVD_C_PER_C4 * (temp_c - 100.0) * temp_c**3
    return ratio


def rtd_resistance_ohm(temp_c: float, r0_ohm: float = 100.0) -> float:
    """Resistance of an IEC 60751 platinum RTD (alpha 0.00385) at ``temp_c``, in ohm.

    ``R = R0 (1 + A t + B t**2 [+ C (t - 100) t**3 below 0 degC])``, see the module
    docstring. ``temp_c`` in degC, -200 to 850 (ValueError outside); ``r0_ohm`` is the
    resistance at 0 degC (100 for Pt100, 1000 for Pt1000).

    >>> round(rtd_resistance_ohm(100.0), 2)  # IEC 60751 Pt100 table: 138.51 ohm
    138.51
    >>> round(rtd_resistance_ohm(-100.0, r0_ohm=1000.0), 1)  # Pt1000: 10 x 60.26 ohm
    602.6
    """
    _check_r0(r0_ohm)
    if not (math.isfinite(temp_c) and RTD_MIN_C <= temp_c <= RTD_MAX_C):
        raise ValueError(
            f"temperature {temp_c} degC is outside the IEC 60751 range "
            f"{RTD_MIN_C:g} to {RTD_MAX_C:g} degC for platinum RTDs"
        )
    return r0_ohm * _ratio(temp_c)


def rtd_temperature_c(resistance_ohm: float, r0_ohm: float = 100.0) -> float:
    """Temperature of an IEC 60751 platinum RTD (alpha 0.00385) reading ``resistance_ohm``, in degC.

    At or above R0 (t >= 0) the quadratic solved in closed form::

        t = (-A + sqrt(A**2 - 4 B (1 - R/R0))) / (2 B)

    Below R0 the quartic (with the C term) solved by Newton's method from that value,
    to 1e-9 degC. The resistance must lie between R(-200 degC) and R(850 degC) for the
    given R0 (Pt100: 18.52 to 390.48 ohm); a value within 0.005 ohm per 100 ohm of R0
    (the rounding of the IEC 60751 table) beyond an end reads as that end; further out
    raises ValueError.

    >>> round(rtd_temperature_c(138.51), 2)  # IEC 60751 Pt100 table: 100 degC
    100.01
    >>> round(rtd_temperature_c(rtd_resistance_ohm(-100.0)), 6)
    -100.0
    """
    _check_r0(r0_ohm)
    lo_ohm = r0_ohm * _ratio(RTD_MIN_C)
    hi_ohm = r0_ohm * _ratio(RTD_MAX_C)
    slack_ohm = _END_SLACK_OHM_PER_R0 * r0_ohm
    if not (
        math.isfinite(resistance_ohm) and lo_ohm - slack_ohm <= resistance_ohm <= hi_ohm + slack_ohm
    ):
        raise ValueError(
            f"resistance {resistance_ohm} ohm is outside the IEC 60751 range "
            f"{lo_ohm:.2f} to {hi_ohm:.2f} ohm (-200 to 850 degC) for R0 = {r0_ohm:g} ohm"
        )
    if resistance_ohm <= lo_ohm:
        return RTD_MIN_C
    if resistance_ohm >= hi_ohm:
        return RTD_MAX_C
    a, b, c = CVD_A_PER_C, CVD_B_PER_C2, CVD_C_PER_C4
    ratio = resistance_ohm / r0_ohm
    temp_c = (-a + math.sqrt(a * a - 4.0 * b * (1.0 - ratio))) / (2.0 * b)
    if ratio >= 1.0:
        return temp_c
    for _ in range(50):
        slope = a + 2.0 * b * temp_c + c * (4.0 * temp_c**3 - 300.0 * temp_c**2)
        step_c = (_ratio(temp_c) - ratio) / slope
        temp_c -= step_c
        if abs(step_c) < 1e-9:
            break
    return temp_c
