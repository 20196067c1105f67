"""Packed catalyst beds integrated along catalyst volume, for a whole batch at once.

A bed carries one reaction (stoichiometric vector nu) with a rate law ``rate(T, P, y, **params)``
giving the extent rate per unit bed volume [mol/(s m3)]. Along the bed

.. math::

    \\frac{d\\xi}{dV} = r(T, P, y), \\qquad n_i = n_{i,0} + \\nu_i \\xi, \\qquad
    \\sum_i n_i h_i(T) = \\sum_i n_{i,0} h_i(T_0) \\quad \\text{(adiabatic)}

so the adiabatic bed is one ODE in the extent xi per batch member, the temperature following
from the energy balance (ideal-gas enthalpies with the heat of reaction at T, as in Froment &
Bischoff, Chemical Reactor Analysis and Design, 2nd ed., ch. 11 pseudo-homogeneous
one-dimensional model). The isothermal bed keeps T fixed. Pressure optionally falls by the Ergun
equation (Ergun, Chem. Eng. Prog. 48, 89, 1952):

.. math:: -\\frac{dP}{dz} = \\frac{150\\,\\mu (1-\\varepsilon)^2 u}{\\varepsilon^3 d_p^2}
          + \\frac{1.75 (1-\\varepsilon) \\rho u^2}{\\varepsilon^3 d_p}

Integration: the two-stage L-stable Rosenbrock method ROS2 (Verwer, Spee, Blom & Hundsdorfer,
SIAM J. Sci. Comput. 20, 1456, 1999), second order for any Jacobian approximation, on a fixed grid
of steps (uniform by default, which suits beds that light off along their length; ``grading`` > 1
refines towards the inlet). Being L-stable it steps over the fast approach to equilibrium near the
outlet without oscillating, so a few dozen steps per bed serve; ``steps`` sets the count. The
outlet extent agrees with scipy's Radau at tight tolerance to about 5e-5 relative with the
default 40 steps (tests/test_bed.py). Members are never looped over in Python.

A step much longer than a bed's light-off (a very long bed in few steps) can carry the extent
past equilibrium. At constant pressure the extent of one reaction approaches equilibrium
monotonically, so a rate that changes sign from one step to the next marks such an overshoot;
those members are brought back to the rate's zero between the two points by a bracketing root
search, so that neither the outlet nor the temperature profile (the reported peak) carries it.

The enthalpy balance uses ideal-gas enthalpies: at 200 bar the residual enthalpy of the loop gas
changes by under 1 % of the heat of reaction across a bed (Peng-Robinson), which is neglected.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass

import numpy as np

from teakit.errors import InputError, OutOfRangeError
from teakit.process.streams import Stream
from teakit.thermo import ideal_gas
from teakit.thermo.species import R, species_set
from teakit.validation import check_finite, check_range

__all__ = ["BedResult", "ErgunBed", "run_bed"]

_GAMMA = 1.0 + 1.0 / np.sqrt(2.0)
#: Fraction of the inlet pressure below which a bed's pressure is called collapsed [-].
P_FLOOR = 0.25
#: Batches up to this size evaluate the two rates of a step's Jacobian in one call [-].
PAIR_BATCH = 4096
#: Largest catalyst volume of one bed that run_bed accepts [m3] (far above any plant's).
MAX_VOLUME = 1e5
#: Temperature by which a step must have gone past equilibrium to be brought back [K].
OVERSHOOT_K = 0.05
#: Regula-falsi steps that bring a step gone past equilibrium back to it [-].
OVERSHOOT_ITERATIONS = 8
#: Use the compiled twin of the integration (:mod:`teakit.process._bed_jit`, numba) where it
#: applies: adiabatic beds without pressure drop whose rate law offers ``compiled_constants``
#: (the ammonia rate), in batches of at most COMPILED_BATCH members. Same algorithm and
#: arithmetic order; results agree with the numpy path to round-off (tests/test_bed.py).
COMPILED = True
#: Above this many members the numpy path is faster (its exp and pow run vectorised; measured per
#: member and bed of 16 steps: compiled 7 us at any size, numpy 95 us at 100 members, 8 us at
#: 3,000, 5 us at 10,000) [-].
COMPILED_BATCH = 4000


@dataclass(frozen=True)
class ErgunBed:
    """Geometry and packing for the Ergun pressure drop (all arrays broadcast over the batch).

    Attributes
    ----------
    diameter : array_like
        Bed inside diameter, 1e-3 to 1e4 [m].
    particle_diameter : array_like
        Equivalent spherical particle diameter, 1e-5 to 1 [m].
    void_fraction : array_like
        Bed voidage, in (0, 1) [-] (0.35-0.45 typical for random packing; common practice).
    viscosity : array_like
        Gas dynamic viscosity, 1e-7 to 1e-2 [Pa s]; about 2.5e-5 for ammonia synthesis gas at 400-500 degC and
        about 3.5e-5 for SO2 converter gas at 450 degC (from memory; a parameter).
    """

    diameter: float | np.ndarray
    particle_diameter: float | np.ndarray = 6e-3
    void_fraction: float | np.ndarray = 0.4
    viscosity: float | np.ndarray = 2.5e-5


@dataclass(frozen=True)
class BedResult:
    """Outlet and profile of a batch of beds.

    Attributes
    ----------
    outlet : Stream
        Outlet flows, temperature and pressure.
    extent : ndarray (B,)
        Reaction extent over the bed [mol/s].
    T_max : ndarray (B,)
        Highest temperature in the bed [K] (the outlet for an exothermic adiabatic bed).
    profile_V, profile_T, profile_xi : ndarray (B, steps + 1)
        Catalyst volume from the inlet [m3], temperature [K] and extent [mol/s] at each step.
    collapsed : ndarray of bool (B,)
        Members whose Ergun pressure would fall below ``P_FLOOR`` of the inlet (held there).
    """

    outlet: Stream
    extent: np.ndarray
    T_max: np.ndarray
    profile_V: np.ndarray
    profile_T: np.ndarray
    profile_xi: np.ndarray
    collapsed: np.ndarray | None = None


def _grid(steps: int, grading: float) -> np.ndarray:
    """Fractions of the bed volume at the step boundaries, finer towards the inlet."""
    u = np.linspace(0.0, 1.0, steps + 1)
    return u**grading


def run_bed(
    rate,
    inlet: Stream,
    volume,
    *,
    nu,
    mode: str = "adiabatic",
    steps: int = 40,
    grading: float = 1.0,
    ergun: ErgunBed | None = None,
    rate_params: dict | None = None,
) -> BedResult:
    """Integrate a batch of packed beds from the inlet to the outlet.

    Parameters
    ----------
    rate : callable
        ``rate(T, P, y, **rate_params)`` -> extent rate per bed volume [mol/(s m3)], vectorised;
        T [K], P [Pa], y (B, ns) mole fractions in the order of ``inlet.species``.
    inlet : Stream
        Bed inlet (flows [mol/s], T [K], P [Pa]).
    volume : array_like (B,) or float
        Catalyst bed volume [m3], 0 to ``MAX_VOLUME`` (zero gives the inlet back).
    nu : array_like (ns,)
        Stoichiometric coefficients in the order of ``inlet.species`` [-].
    mode : {"adiabatic", "isothermal"}
        Energy balance.
    steps : int
        Integration steps, 4 to 2000.
    grading : float
        Grid grading exponent, 1 to 10 (1: uniform) [-].
    ergun : ErgunBed, optional
        Pressure drop by the Ergun equation; None: no pressure drop.
    rate_params : dict, optional
        Extra keyword arguments for ``rate`` (e.g. ``activity`` arrays of shape (B,)).

    Returns
    -------
    BedResult
    """
    if mode not in ("adiabatic", "isothermal"):
        raise InputError(f"mode must be 'adiabatic' or 'isothermal', got {mode!r}")
    if isinstance(steps, bool) or not (isinstance(steps, int | np.integer) and 4 <= steps <= 2000):
        raise InputError(f"steps must be a whole number from 4 to 2000, got {steps!r}")
    grading = float(check_range("grading", grading, 1.0, 10.0))
    if not isinstance(inlet, Stream):
        raise InputError(f"inlet must be a Stream, got {type(inlet).__name__}")
    if not callable(rate):
        raise InputError(f"rate must be a rate law (callable), got {type(rate).__name__}")
    B = len(inlet)
    V = check_range("volume", volume, 0.0, MAX_VOLUME, "m3")
    try:
        V = np.broadcast_to(V, (B,)).astype(float)
    except ValueError:
        raise InputError(f"volume must be a scalar or an array of the batch size {B}, got shape {V.shape}") from None
    nu = check_finite("nu", nu)
    if nu.shape != (len(inlet.species),) or not nu.any():
        raise InputError(f"nu must have one entry per species ({len(inlet.species)}), not all zero, got {nu.tolist()!r}")
    sset = species_set(inlet.species)
    sset.check_T(inlet.T, "inlet.T")
    if rate_params is not None and not isinstance(rate_params, dict):
        raise InputError(f"rate_params must be a dict of keyword arguments of the rate law, got {type(rate_params).__name__}")
    params = {}
    for key, v in (rate_params or {}).items():
        a = check_finite(f"rate_params[{key!r}]", v)
        if a.ndim and a.shape != (B,):
            raise InputError(f"rate_params[{key!r}] must be a scalar or an array of the batch size {B}, got shape {a.shape}")
        params[key] = a
    kernel = getattr(rate, "kernel", rate)
    n0, T0, P0 = inlet.n, inlet.T.astype(float), inlet.P.astype(float)
    pos, neg = nu > 0, nu < 0
    with np.errstate(divide="ignore", invalid="ignore"):
        xi_max = np.min(np.where(neg, n0 / np.where(neg, -nu, 1.0), np.inf), axis=-1)
        xi_min = np.max(np.where(pos, -n0 / np.where(pos, nu, 1.0), -np.inf), axis=-1)
    # Keep the reactants strictly present (a rate law may be singular where one vanishes, e.g.
    # the Temkin-Pyzhev reverse term at zero H2); products may be absent.
    # A reactant absent at the inlet allows no forward extent at all.
    xi_max = np.maximum(xi_max - 1e-9 * n0.sum(axis=-1), np.minimum(0.0, xi_max))
    lo_T, hi_T = sset.T_range
    # Energy balance along the bed: H(T, xi) = sum_i (n0_i + nu_i xi) h_i(T) = H_in, evaluated
    # from combined NASA coefficients (one polynomial per member instead of one per species).
    T_mid = float(sset.T_mid[0])
    c0 = ideal_gas.combined_coefficients(sset, n0)  # (B, 2, 7)
    c_nu = ideal_gas.combined_coefficients(sset, nu)  # (2, 7)
    H0 = T0 * ideal_gas.poly_h_RT(c0, T0, T_mid)  # H/R [K mol/s]

    if ergun is None and mode == "adiabatic" and COMPILED and B <= COMPILED_BATCH:
        jit = _compiled(rate)
        if jit is not None:
            act = np.broadcast_to(np.asarray(params.get("activity", 1.0), dtype=float), (B,))
            fr = _grid(steps, grading)
            xi, T, prof_xi, prof_T = jit[0].integrate(
                np.ascontiguousarray(n0, dtype=float), np.ascontiguousarray(T0), np.ascontiguousarray(P0), V,
                np.ascontiguousarray(act), jit[1]["effectiveness"], np.ascontiguousarray(nu, dtype=float),
                *jit[1]["index"], np.ascontiguousarray(c0), np.ascontiguousarray(c_nu), np.ascontiguousarray(H0),
                T_mid, float(lo_T), float(hi_T), jit[1]["cK"], jit[1]["T_midK"], fr, np.ascontiguousarray(xi_min),
                np.ascontiguousarray(xi_max), jit[1]["nh3_floor"], *jit[1]["k2"], OVERSHOOT_K, OVERSHOOT_ITERATIONS)
            return _result(inlet, nu, V, fr, xi, T, P0, prof_xi, prof_T, np.zeros(B, dtype=bool), None, T0)

    # Coefficients laid out (range, coefficient, member), so that each coefficient is one
    # contiguous row over the batch.
    c0T = np.ascontiguousarray(np.transpose(c0, (1, 2, 0)))  # (2, 7, B)

    def temperature(xi, T_guess, newton=2, members=None):
        """Energy-balance temperature at extent xi by Newton steps from T_guess [K] (of the
        batch, or of ``members`` only)."""
        if mode == "isothermal":
            return T0 if members is None else T0[members]
        cT = c0T if members is None else c0T[:, :, members]
        H_in = H0 if members is None else H0[members]
        rows = {}

        def coefficients(r):
            # sum_i n_i a_i of range r at this extent, with the divided terms of h/RT.
            if r not in rows:
                a = cT[r] + xi * c_nu[r][:, None]
                rows[r] = (a[0], a[1], a[2], a[3], a[4], a[5], a[1] / 2, a[2] / 3, a[3] / 4, a[4] / 5)
            return rows[r]

        T = T_guess
        for _ in range(newton):
            low = T <= T_mid
            if low.all():
                a = coefficients(0)
            elif not low.any():
                a = coefficients(1)
            else:
                a = tuple(np.where(low, lo_, hi_) for lo_, hi_ in zip(coefficients(0), coefficients(1), strict=True))
            a0, a1, a2, a3, a4, a5, b1, b2, b3, b4 = a
            HR = T * (a0 + T * (b1 + T * (b2 + T * (b3 + T * b4)))) + a5
            CR = a0 + T * (a1 + T * (a2 + T * (a3 + T * a4)))
            T = np.minimum(np.maximum(T - (HR - H_in) / CR, lo_T), hi_T)
        return T

    n0T = np.ascontiguousarray(n0.T)  # (ns, B): one contiguous row per species
    nu_col = nu[:, None]

    def composition(xi, n0T=n0T):
        """Mole fractions (B, ns) at extent xi: a view of species rows (columns contiguous)."""
        nT = np.maximum(n0T + nu_col * xi, 0.0)
        return (nT / nT.sum(axis=0)).T

    def f(xi, T_guess, P, newton=2):
        T = temperature(xi, T_guess, newton) if newton else T_guess
        return kernel(T, P, composition(xi), **params), T

    def rate_of(members, xi_m, T_guess, P_m):
        """Rate and energy-balance temperature of some members at extents xi_m."""
        T_m = temperature(xi_m, T_guess, 8, members)
        par = {k: (v[members] if np.ndim(v) and np.shape(v)[0] == B else v) for k, v in params.items()}
        return kernel(T_m, P_m, composition(xi_m, n0T[:, members]), **par), T_m

    def overshot(f_now, xi, T_now, f_before, xi_before, T_before):
        """Members whose rate changed sign over the last step by more than a trace: the secant
        estimate of the rate's zero lies behind xi by more than OVERSHOOT_K in temperature
        (adiabatic) or 1e-6 of the flow in extent (isothermal). Smaller sign changes (round-off
        at equilibrium, a nonlinear step landing just past it) are left alone."""
        flip = (f_now * f_before < 0.0) & (xi != xi_before)
        if not flip.any():
            return flip
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            frac = np.abs(f_now / (f_now - f_before))  # share of the step that went past the zero
            if mode == "isothermal":
                return flip & (frac * np.abs(xi - xi_before) > 1e-3 * n0_tot_milli)
            return flip & (frac * np.abs(T_now - T_before) > OVERSHOOT_K)

    def repair(flip, xi, T, f_now, xi_before, f_before, P):
        """Members whose rate changed sign over the last step went past equilibrium (a step far
        too long for a bed lighting off): bring them back to the rate's zero between the two
        points, by false position safeguarded with bisection (a bracketing root search, e.g.
        Press et al., Numerical Recipes, 3rd ed., section 9.2), ending on the near side, so that
        neither the extent nor the temperature profile carries the overshoot. Returns the
        members, their extent, temperature, rate and the secant slope of the rate there."""
        m = np.flatnonzero(flip)
        a, fa, Ta = xi_before[m].copy(), f_before[m].copy(), T[m].copy()  # near side (rate of the approach)
        b, fb = xi[m].copy(), f_now[m].copy()  # far side, past equilibrium
        for _ in range(OVERSHOOT_ITERATIONS):
            c = (a * fb - b * fa) / (fb - fa)
            lo, hi = np.minimum(a, b), np.maximum(a, b)
            w = hi - lo
            c = np.where((c > lo + 0.1 * w) & (c < hi - 0.1 * w), c, 0.5 * (a + b))
            fc, Tc = rate_of(m, c, Ta, P[m])
            near = fc * fa > 0.0
            a, fa, Ta = np.where(near, c, a), np.where(near, fc, fa), np.where(near, Tc, Ta)
            b, fb = np.where(near, b, c), np.where(near, fb, fc)
        slope = np.minimum((fb - fa) / np.where(b != a, b - a, 1.0), 0.0)
        return m, a, Ta, fa, slope

    # Small batches: the rate at the step's start and at the perturbed extent in one call of the
    # rate law (the per-call overhead dominates there); elementwise the same arithmetic.
    pair = B <= PAIR_BATCH
    if pair:
        params2 = {k: (np.concatenate([v, v]) if np.ndim(v) and np.shape(v)[0] == B else v)
                   for k, v in params.items()}
        n02T = np.concatenate([n0T, n0T], axis=1)

    fr = _grid(steps, grading)
    # At constant pressure the extent of a single reaction approaches its equilibrium
    # monotonically, so a rate that changes sign between steps marks an overshoot; with the Ergun
    # pressure drop the equilibrium itself moves along the bed and the rate may change sign
    # legitimately.
    monotone = ergun is None
    n0_tot_milli = 1e-3 * n0.sum(axis=-1)
    collapsed = np.zeros(B, dtype=bool)
    xi = np.zeros(B)
    T = T0.copy()
    P = P0.copy()
    prof_xi = np.zeros((B, steps + 1))
    prof_T = np.zeros((B, steps + 1))
    prof_T[:, 0] = T0
    if ergun is not None:
        if not isinstance(ergun, ErgunBed):
            raise InputError(f"ergun must be an ErgunBed, got {type(ergun).__name__}")
        try:
            D = np.broadcast_to(check_range("ergun.diameter", ergun.diameter, 1e-3, 1e4, "m"), (B,))
            dp = np.broadcast_to(check_range("ergun.particle_diameter", ergun.particle_diameter, 1e-5, 1.0, "m"), (B,))
            eps = np.broadcast_to(check_range("ergun.void_fraction", ergun.void_fraction, 0.0, 1.0, inclusive=(False, False)), (B,))
            mu = np.broadcast_to(check_range("ergun.viscosity", ergun.viscosity, 1e-7, 1e-2, "Pa s"), (B,))
        except ValueError as exc:
            if isinstance(exc, InputError):
                raise
            raise InputError(f"ergun: every field must be a scalar or an array of the batch size {B}") from None
        area = np.pi * D**2 / 4.0
        mass_flow = np.sum(n0 * sset.molar_mass, axis=-1)  # kg/s, constant along the bed

        def ergun_gradient(T_, P_, ntot):
            """-dP/dV [Pa/m3] by Ergun with the ideal-gas density."""
            rho = P_ * mass_flow / ntot / (R * T_)
            u = mass_flow / rho / area
            dPdz = 150 * mu * (1 - eps) ** 2 * u / (eps**3 * dp**2) + 1.75 * (1 - eps) * rho * u**2 / (eps**3 * dp)
            return dPdz / area

        G = ergun_gradient(T0, P0, n0.sum(axis=-1))
    xi_before, f_before, T_before = xi.copy(), np.zeros(B), T.copy()  # the previous step's start
    for k in range(steps):
        h = V * (fr[k + 1] - fr[k])
        # T is already the energy-balance temperature at xi.
        # A coarse difference: ROS2 keeps its order with any Jacobian, and a larger step keeps
        # round-off (which would make the outlet a noisy function of the inlet) out of it.
        delta = 1e-4 * np.maximum(np.abs(xi), n0_tot_milli)
        if pair:
            xi_d = xi + delta
            x2 = np.concatenate([xi, xi_d])
            T2 = np.concatenate([T, temperature(xi_d, T, newton=1)])
            r2 = kernel(T2, np.concatenate([P, P]), composition(x2, n02T), **params2)
            f0, f1 = r2[:B], r2[B:]
        else:
            f0, _ = f(xi, T, P, newton=0)
            f1, _ = f(xi + delta, T, P, newton=1)
        J = (f1 - f0) / delta
        if k > 0 and monotone:
            flip = overshot(f0, xi, T, f_before, xi_before, T_before)
            if flip.any():
                m, xi_m, T_m, f_m, J_m = repair(flip, xi, T, f0, xi_before, f_before, P)
                xi[m], T[m], f0[m], J[m] = xi_m, T_m, f_m, J_m
                prof_xi[m, k], prof_T[m, k] = xi_m, T_m
        xi_before, f_before, T_before = xi.copy(), f0, T.copy()
        # ROS2 is of order two for any approximation of J (a W-method). For a positive J (a bed
        # lighting off, the rate rising along it) 1 - gamma h J is replaced by 1/(1 + gamma h J):
        # equal to first order, but it never vanishes, so a step grows at most like an explicit
        # one instead of blowing up as gamma h J approaches 1.
        ghJ = _GAMMA * h * J
        denom = np.where(ghJ > 0.0, 1.0 / (1.0 + np.maximum(ghJ, 0.0)), 1.0 - ghJ)
        k1 = f0 / denom
        f2, _ = f(np.clip(xi + h * k1, xi_min, xi_max), T, P)
        k2 = (f2 - 2.0 * k1) / denom
        xi_new = xi + 1.5 * h * k1 + 0.5 * h * k2
        # The extent of a single reaction moves monotonically towards equilibrium; where a very
        # stiff step would reverse it, take the linearly implicit Euler step instead, which
        # cannot (1 - h J >= 1 for J <= 0).
        reverse = (xi_new - xi) * f0 < 0.0
        if reverse.any():
            euler = xi + h * f0 / np.maximum(1.0 - h * J, 1.0)
            xi_new = np.where(reverse, euler, xi_new)
        xi = np.clip(xi_new, xi_min, xi_max)
        T = temperature(xi, T, newton=3 if k == steps - 1 else 2)
        n_k = n0 + xi[:, None] * nu
        if ergun is not None:
            # Trapezoidal rule over the step: the gradient at its start and at its end (the end
            # evaluated at the Euler-predicted pressure).
            G_end = ergun_gradient(T, P - G * h, n_k.sum(axis=-1))
            P_next = P - 0.5 * (G + G_end) * h
            G = ergun_gradient(T, P_next, n_k.sum(axis=-1))
            P = P_next
            # A bed that would lose more than three quarters of its inlet pressure is flagged
            # (too long or too narrow for its flow) and held at that floor, never negative.
            low = P < P_FLOOR * P0
            collapsed |= low
            P = np.where(low, P_FLOOR * P0, P)
        prof_xi[:, k + 1] = xi
        prof_T[:, k + 1] = T
    # The last step too may have gone past equilibrium.
    if monotone:
        f_end, _ = f(xi, T, P, newton=0)
        flip = overshot(f_end, xi, T, f_before, xi_before, T_before)
    else:
        flip = np.zeros(B, dtype=bool)
    if flip.any():
        m, xi_m, T_m, _, _ = repair(flip, xi, T, f_end, xi_before, f_before, P)
        xi[m], T[m] = xi_m, T_m
        prof_xi[m, steps], prof_T[m, steps] = xi_m, T_m
    # The outlet temperature to the energy balance's round-off (a last step far from its
    # starting guess may need more than the three Newton steps above).
    for _ in range(20):
        T_new = temperature(xi, T, newton=1)
        done = np.all(np.abs(T_new - T) <= 1e-13 * T)
        T = T_new
        if done:
            break
    prof_T[:, steps] = T
    return _result(inlet, nu, V, fr, xi, T, P, prof_xi, prof_T, collapsed, ergun, T0)


def _result(inlet, nu, V, fr, xi, T, P, prof_xi, prof_T, collapsed, ergun, T0):
    """The BedResult of an integration, or OutOfRangeError where it gave no finite state."""
    bad = ~(np.isfinite(xi) & np.isfinite(T) & np.isfinite(P))
    if bad.any():  # a safety net: never hand back NaN
        k = np.flatnonzero(bad)
        raise OutOfRangeError(
            f"inlet{'' if ergun is None else ' or ergun'}: the rate law gave no finite rate along the bed for {k.size} member(s), first "
            f"member {k[0]} (inlet T = {T0[k[0]]:g} K, P = {inlet.P[k[0]]:g} Pa, volume = {V[k[0]]:g} m3): "
            "the inlet lies outside the rate law's validity"
        )
    n_out = np.maximum(inlet.n + xi[:, None] * nu, 0.0)
    outlet = Stream(inlet.species, n_out, T, P)
    return BedResult(
        outlet=outlet,
        extent=xi,
        T_max=prof_T.max(axis=-1),
        profile_V=V[:, None] * fr[None, :],
        profile_T=prof_T,
        profile_xi=prof_xi,
        collapsed=collapsed,
    )


def _compiled(rate):
    """(module, constants) of the compiled integration for this rate law, or None (no numba,
    or a law without :meth:`compiled_constants`, or one that declines)."""
    get = getattr(rate, "compiled_constants", None)
    if get is None:
        return None
    consts = get()
    if consts is None:
        return None
    try:
        jit = importlib.import_module("teakit.process._bed_jit")
    except ImportError:  # numba missing: the numpy path serves
        return None
    return jit, consts
