"""Packed-bed integration against independent solutions.

Sources: scipy's Radau integrator at tight tolerance on the same ODE (independent numerical
method); the thermodynamic core's equilibrium (a very long bed must end there); Cantera's
equilibrate('HP') (test-only) for the adiabatic equilibrium intercept; the first law applied by
hand for the adiabatic temperature rise.
"""

import numpy as np
import pytest
from reference import cantera_phase_from_kit
from scipy.integrate import solve_ivp

from teakit import Reaction
from teakit.chemistry import AmmoniaTemkinPyzhev, ReversibleRate
from teakit.errors import InputError
from teakit.process.bed import ErgunBed, run_bed
from teakit.process.streams import (
    Stream,
    enthalpy_flow,
    heat_capacity_flow,
    temperature_from_enthalpy,
)
from teakit.thermo import species_set

SP = ("N2", "H2", "NH3", "Ar", "CH4")
NU = np.array([-1.0, -3.0, 2.0, 0.0, 0.0])
RATE = AmmoniaTemkinPyzhev(species=SP)


@pytest.fixture(params=["compiled", "numpy"])
def engine(request, monkeypatch):
    """Run a test on the compiled twin of the integration (numba) and on the numpy path."""
    import teakit.process.bed as bed

    monkeypatch.setattr(bed, "COMPILED", request.param == "compiled")
    return request.param


def inlet(B=4, T=(653.15, 673.15, 693.15, 713.15), P=200e5):
    n = np.array([[0.21, 0.63, 0.04, 0.06, 0.06]] * B) * 1000.0
    return Stream(SP, n, np.asarray(T, float)[:B], np.full(B, P))


def radau_extent(s: Stream, V: float, b: int):
    sset = species_set(SP)
    n0 = s.n[b : b + 1]
    H0 = enthalpy_flow(n0, s.T[b : b + 1], sset)

    def rhs(_, x):
        n = n0 + x[0] * NU
        T = temperature_from_enthalpy(n, H0, sset, s.T[b : b + 1])
        return [RATE(T[0], s.P[b], (n / n.sum())[0])]

    sol = solve_ivp(rhs, [0.0, V], [0.0], method="Radau", rtol=1e-10, atol=1e-8)
    return sol.y[0, -1]


def test_adiabatic_bed_vs_radau(engine):
    s = inlet()
    V = np.array([5.0, 5.0, 10.0, 30.0])
    ref = np.array([radau_extent(s, V[b], b) for b in range(4)])
    # Fixed-step ROS2: 24 steps within 2e-4 relative, 40 within 6e-5 (second order).
    for steps, tol in ((24, 2e-4), (40, 6e-5)):
        res = run_bed(RATE, s, V, nu=NU, steps=steps)
        np.testing.assert_allclose(res.extent, ref, rtol=tol)


def test_balances_close_for_every_member(engine):
    s = inlet()
    res = run_bed(RATE, s, np.array([2.0, 8.0, 20.0, 60.0]), nu=NU)
    sset = species_set(SP)
    # Elements (N, H, Ar, C): to 1e-12 relative; enthalpy (adiabatic): to 1e-9 relative.
    e_in = s.n @ sset.element_matrix.T
    e_out = res.outlet.n @ sset.element_matrix.T
    np.testing.assert_allclose(e_out, e_in, rtol=1e-12)
    np.testing.assert_allclose(enthalpy_flow(res.outlet.n, res.outlet.T, sset), enthalpy_flow(s.n, s.T, sset), rtol=1e-9)


def test_adiabatic_rise_vs_hand_calculation(engine):
    # First law for a small extent: dT = -dH_rxn(T) xi / sum(n cp) (hand formula, small-extent
    # limit); the integrated bed agrees within 1 %.
    s = inlet(B=1, T=(673.15,))
    res = run_bed(RATE, s, np.array([0.05]), nu=NU)
    sset = species_set(SP)
    dH = Reaction("N2 + 3 H2 = 2 NH3").enthalpy_of_reaction(673.15)
    Cp = heat_capacity_flow(s.n, s.T, sset)[0]
    dT_hand = -dH * res.extent[0] / Cp
    assert res.outlet.T[0] - 673.15 == pytest.approx(dT_hand, rel=0.01)


