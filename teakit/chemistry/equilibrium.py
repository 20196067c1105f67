"""Batched chemical-equilibrium solver in the extents of independent reactions.

For reactions j with stoichiometric coefficients nu_ji, the equilibrium extents xi_j satisfy

.. math::  \\ln K_j(T) = \\sum_i \\nu_{ji} \\ln\\left(\\frac{y_i \\phi_i P}{P^\\circ}\\right),
           \\qquad n_i = n_{i,0} + \\sum_j \\nu_{ji} \\xi_j

(Smith, Van Ness & Abbott, Introduction to Chemical Engineering Thermodynamics, 7th ed., ch. 13).
The fugacity coefficients phi_i come from a model of :mod:`teakit.thermo.fugacity` and are
updated every iteration (lagged in the Jacobian, which is that of the ideal-gas mixture).

One reaction: a safeguarded Newton iteration on the logistic transform of the extent between its
bounds, with a bracket and bisection fall-back, so every member converges. Several reactions: a
damped Newton iteration from an interior starting point (a small linear programme per distinct
feed), steps cut back to stay inside the composition polytope. Iterations are bounded; members
that do not converge raise :class:`~teakit.errors.ConvergenceError` naming them.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import ConvergenceError, InputError

__all__ = ["solve_extents"]

MAX_ITER = 200
TOL = 1e-11
_TINY = 1e-300


def _sigmoid(u):
    return 0.5 * (1.0 + np.tanh(0.5 * u))


def _single(nu, n0, lnK, lnP, lnphi, max_iter, tol):
    """One reaction: nu (ns,), n0 (B, ns), lnK (B,), lnP (B,) = ln(P/P0). Returns xi (B,)."""
    pos, neg = nu > 0, nu < 0
    with np.errstate(divide="ignore"):
        lo = np.max(np.where(pos, -n0 / np.where(pos, nu, 1.0), -np.inf), axis=-1)
        hi = np.min(np.where(neg, n0 / np.where(neg, -nu, 1.0), np.inf), axis=-1)
    lo = np.where(np.isfinite(lo), lo, 0.0)  # no product at all in the feed: xi >= 0
    hi = np.where(np.isfinite(hi), hi, 0.0)
    D = hi - lo
    scale = n0.sum(axis=-1)
    degenerate = D <= 1e-14 * scale
    if degenerate.any():
        k = int(np.flatnonzero(degenerate)[0])
        raise InputError(
            "feed has no reactant and no product the reaction can use: the reaction can proceed "
            f"neither forward nor backward (batch member {k}, feed per mole {n0[k].tolist()})"
        )
    # n_i = c0_i + cs_i (xi - lo) + cm_i (hi - xi): species limiting at either bound are then
    # exactly zero there, without cancellation near complete conversion.
    base_hi = np.maximum(n0 + nu * hi[:, None], 0.0)
    base_lo = np.maximum(n0 + nu * lo[:, None], 0.0)
    c0 = np.where(neg, base_hi, np.where(pos, base_lo, n0))
    cs = np.where(pos, nu, 0.0)
    cm = np.where(neg, -nu, 0.0)
    dnu = nu.sum()
    n_all = n0.shape[0]

    def evaluate(u_sub, idx):
        """Residual, its derivative in u, and the amounts, for the members ``idx``."""
        sel = slice(None) if idx.size == n_all else idx
        s, sm = _sigmoid(u_sub), _sigmoid(-u_sub)
        Di = D[sel]
        n = c0[sel] + cs * (Di * s)[:, None] + cm * (Di * sm)[:, None]
        n = np.maximum(n, _TINY)
        nt = n.sum(axis=-1)
        lnph = lnphi(n / nt[:, None], None if idx.size == n_all else idx)
        f = lnK[sel] - (nu * (np.log(n) + lnph)).sum(axis=-1) + dnu * (np.log(nt) - lnP[sel])
        dfdxi = -((nu**2 / n).sum(axis=-1) - dnu**2 / nt)
        return f, dfdxi * Di * s * sm, n

    u = np.zeros(lo.shape)
    u_lo = np.full(lo.shape, -np.inf)
    u_hi = np.full(lo.shape, np.inf)
    active = np.ones(lo.shape, dtype=bool)
    f = np.zeros(lo.shape)
    for _it in range(max_iter):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        ua = u[idx]
        fa, dfa, _ = evaluate(ua, idx)
        f[idx] = fa
        done = np.abs(fa) < tol
        # Keep a bracket: the residual decreases with the extent, hence with u.
        u_lo[idx] = np.where(fa > 0, ua, u_lo[idx])
        u_hi[idx] = np.where(fa <= 0, ua, u_hi[idx])
        lo_b, hi_b = u_lo[idx], u_hi[idx]
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            u_new = ua + np.clip(-fa / np.where(dfa < 0, dfa, -_TINY), -10.0, 10.0)
        both = np.isfinite(lo_b) & np.isfinite(hi_b)
        outside = (u_new <= lo_b) | (u_new >= hi_b) | ~np.isfinite(u_new)
        bisect = np.where(
            both, 0.5 * (lo_b + hi_b), np.where(np.isfinite(lo_b), lo_b + 10.0, hi_b - 10.0)
        )
        u_new = np.where(outside, bisect, u_new)
        narrow = both & (hi_b - lo_b < 1e-13 * np.maximum(1.0, np.abs(lo_b)))
        u[idx] = np.where(done, ua, u_new)
        active[idx] = ~(done | narrow)
    idx = np.flatnonzero(active)
    if idx.size:
        raise ConvergenceError(
            "single-reaction equilibrium did not converge (residual: ln K - ln Q)",
            members=idx,
            residuals=f[idx],
            iterations=max_iter,
        )
    everyone = np.arange(u.size)
    f, _, n = evaluate(u, everyone)
    bad = np.abs(f) > 1e3 * tol
    if bad.any():
        k = np.flatnonzero(bad)
        raise ConvergenceError(
            "single-reaction equilibrium stalled at a composition bound (residual: ln K - ln Q)",
            members=k,
            residuals=f[k],
            iterations=max_iter,
        )
    return n


def _interior_start(nu, n0_unique):
    """An extent vector with every species amount > 0, per distinct feed (linear programme)."""
    from scipy.optimize import linprog

    R, ns = nu.shape
    starts = np.zeros((n0_unique.shape[0], R))
    for k, n0 in enumerate(n0_unique):
        # maximise t subject to n0 + nu^T xi >= t for species that take part, t <= mean(n0)
        involved = np.any(nu != 0, axis=0)
        A = np.hstack([-nu.T[involved], np.ones((involved.sum(), 1))])
        b = n0[involved]
        c = np.zeros(R + 1)
        c[-1] = -1.0
        bounds = [(None, None)] * R + [(None, n0.sum() / ns)]
        res = linprog(c, A_ub=A, b_ub=b, bounds=bounds, method="highs")
        # the start itself must hold every species (the LP works to absolute tolerances)
        ok = res.success and (n0 + 0.5 * res.x[:R] @ nu)[involved].min() > 1e-12 * n0.sum()
        if not ok or res.x[-1] <= 1e-12 * n0.sum():
            raise InputError(
                "feed admits no composition in which every species of the reactions is present: "
                "some species cannot form from this feed with these reactions "
                f"(feed per mole {n0.tolist()})"
            )
        # back off halfway towards the analytic centre-ish point
        starts[k] = 0.5 * res.x[:R]
    return starts


def _multi(nu, n0, lnK, lnP, lnphi, max_iter, tol):
    """Several reactions: Newton steps on the extents with a line search, amounts tracked.

    The amounts themselves are updated (n <- n + alpha dn with dn = nu^T step), not recomputed
    from the feed and the extents, so that a species present only in traces keeps its relative
    precision. The step is the Newton step of the ideal-gas Gibbs energy (phi lagged); alpha is
    at most 1 and keeps every amount positive (at most 99 % of the way to zero), and is cut back
    by a safeguarded secant search where the Gibbs energy along the step (phi frozen, convex in
    alpha) would rise again before alpha, i.e. where its slope -F(alpha).step turns positive.
    """
    R = nu.shape[0]
    B = n0.shape[0]
    uniq, inverse = np.unique(n0, axis=0, return_inverse=True)
    n = np.maximum(n0 + _interior_start(nu, uniq)[inverse.ravel()] @ nu, _TINY)
    dnu = nu.sum(axis=1)
    active = np.ones(B, dtype=bool)
    F = np.zeros((B, R))
    eye = np.eye(R)

    def residual(n_, lph, lp, lk):
        nt_ = n_.sum(axis=-1, keepdims=True)
        return lk - (np.log(n_ / nt_) + lph + lp[:, None]) @ nu.T

    for _it in range(max_iter):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        ni = n[idx]
        nt = ni.sum(axis=-1)
        lph = lnphi(ni / nt[:, None], idx)
        lp, lk = lnP[idx], lnK[idx]
        Fi = residual(ni, lph, lp, lk)
        F[idx] = Fi
        done = np.max(np.abs(Fi), axis=-1) < tol
        H = np.einsum("ji,ki,bi->bjk", nu, nu, 1.0 / ni) - dnu[None, :, None] * dnu[None, None, :] / nt[:, None, None]
        # Solve with H scaled to a unit diagonal (the curvatures of trace and major species
        # differ by many orders). H is positive definite unless the reactions can scale the
        # whole mixture; then 1e-12 on the scaled diagonal keeps it invertible (only then: a
        # soft direction may legitimately have a scaled curvature of 1e-15).
        d = 1.0 / np.sqrt(np.maximum(np.einsum("bjj->bj", H), _TINY))
        Hs = H * d[:, :, None] * d[:, None, :]
        try:
            step = d * np.linalg.solve(Hs, (d * Fi)[..., None])[..., 0]
        except np.linalg.LinAlgError:
            step = d * np.linalg.solve(Hs + 1e-12 * eye, (d * Fi)[..., None])[..., 0]
        dn = step @ nu
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(dn < 0, ni / -dn, np.inf)
        a_hi = np.minimum(1.0, 0.99 * ratio.min(axis=-1))

        def slope(a, ni=ni, dn=dn, lph=lph, lp=lp, lk=lk, step=step):
            """Slope -F(a).step of the Gibbs energy along the step (phi frozen), and F(a)."""
            r = residual(np.maximum(ni + a[:, None] * dn, _TINY), lph, lp, lk)
            return -np.sum(r * step, axis=-1), r

        s_hi, F_hi = slope(a_hi)
        alpha = a_hi.copy()
        # keep the step where the residual falls (near the solution the slope is rounding noise
        # of the major species' terms), cut it back where it overshoots the minimum
        cut = (s_hi > 0) & ~done & (np.max(np.abs(F_hi), axis=-1) >= np.max(np.abs(Fi), axis=-1))
        if cut.any():  # the minimum along the step lies inside (0, a_hi): Illinois secant search
            a_lo = np.zeros_like(a_hi)
            s_lo = -np.sum(Fi * step, axis=-1)  # < 0 (a descent direction)
            a_up, s_up = a_hi.copy(), s_hi.copy()
            for _ in range(30):
                with np.errstate(divide="ignore", invalid="ignore"):
                    a_new = np.where(s_up > s_lo, a_lo - s_lo * (a_up - a_lo) / (s_up - s_lo), 0.5 * (a_lo + a_up))
                a_new = np.where((a_new > a_lo) & (a_new < a_up), a_new, 0.5 * (a_lo + a_up))
                s_new = slope(a_new)[0]
                right = s_new > 0
                a_lo, s_lo = np.where(right, a_lo, a_new), np.where(right, s_lo * 0.5, s_new)
                a_up, s_up = np.where(right, a_new, a_up), np.where(right, s_new, s_up * 0.5)
                if np.all(~cut | (np.abs(s_new) <= 0.1 * np.abs(s_hi)) | (a_up - a_lo <= 1e-15 * a_hi)):
                    break
            alpha = np.where(cut, np.where(a_lo > 0, a_lo, a_new), alpha)
        alpha = np.where(done, 0.0, alpha)
        n[idx] = np.maximum(ni + alpha[:, None] * dn, _TINY)
        active[idx] = ~done
    else:
        idx = np.flatnonzero(active)
        if idx.size:
            raise ConvergenceError(
                "multi-reaction equilibrium did not converge (residual: max |ln K - ln Q|)",
                members=idx,
                residuals=np.max(np.abs(F[idx]), axis=-1),
                iterations=max_iter,
            )
    return n


def solve_extents(nu, n0, lnK, lnP, model, T, P, max_iter=MAX_ITER, tol=TOL):
    """Equilibrium amounts for a flat batch.

    Parameters
    ----------
    nu : ndarray (R, ns)
        Stoichiometric coefficients [-].
    n0 : ndarray (B, ns)
        Feed amounts [mol] (any consistent amount unit).
    lnK : ndarray (B, R)
        ln of the equilibrium constants at each member's T [-].
    lnP : ndarray (B,)
        ln(P / P_REF) [-].
    model : FugacityModel
        Fugacity model of :mod:`teakit.thermo.fugacity` for the species set.
    T, P : ndarray (B,)
        Temperature [K] and pressure [Pa].

    Returns
    -------
    ndarray (B, ns)
        Equilibrium amounts [mol].
    """
    lnphi = model.bind(T, P)
    # Equilibrium depends only on the ratios of the feed amounts: solve for one mole of feed
    # (the starting point's linear programme works to absolute tolerances) and scale back.
    scale = n0.sum(axis=-1, keepdims=True)
    unit = n0 / scale
    if nu.shape[0] == 1:
        return _single(nu[0], unit, lnK[:, 0], lnP, lnphi, max_iter, tol) * scale
    return _multi(nu, unit, lnK, lnP, lnphi, max_iter, tol) * scale
