"""Thermocouple EMF: the ITS-90 reference functions for types B, E, J, K, N, R, S and T.

Source: NIST Monograph 175 (Burns et al., 1993), "Temperature-Electromotive Force
Reference Functions and Tables for the Letter-Designated Thermocouple Types Based on
the ITS-90", as reproduced in NIST SRD 60 (the ITS-90 Thermocouple Database, file
``allcoeff.tab``); the same functions are the reference functions of IEC 60584-1:2013.
Coefficients below were copied from that file and checked digit for digit against a
second, independent public copy of it.

Reference function, temperature ``t`` in degC (ITS-90), EMF ``E`` in mV with the
reference junction at 0 degC, one polynomial per temperature sub-range::

    E(t) = sum(c_i * t**i, i = 0..n)
    E(t) = sum(c_i * t**i) + a0 * exp(a1 * (t - a2)**2)     type K, 0 to 1372 degC

Inverse (mV to degC): numeric inversion of the reference function by bisection to
1e-7 degC, so ``temperature_c(emf_mv(t)) == t`` to far better than 0.01 degC. The NIST
approximate inverse polynomials are not used: their stated errors reach 0.06 degC
(type K), above the 0.01 degC this module promises.

Type B is not single-valued below about 42 degC (its EMF dips to -0.003 mV near
21 degC), and it is too flat to read below a few hundred degC; ``temperature_c``
therefore covers type B from 250 degC, where the NIST inverse function also starts.
"""

from __future__ import annotations

import math

# One dict per type: the sub-ranges of the reference function, each with its lower and
# upper temperature (degC), the polynomial coefficients c0..cn (mV/degC**i, constant
# term first) and, for type K above 0 degC, the exponential term (a0 mV, a1 1/degC**2,
# a2 degC). Values: NIST Monograph 175 / NIST SRD 60 allcoeff.tab.

TYPE_B = {
    "name": "Pt-30%Rh / Pt-6%Rh",
    "inverse_from_c": 250.0,
    "segments": [
        {"t_c": (0.0, 630.615), "c": (
            0.000000000000e00, -0.246508183460e-03, 0.590404211710e-05,
            -0.132579316360e-08, 0.156682919010e-11, -0.169445292400e-14,
            0.629903470940e-18,
        )},
        {"t_c": (630.615, 1820.0), "c": (
            -0.389381686210e01, 0.285717474700e-01, -0.848851047850e-04,
            0.157852801640e-06, -0.168353448640e-09, 0.111097940130e-12,
            -0.445154310330e-16, 0.989756408210e-20, -0.937913302890e-24,
        )},
    ],
}

TYPE_E = {
    "name": "Ni-Cr / Cu-Ni",
    "segments": [
        {"t_c": (-270.0, 0.0), "c": (
            0.000000000000e00, 0.586655087080e-01, 0.454109771240e-04,
            -0.779980486860e-06, -0.258001608430e-07, -0.594525830570e-09,
            -0.932140586670e-11, -0.102876055340e-12, -0.803701236210e-15,
            -0.439794973910e-17, -0.164147763550e-19, -0.396736195160e-22,
            -0.558273287210e-25, -0.346578420130e-28,
        )},
        {"t_c": (0.0, 1000.0), "c": (
            0.000000000000e00, 0.586655087100e-01, 0.450322755820e-04,
            0.289084072120e-07, -0.330568966520e-09, 0.650244032700e-12,
            -0.191974955040e-15, -0.125366004970e-17, 0.214892175690e-20,
            -0.143880417820e-23, 0.359608994810e-27,
        )},
    ],
}

TYPE_J = {
    "name": "Fe / Cu-Ni",
    "segments": [
        {"t_c": (-210.0, 760.0), "c": (
            0.000000000000e00, 0.503811878150e-01, 0.304758369300e-04,
            -0.856810657200e-07, 0.132281952950e-09, -0.170529583370e-12,
            0.209480906970e-15, -0.125383953360e-18, 0.156317256970e-22,
        )},
        {"t_c": (760.0, 1200.0), "c": (
            0.296456256810e03, -0.149761277860e01, 0.317871039240e-02,
            -0.318476867010e-05, 0.157208190040e-08, -0.306913690560e-12,
        )},
    ],
}

