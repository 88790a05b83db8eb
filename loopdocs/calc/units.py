"""Engineering units of the index, converted with one lazily created pint registry.

The registry is built on first use (importing this module does not import pint), so
commands that never convert a unit stay fast. It adds the trade's spellings pint lacks:

- gauge and absolute pressure units ``psig``, ``psia``, ``barg``, ``bara``, ``kPag``,
  ``kPaa`` (with SI prefixes, so ``mbarg`` and ``MPag`` work). A gauge unit converts
  to another gauge unit or a plain one by its scale alone; gauge to absolute needs the
  atmospheric pressure and is refused;
- ``mmWC``, ``inWC`` and ``ftWC`` for the conventional water columns pint names
  ``mmH2O``, ``inH2O`` and ``ftH2O`` (NIST SP 811 appendix B: 1 mmH2O = 9.80665 Pa,
  1 inH2O = 249.0889 Pa, conventional, at 4 degC and standard gravity; from memory);
- ``gpm`` (US gallon per minute), ``scfm``, ``scfh`` and ``MMSCFD`` (standard cubic
  feet per minute, per hour, million per day: read as volumes, their reference state
  is not a unit);
- written forms ``m3/h``, ``m³/h``, ``Nm3/h`` and ``Sm3/h`` (read as m**3/h), ``°C``,
  ``deg C``, ``°F``.

>>> round(convert(1.0, "barg", "psig"), 4)
14.5038
>>> convert(250.0, "mbar", "kPa")
25.0
"""

from __future__ import annotations

import re
from functools import cache
from typing import Any

#: Unit spellings that mean a pressure above atmospheric (gauge).
GAUGE_UNITS = ("psig", "barg", "kPag", "MPag", "mbarg")
#: Unit spellings that mean an absolute pressure.
ABSOLUTE_UNITS = ("psia", "bara", "kPaa", "MPaa", "mbara")

_DEFINITIONS = (
    "psig = pound_force_per_square_inch",
    "psia = pound_force_per_square_inch",
    "barg = bar",
    "bara = bar",
    "Pag = pascal",
    "Paa = pascal",
    "mmWC = millimeter_H2O",
    "inWC = inch_H2O",
    "ftWC = foot_H2O",
    "gpm = gallon / minute",
    "scfm = foot ** 3 / minute",
    "scfh = foot ** 3 / hour",
    "MMSCFD = 1e6 * foot ** 3 / day",
)

_WRITTEN = {
    "°c": "degC", "ºc": "degC", "deg c": "degC", "degc": "degC", "celsius": "degC",
    "°f": "degF", "ºf": "degF", "deg f": "degF", "degf": "degF", "fahrenheit": "degF",
    "kpag": "kPag", "kpaa": "kPaa", "mpag": "MPag", "mpaa": "MPaa", "kpa": "kPa", "mpa": "MPa",
    "mmh2o": "mmH2O", "inh2o": "inH2O", "mmwc": "mmWC", "inwc": "inWC", "ftwc": "ftWC",
    "ohms": "ohm", "ω": "ohm",
}


#: Signal units as an index writes them, lower case without spaces -> the signal unit
#: meant: a gauge and a plain pressure unit are the same instrument signal (3-15 psi is
#: 3-15 psig). The one table of signal-unit spellings (``canonical_unit``).
_SIGNAL_UNITS = {
    "ma": "mA", "psi": "psig", "psig": "psig", "kpa": "kPa", "kpag": "kPa",
    "bar": "bar", "barg": "bar", "mbar": "mbar", "mbarg": "mbar",
}


@cache
def canonical_unit(text: str) -> str:
    """The signal unit a cell means; gauge and plain pressure units are the same signal.
    Other units come back as written (stripped). Needs no pint.

    >>> canonical_unit(" PSI "), canonical_unit("kPag"), canonical_unit("barg"), canonical_unit("ma")
    ('psig', 'kPa', 'bar', 'mA')
    """
    key = str(text).strip().lower().replace(" ", "").replace("(g)", "g")
    return _SIGNAL_UNITS.get(key, str(text).strip())


@cache
def registry() -> Any:
    """The one pint ``UnitRegistry`` of loopdocs, with the trade units added (built once)."""
    import pint

    ureg = pint.UnitRegistry()
    for line in _DEFINITIONS:
        ureg.define(line)
    return ureg


