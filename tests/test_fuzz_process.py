"""Property-based (fuzz) tests of the process layer's entry points.

Streams, mixer and splitter, the packed bed (run_bed), the multi-bed converter (multibed), the
recycle-loop solvers (wegstein, broyden) and the two cases (ammonia_loop, so2_converter). Every
generated input - in range, out of range, NaN, inf, negative, huge, of the wrong shape or type -
must give a finite result or a typed teakit error (InputError, OutOfRangeError,
ConvergenceError) whose message names the argument that was bad (a ConvergenceError names the
batch members instead); never NaN or inf in a result, never an untyped exception. Where the
inputs are valid a physical property is checked as well. Profiles and how to run the long one:
tests/conftest.py; the slow entry points (the cases) keep a small per-test example count.

Sources of the properties (named again beside each check):
- Conservation of mass and of the elements, and the first law for adiabatic units (mixer,
  adiabatic bed, converter with inter-bed exchangers): any text on material and energy balances,
  e.g. Felder & Rousseau, Elementary Principles of Chemical Processes, 3rd ed., ch. 4 and 8.
- With positive heat capacities an adiabatic mixture of gases ends between the coldest and the
  hottest inlet temperature (first law; same source).
- The closed form of a linear fixed point, x = (I - A)^-1 b for a spectral radius of A below 1.
- The case definitions: a feasible ammonia loop or acid plant produces exactly at capacity and an
  infeasible one nothing (teakit.process.cases module docstrings); conversion lies in [0, 1].
"""

import warnings

import numpy as np
import pytest
from hypothesis import event, given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from teakit.chemistry import AmmoniaTemkinPyzhev
from teakit.errors import ConvergenceError, InputError, OutOfRangeError, RangeWarning
from teakit.process.bed import ErgunBed, run_bed
from teakit.process.cases import ammonia, so2
from teakit.process.loop import broyden, wegstein
from teakit.process.reactor import multibed
from teakit.process.streams import (
    Stream,
    enthalpy_flow,
    mix,
    split,
    temperature_from_enthalpy,
)
from teakit.thermo import species_set

SP = ammonia.SPECIES
NU = ammonia.NU
SSET = species_set(SP)
RATE = AmmoniaTemkinPyzhev(species=SP)
TYPED = (InputError, OutOfRangeError, ConvergenceError)

WILD = st.one_of(
    st.sampled_from([np.nan, np.inf, -np.inf, 0.0, -1.0, 1e-300, 1e300, -1e300]),
    st.floats(allow_nan=True, allow_infinity=True, width=64),
)


def maybe_wild(good, p_wild=0.25):
    """Mostly ``good`` values, sometimes anything at all."""
    return st.one_of(good, WILD) if p_wild else good


def typed_or_value(fn, *args, names=(), **kwargs):
    """fn(*args) or None when it raised a typed error whose message names one of ``names``."""
    try:
        out = fn(*args, **kwargs)
    except ConvergenceError as exc:
        assert "member" in str(exc), str(exc)
        event(f"{getattr(fn, '__name__', fn)}: ConvergenceError")
        return None
    except InputError as exc:  # OutOfRangeError is an InputError
        msg = str(exc)
        assert any(n in msg for n in names), f"message does not name any of {names}: {msg}"
        event(f"{getattr(fn, '__name__', fn)}: {type(exc).__name__}")
        return None
    event(f"{getattr(fn, '__name__', fn)}: result")
    return out


def gas(B, draw, wild=True):
    """Ammonia synthesis gas of B members: flows [mol/s], T [K], P [Pa] (sometimes wild)."""
    y = np.array([0.22, 0.66, 0.06, 0.04, 0.02])
    scale = draw(hnp.arrays(float, B, elements=st.floats(1.0, 5000.0)))
    n = scale[:, None] * y
    T = draw(hnp.arrays(float, B, elements=maybe_wild(st.floats(550.0, 850.0), 0.1 if wild else 0)))
    P = draw(hnp.arrays(float, B, elements=maybe_wild(st.floats(50e5, 350e5), 0.1 if wild else 0)))
    return n, T, P


