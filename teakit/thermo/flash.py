"""Isothermal vapour-liquid flash and pure-component saturation pressure with Peng-Robinson.

:func:`flash_tp` splits a feed of mole fractions z at temperature T and pressure P into a vapour
of composition y and a liquid of composition x, with vapour fraction beta (moles of vapour per
mole of feed), so that

.. math::

    z_i = \\beta y_i + (1-\\beta) x_i, \\qquad y_i = K_i x_i, \\qquad
    \\ln K_i = \\ln\\phi_i^L(T, P, x) - \\ln\\phi_i^V(T, P, y),

with the Peng-Robinson fugacity coefficients of :mod:`teakit.thermo.peng_robinson` (liquid root
for x, vapour root for y). Every function is vectorised over a batch of states; there is no
Python loop over batch members, only over iterations, on the members still active.

Algorithm of :func:`flash_tp`
-----------------------------
1. Initial K from the Wilson (1968) correlation,
   :math:`\\ln K_i = \\ln(P_{c,i}/P) + 5.373 (1+\\omega_i)(1 - T_{c,i}/T)`
   (classical critical constants, also for H2).
2. Successive substitution on ln K (Michelsen, Fluid Phase Equilib. 9, 21 (1982)). Each step
   solves the Rachford-Rice equation (Rachford & Rice, J. Pet. Technol. 4(10), 19 (1952))

   .. math::  g(\\beta) = \\sum_i \\frac{z_i (K_i - 1)}{1 + \\beta (K_i - 1)} = 0

   per member by Newton's method safeguarded by bisection inside the bracket between its poles
   :math:`1/(1-K_{max}) < \\beta < 1/(1-K_{min})` (at most :data:`RR_MAX_ITER` steps), i.e. as a
   *negative flash* (Whitson & Michelsen, Fluid Phase Equilib. 53, 51 (1989), citation from
   memory): beta may leave [0, 1] while iterating, which lets the iteration cross the phase
   boundary smoothly. Where the K of the species present are all above 1 (all below 1) beta is
   held at 1 (0) for that step.
   Every :data:`GDEM_EVERY`-th step is extrapolated along the dominant eigenvalue of the
   iteration (Crowe & Nishio, AIChE J. 21, 528 (1975), citation from memory),
   :math:`\\ln K \\leftarrow \\ln K + \\Delta\\lambda/(1-\\lambda)` with
   :math:`\\lambda = \\Delta\\cdot\\Delta / \\Delta_{prev}\\cdot\\Delta`, but only where the last
   three steps are aligned (cosines > 0.999), two successive estimates of lambda agree within 2 %
   and 0 < lambda < 0.97: near a critical point an extrapolation along a mixed mode would stall
   the iteration. At most ``max_iter`` steps; convergence when
   :math:`\\max_i |\\Delta \\ln K_i| <` ``tol`` over the species present.
3. Members that converge with beta strictly inside (0, 1) and K away from 1 are two-phase. The
   others (beta <= 0, beta >= 1, K approaching the trivial solution K = 1, or no convergence
   within ``max_iter``) get the tangent-plane stability test of Michelsen, Fluid Phase Equilib.
   9, 1 (1982): a vapour-like (W = z K) and a liquid-like (W = z / K) trial phase from the Wilson
   K, iterated side by side by successive substitution on ln W (same extrapolation) with the
   lower-Gibbs-energy root, at most :data:`STABILITY_MAX_ITER` steps. A member is unstable as soon
   as a trial reaches a negative modified tangent-plane distance
   :math:`tm = 1 + \\sum_i W_i (\\ln W_i + \\ln\\phi_i(w) - \\ln z_i - \\ln\\phi_i(z) - 1)`
   (or converges with sum W > 1); it is then flashed again from that trial's K. A member whose
   trials both reach the trivial solution or a stationary point with tm >= 0 is one stable phase.
4. A stable single phase is reported with beta exactly 1 (``phases == 1``, vapour) or exactly 0
   (``phases == 0``, liquid), and ``x = y = z``, ``K = 1``. Its label: the side of the negative
   flash (beta >= 1 vapour, beta <= 0 liquid) where the substitution converged to a non-trivial
   solution; otherwise (trivial solution, e.g. a supercritical fluid, or no convergence) the
   reduced volume v/b of the lower-Gibbs-energy root decides, liquid below its value at the
   Peng-Robinson critical point, Z_c/Omega_b = 0.30740/0.07780 = 3.951 - a naming convention.

Any member that does not converge within its bound raises
:class:`~teakit.errors.ConvergenceError` naming it, with the members of every block.

Implementation and speed
------------------------
Inside the solver per-species arrays are species-major, (nc, N): numpy reduces over a short last
axis several times more slowly than over rows. The Peng-Robinson fugacity coefficients are those
of :func:`teakit.thermo.peng_robinson.pr_mixture`, re-evaluated by a private evaluator that
computes the pure-component parameters once per flash and solves the liquid and vapour cubics of
a step together (tests/test_flash.py checks it against ``pr_state`` to 1e-11). Batches larger
than :data:`CHUNK` are flashed in blocks of that size. Measured when written, on one core of the
development machine (noisy, shared): 10^4 separator states of the test batch in 80-125 ms
(about 12 substitution steps each), 10^3 in 10-20 ms, 10^5 in 0.75-1.2 s.

Limitations
-----------
Caution: separator compositions and liquid flows computed here set the toxic liquid-ammonia
inventory of a loop; they are preliminary estimates, not a hazard assessment, and the
applicable codes, local regulations and licensed engineers govern the design.

Only vapour-liquid equilibrium: a feed that splits into two liquids, or lies near a mixture
critical point or limit of stability where successive substitution stalls, raises
ConvergenceError (no Newton stage). With zero k_ij, Peng-Robinson predicts spurious liquid-liquid
splits for aqueous mixtures (NH3-H2O) and for mixtures far below the triple points of their heavy
species; such states end in that error too.

The solubility of H2, N2, Ar and CH4 in liquid ammonia - and hence the dissolved-gas losses of an
ammonia separator and the composition of the let-down gas - depends strongly on the NH3-gas
interaction parameters k_ij. No verified published Peng-Robinson k_ij for NH3 with H2, N2, Ar or
CH4 was found, so ``data/pr_kij.csv`` leaves them at zero and the computed solubilities are
uncertain; pass ``kij`` (a matrix or a dict of pairs) to study their effect. The NH3 content of
the separator vapour is dominated by the NH3 vapour pressure and much less sensitive: at 200 bar
and -10 degC, k_ij = 0.1 for every NH3-gas pair lowers the vapour NH3 from 3.19 to 2.96 mol % but
the dissolved gas from 1.89 to 1.18 mol %. The residual enthalpy with the quantum-corrected H2
constants neglects their temperature dependence (see :mod:`teakit.thermo.peng_robinson`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from teakit.errors import ConvergenceError, InputError
from teakit.thermo.ideal_gas import h_RT
from teakit.thermo.peng_robinson import kij_array, pr_mixture, pure_parameters
from teakit.thermo.species import R, SpeciesSet, species_set
from teakit.validation import (
    check_composition,
    check_positive,
    check_range,
    check_scalar,
)

__all__ = [
    "FlashEnthalpy",
    "FlashResult",
    "condenses",
    "flash_enthalpy",
    "flash_tp",
    "saturation_pressure",
]

#: Temperature range accepted by the flash [K]; 20 K is about the normal boiling point of H2.
T_MIN, T_MAX = 20.0, 2000.0
#: Pressure range accepted by the flash [Pa] (1 Pa to 10 kbar).
P_MIN, P_MAX = 1.0, 1.0e9
#: Default bound on successive-substitution steps of the flash [-].
MAX_ITER = 200
#: Default convergence tolerance on max |delta ln K| [-].
TOL = 1e-10
#: Bound on Newton/bisection steps of one Rachford-Rice solve [-].
RR_MAX_ITER = 100
#: Bound on successive-substitution steps of one stability-test trial phase [-].
STABILITY_MAX_ITER = 1000
#: Dominant-eigenvalue extrapolation every this many substitution steps [-].
GDEM_EVERY = 4
#: Batch members flashed together; larger batches run in blocks of this size, which keeps the
#: working arrays in cache (about 2.5 times faster per state at 1e5 states than one block) [-].
CHUNK = 8192
#: Bound on Newton/bisection steps of :func:`saturation_pressure` [-].
PSAT_MAX_ITER = 100

_POLISH_STEPS = 2
_TRIVIAL = 1e-4  # max |ln K| below which the flash is taken to approach the trivial solution
_VB_CRIT = 0.30740 / 0.07780  # v/b at the Peng-Robinson critical point
_SAT_TR_MIN = 0.3  # lowest reduced temperature accepted by saturation_pressure


@dataclass(frozen=True)
class FlashResult:
    """Result of :func:`flash_tp`; arrays have the broadcast shape of (T, P, z[..., 0]).

    Attributes
    ----------
    beta : float or ndarray
        Vapour fraction, moles of vapour per mole of feed; exactly 0 or 1 for one phase [-].
    x : ndarray (..., nc)
        Liquid mole fractions; equal to z for a single-phase member [-].
    y : ndarray (..., nc)
        Vapour mole fractions; equal to z for a single-phase member [-].
    K : ndarray (..., nc)
        Equilibrium ratios y_i / x_i; for two-phase members also for species absent from the
        feed (their infinite-dilution value phi_i^L / phi_i^V); 1 for a single-phase member [-].
    phases : int or ndarray of int
        0 liquid only, 1 vapour only, 2 vapour and liquid [-].
    iterations : int or ndarray of int
        Successive-substitution steps spent on the member, including any second flash after
        the stability test (stability-test steps not counted) [-].
    """

    beta: float | np.ndarray
    x: np.ndarray
    y: np.ndarray
    K: np.ndarray
    phases: int | np.ndarray
    iterations: int | np.ndarray


@dataclass(frozen=True)
class FlashEnthalpy:
    """Molar enthalpies of the phases of a flash, formation basis (see :func:`flash_enthalpy`).

    Attributes
    ----------
    h_liquid : float or ndarray
        Enthalpy per mole of liquid [J/mol].
    h_vapour : float or ndarray
        Enthalpy per mole of vapour [J/mol].
    h : float or ndarray
        Enthalpy per mole of feed, beta h_vapour + (1 - beta) h_liquid [J/mol].
    """

    h_liquid: float | np.ndarray
    h_vapour: float | np.ndarray
    h: float | np.ndarray


# ---------------------------------------------------------------------------------------------
# Argument checks


def _resolve_species(species) -> SpeciesSet:
    if isinstance(species, SpeciesSet):
        return species
    return species_set(species)


def _kij(sset: SpeciesSet, kij) -> np.ndarray:
    return kij_array(sset, kij)


def _check_iter(max_iter, tol):
    if isinstance(max_iter, bool) or not isinstance(max_iter, (int, np.integer)) or max_iter < 1:
        raise InputError(f"max_iter must be an integer >= 1, got {max_iter!r}")
    tol = check_scalar("tol", check_range("tol", tol, 0.0, 1e-2, inclusive=(False, True)))
    return int(max_iter), tol


def _check_state(T, P, z, species, kij):
    """Checked (sset, T, P, z, k, shape) with T, P, z broadcast to ``shape`` (+ (nc,))."""
    sset = _resolve_species(species)
    T = check_positive("T", T, "K")
    T = check_range("T", T, T_MIN, T_MAX, "K")
    P = check_positive("P", P, "Pa")
    P = check_range("P", P, P_MIN, P_MAX, "Pa")
    z, shape = check_composition("z", z, sset.names, T, P, "feed mole fractions")
    k = _kij(sset, kij)
    T = np.broadcast_to(T, shape)
    P = np.broadcast_to(P, shape)
    z = np.broadcast_to(z, shape + (sset.n,))
    return sset, T, P, z, k, shape


# ---------------------------------------------------------------------------------------------
# Building blocks on flat batches, species-major: per-species arrays have shape (nc, N), so that
# sums and maxima over species run over nc contiguous rows (a reduction over a short last axis
# is several times slower in numpy). No argument checks.

_SQ2 = np.sqrt(2.0)


def _wilson_lnK(sset: SpeciesSet, T: np.ndarray, P: np.ndarray) -> np.ndarray:
    """Wilson (1968) ln K_i, shape (nc, N)."""
    return np.log(sset.Pc[:, None] / P) + (5.373 * (1.0 + sset.omega))[:, None] * (
        1.0 - sset.Tc[:, None] / T
    )


def _rachford_rice(z, K, beta0, present):
    """Root of the Rachford-Rice equation between its poles (negative flash), vectorised.

    ``z``, ``K`` and ``present`` have shape (nc, m), ``beta0`` (m,) is the starting value.
    Returns (beta, side): ``side`` is 0 where a root exists between the poles, +1 where every K
    of a species present is >= 1 (beta held at 1) and -1 where every K is <= 1 (beta held at 0).
    Newton steps that would leave the bracket [lo, hi] (updated from the sign of g, which
    decreases monotonically in beta) are replaced by bisection.
    """
    Km1 = np.where(present, K - 1.0, 0.0)  # absent species contribute nothing
    dmax = Km1.max(axis=0)
    dmin = Km1.min(axis=0)
    side = np.where(dmin >= 0.0, 1, np.where(dmax <= 0.0, -1, 0))
    beta = np.where(side > 0, 1.0, 0.0)
    idx = np.flatnonzero(side == 0)
    if idx.size == 0:
        return beta, side
    n_all = idx.size
    full = n_all == beta.size
    ks = Km1 if full else Km1[:, idx]
    zk = (z if full else z[:, idx]) * ks
    lo = -1.0 / dmax[idx]  # the poles 1/(1 - K_max) and 1/(1 - K_min)
    hi = -1.0 / dmin[idx]
    b = beta0 if full else beta0[idx]
    b = np.where((b > lo) & (b < hi), b, 0.5 * (lo + hi))
    act = None  # all members, until more than half have converged
    for _ in range(RR_MAX_ITER):
        if act is None:
            kk, zz, bl, bh, bc = ks, zk, lo, hi, b
        else:
            kk, zz, bl, bh, bc = ks[:, act], zk[:, act], lo[act], hi[act], b[act]
        u = 1.0 / (1.0 + bc * kk)
        t = zz * u
        g = t.sum(axis=0)
        dg = (t * kk * u).sum(axis=0)  # -dg/dbeta > 0
        bl = np.where(g > 0, bc, bl)
        bh = np.where(g < 0, bc, bh)
        newton = bc + g / np.where(dg > 0, dg, 1.0)
        scale = np.maximum(1.0, np.abs(bc))
        # quadratic convergence: after a step below 1e-8 the Newton iterate is exact to ~1e-16
        done = (np.abs(newton - bc) <= 1e-8 * scale) | (g == 0.0) | (bh - bl <= 4e-16 * scale)
        new = np.where(done | ((newton > bl) & (newton < bh)), newton, 0.5 * (bl + bh))
        if act is None:
            lo, hi, b = bl, bh, new
            if done.all():
                break
            if 2 * np.count_nonzero(done) > n_all:
                act = np.flatnonzero(~done)
        else:
            lo[act], hi[act], b[act] = bl, bh, new
            act = act[~done]
            if act.size == 0:
                break
    else:
        rem = np.arange(n_all) if act is None else act
        raise ConvergenceError(
            "Rachford-Rice solve did not converge (residual: bracket width in beta)",
            members=idx[rem],
            residuals=(hi - lo)[rem],
            iterations=RR_MAX_ITER,
        )
    beta[idx] = b
    return beta, side


def _phase_compositions(z, K, beta, present=None):
    """Normalised x, y (nc, m) from K and beta (beta may lie outside [0, 1]).

    ``present`` (nc, m) masks species absent from the feed (None: all present).
    """
    den = 1.0 + beta * (K - 1.0)
    if present is not None:
        den = np.where(present, den, 1.0)
    x = z / den
    y = K * x
    return x / x.sum(axis=0), y / y.sum(axis=0)


def _cubic_root(A, B, largest):
    """Largest (where ``largest``) or smallest-above-B root of the Peng-Robinson cubic.

    Closed form (as in :mod:`teakit.thermo.peng_robinson`), one cosine per element, polished by
    two Newton steps. Where the cubic has one real root both choices return it.
    """
    c2 = B - 1.0
    c1 = A - B * (3.0 * B + 2.0)
    c0 = B * (B + B * B - A)
    p = c1 - c2 * c2 / 3.0
    q = c2 * (2.0 * c2 * c2 / 27.0 - c1 / 3.0) + c0
    p3 = p / 3.0
    disc = 0.25 * q * q + p3 * p3 * p3  # no ** 3: numpy's generic power is slow
    shift = -c2 / 3.0
    one = disc > 0
    sq = np.sqrt(np.where(one, disc, 0.0))
    z = np.cbrt(-q / 2.0 + sq) + np.cbrt(-q / 2.0 - sq) + shift
    three = ~one
    if three.any():
        pn = p[three]
        r = 2.0 * np.sqrt(-pn / 3.0)
        theta = np.arccos(np.clip(3.0 * q[three] / (pn * r), -1.0, 1.0)) / 3.0
        lg = largest[three]
        z3 = r * np.cos(theta - np.where(lg, 0.0, 4.0 * np.pi / 3.0)) + shift[three]
        low_bad = ~lg & (z3 <= B[three])  # a root below B is not physical: take the largest
        if low_bad.any():
            z3[low_bad] = r[low_bad] * np.cos(theta[low_bad]) + shift[three][low_bad]
        z[three] = z3
    for _ in range(_POLISH_STEPS):
        f = ((z + c2) * z + c1) * z + c0
        df = (3.0 * z + 2.0 * c2) * z + c1
        z = z - f / np.where(df == 0.0, 1.0, df)
    return z


def _g_res(Z, A, B):
    """Residual Gibbs energy g_res/RT of a mixture at root Z (for the choice of root)."""
    L = np.log((Z + (1 + _SQ2) * B) / (Z + (1 - _SQ2) * B))
    return (Z - 1.0) - np.log(np.maximum(Z - B, 1e-300)) - A / (2 * _SQ2 * B) * L


class _Batch:
    """Flat states with their Peng-Robinson pure parameters; ln phi for subsets of members.

    The equations of :func:`teakit.thermo.peng_robinson.pr_mixture` (van der Waals one-fluid
    mixing, same roots), reorganised for the flash loop: species-major arrays, square roots of
    a_i and the pressure factors computed once per flash, and the liquid and vapour of a step
    sharing one cubic solve. tests/test_flash.py checks it against ``pr_state``.
    """

    def __init__(self, sset, T, P, z, kij):
        self.sset, self.T, self.P, self.z = sset, T, P, z
        a, _, b = pure_parameters(sset, T)
        self.sa = np.ascontiguousarray(np.sqrt(a).T)
        self.b = np.ascontiguousarray(b.T)
        self.M = 1.0 - kij
        RT = R * T
        self.fA = P / RT**2
        self.fB = P / RT
        self.present = z > 0.0
        self.n = T.shape[0]

    def _sel(self, idx):
        """Per-member arrays for the members ``idx`` (an index array; None: the whole batch)."""
        if idx is None:
            return self.sa, self.b, self.fA, self.fB
        return self.sa[:, idx], self.b[:, idx], self.fA[idx], self.fB[idx]

    def _mix(self, w, sa, b, fA, fB):
        psi = sa * (self.M @ (w * sa))  # sum_j w_j a_ij
        am = (w * psi).sum(axis=0)
        bm = (w * b).sum(axis=0)
        return psi, am, bm, am * fA, bm * fB

    @staticmethod
    def _lnphi(Z, psi, am, bm, A, B, b):
        c = A / (2 * _SQ2 * B) * np.log((Z + (1 + _SQ2) * B) / (Z + (1 - _SQ2) * B))
        return (b / bm) * (Z - 1.0 + c) - np.log(Z - B) - (2.0 * c / am) * psi

    def lnphi_lv(self, x, y, idx):
        """ln phi (nc, m) of liquid x (liquid root) and vapour y (vapour root), members idx."""
        sa, b, fA, fB = self._sel(idx)
        px, amx, bmx, Ax, Bx = self._mix(x, sa, b, fA, fB)
        py, amy, bmy, Ay, By = self._mix(y, sa, b, fA, fB)
        m = x.shape[1]
        largest = np.zeros(2 * m, dtype=bool)
        largest[m:] = True
        Z = _cubic_root(np.concatenate([Ax, Ay]), np.concatenate([Bx, By]), largest)
        return (self._lnphi(Z[:m], px, amx, bmx, Ax, Bx, b),
                self._lnphi(Z[m:], py, amy, bmy, Ay, By, b))

    def lnphi_stable(self, w, idx, want_z=False):
        """ln phi (nc, m) of w with the root of lower Gibbs energy, members idx."""
        sa, b, fA, fB = self._sel(idx)
        pw, am, bm, A, B = self._mix(w, sa, b, fA, fB)
        m = w.shape[1]
        largest = np.zeros(2 * m, dtype=bool)
        largest[m:] = True
        Z2 = _cubic_root(np.concatenate([A, A]), np.concatenate([B, B]), largest)
        zl, zv = Z2[:m], Z2[m:]
        Z = np.where(_g_res(zl, A, B) < _g_res(zv, A, B), zl, zv)
        lp = self._lnphi(Z, pw, am, bm, A, B, b)
        return (Z, B, lp) if want_z else lp

    def reduced_volume(self, w, idx):
        """v/b (m,) of the lower-Gibbs-energy root of w, members idx."""
        Z, B, _ = self.lnphi_stable(w, idx, want_z=True)
        return Z / B


def _gdem(new, d, d1, d2, want):
    """Dominant-eigenvalue (GDEM) extrapolation of a successive-substitution step.

    ``new`` is the latest iterate, ``d`` its step, ``d1`` and ``d2`` the two steps before, shape
    (nc, m); absent species have d = 0. Where the iteration is dominated by one real eigenvalue
    lambda, d = lambda d1 = lambda^2 d2, and the remaining steps sum to d lambda / (1 - lambda).
    An extrapolation along a mixed mode amplifies the others, so it is used only where ``want``,
    the last three steps point the same way (cosines > 0.999), the two estimates of lambda agree
    within 2 % and 0 < lambda < 0.97.
    """
    dd = (d * d).sum(axis=0)
    d1d = (d1 * d).sum(axis=0)
    d11 = (d1 * d1).sum(axis=0)
    d21 = (d2 * d1).sum(axis=0)
    d22 = (d2 * d2).sum(axis=0)
    lam = dd / np.where(d1d > 0, d1d, np.inf)
    lam1 = d11 / np.where(d21 > 0, d21, np.inf)
    c2 = 0.999**2
    use = (want & (d1d > 0) & (d21 > 0) & (d1d * d1d > c2 * dd * d11)
           & (d21 * d21 > c2 * d11 * d22) & (np.abs(lam - lam1) < 0.02 * lam)
           & (lam > 0.0) & (lam < 0.97))
    if not use.any():
        return new
    lam = np.where(use, lam, 0.0)
    return new + d * (lam / (1.0 - lam))


def _successive_substitution(bt: _Batch, idx, lnK0, max_iter, tol):
    """Negative-flash successive substitution with GDEM steps for the members ``idx``.

    ``lnK0`` has shape (nc, m). Returns lnK (nc, m), the ln K of the last Rachford-Rice solve
    (nc, m), with which beta is consistent, and, per member, beta, side (Rachford-Rice side of
    the last step), trivial flag, converged flag, iterations and final residual.
    """
    m = idx.size
    z_all, pres_all = bt.z[:, idx], bt.present[:, idx]
    masked = not pres_all.all()  # some species absent from some feeds
    everyone = m == bt.n and bool(np.all(idx == np.arange(m)))

    def species_only(a):
        return np.where(pres, a, 0.0) if masked else a

    lnK = lnK0.copy()
    lnK_rr = lnK0.copy()
    beta = np.full(m, 0.5)
    side = np.zeros(m, dtype=int)
    trivial = np.zeros(m, dtype=bool)
    conv = np.zeros(m, dtype=bool)
    its = np.zeros(m, dtype=int)
    resid = np.full(m, np.inf)
    d_prev = np.zeros_like(lnK)
    d_prev2 = np.zeros_like(lnK)
    act = np.arange(m)
    for it in range(1, max_iter + 1):
        whole = act.size == m
        z = z_all if whole else z_all[:, act]
        pres = pres_all if whole else pres_all[:, act]
        lk = lnK if whole else lnK[:, act]
        K = np.exp(lk)
        b, s = _rachford_rice(z, K, beta if whole else beta[act], pres)
        x, y = _phase_compositions(z, K, b, pres if masked else None)
        lpl, lpv = bt.lnphi_lv(x, y, None if whole and everyone else idx[act])
        new = lpl - lpv
        d = new - lk
        err = species_only(np.abs(d)).max(axis=0)
        if it % GDEM_EVERY == 0:
            dp = d_prev if whole else d_prev[:, act]
            dp2 = d_prev2 if whole else d_prev2[:, act]
            new = _gdem(new, species_only(d), species_only(dp), species_only(dp2), err > tol)
        triv = species_only(np.abs(new)).max(axis=0) < _TRIVIAL
        ok = err < tol
        if whole:
            lnK_rr, lnK, d_prev2, d_prev = lnK, new, d_prev, d
            beta, side, resid, trivial, conv = b, s, err, triv, ok
            its[:] = it
        else:
            d_prev2[:, act] = d_prev[:, act]
            lnK_rr[:, act], lnK[:, act], d_prev[:, act] = lk, new, d
            beta[act], side[act], its[act], resid[act] = b, s, it, err
            trivial[act], conv[act] = triv, ok
        act = act[~(ok | triv)]
        if act.size == 0:
            break
    return lnK, lnK_rr, beta, side, trivial, conv, its, resid


def _stability(bt: _Batch, idx, max_iter, tol):
    """Michelsen (1982) tangent-plane stability test for the members ``idx``.

    The vapour-like (W = z K) and liquid-like (W = z / K) trial phases of every member iterate
    side by side, so that a member is settled as soon as either trial proves it unstable.
    Returns (unstable (m,), lnK (nc, m)): ``lnK`` starts a flash of the unstable members from
    the trial phase that reached a negative tangent-plane distance.
    """
    m = idx.size
    z = bt.z[:, idx]
    pres = bt.present[:, idx]
    lnz = np.where(pres, np.log(np.where(pres, z, 1.0)), 0.0)
    lnphi_z = bt.lnphi_stable(z, idx)
    dz = lnz + lnphi_z  # d_i = ln z_i + ln phi_i(z)
    lnKw = _wilson_lnK(bt.sset, bt.T[idx], bt.P[idx])
    # trial t < m is the vapour-like trial of member t, trial t >= m the liquid-like one
    sign = np.repeat([1.0, -1.0], m)
    owner = np.tile(np.arange(m), 2)
    lnW = np.where(pres[:, owner], lnz[:, owner] + sign * lnKw[:, owner], 0.0)
    d_prev = np.zeros_like(lnW)
    d_prev2 = np.zeros_like(lnW)
    unstable = np.zeros(m, dtype=bool)
    settled = np.zeros(2 * m, dtype=bool)  # converged or trivial with tm >= 0
    lnK_out = np.zeros_like(lnKw)
    act = np.arange(2 * m)
    step = np.zeros(0)
    for it in range(1, max_iter + 1):
        own = owner[act]
        pa, la, da = pres[:, own], lnW[:, act], dz[:, own]
        Wa = np.where(pa, np.exp(la), 0.0)
        lp = bt.lnphi_stable(Wa / Wa.sum(axis=0), idx[own])
        # Modified tangent-plane distance tm = 1 + sum W (ln W + ln phi(w) - d - 1);
        # a negative value at any W proves the feed unstable.
        tm = 1.0 + np.where(pa, Wa * (la + lp - da - 1.0), 0.0).sum(axis=0)
        ln_new = np.where(pa, da - lp, 0.0)
        d = ln_new - la
        step = np.abs(d).max(axis=0)
        triv = ((ln_new - lnz[:, own]) ** 2).sum(axis=0) < 1e-8
        done = step < tol
        sum_w = np.where(pa, np.exp(ln_new), 0.0).sum(axis=0)
        neg = (tm < -1e-10) | (done & ~triv & (sum_w > 1.0 + 1e-10))
        if it % GDEM_EVERY == 0:
            ln_new = _gdem(ln_new, d, d_prev[:, act], d_prev2[:, act], ~done)
        lnW[:, act] = ln_new
        d_prev2[:, act] = d_prev[:, act]
        d_prev[:, act] = d
        if neg.any():
            first = np.unique(own[neg], return_index=True)[1]  # one trial per member
            rows = own[neg][first]
            new_rows = ~unstable[rows]
            rows, cols = rows[new_rows], np.flatnonzero(neg)[first][new_rows]
            unstable[rows] = True
            lnK_out[:, rows] = sign[act[cols]] * (lnphi_z[:, rows] - lp[:, cols])
        settled[act[~neg & (triv | done)]] = True
        keep = ~(neg | triv | done) & ~unstable[own]
        act, step = act[keep], step[keep]
        if act.size == 0:
            break
    else:
        raise ConvergenceError(
            "stability test did not converge (residual: max |delta ln W|); the state may lie "
            "near a critical point or a limit of stability",
            members=idx[np.unique(owner[act])],
            residuals=[step[owner[act] == k].max() for k in np.unique(owner[act])],
            iterations=max_iter,
        )
    return unstable, lnK_out


def _flash_flat(sset, T, P, z_rows, kij, max_iter, tol, K_rows=None):
    """Flash of flat states: T, P (N,), z_rows (N, nc); returns row-major results.

    ``K_rows`` (N, nc) replaces the Wilson K as the starting point of the substitution.
    """
    n = T.shape[0]
    z = np.ascontiguousarray(z_rows.T)
    bt = _Batch(sset, T, P, z, kij)
    _, lnK_rr, beta, side, trivial, conv, its, _ = _successive_substitution(
        bt, np.arange(n),
        _wilson_lnK(sset, T, P) if K_rows is None else np.log(np.ascontiguousarray(K_rows.T)),
        max_iter, tol,
    )
    two = conv & (side == 0) & (beta > 0.0) & (beta < 1.0) & ~trivial
    # Everything else - beta outside (0, 1), the trivial solution, or no convergence - is
    # settled by the stability test: stable members are one phase, unstable ones are flashed
    # again from the trial phase that proved the instability.
    cand = np.flatnonzero(~two)
    phases = np.full(n, 2, dtype=int)
    if cand.size:
        unstable, lnK_st = _stability(bt, cand, STABILITY_MAX_ITER, tol)
        redo = cand[unstable]
        if redo.size:
            _, lnK2, beta2, side2, triv2, conv2, its2, res2 = _successive_substitution(
                bt, redo, lnK_st[:, unstable], max_iter, tol
            )
            ok = conv2 & (side2 == 0) & (beta2 > 0.0) & (beta2 < 1.0) & ~triv2
            if not ok.all():
                raise ConvergenceError(
                    "the feed is unstable but no vapour-liquid split was found: it may split "
                    "into two liquids (outside this vapour-liquid flash) or lie near a critical "
                    "point (residual: max |delta ln K|)",
                    members=redo[~ok],
                    residuals=res2[~ok],
                    iterations=max_iter,
                )
            lnK_rr[:, redo], beta[redo], its[redo] = lnK2, beta2, its[redo] + its2
        stable = cand[~unstable]
        if stable.size:
            # negative-flash side where the iteration found a non-trivial solution, else v/b
            vapour = beta[stable] >= 1.0
            rest = ~(conv[stable] & ~trivial[stable])
            if rest.any():
                s_idx = stable[rest]
                vapour[rest] = bt.reduced_volume(z[:, s_idx], s_idx) >= _VB_CRIT
            phases[stable] = np.where(vapour, 1, 0)
    twoph = phases == 2
    x = np.array(z_rows, dtype=float, copy=True)
    y = np.array(z_rows, dtype=float, copy=True)
    K = np.ones_like(x)
    if twoph.any():
        # x, y from the K of the last Rachford-Rice solve, so that beta, x, y close the mass
        # balance to rounding; the fugacities then agree to the last step, < tol.
        K2 = np.exp(lnK_rr[:, twoph])
        x2, y2 = _phase_compositions(z[:, twoph], K2, beta[twoph], bt.present[:, twoph])
        x[twoph], y[twoph], K[twoph] = x2.T, y2.T, K2.T
    beta = np.where(twoph, beta, np.where(phases == 1, 1.0, 0.0))
    finite = np.isfinite(beta) & np.isfinite(x).all(axis=1) & np.isfinite(y).all(axis=1)
    if not finite.all():  # a safety net: never hand back NaN
        raise ConvergenceError(
            "flash produced non-finite results (residual: 1 per member)",
            members=np.flatnonzero(~finite),
            residuals=np.ones(np.count_nonzero(~finite)),
        )
    return beta, x, y, K, phases, its


# ---------------------------------------------------------------------------------------------
# Public functions


def _shape_out(a, shape):
    return a.reshape(shape + a.shape[1:])


def _scalar(a):
    return a.item() if np.ndim(a) == 0 else a


def flash_tp(T, P, z, species, kij=None, max_iter=MAX_ITER, tol=TOL, K_init=None) -> FlashResult:
    """Isothermal vapour-liquid flash with Peng-Robinson, for a batch of states.

    Algorithm and limitations: see the module docstring (Wilson K, negative-flash successive
    substitution with Rachford-Rice and dominant-eigenvalue steps, Michelsen stability test for
    single-phase candidates).

    Parameters
    ----------
    T : float or array_like
        Temperature [K], in [T_MIN, T_MAX] = [20, 2000]; broadcast with P and z[..., 0].
    P : float or array_like
        Pressure [Pa], absolute, in [P_MIN, P_MAX] = [1, 1e9].
    z : array_like, shape (..., nc)
        Feed mole fractions, >= 0 (normalised here) [-].
    species : sequence of str or SpeciesSet
        Species, the order of the last axis of ``z``.
    kij : ndarray (nc, nc) or dict, optional
        Peng-Robinson binary interaction parameters, or overrides of ``data/pr_kij.csv`` as
        ``{("NH3", "H2"): 0.1}``; default the table (zero for pairs with NH3) [-].
    max_iter : int, optional
        Bound on successive-substitution steps per flash pass [-].
    tol : float, optional
        Convergence tolerance on max |delta ln K|, in (0, 0.01] [-].
    K_init : array_like, shape broadcastable to z, optional
        Starting K instead of the Wilson values, > 0 and finite, e.g. ``result.K`` of the
        previous pass of a recycle loop: near the old states the substitution then needs a few
        steps instead of about a dozen. Single-phase members (K = 1) are best started from
        Wilson again; the stability test always starts from Wilson [-].

    Returns
    -------
    FlashResult
        beta, x, y, K, phases and iterations; scalar fields for scalar T, P and a 1-d z.

    Raises
    ------
    InputError
        For a T or P that is not finite or outside its range, a z of the wrong length, negative
        or all zero, an unknown species, a bad kij, max_iter or tol.
    ConvergenceError
        Where a member does not converge within ``max_iter`` steps.

    Examples
    --------
    >>> r = flash_tp(263.15, 200e5, [0.60, 0.20, 0.14, 0.03, 0.03], ["H2", "N2", "NH3", "Ar", "CH4"])
    >>> r.phases, round(float(r.y[2]), 4)
    (2, 0.0319)
    """
    max_iter, tol = _check_iter(max_iter, tol)
    sset, T, P, z, k, shape = _check_state(T, P, z, species, kij)
    nc = sset.n
    Tf = np.ascontiguousarray(T, dtype=float).reshape(-1)
    Pf = np.ascontiguousarray(P, dtype=float).reshape(-1)
    zf = np.ascontiguousarray(z, dtype=float).reshape(-1, nc)
    Kf = None
    if K_init is not None:
        K0 = check_positive("K_init", K_init)
        try:
            Kf = np.ascontiguousarray(np.broadcast_to(K0, z.shape)).reshape(-1, nc)
        except ValueError:
            raise InputError(
                f"K_init of shape {K0.shape} does not broadcast to z of shape {z.shape}"
            ) from None
    parts, failed = [], []
    for start in range(0, Tf.size, CHUNK):  # blocks that stay in cache; vectorised within
        sl = slice(start, start + CHUNK)
        try:
            parts.append(_flash_flat(sset, Tf[sl], Pf[sl], zf[sl], k, max_iter, tol,
                                     None if Kf is None else Kf[sl]))
        except ConvergenceError as exc:  # report the failures of every block together
            failed.append((start, exc))
    if failed:
        first = failed[0][1]
        raise ConvergenceError(
            str(first).split("; members not converged")[0].split("; after ")[0],
            members=np.concatenate([e.members + start for start, e in failed]),
            residuals=np.concatenate([e.residuals for _, e in failed]),
            iterations=first.iterations,
        )
    if not parts:  # an empty batch
        e, e2 = np.zeros(0), np.zeros((0, nc))
        parts = [(e, e2, e2, e2, e.astype(int), e.astype(int))]
    beta, x, y, K, phases, its = (np.concatenate(a) for a in zip(*parts, strict=True))
    return FlashResult(
        beta=_scalar(_shape_out(beta, shape)),
        x=_shape_out(x, shape),
        y=_shape_out(y, shape),
        K=_shape_out(K, shape),
        phases=_scalar(_shape_out(phases, shape)),
        iterations=_scalar(_shape_out(its, shape)),
    )


def flash_enthalpy(T, P, result: FlashResult, species, kij=None) -> FlashEnthalpy:
    """Molar enthalpy of each phase of a flash, on teakit's formation basis.

    .. math:: h^\\alpha = R T \\sum_i w_i \\, (h_i/RT)^{ig}(T) + h^R(T, P, w, \\text{root})

    with w = y and the vapour root for the vapour, w = x and the liquid root for the liquid, so
    the difference carries the latent heat of condensation. For a single-phase member both
    entries hold the enthalpy of the feed with the lower-Gibbs-energy root.

    Parameters
    ----------
    T : float or array_like
        Temperature of the flash [K], within the heat-capacity data range of every species.
    P : float or array_like
        Pressure of the flash [Pa].
    result : FlashResult
        The flash at (T, P) from :func:`flash_tp`.
    species : sequence of str or SpeciesSet
        Species of the flash.
    kij : ndarray (nc, nc) or dict, optional
        The interaction parameters used in the flash [-].

    Returns
    -------
    FlashEnthalpy
        h_liquid [J/mol liquid], h_vapour [J/mol vapour], h [J/mol feed].
    """
    if not isinstance(result, FlashResult):
        raise InputError(f"result must be a FlashResult from flash_tp, got {type(result).__name__}")
    sset, T, P, x, k, shape = _check_state(T, P, result.x, species, kij)
    T = sset.check_T(T)
    yv = np.asarray(result.y, dtype=float)
    beta = np.asarray(result.beta, dtype=float)
    phases = np.asarray(result.phases)
    if yv.shape[:-1] != shape or beta.shape != shape or phases.shape != shape:
        raise InputError(
            f"result has shape {beta.shape}, which does not match T, P ({shape})"
        )
    nc = sset.n
    Tf = np.ascontiguousarray(T, dtype=float).reshape(-1)
    Pf = np.ascontiguousarray(P, dtype=float).reshape(-1)
    xf = np.ascontiguousarray(x).reshape(-1, nc)
    yf = yv.reshape(-1, nc)
    ph = phases.reshape(-1)
    bf = beta.reshape(-1)
    hig = R * Tf[:, None] * h_RT(Tf, sset)
    pure = pure_parameters(sset, Tf)
    one = ph != 2
    hl = np.empty(Tf.shape)
    hv = np.empty(Tf.shape)
    two = ~one
    for mask, comp, phase, out in ((two, xf, "liquid", hl), (two, yf, "vapour", hv),
                                   (one, yf, "stable", hv)):
        if mask.any():
            sub = tuple(p[mask] for p in pure)
            _, _, hres, _ = pr_mixture(sub, k, Tf[mask], Pf[mask], comp[mask], phase,
                                       want_enthalpy=True)
            out[mask] = np.sum(comp[mask] * hig[mask], axis=-1) + hres
    hl[one] = hv[one]
    h = bf * hv + (1.0 - bf) * hl
    return FlashEnthalpy(
        h_liquid=_scalar(hl.reshape(shape)),
        h_vapour=_scalar(hv.reshape(shape)),
        h=_scalar(h.reshape(shape)),
    )


def condenses(T, P, z, species, kij=None) -> bool | np.ndarray:
    """Whether a liquid phase is present at equilibrium at (T, P).

    True where :func:`flash_tp` finds two phases or a single liquid; the single-phase answers
    rest on the Michelsen (1982) stability test (see the module docstring). Parameters are those
    of :func:`flash_tp`.

    Returns
    -------
    bool or ndarray of bool
        True where liquid is present [-].
    """
    r = flash_tp(T, P, z, species, kij)
    out = np.asarray(r.phases) != 1
    return bool(out) if out.ndim == 0 else out


def _pure_lnphi_roots(A, B):
    """Liquid and vapour roots of a pure fluid and ln phi there, precise at low pressure.

    The liquid root is found as e = Z - B > 0 from
    :math:`g(e) = e^3 + (4B-1) e^2 + (A - 4B + 2B^2) e - 2B^2 = 0` (the cubic shifted by B) by
    Newton's method from e = 0: g(0) < 0 and g is increasing and concave up to its smallest root,
    so the iteration rises monotonically onto it, and Z - B keeps full relative precision however
    small B is. The vapour root comes from Newton's method on the cubic from Z = 1 + B, which
    descends monotonically onto the largest root. Returns (three, e_L, Z_V, lnphi_L, lnphi_V,
    vapour_like): ``three`` where the two roots are distinct; ``vapour_like`` tells for a single
    root whether it lies above the inflection point of the cubic.
    """
    c2 = B - 1.0
    c1 = A - B * (3.0 * B + 2.0)
    c0 = B * (B + B * B - A)
    g1 = A - 4.0 * B + 2.0 * B * B
    g2 = 4.0 * B - 1.0
    e = np.zeros_like(A)
    zv = 1.0 + B
    for _ in range(60):
        g = ((e + g2) * e + g1) * e - 2.0 * B * B
        dg = (3.0 * e + 2.0 * g2) * e + g1
        e_new = e - g / np.where(dg > 0, dg, np.inf)
        f = ((zv + c2) * zv + c1) * zv + c0
        df = (3.0 * zv + 2.0 * c2) * zv + c1
        zv_new = zv - f / np.where(df > 0, df, np.inf)
        small = (np.abs(e_new - e) <= 1e-15 * e_new) & (np.abs(zv_new - zv) <= 1e-15 * zv_new)
        e, zv = e_new, zv_new
        if small.all():
            break
    zl = B + e
    infl = (1.0 - B) / 3.0
    # the liquid iteration found a root only where g vanishes there with g' > 0
    g = ((e + g2) * e + g1) * e - 2.0 * B * B
    dg = (3.0 * e + 2.0 * g2) * e + g1
    found = (dg > 0) & (np.abs(g) <= 1e-12 * (2.0 * B * B + np.abs(g1) * e + e * e))
    three = found & (zv - zl > 1e-9 * zv) & (zl < infl) & (zv > infl)
    f_infl = ((infl + c2) * infl + c1) * infl + c0
    vapour_like = f_infl < 0.0

    def lnphi(Z, ZmB):
        L = np.log((Z + (1 + _SQ2) * B) / (ZmB + (2.0 - _SQ2) * B))
        return Z - 1.0 - np.log(ZmB) - A / (2 * _SQ2 * B) * L

    ln_l = lnphi(zl, np.where(e > 0, e, 1.0))
    ln_v = lnphi(zv, np.maximum(zv - B, 1e-300))
    return three, e, zv, ln_l, ln_v, vapour_like


def saturation_pressure(T, species_name, h2_quantum=True, tol=1e-12):
    """Vapour pressure of a pure component from Peng-Robinson (equal liquid and vapour fugacity).

    Newton's method on ln P, with the exact derivative
    :math:`d(\\ln\\phi^L - \\ln\\phi^V)/d\\ln P = Z^L - Z^V` of a pure fluid, safeguarded by
    bisection in a bracket [1e-30 Pc, Pc] (Peng-Robinson reproduces Tc and Pc, so the saturation
    pressure lies below Pc); started from the Wilson-type estimate
    :math:`P_c \\exp[5.373(1+\\omega)(1 - T_c/T)]`. Where the cubic has only one real root at a
    trial pressure, its type (above or below the inflection point of the cubic) tells on which
    side of the saturation pressure that pressure lies. The liquid root is solved for Z - B, so
    the result keeps its precision at very low pressure. Vectorised over T; at most
    :data:`PSAT_MAX_ITER` steps.

    Parameters
    ----------
    T : float or array_like
        Temperature [K], with 0.3 Tc <= T < Tc (every species teakit knows has its triple point
        above 0.3 Tc).
    species_name : str
        Species, as in ``data/species.csv``.
    h2_quantum : bool, optional
        Use the quantum-corrected effective constants of H2 (as everywhere in teakit); they move
        its Peng-Robinson critical point to Tc = 43.6 - 21.8/2.016 = 32.79 K. They were made for
        the supercritical gas: the H2 saturation pressure comes out 5-65 % high below 30 K.
    tol : float, optional
        Tolerance on the Newton step in ln P [-].

    Returns
    -------
    float or ndarray
        Saturation pressure [Pa], shape of ``T``.

    Raises
    ------
    InputError
        For T outside [0.3 Tc, Tc), a non-finite T or an unknown species.
    ConvergenceError
        If the Newton/bisection iteration does not converge (not expected).

    Examples
    --------
    Ammonia at 0 degC; the reference equation of state (Gao et al. 2023, via CoolProp) gives
    4.292 bar, Peng-Robinson 0.55 % less (tests/test_flash.py):

    >>> round(saturation_pressure(273.15, "NH3") / 1e5, 2)
    4.27
    """
    if not isinstance(species_name, str):
        raise InputError(f"species_name must be one species name (str), got {species_name!r}")
    sset = species_set([species_name])
    T = check_positive("T", T, "K")
    tol = check_scalar("tol", check_range("tol", tol, 0.0, 1e-3, inclusive=(False, True)))
    Tc, Pc, om = float(sset.Tc[0]), float(sset.Pc[0]), float(sset.omega[0])
    if h2_quantum and species_name == "H2":
        # the effective constants of pure_parameters at their own critical temperature:
        # Tc = 43.6 / (1 + 21.8 / (2.016 Tc)), Pc = 20.5e5 / (1 + 44.2 / (2.016 Tc)), omega = 0
        Tc = 43.6 - 21.8 / 2.016
        Pc = 20.5e5 / (1.0 + 44.2 / (2.016 * Tc))
        om = 0.0
    bad = (T >= Tc) | (T < _SAT_TR_MIN * Tc)
    if bad.any():
        v = T[bad].ravel()[0] if T.ndim else float(T)
        raise InputError(
            f"T = {v:g} K is outside the range of saturation_pressure for {species_name}: "
            f"T must lie in [{_SAT_TR_MIN * Tc:g}, {Tc:g}) K (0.3 Tc up to the critical "
            "temperature)"
        )
    shape = T.shape
    Tf = T.reshape(-1)
    n = Tf.size
    a, _, b = pure_parameters(sset, Tf, h2_quantum)
    fa = a[:, 0] / (R * Tf) ** 2  # A / P
    fb = b[:, 0] / (R * Tf)  # B / P
    lnP = np.log(Pc) + 5.373 * (1.0 + om) * (1.0 - Tc / Tf)
    lo = np.full(n, np.log(Pc) - 69.0)
    hi = np.full(n, np.log(Pc))
    lnP = np.clip(lnP, lo + 1.0, hi - 1e-3)
    act = np.arange(n)
    step = np.full(n, np.inf)
    for _ in range(PSAT_MAX_ITER):
        lp = lnP[act]
        Pa = np.exp(lp)
        three, e, zv, ln_l, ln_v, vap_like = _pure_lnphi_roots(fa[act] * Pa, fb[act] * Pa)
        f = ln_l - ln_v
        # below the saturation pressure the vapour is stable (f > 0); a single vapour-like root
        # means the pressure is below the lower spinodal, a single liquid-like root above the
        # upper one
        below = np.where(three, f > 0, vap_like)
        l_a = np.where(below, lp, lo[act])
        h_a = np.where(below, hi[act], lp)
        dz = fb[act] * Pa + e - zv  # Z_L - Z_V < 0
        newton = lp - f / np.where(three & (dz < 0), dz, -np.inf)
        use_newton = three & (newton > l_a) & (newton < h_a)
        new = np.where(use_newton, newton, 0.5 * (l_a + h_a))
        s = np.abs(new - lp)
        lo[act], hi[act], lnP[act], step[act] = l_a, h_a, new, s
        done = (use_newton & (s < tol)) | (h_a - l_a < tol)
        act = act[~done]
        if act.size == 0:
            break
    else:
        raise ConvergenceError(
            f"saturation pressure of {species_name} did not converge (residual: |delta ln P|)",
            members=act,
            residuals=step[act],
            iterations=PSAT_MAX_ITER,
        )
    return _scalar(np.exp(lnP).reshape(shape))