def unit_expression(text: str) -> str:
    """The pint expression for a unit as written in an index.

    Powers written as digits or superscripts become ``**``; ``Nm3`` (normal cubic
    metres) is read as a volume; common spellings are mapped (see the module docstring).

    >>> unit_expression("m3/h"), unit_expression("Nm³/h"), unit_expression("°C")
    ('m**3/h', 'm**3/h', 'degC')
    """
    raw = str(text).strip()
    folded = raw.lower().replace("  ", " ")
    if folded in _WRITTEN:
        return _WRITTEN[folded]
    expr = raw.replace("³", "3").replace("²", "2")
    expr = re.sub(r"\b[NS]m(?=3)", "m", expr)
    expr = re.sub(r"(?<=[A-Za-z])([23])\b", r"**\1", expr)
    return expr


def _reference(unit: str) -> str:
    """'gauge', 'absolute' or '' (neither stated) for a pressure unit as written."""
    expr = unit_expression(unit)
    if expr in GAUGE_UNITS or expr.endswith(("psig", "barg", "Pag")):
        return "gauge"
    if expr in ABSOLUTE_UNITS or expr.endswith(("psia", "bara", "Paa")):
        return "absolute"
    return ""


def parse_unit(text: str) -> Any:
    """The pint unit for ``text``; ValueError naming the unit when pint does not know it."""
    if text is None or not str(text).strip():
        raise ValueError("no unit given")
    try:
        return registry().Unit(unit_expression(text))
    except Exception:  # pint raises several kinds (undefined unit, syntax)
        raise ValueError(f"unit {text!r} is not known (write it as pint reads it, e.g. degC, barg, m3/h)") from None


def same_dimension(unit_a: str, unit_b: str) -> bool:
    """True when both units measure the same quantity (pressure and pressure, ...).

    >>> same_dimension("inH2O", "kPa"), same_dimension("mm", "kPa")
    (True, False)
    """
    try:
        return parse_unit(unit_a).dimensionality == parse_unit(unit_b).dimensionality
    except ValueError:
        return False


#: Quantity names, with a unit of each that pint compares dimensions against.
_QUANTITY_REFERENCES = (
    ("temperature", "kelvin"), ("pressure", "pascal"), ("length", "meter"),
    ("volume flow", "meter**3/second"), ("mass flow", "kilogram/second"),
    ("velocity", "meter/second"), ("volume", "meter**3"), ("mass", "kilogram"),
    ("current", "ampere"), ("voltage", "volt"), ("resistance", "ohm"),
)


def _spellings(units: str, prefixes: str = "") -> list[str]:
    names = units.split()
    return [prefix + name for name in names for prefix in ("", *prefixes.split())]


_TIMES = ("s", "min", "h", "hr", "d", "day")

#: The unit spellings an index uses most (as ``unit_expression`` writes them), by
#: quantity, so that the checks can tell a pressure from a flow without building the
#: unit registry (slow to build; ``loopdocs check`` never converts). Every entry is
#: tested against pint.
_COMMON_QUANTITIES: dict[str, str] = {
    **{u: "pressure" for u in _spellings("Pa Pag Paa", "k M h") + _spellings("bar barg bara", "m")
       + ["psi", "psig", "psia", "mmH2O", "inH2O", "mmWC", "inWC", "ftWC", "ftH2O", "mmHg", "inHg", "atm", "torr"]},
    **{u: "temperature" for u in ("degC", "degF", "K", "kelvin")},
    **{u: "length" for u in ("mm", "cm", "m", "in", "ft")},
    **{f"{v}/{t}": "volume flow" for v in ("m**3", "l", "L", "gal", "ft**3", "bbl") for t in _TIMES},
    **{u: "volume flow" for u in ("gpm", "scfm", "scfh", "MMSCFD")},
    **{f"{m}/{t}": "mass flow" for m in ("kg", "g", "t", "lb", "klb") for t in _TIMES},
    **{u: "volume" for u in ("m**3", "l", "L", "gal", "bbl")},
    **{u: "velocity" for u in ("m/s", "ft/s")},
    **{u: "current" for u in ("mA", "A")},
    "%": "ratio",
}


#: Trade units pint does not define, and what they measure (analysers; common practice).
TRADE_QUANTITIES: dict[str, str] = {"pH": "acidity", "NTU": "turbidity", "%LEL": "gas concentration"}


