"""Quantities at the edge (pint): conversions checked against exact definitions."""

import numpy as np
import pytest

from teakit.errors import InputError
from teakit.units import Q_, to_si


def test_conversions_exact_definitions():
    # 1 atm = 101325 Pa and 1 bar = 1e5 Pa (exact, SI Brochure); 0 degC = 273.15 K (exact).
    assert to_si("300 atm", "Pa") == pytest.approx(300 * 101325.0, rel=1e-15)
    assert to_si("450 degC", "K") == pytest.approx(723.15, rel=1e-15)
    assert to_si("200 bar", "Pa") == 200e5
    np.testing.assert_allclose(to_si(["150 bar", "2 MPa"], "Pa"), [150e5, 2e6])
    assert to_si(Q_(3.5, "USD/kg"), "USD/kg") == 3.5
    assert to_si("2 MUSD", "USD") == 2e6
    assert to_si(5.0, "K") == 5.0  # plain numbers are taken as SI already


@pytest.mark.parametrize(
    "value,unit,match",
    [
        ("300 bar", "K", "does not convert to K"),
        ("12 furlongs per fortnight per kelvin zz", "m/s", "unknown unit|not a quantity"),
        ("450", "K", r"does not convert to K \(dimensionless"),
    ],
)
def test_bad_quantities(value, unit, match):
    with pytest.raises(InputError, match=match):
        to_si(value, unit, "T")
