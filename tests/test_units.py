"""The quantity of a unit: the table of common spellings must agree with pint.

``loopdocs.calc.units.dimension`` answers common spellings from a table so that the
checks need not build the unit registry; pint (a general-purpose units library) is the
reference every entry is held to.
"""

from __future__ import annotations

import pytest

from loopdocs.calc import units


@pytest.mark.parametrize("spelling", sorted(units._COMMON_DIMENSIONS))
def test_common_spelling_agrees_with_pint(spelling):
    dims = str(units.parse_unit(spelling).dimensionality)
    assert units._DIMENSION_NAMES.get(dims, "other") == units._COMMON_DIMENSIONS[spelling]


@pytest.mark.parametrize("written,quantity", [
    ("m³/h", "flow"), ("Nm3/h", "flow"), ("Sm3/h", "flow"), ("kg/h", "flow"), ("t/h", "flow"), ("USD", None),
    ("inH2O", "pressure"), ("mbarg", "pressure"), ("kPag", "pressure"), ("°F", "temperature"), ("mm", "length"),
    ("ohm", "other"), ("%", "ratio"), ("", None),
])
def test_written_units(written, quantity):
    # pint's definitions (NIST SP 811 units); 'USD' is not a unit
    assert units.dimension(written) == quantity