@cache
def quantity_of(unit: str) -> str | None:
    """What a unit measures: ``temperature``, ``pressure``, ``length``, ``volume flow``,
    ``mass flow``, ``velocity``, ``volume``, ``mass``, ``current``, ``voltage``,
    ``resistance``, ``ratio`` (%, dimensionless), an analyser quantity of ``TRADE_QUANTITIES``
    (``pH``); ``other`` for any other unit pint knows;
    ``None`` for a unit it does not know. Common spellings are answered from a table
    without building the registry.

    >>> quantity_of("inH2O"), quantity_of("Nm3/h"), quantity_of("t/h"), quantity_of("degF"), quantity_of("%")
    ('pressure', 'volume flow', 'mass flow', 'temperature', 'ratio')
    """
    if unit is None or not str(unit).strip():
        return None
    expr = unit_expression(unit)
    if expr in _COMMON_QUANTITIES:
        return _COMMON_QUANTITIES[expr]
    if expr in TRADE_QUANTITIES:
        return TRADE_QUANTITIES[expr]
    return pint_quantity_of(unit)


def pint_quantity_of(unit: str) -> str | None:
    """``quantity_of`` asked of pint alone (the reference the common-spelling table is tested against)."""
    try:
        dims = parse_unit(unit).dimensionality
    except ValueError:
        return None
    ureg = registry()
    for name, reference in _QUANTITY_REFERENCES:
        if dims == ureg.Unit(reference).dimensionality:
            return name
    return "ratio" if not dims else "other"


def is_temperature(unit: str) -> bool:
    """True for a temperature unit (degC, degF, K, degR)."""
    return quantity_of(unit) == "temperature"


def is_pressure(unit: str) -> bool:
    """True for a pressure unit, gauge, absolute or differential (kPa, barg, inH2O ...)."""
    return quantity_of(unit) == "pressure"


def is_length(unit: str) -> bool:
    """True for a length unit (a level range in mm, m, ft)."""
    return quantity_of(unit) == "length"


def is_flow(unit: str) -> bool:
    """True for a volumetric or mass flow rate (m3/h, Nm3/h, l/min, gpm, kg/h, t/h, lb/h).

    >>> is_flow("Nm3/h"), is_flow("t/h"), is_flow("kPa"), is_flow("%")
    (True, True, False, False)
    """
    return quantity_of(unit) in ("volume flow", "mass flow")


def convert(value: float, from_unit: str, to_unit: str) -> float:
    """``value`` in ``from_unit`` expressed in ``to_unit`` (a point value, offsets applied).

    Temperatures convert as points (``-5 degC`` is ``23 degF``); use
    :func:`convert_difference` for a span or a tolerance. Gauge to absolute pressure
    (or back) is refused: it depends on the atmospheric pressure, which the index does
    not give. Raises ValueError for unknown or incompatible units.

    >>> round(convert(-5.0, "degC", "degF"), 6)
    23.0
    >>> round(convert(1.0, "psi", "kPa"), 6)  # NIST SP 811: 1 psi = 6.894757 kPa
    6.894757
    """
    _check_reference(from_unit, to_unit)
    ureg = registry()
    try:
        return float(ureg.Quantity(float(value), parse_unit(from_unit)).to(parse_unit(to_unit)).magnitude)
    except ValueError:
        raise
    except Exception as exc:  # DimensionalityError and kin
        raise ValueError(f"cannot convert {from_unit!r} to {to_unit!r}: {exc}") from None


def convert_difference(value: float, from_unit: str, to_unit: str) -> float:
    """A difference (span, tolerance) in ``from_unit`` expressed in ``to_unit``: no offset.

    >>> round(convert_difference(1.0, "degC", "degF"), 6)
    1.8
    """
    _check_reference(from_unit, to_unit)
    ureg = registry()
    try:
        zero = ureg.Quantity(0.0, parse_unit(from_unit)).to(parse_unit(to_unit)).magnitude
        one = ureg.Quantity(float(value), parse_unit(from_unit)).to(parse_unit(to_unit)).magnitude
    except ValueError:
        raise
    except Exception as exc:
        raise ValueError(f"cannot convert {from_unit!r} to {to_unit!r}: {exc}") from None
    return float(one - zero)


def _check_reference(from_unit: str, to_unit: str) -> None:
    a, b = _reference(from_unit), _reference(to_unit)
    if a and b and a != b:
        raise ValueError(
            f"cannot convert {from_unit} ({a}) to {to_unit} ({b}): the atmospheric pressure is not known"
        )
