"""Compiled twin of :func:`teakit.process.bed.run_bed` for the ammonia rate law (numba).

:func:`run_bed` integrates a batch with whole-array numpy steps; for the batches of a few dozen
to a few hundred members that an optimiser asks for, the fixed cost of each numpy call (about
50 per step) dominates. This module runs the same algorithm member by member in machine code:
the ROS2 W-method step with its positive-Jacobian safeguard, the monotone-extent fallback, the
overshoot test and its regula-falsi repair, and the Newton solution of the adiabatic energy
balance from combined NASA coefficients, with the Temkin-Pyzhev rate in the fugacity form of
Dyson & Simon (Ind. Eng. Chem. Fundam. 7, 605, 1968) and teakit's own K(T) (alpha = 1/2).
Every expression keeps the operation order of the numpy version, so the two agree to round-off
(tests/test_bed.py checks them against each other); only adiabatic beds without pressure drop
are compiled, everything else stays on the numpy path.

The functions are compiled on first use and cached on disk (numba ``cache=True``).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

ATM = 101325.0
_KMOL_H_TO_MOL_S = 1000.0 / 3600.0
_GAMMA = 1.0 + 1.0 / math.sqrt(2.0)


@njit(cache=True)
def _lnK_half(T, cK, T_mid):
    """ln K of 1/2 N2 + 3/2 H2 = NH3 at 1 bar (-sum nu g/RT from combined coefficients)."""
    r = 1 if T > T_mid else 0
    a0, a1, a2, a3, a4, a5, a6 = cK[r, 0], cK[r, 1], cK[r, 2], cK[r, 3], cK[r, 4], cK[r, 5], cK[r, 6]
    h = a0 + T * (a1 / 2 + T * (a2 / 3 + T * (a3 / 4 + T * a4 / 5))) + a5 / T
    s = a0 * math.log(T) + T * (a1 + T * (a2 / 2 + T * (a3 / 3 + T * a4 / 4))) + a6
    return -(h - s)


@njit(cache=True)
def _rate(T, P, nN2, nH2, nNH3, ntot, act, eff, cK, T_mid, nh3_floor, pre, e_cal, r_cal):
    """Extent rate [mol/(s m3)] of N2 + 3 H2 = 2 NH3 (AmmoniaTemkinPyzhev.kernel, alpha 1/2)."""
    p = P / ATM
    phi_n2 = 0.93431737 + 0.3101804e-3 * T + 0.295896e-3 * p - 0.2707279e-6 * T**2 + 0.4775207e-6 * p**2
    phi_h2 = math.exp(
        math.exp(-3.8402 * T**0.125 + 0.541) * p
        - math.exp(-0.1263 * math.sqrt(T) - 15.980) * p**2  # numpy computes T**0.5 as sqrt
        + 300.0 * math.exp(-0.011901 * T - 5.941) * (math.exp(-p / 300.0) - 1.0)
    )
    phi_nh3 = 0.1438996 + 0.2028538e-2 * T - 0.4487672e-3 * p - 0.1142945e-5 * T**2 + 0.2761216e-6 * p**2
    aN2 = nN2 / ntot * phi_n2 * p
    aH2 = max(nH2 / ntot * phi_h2 * p, 1e-100)
    aNH3 = nNH3 / ntot * phi_nh3 * p
    Ka = math.exp(_lnK_half(T, cK, T_mid)) * 1.01325
    k2 = pre * math.exp(-e_cal / (r_cal * T))
    sq_aH2 = math.sqrt(aH2)
    a_eq = Ka * math.sqrt(aN2) * aH2 * sq_aH2
    a_fwd = max(aNH3, nh3_floor * a_eq)
    a_safe = a_fwd if aN2 > 0 else 1.0
    forward = Ka**2 * aN2 * aH2 * sq_aH2 / a_safe
    reverse = aNH3 / (aH2 * sq_aH2)
    if not aN2 > 0:
        forward = 0.0
    r = k2 * (forward - reverse) * act * eff
    return r * _KMOL_H_TO_MOL_S


@njit(cache=True)
def _temperature(xi, T, newton, c0m, c_nu, H_in, T_mid, lo_T, hi_T):
    """Energy-balance temperature at extent xi by Newton steps from T [K]."""
    for _ in range(newton):
        r = 0 if T <= T_mid else 1
        a0 = c0m[r, 0] + xi * c_nu[r, 0]
        a1 = c0m[r, 1] + xi * c_nu[r, 1]
        a2 = c0m[r, 2] + xi * c_nu[r, 2]
        a3 = c0m[r, 3] + xi * c_nu[r, 3]
        a4 = c0m[r, 4] + xi * c_nu[r, 4]
        a5 = c0m[r, 5] + xi * c_nu[r, 5]
        b1, b2, b3, b4 = a1 / 2, a2 / 3, a3 / 4, a4 / 5
        HR = T * (a0 + T * (b1 + T * (b2 + T * (b3 + T * b4)))) + a5
        CR = a0 + T * (a1 + T * (a2 + T * (a3 + T * a4)))
        T = min(max(T - (HR - H_in) / CR, lo_T), hi_T)
    return T


@njit(cache=True)
def _rate_at(xi, T, P, n0m, nu, iN2, iH2, iNH3, act, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal):
    """Rate at extent xi (mole fractions from n0 + nu xi, clipped at zero)."""
    ntot = 0.0
    for i in range(n0m.shape[0]):
        ntot += max(n0m[i] + nu[i] * xi, 0.0)
    nN2 = max(n0m[iN2] + nu[iN2] * xi, 0.0)
    nH2 = max(n0m[iH2] + nu[iH2] * xi, 0.0)
    nNH3 = max(n0m[iNH3] + nu[iNH3] * xi, 0.0)
    return _rate(T, P, nN2, nH2, nNH3, ntot, act, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal)


@njit(cache=True)
def integrate(n0, T0, P0, V, act, eff, nu, iN2, iH2, iNH3, c0, c_nu, H0, T_mid, lo_T, hi_T, cK, T_midK,
              fr, xi_min, xi_max, nh3_floor, pre, e_cal, r_cal, overshoot_K, overshoot_iterations):
    """Adiabatic beds without pressure drop: extents, outlet temperatures and profiles.

    Returns
    -------
    xi (B,), T (B,), prof_xi (B, steps + 1), prof_T (B, steps + 1)
    """
    B = n0.shape[0]
    steps = fr.shape[0] - 1
    xi_out = np.zeros(B)
    T_out = np.zeros(B)
    prof_xi = np.zeros((B, steps + 1))
    prof_T = np.zeros((B, steps + 1))
    for m in range(B):
        n0m = n0[m]
        c0m = c0[m]
        H_in = H0[m]
        P = P0[m]
        a_m = act[m]
        lo_xi, hi_xi = xi_min[m], xi_max[m]
        milli = 0.0
        for i in range(n0m.shape[0]):
            milli += n0m[i]
        milli *= 1e-3
        xi = 0.0
        T = T0[m]
        prof_T[m, 0] = T
        xi_b, f_b, T_b = 0.0, 0.0, T
        f0 = 0.0
        for k in range(steps + 1):
            if k < steps:
                h = V[m] * (fr[k + 1] - fr[k])
                delta = 1e-4 * max(abs(xi), milli)
                xi_d = xi + delta
                T_d = _temperature(xi_d, T, 1, c0m, c_nu, H_in, T_mid, lo_T, hi_T)
                f0 = _rate_at(xi, T, P, n0m, nu, iN2, iH2, iNH3, a_m, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal)
                f1 = _rate_at(xi_d, T_d, P, n0m, nu, iN2, iH2, iNH3, a_m, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal)
                J = (f1 - f0) / delta
            else:  # after the last step: only the overshoot test
                f0 = _rate_at(xi, T, P, n0m, nu, iN2, iH2, iNH3, a_m, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal)
                J = 0.0
            if k > 0:
                # Overshoot: the rate changed sign over the last step by more than a trace.
                flip = (f0 * f_b < 0.0) and (xi != xi_b)
                if flip:
                    frac = abs(f0 / (f0 - f_b))
                    flip = frac * abs(T - T_b) > overshoot_K
                if flip:
                    a, fa, Ta = xi_b, f_b, T
                    b, fb = xi, f0
                    for _ in range(overshoot_iterations):
                        c = (a * fb - b * fa) / (fb - fa)
                        lo, hi = min(a, b), max(a, b)
                        w = hi - lo
                        if not ((c > lo + 0.1 * w) and (c < hi - 0.1 * w)):
                            c = 0.5 * (a + b)
                        Tc = _temperature(c, Ta, 8, c0m, c_nu, H_in, T_mid, lo_T, hi_T)
                        fc = _rate_at(c, Tc, P, n0m, nu, iN2, iH2, iNH3, a_m, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal)
                        if fc * fa > 0.0:
                            a, fa, Ta = c, fc, Tc
                        else:
                            b, fb = c, fc
                    slope = min((fb - fa) / (b - a if b != a else 1.0), 0.0)
                    xi, T, f0, J = a, Ta, fa, slope
                    prof_xi[m, k], prof_T[m, k] = a, Ta
            if k == steps:
                break
            xi_b, f_b, T_b = xi, f0, T
            ghJ = _GAMMA * h * J
            denom = 1.0 / (1.0 + max(ghJ, 0.0)) if ghJ > 0.0 else 1.0 - ghJ
            k1 = f0 / denom
            xi_p = min(max(xi + h * k1, lo_xi), hi_xi)
            T_p = _temperature(xi_p, T, 2, c0m, c_nu, H_in, T_mid, lo_T, hi_T)
            f2 = _rate_at(xi_p, T_p, P, n0m, nu, iN2, iH2, iNH3, a_m, eff, cK, T_midK, nh3_floor, pre, e_cal, r_cal)
            k2 = (f2 - 2.0 * k1) / denom
            xi_new = xi + 1.5 * h * k1 + 0.5 * h * k2
            if (xi_new - xi) * f0 < 0.0:
                xi_new = xi + h * f0 / max(1.0 - h * J, 1.0)
            xi = min(max(xi_new, lo_xi), hi_xi)
            T = _temperature(xi, T, 3 if k == steps - 1 else 2, c0m, c_nu, H_in, T_mid, lo_T, hi_T)
            prof_xi[m, k + 1] = xi
            prof_T[m, k + 1] = T
        # The outlet temperature to the energy balance's round-off.
        for _ in range(20):
            T_new = _temperature(xi, T, 1, c0m, c_nu, H_in, T_mid, lo_T, hi_T)
            done = abs(T_new - T) <= 1e-13 * T
            T = T_new
            if done:
                break
        prof_T[m, steps] = T
        xi_out[m] = xi
        T_out[m] = T
    return xi_out, T_out, prof_xi, prof_T
