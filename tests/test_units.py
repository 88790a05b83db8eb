"""What a unit measures: the table of common spellings must agree with pint.

``loopdocs.calc.units.quantity_of`` answers common spellings from a table so that the
checks need not build the unit registry; pint (a general-purpose units library) is the
reference every entry is held to.
"""

from __future__ import annotations

import pytest

from loopdocs.calc import units


@pytest.mark.parametrize("spelling", sorted(units._COMMON_QUANTITIES))
def test_common_spelling_agrees_with_pint(spelling):
    assert units.pint_quantity_of(spelling) == units._COMMON_QUANTITIES[spelling]


@pytest.mark.parametrize("written,quantity", [
    ("m³/h", "volume flow"), ("Nm3/h", "volume flow"), ("Sm3/h", "volume flow"), ("kg/h", "mass flow"),
    ("t/h", "mass flow"), ("ft3/min", "volume flow"), ("USD", None), ("inH2O", "pressure"), ("mbarg", "pressure"),
    ("kPag", "pressure"), ("°F", "temperature"), ("deg C", "temperature"), ("mm", "length"), ("ohm", "resistance"),
    ("%", "ratio"), ("", None),
])
def test_written_units(written, quantity):
    # pint's definitions (NIST SP 811 units); 'USD' is not a unit
    assert units.quantity_of(written) == quantity


def test_trade_units_pint_does_not_know():
    # pH is a logarithmic measure pint does not define as such: pint reads "pH" as picohenry
    # (SI prefix p, henry H), so the trade table must be asked first
    assert str(units.parse_unit("pH")) == "picohenry"
    assert units.quantity_of("pH") == "acidity"
