"""Numbers and ranges as people read them: one module for every output.

- ``fmt_number``: a value for a table or a label (given decimals, else 4 significant
  figures), a typographic minus sign, never a negative zero;
- ``fmt_short``: fixed decimals without trailing zeros (a range in a title);
- ``fmt_pct``: a percentage in a message (at most two decimals, no trailing zeros);
- ``fmt_signal`` / ``fmt_range``: a signal value or range with the decimals its unit is
  read to (``'12.00 to 20.00 mA'``);
- ``display_decimals`` / ``column_decimals`` / ``percent_decimals``: the one decimals
  rule of the calibration tables (the sheet, the terminal and the workbook alike).

Pure functions on numbers and unit strings; nothing here converts a unit.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

MINUS = "\u2212"
"""Typographic minus sign (a hyphen is too short beside digits)."""

#: Decimals shown for signal and sensor units: the resolution of a process calibrator
#: reading them (common practice). Keys are units as the calibration tables write them;
#: ``% travel`` and ``% CO`` are the units of valve travel and controller output.
UNIT_DECIMALS = {"mA": 3, "mV": 3, "ohm": 3, "psig": 3, "kPa": 2, "% travel": 1, "% CO": 2}

#: Decimals a signal value is read to in messages (mA and psig 2, kPa 1, bar 3; common practice).
_SIGNAL_DECIMALS = {"kpa": 1, "bar": 3, "mbar": 1}


def fmt_number(value: float | None, decimals: int | None = None, minus: str = MINUS) -> str:
    """A number for a table: ``decimals`` fixed, else up to 4 significant figures; a
    ``minus`` sign (typographic by default), no negative zero; ``""`` for ``None``.

    >>> fmt_number(11.68), fmt_number(-5.0), fmt_number(0.1234567), fmt_number(12, 3), fmt_number(-0.0001, 2)
    ('11.68', '\u22125', '0.1235', '12.000', '0.00')
    >>> fmt_number(-2.5, 1, minus="-"), fmt_number(25000.0)
    ('-2.5', '25000')
    """
    if value is None:
        return ""
    value = float(value)
    if decimals is None:
        text = f"{value:.4g}" if abs(value) < 1e4 else f"{value:.0f}"
        if "e" in text:
            text = f"{value:.6f}".rstrip("0").rstrip(".")
    else:
        text = f"{value:.{decimals}f}"
    if text.startswith("-"):
        text = minus + text[1:] if text.strip("-0.") else text[1:]
    return text


def fmt_short(value: float, decimals: int) -> str:
    """``fmt_number`` with ``decimals``, trailing zeros dropped: a range end in a title.

    >>> fmt_short(98.04438, 3), fmt_short(40.0, 2), fmt_short(-5.0, 2)
    ('98.044', '40', '−5')
    """
    text = fmt_number(value, decimals)
    return text.rstrip("0").rstrip(".") if "." in text else text


def fmt_pct(value: float) -> str:
    """A percentage for a message: at most two decimals, no trailing zeros.

    >>> fmt_pct(50.0), fmt_pct(8.333333), fmt_pct(11.5), fmt_pct(-0.001)
    ('50', '8.33', '11.5', '0')
    """
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def fmt_signal(value: float, unit: str) -> str:
    """A signal value with the decimals its unit is read to (mA, psig 2; kPa 1; bar 3);
    gauge spellings read as the plain unit (``kPag`` as ``kPa``).

    >>> fmt_signal(11.68, "mA"), fmt_signal(20, "kPag"), fmt_signal(0.2, "bar")
    ('11.68', '20.0', '0.200')
    """
    key = str(unit).strip().lower().replace(" ", "").replace("(g)", "g")
    if key.endswith("g") and key[:-1] in _SIGNAL_DECIMALS:
        key = key[:-1]
    return f"{value:.{_SIGNAL_DECIMALS.get(key, 2)}f}"


def fmt_range(low: float, high: float, unit: str) -> str:
    """A signal range for a message.

    >>> fmt_range(12, 20, "mA")
    '12.00 to 20.00 mA'
    """
    return f"{fmt_signal(low, unit)} to {fmt_signal(high, unit)} {unit}"


def display_decimals(span: float, unit: str, resolve: float | None = None) -> int:
    """Decimals to show a value: fixed for signal and sensor units (``UNIT_DECIMALS``),
    else enough to resolve 1/10 000 of the span (0 to 5); at least enough to show
    ``resolve`` (a tolerance) to two significant digits.

    >>> display_decimals(16.0, "mA"), display_decimals(45.0, "degC"), display_decimals(3200.0, "mm")
    (3, 2, 0)
    >>> display_decimals(2.5, "barg", resolve=0.0025)
    4
    """
    if unit in UNIT_DECIMALS:
        decimals = UNIT_DECIMALS[unit]
    elif not span or not math.isfinite(span):
        decimals = 3
    else:
        decimals = max(0, min(5, 3 - math.floor(math.log10(abs(span)))))
    if resolve is not None and resolve > 0 and math.isfinite(resolve):
        decimals = max(decimals, min(6, math.ceil(-math.log10(resolve)) + 1))
    return decimals


def column_decimals(values: Iterable[float | None], unit: str, resolve: float | None = None) -> int:
    """``display_decimals`` for a column of values in one unit, the span being the
    column's own (largest minus smallest value given).

    >>> column_decimals([0.0, 62.5, 250.0], "mbar"), column_decimals([None, 4.0, 20.0], "mA")
    (1, 3)
    """
    present = [float(v) for v in values if v is not None and math.isfinite(v)]
    span = (max(present) - min(present)) if present else 0.0
    return display_decimals(span, unit, resolve)


def percent_decimals(values: Iterable[float]) -> int:
    """Decimals of a column of percentages: the fewest (0 to 2) that show every value
    exactly, else 2.

    >>> percent_decimals([0, 25, 100]), percent_decimals([0, 8.5, 50]), percent_decimals([8.333333])
    (0, 1, 2)
    """
    values = [float(v) for v in values]
    for decimals in (0, 1):
        if all(abs(round(v, decimals) - v) < 1e-9 for v in values):
            return decimals
    return 2
