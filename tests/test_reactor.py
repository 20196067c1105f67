"""Multi-bed converters: inter-bed exchangers and cold-gas quench, by balances and by hand."""

import numpy as np
import pytest

from teakit.chemistry import AmmoniaTemkinPyzhev
from teakit.errors import InputError
from teakit.process.reactor import multibed
from teakit.process.streams import Stream, enthalpy_flow

SP = ("N2", "H2", "NH3", "Ar", "CH4")
NU = np.array([-1.0, -3.0, 2.0, 0.0, 0.0])
RATE = AmmoniaTemkinPyzhev(species=SP)


def feed(T=(420.0, 480.0)):
    n = np.array([[0.22, 0.66, 0.03, 0.06, 0.03]] * len(T)) * 5000.0
    return Stream(SP, n, np.asarray(T, float), np.full(len(T), 200e5))


def test_quench_mixtures_reach_their_inlet_temperatures_and_balances_close():
    f = feed()
    Tin = [673.15, 693.15, 688.15]
    r = multibed(RATE, f, [5.0, 7.0, 9.0], Tin, nu=NU, cooling="quench")
    for j, b in enumerate(r.beds):
        np.testing.assert_allclose(b.profile_T[:, 0], Tin[j], atol=1e-3)
    assert np.all(r.quench_fraction > 0) and np.all(r.quench_fraction.sum(axis=-1) < 0.9)
    # First law over the converter: feed enthalpy + preheat = outlet enthalpy (adiabatic beds,
    # adiabatic mixing); elements conserved.
    sset = f.sset
    np.testing.assert_allclose(f.H + r.preheat_duty, enthalpy_flow(r.outlet.n, r.outlet.T, sset), rtol=1e-9)
    np.testing.assert_allclose(r.outlet.n @ sset.element_matrix.T, f.n @ sset.element_matrix.T, rtol=1e-12)
    # A warmer quench gas needs more of it.
    assert r.quench_fraction[1, 0] > r.quench_fraction[0, 0]


def test_exchanger_duty_is_the_enthalpy_removed():
    f = feed()
    r = multibed(RATE, f, [5.0, 7.0], [673.15, 693.15], nu=NU)
    b1 = r.beds[0].outlet
    sset = f.sset
    hand = enthalpy_flow(b1.n, b1.T, sset) - enthalpy_flow(b1.n, np.full(2, 693.15), sset)
    np.testing.assert_allclose(r.interbed_duty[:, 0], hand, rtol=1e-12)
    assert np.all(r.quench_fraction == 0)


def test_quench_dilutes_compared_with_exchangers():
    # Bypassed feed skips the first bed, so a quench converter makes less NH3 from the same
    # catalyst and inlet temperatures (common practice: the reason large converters use
    # inter-bed exchangers).
    f = feed((450.0,))
    q = multibed(RATE, f, [5.0, 7.0, 9.0], [673.15, 693.15, 693.15], nu=NU, cooling="quench")
    x = multibed(RATE, f, [5.0, 7.0, 9.0], [673.15, 693.15, 693.15], nu=NU)
    assert q.outlet.y[0, 2] < x.outlet.y[0, 2]


def test_bad_cooling():
    with pytest.raises(InputError, match="cooling must be 'exchanger' or 'quench'"):
        multibed(RATE, feed(), [5.0], [673.15], nu=NU, cooling="spray")
