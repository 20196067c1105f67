"""Recycle-loop solver: Wegstein acceleration on the tear stream, for a whole batch at once.

For a tear vector x with the flowsheet map x -> g(x), Wegstein's method (Wegstein, Commun. ACM 1,
9, 1958; Westerberg, Hutchison, Motard & Winter, Process Flowsheeting, 1979, ch. 3) updates each
element with its own secant slope

.. math:: s = \\frac{g(x_k) - g(x_{k-1})}{x_k - x_{k-1}}, \\quad q = \\frac{s}{s - 1}, \\quad
          x_{k+1} = q\\,x_k + (1 - q)\\,g(x_k)

with q bounded to [q_min, q_max] (default [-5, 0]: never slower than direct substitution, never
wildly extrapolated). Members that have converged are frozen and no longer evaluated; the number
of iterations is bounded, and members still open then raise
:class:`~teakit.errors.ConvergenceError` naming them with their residuals.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import ConvergenceError, InputError
from teakit.validation import check_finite, check_positive, check_range

__all__ = ["broyden", "wegstein"]


def wegstein(
    g,
    x0: np.ndarray,
    *,
    tol: float = 1e-10,
    max_iter: int = 200,
    q_bounds: tuple[float, float] = (-5.0, 0.0),
    scale: np.ndarray | None = None,
    delay: int = 2,
    raise_on_failure: bool = True,
):
    """Solve x = g(x) for a batch of tear vectors.

    Parameters
    ----------
    g : callable
        ``g(x, idx) -> (gx, info)`` for the members ``idx`` (an int array into the batch) with
        ``x`` of shape (len(idx), m); ``info`` is any array or dict of arrays (len(idx), ...)
        that the caller wants back at the converged point (it is the value from the last call).
    x0 : ndarray (B, m)
        Starting tear values.
    tol : float
        Convergence when max |g(x) - x| / scale < tol per member [-].
    max_iter : int
        Iteration bound (1 to 10000).
    q_bounds : (float, float)
        Bounds on the Wegstein factor q.
    scale : ndarray (B,) or (B, m), optional
        Scale of the residual; default max(|x|) per member.
    delay : int
        Direct-substitution steps before acceleration starts.
    raise_on_failure : bool
        If False, return with the ``converged`` mask instead of raising.

    Returns
    -------
    x : ndarray (B, m)
        Converged tear values (the last g(x)).
    info : dict of ndarray
        The ``info`` of the last evaluation of each member, stacked over the batch.
    converged : ndarray of bool (B,)
    iterations : int
    """
    x, tol, scale = _check_common(g, x0, tol, max_iter, scale)
    qb = check_finite("q_bounds", q_bounds)
    if qb.shape != (2,) or not qb[0] <= qb[1]:
        raise InputError(f"q_bounds must be (low, high) with low <= high, got {q_bounds!r}")
    if isinstance(delay, bool) or not isinstance(delay, int | np.integer) or delay < 0:
        raise InputError(f"delay must be a whole number >= 0, got {delay!r}")
    B, m = x.shape
    if scale is not None:
        try:
            scale = np.broadcast_to(scale, (B,))
        except ValueError:
            raise InputError(f"scale must be a scalar or an array of shape ({B},), got {np.shape(scale)}") from None
    active = np.ones(B, dtype=bool)
    failed = np.zeros(B, dtype=bool)
    x_prev = g_prev = None
    info_store: dict[str, np.ndarray] = {}
    resid = np.full(B, np.inf)
    it = 0
    for it in range(1, max_iter + 1):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        gx, info, nonfinite = _call(g, x[idx], idx, m)
        if nonfinite.any():  # g gave no value there: stop the member where it is
            failed[idx[nonfinite]] = True
            active[idx[nonfinite]] = False
            gx = np.where(nonfinite[:, None], x[idx], gx)
        _store(info_store, info, idx, B)
        sc = np.max(np.abs(x[idx]), axis=-1) if scale is None else scale[idx]
        err = np.max(np.abs(gx - x[idx]), axis=-1) / np.maximum(sc, 1e-300)
        resid[idx] = np.where(nonfinite, np.inf, err)
        done = (err < tol) & ~nonfinite
        if it > delay and x_prev is not None:
            dx = x[idx] - x_prev[idx]
            dg = gx - g_prev[idx]
            with np.errstate(divide="ignore", invalid="ignore"):
                s = np.where(np.abs(dx) > 1e-300, dg / dx, 0.0)
                q = np.where(np.abs(s - 1.0) > 1e-12, s / (s - 1.0), 0.0)
            q = np.clip(np.nan_to_num(q, nan=0.0, posinf=0.0, neginf=0.0), *q_bounds)
            x_new = q * x[idx] + (1.0 - q) * gx
        else:
            x_new = gx
        if x_prev is None:
            x_prev = np.zeros_like(x)
            g_prev = np.zeros_like(x)
        x_prev[idx] = x[idx]
        g_prev[idx] = gx
        # Converged members keep g(x); the rest move on.
        x_new = np.where(np.isfinite(x_new), x_new, gx)
        x[idx] = np.where(done[:, None] | nonfinite[:, None], gx, np.maximum(x_new, 0.0))
        active[idx[done]] = False
    converged = ~active & ~failed
    if not converged.all() and raise_on_failure:
        _raise_unconverged(converged, resid, it)
    return x, info_store, converged, it


def _check_common(g, x0, tol, max_iter, scale, B_name="x0"):
    """Checks shared by the solvers; returns x (float copy, (B, m)), tol and the scale."""
    if not callable(g):
        raise InputError(f"g must be a callable g(x, idx) -> (gx, info), got {type(g).__name__}")
    if isinstance(max_iter, bool) or not (isinstance(max_iter, int | np.integer) and 1 <= max_iter <= 10000):
        raise InputError(f"max_iter must be a whole number from 1 to 10000, got {max_iter!r}")
    tol = float(check_range("tol", tol, 0.0, 0.1, inclusive=(False, True)))
    x = check_finite("x0", x0).astype(float, copy=True)
    if x.ndim != 2 or x.shape[0] < 1 or x.shape[1] < 1:
        raise InputError(f"x0 must have shape (B, m) with B, m >= 1, got {x.shape}")
    if scale is not None:
        scale = check_positive("scale", scale)
    return x, tol, scale


def _call(g, x, idx, m):
    """g at x for members idx: its values (len(idx), m) and info; non-finite rows flagged."""
    out = g(x, idx)
    if not (isinstance(out, tuple) and len(out) == 2):
        raise InputError("g must return a pair (gx, info)")
    gx, info = out
    try:
        gx = np.asarray(gx, dtype=float)
    except (TypeError, ValueError):
        raise InputError("g must return gx as an array of numbers") from None
    if gx.shape != (idx.size, m):
        raise InputError(f"g must return gx of shape {(idx.size, m)} for {idx.size} members, got {gx.shape}")
    return gx, info, ~np.all(np.isfinite(gx), axis=-1)


def _raise_unconverged(converged, resid, iterations):
    bad = np.flatnonzero(~converged)
    raise ConvergenceError(
        "recycle loop did not converge (residual: max relative change of the tear stream)",
        members=bad,
        residuals=resid[bad],
        iterations=iterations,
    )


def _store(store: dict, info, idx, B):
    if info is None:
        return
    if not isinstance(info, dict):
        info = {"info": info}
    for k, v in info.items():
        v = np.asarray(v)
        if k not in store:
            store[k] = np.zeros((B,) + v.shape[1:], dtype=v.dtype)
        store[k][idx] = v


def broyden(
    g,
    x0: np.ndarray,
    *,
    tol: float = 1e-10,
    max_iter: int = 200,
    scale: np.ndarray | None = None,
    max_step: float = 0.5,
    raise_on_failure: bool = True,
    jacobian: str = "finite-difference",
    fd_step: float = 1e-5,
    g_jacobian=None,
    fd_columns: np.ndarray | None = None,
    H0: np.ndarray | None = None,
    keep: dict | None = None,
    stall: int | None = None,
):
    """Solve x = g(x) for a batch by Broyden's method on f(x) = g(x) - x.

    Each member carries its own inverse Jacobian estimate. With ``jacobian="finite-difference"``
    (default) it starts from a forward-difference Jacobian of g at x0, all m perturbed points of
    every member evaluated in one batched call of g, which captures the slow modes of a recycle
    loop (inerts building up) from the first step; with ``"identity"`` it starts at -I in scaled
    variables, so the first step is a direct substitution. Later steps use the "good" Broyden
    update of the
    inverse (Broyden, Math. Comp. 19, 577, 1965; Dennis & Schnabel, Numerical Methods for
    Unconstrained Optimization and Nonlinear Equations, 1983, ch. 8). Steps are cut back so that
    no element moves by more than ``max_step`` times the member's largest element in one
    iteration; an element that would turn negative drops to a tenth of its value instead. ``g`` may return ``info["halt"]`` (bool per member) to stop
    members that cannot converge (e.g. nothing condenses); they are reported as not converged.

    Parameters and returns are those of :func:`wegstein` (``scale`` is per element here,
    default max(|x0|) per member), and:

    g_jacobian : callable, optional
        A cheaper map of the same call shape for the starting difference Jacobian (e.g. a coarser
        integration); it is called once at x0 (every member) and once at the perturbed points.
    fd_columns : array_like of bool (B, m) or (m,), optional
        Which directions to difference per member; a direction left out is taken to have
        dg/dx_k = 0 (an element that stays zero and does not act on the others). Default all.
    H0 : ndarray (B, m, m), optional
        Starting inverse Jacobian of f in scaled variables (e.g. ``keep["H"]`` of an earlier
        solve); replaces the difference Jacobian.
    keep : dict, optional
        Filled with ``H``, ``scale`` and ``x_eval`` (the last point at which g was evaluated).
    stall : int, optional
        Stop a member whose residual has not halved in this many full steps.
    """
    x, tol, scale = _check_common(g, x0, tol, max_iter, scale)
    B, m = x.shape
    if scale is None:
        sc = np.broadcast_to(np.max(np.abs(x), axis=-1, keepdims=True), (B, m)).copy()
    else:
        try:
            sc = np.broadcast_to(scale, (B, m)).copy()
        except ValueError:
            raise InputError(f"scale must broadcast to ({B}, {m}), got shape {np.shape(scale)}") from None
    sc = np.where(sc > 0, sc, 1.0)  # an all-zero start scales by 1
    if jacobian not in ("finite-difference", "identity"):
        raise InputError(f"jacobian must be 'finite-difference' or 'identity', got {jacobian!r}")
    max_step = float(check_range("max_step", max_step, 0.0, 10.0, inclusive=(False, True)))
    fd_step = float(check_range("fd_step", fd_step, 0.0, 0.1, inclusive=(False, True)))
    if stall is not None and (isinstance(stall, bool) or not isinstance(stall, int | np.integer) or stall < 0):
        raise InputError(f"stall must be None or a whole number >= 0, got {stall!r}")
    if g_jacobian is not None and not callable(g_jacobian):
        raise InputError(f"g_jacobian must be callable, got {type(g_jacobian).__name__}")
    H = np.broadcast_to(-np.eye(m), (B, m, m)).copy()
    if H0 is not None:
        try:
            H = np.array(H0, dtype=float).reshape(B, m, m)
        except (TypeError, ValueError):
            raise InputError(f"H0 must be an array of shape ({B}, {m}, {m}), got shape {np.shape(H0)}") from None
        bad = ~np.all(np.isfinite(H), axis=(1, 2))
        H[bad] = -np.eye(m)
    elif jacobian == "finite-difference":
        # g at x0, then at x0 + h e_k (scaled) for every member and direction in one call; a
        # direction that ``fd_columns`` leaves out has dg/du_k = 0.
        gj = g_jacobian or g
        idx_all = np.arange(B)
        h = fd_step
        try:
            cols = np.ones((B, m), dtype=bool) if fd_columns is None else np.broadcast_to(np.asarray(fd_columns, bool), (B, m))
        except ValueError:
            raise InputError(f"fd_columns must broadcast to ({B}, {m}), got shape {np.shape(fd_columns)}") from None
        mem, col = np.nonzero(cols)
        g0, _, _ = _call(gj, x.copy(), idx_all, m)
        pert = x[mem].copy()
        pert[np.arange(mem.size), col] += h * sc[mem, col]
        gp, _, _ = _call(gj, pert, mem, m)
        dg = np.zeros((B, m, m))  # dg_i/du_k per member, (B, i, k)
        dg[mem, :, col] = (gp - g0[mem]) / h
        # Scaled variables u = x / sc, f = (g - x) / sc: df_i/du_k = (dg_i/du_k) / sc_i - delta_ik.
        Jf = dg / sc[:, :, None] - np.eye(m)[None]
        good = np.all(np.isfinite(Jf), axis=(1, 2))
        good[good] = np.abs(np.linalg.det(Jf[good])) > 1e-12
        H[good] = np.linalg.inv(Jf[good])
    f_prev = np.zeros((B, m))
    u_prev = np.zeros((B, m))
    have_prev = np.zeros(B, dtype=bool)
    active = np.ones(B, dtype=bool)
    halted = np.zeros(B, dtype=bool)
    resid = np.full(B, np.inf)
    x_eval = x.copy()  # the last point at which g was evaluated, per member
    best = np.full(B, np.inf)
    since_best = np.zeros(B, dtype=int)
    full_step = np.zeros(B, dtype=bool)
    info_store: dict[str, np.ndarray] = {}
    it = 0
    for it in range(1, max_iter + 1):  # noqa: B007 (it is returned)
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        gx, info, nonfinite = _call(g, x[idx], idx, m)
        gx = np.where(nonfinite[:, None], x[idx], gx)  # g gave no value there: the member stops
        x_eval[idx] = x[idx]
        _store(info_store, info, idx, B)
        u = x[idx] / sc[idx]
        f = (gx - x[idx]) / sc[idx]
        err = np.max(np.abs(gx - x[idx]), axis=-1) / np.maximum(np.max(np.abs(gx), axis=-1), 1e-300)
        err = np.where(nonfinite, np.inf, err)
        resid[idx] = err
        done = err < tol
        # Stagnation: a member whose residual has not halved for ``stall`` iterations stops
        # (reported as not converged) instead of using up the iteration bound.
        # Only full (uncut) steps count: a member still travelling at the step limit is not stuck.
        improved = (err < 0.5 * best[idx]) | ~full_step[idx]
        best[idx] = np.where(improved, err, best[idx])
        since_best[idx] = np.where(improved, 0, since_best[idx] + 1)
        stalled = since_best[idx] >= stall if stall else np.zeros(idx.size, dtype=bool)
        halt = np.asarray(info.get("halt", np.zeros(idx.size, bool))) if isinstance(info, dict) else np.zeros(idx.size, bool)
        try:
            halt = np.broadcast_to(halt.astype(bool), (idx.size,)) | nonfinite
        except (TypeError, ValueError):
            raise InputError(f"g's info['halt'] must be one bool per member ({idx.size}), got shape {halt.shape}") from None
        # Broyden update of the inverse Jacobian where a previous step exists.
        hp = have_prev[idx]
        if hp.any():
            j = idx[hp]
            du = u[hp] - u_prev[j]
            df = f[hp] - f_prev[j]
            Hdf = np.einsum("bij,bj->bi", H[j], df)
            denom = np.einsum("bi,bi->b", du, Hdf)
            ok = np.abs(denom) > 1e-14 * np.maximum(np.einsum("bi,bi->b", du, du), 1e-300)
            corr = (du - Hdf)[:, :, None] * np.einsum("bi,bij->bj", du, H[j])[:, None, :]
            H[j] = np.where(ok[:, None, None], H[j] + corr / np.where(ok, denom, 1.0)[:, None, None], H[j])
        step = -np.einsum("bij,bj->bi", H[idx], f)
        # Cut back: no scaled move above max_step; an element that would turn negative stops at
        # a tenth of its value instead (a species with no source decays to zero that way).
        big = np.max(np.abs(step), axis=-1) / max_step
        alpha = np.minimum(1.0, 1.0 / np.maximum(big, 1e-300))
        full_step[idx] = alpha >= 1.0
        u_new = u + alpha[:, None] * step
        u_new = np.where(u_new < 0.0, 0.1 * u, u_new)
        f_prev[idx] = f
        u_prev[idx] = u
        have_prev[idx] = True
        x_new = np.where(done[:, None], gx, u_new * sc[idx])
        x_new = np.where(np.isfinite(x_new), x_new, x[idx])
        x[idx] = x_new
        halt = halt | stalled
        stop = done | halt
        halted[idx[halt & ~done]] = True
        active[idx[stop]] = False
    converged = ~active & ~halted
    if keep is not None:
        keep["H"] = H
        keep["scale"] = sc
        keep["x_eval"] = x_eval
    if raise_on_failure and (~converged).any():
        _raise_unconverged(converged, resid, it)
    return x, info_store, converged, it
