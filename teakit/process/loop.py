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
    if not (isinstance(max_iter, int | np.integer) and 1 <= max_iter <= 10000):
        raise InputError(f"max_iter must be a whole number from 1 to 10000, got {max_iter!r}")
    x = np.array(x0, dtype=float)
    B = x.shape[0]
    active = np.ones(B, dtype=bool)
    x_prev = g_prev = None
    info_store: dict[str, np.ndarray] = {}
    resid = np.full(B, np.inf)
    it = 0
    for it in range(1, max_iter + 1):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        gx, info = g(x[idx], idx)
        _store(info_store, info, idx, B)
        sc = np.max(np.abs(x[idx]), axis=-1) if scale is None else np.broadcast_to(scale, (B,))[idx]
        err = np.max(np.abs(gx - x[idx]), axis=-1) / np.maximum(sc, 1e-300)
        resid[idx] = err
        done = err < tol
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
        x[idx] = np.where(done[:, None], gx, np.maximum(x_new, 0.0))
        active[idx[done]] = False
    converged = ~active
    if not converged.all() and raise_on_failure:
        _raise_unconverged(converged, resid, it)
    return x, info_store, converged, it


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
    default max(|x0|, 1e-6 max|x0|) per element).
    """
    if not (isinstance(max_iter, int | np.integer) and 1 <= max_iter <= 10000):
        raise InputError(f"max_iter must be a whole number from 1 to 10000, got {max_iter!r}")
    x = np.array(x0, dtype=float)
    B, m = x.shape
    if scale is None:
        sc = np.broadcast_to(np.max(np.abs(x), axis=-1, keepdims=True), (B, m)).copy()
    else:
        sc = np.broadcast_to(np.asarray(scale, float), (B, m)).copy()
    sc = np.maximum(sc, 1e-300)
    if jacobian not in ("finite-difference", "identity"):
        raise InputError(f"jacobian must be 'finite-difference' or 'identity', got {jacobian!r}")
    H = np.broadcast_to(-np.eye(m), (B, m, m)).copy()
    if H0 is not None:
        H = np.array(H0, dtype=float).reshape(B, m, m)
        bad = ~np.all(np.isfinite(H), axis=(1, 2))
        H[bad] = -np.eye(m)
    elif jacobian == "finite-difference":
        # g at x0 and at x0 + h e_k (scaled), every member and direction in one call.
        idx_all = np.arange(B)
        h = fd_step
        pert = x[None, :, :] + h * sc[None, :, :] * np.eye(m)[:, None, :]  # (m, B, m)
        xs = np.concatenate([x[None], pert], axis=0).reshape(-1, m)
        gs, _ = (g_jacobian or g)(xs, np.tile(idx_all, m + 1))
        gs = gs.reshape(m + 1, B, m)
        # Scaled variables u = x / sc, f = (g - x) / sc: df_i/du_k = (dg_i/du_k) / sc_i - delta_ik.
        Jf = np.transpose((gs[1:] - gs[0][None]) / h, (1, 2, 0)) / sc[:, :, None] - np.eye(m)[None]
        good = np.all(np.isfinite(Jf), axis=(1, 2)) & (np.abs(np.linalg.det(Jf)) > 1e-12)
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
        gx, info = g(x[idx], idx)
        x_eval[idx] = x[idx]
        _store(info_store, info, idx, B)
        u = x[idx] / sc[idx]
        f = (gx - x[idx]) / sc[idx]
        err = np.max(np.abs(gx - x[idx]), axis=-1) / np.maximum(np.max(np.abs(gx), axis=-1), 1e-300)
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