def test_long_isothermal_bed_reaches_equilibrium():
    # The rate law uses the Dyson-Simon fugacity coefficients, so a very long isothermal bed ends
    # at the thermodynamic core's equilibrium with eos="dyson-simon" at the same T and P.
    s = inlet(B=2, T=(700.0, 760.0))
    res = run_bed(RATE, s, np.array([5000.0, 5000.0]), nu=NU, mode="isothermal", steps=200, grading=3.0)
    eq = Reaction("N2 + 3 H2 = 2 NH3").equilibrium(T=s.T, P=s.P, feed=dict(zip(SP, s.n.T, strict=True)), eos="dyson-simon")
    np.testing.assert_allclose(res.outlet.y[:, 2], eq["NH3"], rtol=1e-5)
    np.testing.assert_allclose(res.outlet.T, s.T)


@pytest.mark.parametrize("steps", [6, 12, 24])
def test_long_bed_in_few_steps_ends_at_equilibrium_without_overshoot(steps, engine):
    # A 250 m3 bed lighting off from 578 K at 300 bar, integrated in few steps (a step far longer
    # than the light-off): the adiabatic path of a single exothermic reaction rises monotonically
    # to the equilibrium at its outlet temperature (first law; equilibrium of the thermodynamic
    # core with the rate law's Dyson-Simon fugacities), so the profile never passes the outlet
    # temperature and the outlet sits at that equilibrium (to 1e-9, the integration having
    # settled there). Before the overshoot repair, 6 steps ended at 97 % NH3 and 1434 K, and 24
    # steps reported a peak of 947 K for an outlet at 819 K.
    n = np.array([[0.24, 0.72, 0.025, 0.015, 0.0]]) * 5000.0
    s = Stream(SP, n, np.array([578.0]), np.array([300e5]))
    res = run_bed(RATE, s, np.array([250.0]), nu=NU, steps=steps)
    eq = Reaction("N2 + 3 H2 = 2 NH3").equilibrium(T=res.outlet.T, P=s.P, feed=dict(zip(SP, s.n.T, strict=True)), eos="dyson-simon")
    assert res.outlet.y[0, 2] == pytest.approx(eq["NH3"][0], rel=1e-9)
    assert np.all(np.diff(res.profile_T[0]) >= -1e-12 * res.outlet.T[0])  # rising, to round-off
    assert res.T_max[0] == pytest.approx(res.outlet.T[0], rel=1e-12)


def _random_ammonia_beds(B, seed):
    rng = np.random.default_rng(seed)
    y = np.column_stack([rng.uniform(0.15, 0.3, B), rng.uniform(0.55, 0.75, B), rng.uniform(0.0, 0.08, B),
                         rng.uniform(0.0, 0.05, B), rng.uniform(0.0, 0.05, B)])
    y /= y.sum(axis=1, keepdims=True)
    s = Stream(SP, rng.uniform(500.0, 3000.0, B)[:, None] * y, rng.uniform(620.0, 760.0, B), rng.uniform(80e5, 300e5, B))
    return s, rng.uniform(0.5, 60.0, B), rng.uniform(0.3, 2.0, B)


@pytest.mark.parametrize("steps", [4, 16, 24])
def test_compiled_twin_agrees_with_the_numpy_path(steps, monkeypatch):
    # The same algorithm in the same operation order; exp and pow of numba and numpy may differ
    # in the last bit, and the difference Jacobian of the W-method (step 1e-4 of the extent)
    # amplifies that where a step is stiff: measured up to 2e-6 relative in the extent and 1e-8
    # relative in temperature over this batch (many members lighting off, some repaired after
    # overshooting), far below the integration error itself (2e-4 at 24 steps, test above).
    import teakit.process.bed as bed

    s, V, act = _random_ammonia_beds(300, steps)
    out = {}
    for compiled in (True, False):
        monkeypatch.setattr(bed, "COMPILED", compiled)
        out[compiled] = run_bed(RATE, s, V, nu=NU, steps=steps, rate_params={"activity": act})
    a, b = out[True], out[False]
    np.testing.assert_allclose(a.extent, b.extent, rtol=2e-5)
    np.testing.assert_allclose(a.profile_xi, b.profile_xi, rtol=2e-5, atol=1e-9 * s.n.sum(axis=1).max())
    np.testing.assert_allclose(a.profile_T, b.profile_T, rtol=1e-7)
    np.testing.assert_allclose(a.T_max, b.T_max, rtol=1e-7)
    np.testing.assert_allclose(a.outlet.n, b.outlet.n, rtol=2e-5, atol=1e-12)
    np.testing.assert_array_equal(a.profile_V, b.profile_V)