TYPE_K = {
    "name": "Ni-Cr / Ni-Al",
    "segments": [
        {"t_c": (-270.0, 0.0), "c": (
            0.000000000000e00, 0.394501280250e-01, 0.236223735980e-04,
            -0.328589067840e-06, -0.499048287770e-08, -0.675090591730e-10,
            -0.574103274280e-12, -0.310888728940e-14, -0.104516093650e-16,
            -0.198892668780e-19, -0.163226974860e-22,
        )},
        {"t_c": (0.0, 1372.0), "c": (
            -0.176004136860e-01, 0.389212049750e-01, 0.185587700320e-04,
            -0.994575928740e-07, 0.318409457190e-09, -0.560728448890e-12,
            0.560750590590e-15, -0.320207200030e-18, 0.971511471520e-22,
            -0.121047212750e-25,
        ), "exp": (0.118597600000e00, -0.118343200000e-03, 0.126968600000e03)},
    ],
}

TYPE_N = {
    "name": "Ni-Cr-Si / Ni-Si",
    "segments": [
        {"t_c": (-270.0, 0.0), "c": (
            0.000000000000e00, 0.261591059620e-01, 0.109574842280e-04,
            -0.938411115540e-07, -0.464120397590e-10, -0.263033577160e-11,
            -0.226534380030e-13, -0.760893007910e-16, -0.934196678350e-19,
        )},
        {"t_c": (0.0, 1300.0), "c": (
            0.000000000000e00, 0.259293946010e-01, 0.157101418800e-04,
            0.438256272370e-07, -0.252611697940e-09, 0.643118193390e-12,
            -0.100634715190e-14, 0.997453389920e-18, -0.608632456070e-21,
            0.208492293390e-24, -0.306821961510e-28,
        )},
    ],
}

TYPE_R = {
    "name": "Pt-13%Rh / Pt",
    "segments": [
        {"t_c": (-50.0, 1064.18), "c": (
            0.000000000000e00, 0.528961729765e-02, 0.139166589782e-04,
            -0.238855693017e-07, 0.356916001063e-10, -0.462347666298e-13,
            0.500777441034e-16, -0.373105886191e-19, 0.157716482367e-22,
            -0.281038625251e-26,
        )},
        {"t_c": (1064.18, 1664.5), "c": (
            0.295157925316e01, -0.252061251332e-02, 0.159564501865e-04,
            -0.764085947576e-08, 0.205305291024e-11, -0.293359668173e-15,
        )},
        {"t_c": (1664.5, 1768.1), "c": (
            0.152232118209e03, -0.268819888545e00, 0.171280280471e-03,
            -0.345895706453e-07, -0.934633971046e-14,
        )},
    ],
}

TYPE_S = {
    "name": "Pt-10%Rh / Pt",
    "segments": [
        {"t_c": (-50.0, 1064.18), "c": (
            0.000000000000e00, 0.540313308631e-02, 0.125934289740e-04,
            -0.232477968689e-07, 0.322028823036e-10, -0.331465196389e-13,
            0.255744251786e-16, -0.125068871393e-19, 0.271443176145e-23,
        )},
        {"t_c": (1064.18, 1664.5), "c": (
            0.132900444085e01, 0.334509311344e-02, 0.654805192818e-05,
            -0.164856259209e-08, 0.129989605174e-13,
        )},
        {"t_c": (1664.5, 1768.1), "c": (
            0.146628232636e03, -0.258430516752e00, 0.163693574641e-03,
            -0.330439046987e-07, -0.943223690612e-14,
        )},
    ],
}

TYPE_T = {
    "name": "Cu / Cu-Ni",
    "segments": [
        {"t_c": (-270.0, 0.0), "c": (
            0.000000000000e00, 0.387481063640e-01, 0.441944343470e-04,
            0.118443231050e-06, 0.200329735540e-07, 0.901380195590e-09,
            0.226511565930e-10, 0.360711542050e-12, 0.384939398830e-14,
            0.282135219250e-16, 0.142515947790e-18, 0.487686622860e-21,
            0.107955392700e-23, 0.139450270620e-26, 0.797951539270e-30,
        )},
        {"t_c": (0.0, 400.0), "c": (
            0.000000000000e00, 0.387481063640e-01, 0.332922278800e-04,
            0.206182434040e-06, -0.218822568460e-08, 0.109968809280e-10,
            -0.308157587720e-13, 0.454791352900e-16, -0.275129016730e-19,
        )},
    ],
}