# ---------------------------------------------------------------------------------------------
# streams, mixer, splitter


@given(
    species=st.one_of(st.just(SP), st.just(("N2", "H2")), st.just(("XX", "H2")), st.just("N2"), st.just(())),
    n=hnp.arrays(float, st.one_of(st.tuples(st.integers(1, 4), st.just(5)), hnp.array_shapes(min_dims=0, max_dims=3, max_side=6)),
                 elements=maybe_wild(st.floats(0.0, 1e4), 0.05)),
    T=maybe_wild(st.floats(250.0, 1500.0)),
    P=maybe_wild(st.floats(1e4, 1e8)),
)
def test_stream_is_valid_or_says_why(species, n, T, P):
    s = typed_or_value(Stream, species, n, T, P, names=("species", "n ", "n must", "T", "P"))
    if s is None:
        return
    # Constructed: flows finite and >= 0 of shape (B, ns), T and P finite and > 0 per member.
    assert s.n.shape == (len(s), len(s.species)) and np.all(np.isfinite(s.n)) and np.all(s.n >= 0)
    assert np.all(np.isfinite(s.T) & (s.T > 0)) and np.all(np.isfinite(s.P) & (s.P > 0))
    assert np.all(np.isfinite(s.y))


@given(data=st.data(), B=st.integers(1, 5), P_out=st.one_of(st.none(), maybe_wild(st.floats(1e5, 1e7))))
def test_mix_conserves_mass_and_energy(data, B, P_out):
    n1, T1, _ = gas(B, data.draw, wild=False)
    n2 = data.draw(hnp.arrays(float, (B, 5), elements=st.floats(0.0, 1e3)))
    T2 = data.draw(hnp.arrays(float, B, elements=maybe_wild(st.floats(200.0, 1500.0), 0.1)))
    s1 = Stream(SP, n1, T1, np.full(B, 2e6))
    s2 = typed_or_value(Stream, SP, n2, T2, np.full(B, 3e6), names=("T",))
    if s2 is None:
        return
    out = typed_or_value(mix, s1, s2, P=P_out, names=("P", "T ", "T =", "streams"))
    if out is None:
        return
    assert np.all(np.isfinite(out.n)) and np.all(np.isfinite(out.T)) and np.all(np.isfinite(out.P))
    np.testing.assert_array_equal(out.n, n1 + n2)  # mass balance, species by species (exact)
    # First law: the mixture carries the inlets' enthalpy; with cp > 0 it ends between them.
    np.testing.assert_allclose(out.H, s1.H + s2.H, rtol=1e-9, atol=1e-6 * np.abs(s1.H).max())
    lo, hi = np.minimum(s1.T, s2.T), np.maximum(s1.T, s2.T)
    assert np.all(out.T >= lo * (1 - 1e-9)) and np.all(out.T <= hi * (1 + 1e-9))


@given(data=st.data(), fraction=st.one_of(maybe_wild(st.floats(0.0, 1.0)), hnp.arrays(float, st.integers(0, 4), elements=st.floats(0.0, 1.0))))
def test_split_conserves_mass(data, fraction):
    n, T, P = gas(3, data.draw, wild=False)
    s = Stream(SP, n, T, P)
    out = typed_or_value(split, s, fraction, names=("fraction",))
    if out is None:
        return
    a, b = out
    np.testing.assert_allclose(a.n + b.n, s.n, rtol=1e-15)  # mass balance
    assert np.all(a.n >= 0) and np.all(b.n >= 0)


@given(data=st.data(), T_true=st.floats(250.0, 3000.0), H_wild=st.one_of(st.none(), WILD))
def test_temperature_from_enthalpy_inverts_the_enthalpy(data, T_true, H_wild):
    n, _, _ = gas(2, data.draw, wild=False)
    T = np.full(2, T_true)
    lo, hi = SSET.T_range
    H = enthalpy_flow(n, np.clip(T, lo, hi), SSET) if H_wild is None else np.full(2, H_wild)
    got = typed_or_value(temperature_from_enthalpy, n, H, SSET, np.full(2, 700.0), names=("H",))
    if got is None:
        return
    assert np.all(np.isfinite(got))
    if H_wild is None:  # the inverse of the enthalpy function (to the Newton tolerance)
        np.testing.assert_allclose(got, np.clip(T, lo, hi), rtol=1e-9)