def test_compiled_twin_is_used_only_where_it_applies(monkeypatch):
    # Adiabatic, no pressure drop, teakit's K, alpha = 1/2, one effectiveness: compiled; any
    # other law or option takes the numpy path; without numba everything does.
    import sys

    import teakit.process._bed_jit as jit
    import teakit.process.bed as bed

    calls = []
    real = jit.integrate
    monkeypatch.setattr(jit, "integrate", lambda *a: calls.append(1) or real(*a))
    monkeypatch.setattr(bed, "COMPILED", True)
    s = inlet(B=2)
    V = np.array([3.0, 6.0])
    run_bed(RATE, s, V, nu=NU, steps=8)
    assert len(calls) == 1
    for law, kw in ((AmmoniaTemkinPyzhev(species=SP, alpha=0.6), {}),
                    (AmmoniaTemkinPyzhev(species=SP, Ka="gillespie-beattie"), {}),
                    (RATE, {"mode": "isothermal"}),
                    (RATE, {"ergun": ErgunBed(diameter=2.5)})):
        run_bed(law, s, V, nu=NU, steps=8, **kw)
    assert len(calls) == 1
    monkeypatch.setitem(sys.modules, "teakit.process._bed_jit", None)  # numba missing
    res = run_bed(RATE, s, V, nu=NU, steps=8)
    assert len(calls) == 1 and np.all(res.extent > 0)


def test_long_adiabatic_bed_vs_cantera_hp():
    # A generic reversible rate with ideal-gas driving force on SO2 oxidation; a very long
    # adiabatic bed ends at the adiabatic equilibrium intercept, which Cantera's
    # equilibrate('HP') finds on a phase built from teakit's own species data.
    ct = pytest.importorskip("cantera")
    sp = ("SO2", "O2", "SO3", "N2")
    law = ReversibleRate(Reaction("SO2 + 0.5 O2 = SO3"), A=1e6, Ea=60e3, species=sp)
    n = np.array([[0.10, 0.11, 0.0, 0.79]]) * 100.0
    s = Stream(sp, n, np.array([700.0]), np.array([1.2e5]))
    res = run_bed(law, s, np.array([2000.0]), nu=np.array([-1.0, -0.5, 1.0, 0.0]), steps=400, grading=3.0)
    gas = cantera_phase_from_kit(list(sp))
    gas.TPX = 700.0, 1.2e5, dict(zip(sp, n[0], strict=True))
    gas.equilibrate("HP")
    assert res.outlet.T[0] == pytest.approx(gas.T, abs=0.05)
    assert res.outlet.y[0, 2] == pytest.approx(gas.X[gas.species_index("SO3")], rel=1e-4)
    assert ct is not None


def test_ergun_pressure_drop_and_zero_volume():
    s = inlet(B=2)
    res = run_bed(RATE, s, np.array([10.0, 0.0]), nu=NU, ergun=ErgunBed(diameter=2.5))
    assert res.outlet.P[0] < s.P[0] and res.outlet.P[1] == s.P[1]
    np.testing.assert_allclose(res.outlet.n[1], s.n[1])
    # Ergun by hand for the zero-conversion limit is too long for here; the drop per metre of a
    # few kPa at ~0.1 m/s in 6 mm particles is common practice.
    drop_per_m = (s.P[0] - res.outlet.P[0]) / (10.0 / (np.pi * 2.5**2 / 4))
    assert 1e2 < drop_per_m < 5e4


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"mode": "cooled"}, "mode must be 'adiabatic' or 'isothermal'"),
        ({"steps": 2}, "steps must be a whole number from 4 to 2000"),
        ({"volume": -1.0}, r"volume must lie in \[0, 100000\] m3"),
        ({"nu": np.array([-1.0, -3.0, 2.0])}, "nu must have one entry per species"),
    ],
)
def test_bad_input(kwargs, match):
    args = {"volume": 1.0, "nu": NU} | kwargs
    vol = args.pop("volume")
    with pytest.raises(InputError, match=match):
        run_bed(RATE, inlet(B=1), vol, **args)