REFERENCE_FUNCTIONS: dict[str, dict] = {
    "B": TYPE_B, "E": TYPE_E, "J": TYPE_J, "K": TYPE_K,
    "N": TYPE_N, "R": TYPE_R, "S": TYPE_S, "T": TYPE_T,
}
TC_TYPES: tuple[str, ...] = tuple(REFERENCE_FUNCTIONS)

#: Temperature ranges of the tolerance classes 1, 2 and 3 of IEC 60584-1:2013 (the
#: tolerance table, formerly IEC 60584-2:1982 + A1:1989), degC (low, high), per type.
#: A class a type does not have is left out. Values as reproduced in manufacturers'
#: published tolerance tables (two agreeing copies), not read from the standard itself.
#: The reference function holds beyond them, but no tolerance class is specified there.
TOLERANCE_CLASS_RANGES_C: dict[str, dict[int, tuple[float, float]]] = {
    "T": {1: (-40.0, 350.0), 2: (-40.0, 350.0), 3: (-200.0, 40.0)},
    "J": {1: (-40.0, 750.0), 2: (-40.0, 750.0)},
    "E": {1: (-40.0, 800.0), 2: (-40.0, 900.0), 3: (-200.0, 40.0)},
    "K": {1: (-40.0, 1000.0), 2: (-40.0, 1200.0), 3: (-200.0, 40.0)},
    "N": {1: (-40.0, 1000.0), 2: (-40.0, 1200.0), 3: (-200.0, 40.0)},
    "R": {1: (0.0, 1600.0), 2: (0.0, 1600.0)},
    "S": {1: (0.0, 1600.0), 2: (0.0, 1600.0)},
    "B": {2: (600.0, 1700.0), 3: (600.0, 1700.0)},
}

# Published tables give EMF to 0.001 mV; an EMF this close beyond either end of the
# range (a table end value typed in) is read as the end temperature.
_END_SLACK_MV = 0.0005
_INVERSE_TOL_C = 1e-7


def _type_key(tc_type: str) -> str:
    """The letter of ``tc_type`` ("K", "k", "TC-K" all give "K"); ValueError if unknown."""
    key = str(tc_type).strip().upper().removeprefix("TC-").removeprefix("TC")
    if key not in REFERENCE_FUNCTIONS:
        raise ValueError(
            f"unknown thermocouple type {tc_type!r}; expected one of "
            f"{', '.join(TC_TYPES)} (or TC-K etc.)"
        )
    return key


def temperature_range_c(tc_type: str) -> tuple[float, float]:
    """Range of the ITS-90 reference function for ``tc_type``, degC (low, high).

    >>> temperature_range_c("K")
    (-270.0, 1372.0)
    """
    segments = REFERENCE_FUNCTIONS[_type_key(tc_type)]["segments"]
    return segments[0]["t_c"][0], segments[-1]["t_c"][1]


def tolerance_classes_range_c(tc_type: str) -> tuple[float, float]:
    """From the lowest to the highest temperature any IEC 60584-1 tolerance class of
    ``tc_type`` covers, degC (``TOLERANCE_CLASS_RANGES_C``).

    >>> tolerance_classes_range_c("TC-K")  # class 3 from -200, class 2 to 1200 degC
    (-200.0, 1200.0)
    """
    classes = TOLERANCE_CLASS_RANGES_C[_type_key(tc_type)].values()
    return min(lo for lo, _ in classes), max(hi for _, hi in classes)




def _emf_unchecked_mv(table: dict, temp_c: float) -> float:
    """Evaluate the reference function; ``temp_c`` must already be inside its range."""
    for segment in table["segments"]:
        if temp_c <= segment["t_c"][1]:
            break
    emf = 0.0
    for c in reversed(segment["c"]):  # Horner
        emf = emf * temp_c + c
    if "exp" in segment:
        a0, a1, a2 = segment["exp"]
        emf += a0 * math.exp(a1 * (temp_c - a2) ** 2)
    return emf