# ---------------------------------------------------------------------------------------------
# packed bed and multi-bed converter


@given(
    data=st.data(),
    B=st.integers(1, 4),
    bad=st.sampled_from([None, None, None, None, "volume", "steps", "grading", "mode", "inlet", "ergun"]),
    mode=st.sampled_from(["adiabatic", "adiabatic", "isothermal"]),
    with_ergun=st.booleans(),
)
def test_run_bed_balances_or_says_why(data, B, bad, mode, with_ergun):
    n, T, P = gas(B, data.draw, wild=False)
    if bad == "inlet":  # an inlet far outside the rate law's fitted range (or the data's)
        T = data.draw(st.sampled_from([150.0, 5000.0, 1200.0]))
        P = data.draw(st.sampled_from([1.0, 1e9, 2e8]))
    s = typed_or_value(Stream, SP, n, T, P, names=("T",))
    if s is None:
        return
    volume = data.draw(WILD if bad == "volume" else st.floats(0.0, 300.0))
    steps = data.draw(st.sampled_from([0, 3, 2001, 4.5, True]) if bad == "steps" else st.integers(4, 16))
    grading = data.draw(st.one_of(WILD, st.just(11.0)) if bad == "grading" else st.floats(1.0, 4.0))
    mode = "cooled" if bad == "mode" else mode
    D = data.draw(WILD if bad == "ergun" else st.floats(0.5, 5.0))
    ergun = ErgunBed(diameter=D) if (with_ergun or bad == "ergun") else None
    res = typed_or_value(run_bed, RATE, s, volume, nu=NU, steps=steps, grading=grading, mode=mode, ergun=ergun,
                         rate_params={"activity": np.ones(B)}, names=(bad,) if bad else ("inlet",))
    if res is None:
        return
    for a in (res.outlet.n, res.outlet.T, res.outlet.P, res.extent, res.T_max, res.profile_T, res.profile_xi):
        assert np.all(np.isfinite(a))
    # Elements conserved (N, H, Ar, C) to 1e-12; an adiabatic bed conserves enthalpy (first law).
    E = SSET.element_matrix.T
    np.testing.assert_allclose(res.outlet.n @ E, s.n @ E, rtol=1e-12, atol=1e-9)
    if mode == "adiabatic":
        np.testing.assert_allclose(enthalpy_flow(res.outlet.n, res.outlet.T, SSET), s.H, rtol=1e-9,
                                   atol=1e-9 * np.abs(s.H).max())


@given(
    data=st.data(),
    nb=st.integers(1, 3),
    cooling=st.sampled_from(["exchanger", "exchanger", "quench", "spray"]),
    bad=st.sampled_from([None, None, "volumes", "inlet_temperatures", "shape"]),
)
@settings(max_examples=40)
def test_multibed_balances_or_says_why(data, nb, cooling, bad):
    B = 2
    n, _, P = gas(B, data.draw, wild=False)
    feed = Stream(SP, n, np.full(B, 450.0), P)
    V = np.array(data.draw(st.lists(st.floats(0.5, 40.0), min_size=nb, max_size=nb)))
    Tin = np.array(data.draw(st.lists(st.floats(640.0, 720.0), min_size=nb, max_size=nb)))
    if bad == "volumes":
        V[0] = data.draw(WILD)
    elif bad == "inlet_temperatures":
        Tin[-1] = data.draw(WILD)
    elif bad == "shape":
        Tin = Tin[:-1]
    res = typed_or_value(multibed, RATE, feed, V, Tin, nu=NU, cooling=cooling, steps=8,
                         names=("volumes", "inlet_temperatures", "cooling", "inlet"))
    if res is None:
        return
    assert np.all(np.isfinite(res.outlet.n)) and np.all(np.isfinite(res.outlet.T))
    assert np.all(np.isfinite(res.interbed_duty)) and np.all(np.isfinite(res.preheat_duty))
    E = SSET.element_matrix.T
    np.testing.assert_allclose(res.outlet.n @ E, feed.n @ E, rtol=1e-12)  # elements
    # First law over the converter: feed + preheat - inter-bed duties = outlet enthalpy.
    H_out = enthalpy_flow(res.outlet.n, res.outlet.T, SSET)
    np.testing.assert_allclose(feed.H + res.preheat_duty - res.interbed_duty.sum(axis=-1), H_out,
                               rtol=1e-8, atol=1e-8 * np.abs(H_out).max())