def _emf_checked_mv(tc_type: str, temp_c: float, what: str) -> float:
    """Evaluate the reference function after checking the type and the range of ``temp_c``."""
    key = _type_key(tc_type)
    lo_c, hi_c = temperature_range_c(key)
    if not (math.isfinite(temp_c) and lo_c <= temp_c <= hi_c):
        raise ValueError(
            f"{what} {temp_c} degC is outside the type {key} reference "
            f"function range {lo_c:g} to {hi_c:g} degC (NIST Monograph 175 / IEC 60584-1)"
        )
    return _emf_unchecked_mv(REFERENCE_FUNCTIONS[key], float(temp_c))


def emf_mv(tc_type: str, temp_c: float) -> float:
    """Thermoelectric EMF of a ``tc_type`` thermocouple at ``temp_c``, reference junction at 0 degC.

    ``E(t) = sum(c_i t**i)`` (+ ``a0 exp(a1 (t - a2)**2)`` for type K above 0 degC), with
    the sub-range coefficients of NIST Monograph 175 / IEC 60584-1. EMF in mV, temperature
    in degC (ITS-90). Raises ValueError outside the type's range.

    >>> round(emf_mv("K", 100.0), 3)  # NIST Monograph 175 type K table: 4.096 mV
    4.096
    >>> round(emf_mv("TC-J", 100.0), 3)  # NIST Monograph 175 type J table: 5.269 mV
    5.269
    """
    return _emf_checked_mv(tc_type, temp_c, "temperature")


def temperature_c(tc_type: str, emf_mv: float) -> float:
    """Temperature (degC, ITS-90) at which ``tc_type`` gives ``emf_mv`` (reference junction 0 degC).

    Inverse of :func:`emf_mv` by bisection on the reference function (monotonic over the
    inverse range) to 1e-7 degC, not the NIST approximate inverse polynomials (errors up
    to 0.06 degC). The inverse range is the reference-function range, except type B from
    250 degC. An EMF within 0.0005 mV (the rounding of the published tables) beyond an end
    of the range reads as that end; further out raises ValueError.

    >>> round(temperature_c("K", 4.096), 1)  # NIST Monograph 175 K table: 100 degC
    100.0
    """
    key = _type_key(tc_type)
    table = REFERENCE_FUNCTIONS[key]
    lo_c, hi_c = temperature_range_c(key)
    lo_c = table.get("inverse_from_c", lo_c)
    lo_mv, hi_mv = _emf_unchecked_mv(table, lo_c), _emf_unchecked_mv(table, hi_c)
    if not (math.isfinite(emf_mv) and lo_mv - _END_SLACK_MV <= emf_mv <= hi_mv + _END_SLACK_MV):
        raise ValueError(
            f"EMF {emf_mv} mV is outside the type {key} range "
            f"{lo_mv:.3f} to {hi_mv:.3f} mV ({lo_c:g} to {hi_c:g} degC, reference junction 0 degC)"
        )
    if emf_mv <= lo_mv:
        return lo_c
    if emf_mv >= hi_mv:
        return hi_c
    while hi_c - lo_c > _INVERSE_TOL_C:
        mid_c = 0.5 * (lo_c + hi_c)
        if _emf_unchecked_mv(table, mid_c) < emf_mv:
            lo_c = mid_c
        else:
            hi_c = mid_c
    return 0.5 * (lo_c + hi_c)


def emf_to_simulate_mv(tc_type: str, temp_c: float, reference_junction_c: float = 0.0) -> float:
    """EMF a calibrator must inject to make a ``tc_type`` input read ``temp_c``, in mV.

    ``E_inject = E(t) - E(t_rj)`` (law of intermediate temperatures). A transmitter with
    reference-junction (cold-junction) compensation measures the temperature ``t_rj`` of its
    own input terminals and adds ``E(t_rj)`` to the EMF it sees. A real thermocouple at
    ``t`` with its cold end on those terminals delivers ``E(t) - E(t_rj)``; a calibrator
    wired with copper leads must source the same, so the transmitter reads ``t``. With the
    terminals at 0 degC (an ice point) this is the table value ``E(t)``.
    ``E`` as in :func:`emf_mv`; temperatures in degC, both inside the type's range.

    >>> round(emf_to_simulate_mv("K", 100.0, reference_junction_c=25.0), 3)
    3.096
    """
    return _emf_checked_mv(tc_type, temp_c, "temperature") - _emf_checked_mv(
        tc_type, reference_junction_c, "reference-junction temperature"
    )