# ---------------------------------------------------------------------------------------------
# loop solvers


def linear(B, m, seed, nan_members=()):
    rng = np.random.default_rng(seed)
    A = rng.uniform(0.0, 1.0, (B, m, m))
    A *= 0.9 / np.abs(np.linalg.eigvals(A)).max(axis=-1)[:, None, None]
    b = rng.uniform(1.0, 2.0, (B, m))
    x_star = np.linalg.solve(np.eye(m)[None] - A, b[..., None])[..., 0]
    nan = np.isin(np.arange(B), list(nan_members))

    def g(x, idx):
        gx = np.einsum("bij,bj->bi", A[idx], x) + b[idx]
        return np.where(nan[idx][:, None], np.nan, gx), {"s": gx.sum(axis=-1)}

    return g, x_star, b


@given(
    solver=st.sampled_from([wegstein, broyden]),
    B=st.integers(1, 6),
    m=st.integers(1, 4),
    seed=st.integers(0, 2**16),
    bad=st.sampled_from([None, None, None, None, "tol", "max_iter", "x0", "x0 shape"]),
    data=st.data(),
    nan_member=st.booleans(),
    raise_on_failure=st.booleans(),
)
def test_loop_solvers_converge_or_say_why(solver, B, m, seed, bad, data, nan_member, raise_on_failure):
    g, x_star, b = linear(B, m, seed, nan_members=(0,) if nan_member else ())
    x0 = b.copy()
    tol = data.draw(WILD if bad == "tol" else st.floats(1e-12, 1e-6))
    max_iter = data.draw(st.sampled_from([0, -3, 10001, 2.5, True]) if bad == "max_iter" else st.integers(1, 300))
    if bad == "x0":
        x0[0, 0] = data.draw(st.sampled_from([np.nan, np.inf, -np.inf]))
    elif bad == "x0 shape":
        x0 = x0[0]
    names = ("x0",) if bad and bad.startswith("x0") else (bad,) if bad else ()
    out = typed_or_value(solver, g, x0, tol=tol, max_iter=max_iter, raise_on_failure=raise_on_failure, names=names)
    if out is None:
        return
    x, info, conv, _ = out
    assert np.all(np.isfinite(x)) and np.all(np.isfinite(info["s"]))
    if nan_member:
        assert not conv[0]  # g gave no value there: never reported as converged
    # Converged members sit at the closed-form fixed point (to the tolerance, amplified by
    # (I - A)^-1, whose norm is at most 1 / (1 - 0.9) = 10).
    if conv.any():
        np.testing.assert_allclose(x[conv], x_star[conv], rtol=max(200 * tol, 1e-9))


# ---------------------------------------------------------------------------------------------
# the cases


def case_inputs(draw, specs, names, B, p_wild):
    out = {}
    for name in names:
        sp = specs[name]
        good = st.floats(sp.low, sp.high)
        if draw(st.floats(0, 1)) < p_wild:
            out[name] = draw(st.one_of(WILD, st.just("12 furlong"), st.just([[1.0, 2.0]]),
                                       st.just(np.full(B + 1, sp.default)), st.floats(sp.high * 1.5 + 1, sp.high * 10 + 10)))
        else:
            out[name] = np.array(draw(st.lists(good, min_size=B, max_size=B)))
    return out


def check_case_result(res, module, capacity_kg_s, rtol=1e-6):
    frame = res.to_frame()
    assert np.all(np.isfinite(frame.drop(columns="status").to_numpy(float)))
    for item, spec in res.equipment.items():
        for key, v in spec.items():
            if not isinstance(v, str):
                assert np.all(np.isfinite(np.asarray(v, float))), (item, key)
    for key, v in res.profiles.items():
        assert np.all(np.isfinite(v)), key
    assert set(res.status) <= set(module.STATUSES)
    # Case definition: capacity where feasible, nothing where not.
    np.testing.assert_allclose(res["production"][res.ok], np.broadcast_to(capacity_kg_s, len(res))[res.ok], rtol=rtol)
    assert np.all(res["production"][~res.ok] == 0.0)


@given(
    data=st.data(),
    B=st.integers(1, 3),
    p_wild=st.sampled_from([0.0, 0.0, 0.0, 0.05, 0.2]),
    kwargs=st.one_of(st.just({}), st.just({}), st.fixed_dictionaries({}, optional={
        "steps": st.one_of(st.integers(8, 24), st.sampled_from([2, 2001, 6.5, "24"])),
        "max_iter": st.one_of(st.integers(5, 40), st.sampled_from([0, 10**6, 3.0])),
        "tol": st.one_of(st.floats(1e-10, 1e-6), WILD),
        "warm": st.sampled_from([{"tear": np.ones((1, 6))}, "warm", {"tear": np.ones((9, 6)), "H": 1, "scale": 1}]),
    })),
)
@settings(max_examples=25)
def test_ammonia_loop_finite_or_says_why(data, B, p_wild, kwargs):
    dec = case_inputs(data.draw, ammonia.DECISIONS, list(ammonia.DECISIONS), B, p_wild)
    phys = case_inputs(data.draw, ammonia.PHYSICS, ["capacity", "catalyst_activity", "makeup_argon", "kij_NH3_H2"], B, p_wild / 2)
    names = (*ammonia.DECISIONS, *ammonia.PHYSICS, "decision", "physics", "steps", "max_iter", "tol", "warm",
             "bed1_fraction")
    res = typed_or_value(ammonia.ammonia_loop, dec, phys, names=names, **kwargs)
    if res is None:
        return
    # At capacity to the loop tolerance (a relative change of the tear, whose flows are up to
    # about 30 times the make-up's).
    check_case_result(res, ammonia, phys["capacity"], rtol=max(1e-6, 50 * float(kwargs.get("tol", 3e-10))))


@given(
    data=st.data(),
    B=st.integers(1, 6),
    p_wild=st.sampled_from([0.0, 0.0, 0.0, 0.05, 0.2]),
    steps=st.one_of(st.just(40), st.integers(4, 60), st.just(40), st.sampled_from([3, 2001, 7.5])),
)
@settings(max_examples=40)
def test_so2_converter_finite_or_says_why(data, B, p_wild, steps):
    dec = case_inputs(data.draw, so2.DECISIONS, [k for k in so2.DECISIONS if k != "interpass_absorption"], B, p_wild)
    dec["interpass_absorption"] = data.draw(st.one_of(st.sampled_from([0.0, 1.0, 2.0, 3.0] * 3), maybe_wild(st.floats(0, 3), 0.3)))
    phys = case_inputs(data.draw, so2.PHYSICS, ["capacity", "catalyst_activity", "ambient_pressure", "superficial_velocity"], B, p_wild / 2)
    names = (*so2.DECISIONS, *so2.PHYSICS, "decision", "physics", "steps")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RangeWarning)
        res = typed_or_value(so2.so2_converter, dec, phys, steps=steps, names=names)
    if res is None:
        return
    check_case_result(res, so2, phys["capacity"])
    X = res["overall_conversion"]
    assert np.all((X >= -1e-12) & (X <= 1.0 + 1e-12))  # a conversion


@pytest.mark.parametrize("bad", [{"pressure": np.nan}, {"catalyst_volume": -1.0}, {"purge_fraction": "3 %"}])
def test_named_errors_of_the_cases(bad):
    # A fixed sample of the fuzzed failures, so a change of wording shows up without hypothesis.
    name = next(iter(bad))
    with pytest.raises(InputError, match=name):
        ammonia.ammonia_loop(bad)
