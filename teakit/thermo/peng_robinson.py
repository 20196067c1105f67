"""Peng-Robinson equation of state: mixture compressibility, fugacity coefficients, departures.

Peng & Robinson, Ind. Eng. Chem. Fundam. 15, 59 (1976); the 1978 form of kappa for
omega > 0.491 (Robinson & Peng, GPA Research Report RR-28, 1978). Van der Waals one-fluid mixing
with binary interaction parameters k_ij from ``data/pr_kij.csv`` (zero where not listed):

.. math::

    P = \\frac{RT}{v-b} - \\frac{a(T)}{v(v+b)+b(v-b)}, \\quad
    a_i = 0.45724 \\frac{R^2 T_{c,i}^2}{P_{c,i}} \\left[1+\\kappa_i\\left(1-\\sqrt{T/T_{c,i}}\\right)\\right]^2,
    \\quad b_i = 0.07780 \\frac{R T_{c,i}}{P_{c,i}}

    \\ln\\phi_i = \\frac{b_i}{b}(Z-1) - \\ln(Z-B) - \\frac{A}{2\\sqrt2 B}
    \\left(\\frac{2\\sum_j y_j a_{ij}}{a} - \\frac{b_i}{b}\\right)
    \\ln\\frac{Z+(1+\\sqrt2)B}{Z+(1-\\sqrt2)B}

Every function is vectorised: ``T`` and ``P`` broadcast against ``y[..., 0]``; the cubic is solved
in closed form for the whole batch and polished by Newton steps. ``phase="vapour"`` takes the
largest real root, ``"liquid"`` the smallest root above B, ``"stable"`` the root of lower Gibbs
energy where there are three.

Known weaknesses: PR with zero k_ij under-predicts the non-ideality of NH3-H2-N2 mixtures at
converter conditions (equilibrium NH3 comes out 1-2 mol % low at 300 atm); for H2 the
classical critical constants work above about 200 K but the quantum-corrected effective
constants of Prausnitz, Lichtenthaler & de Azevedo (Molecular Thermodynamics of Fluid-Phase
Equilibria, 3rd ed., 1999) are used by default (``h2_quantum=True``): they bring Z of H2 at
200 bar, 300-700 K within 1.5 % of the reference equation of state (3.7 % without).
"""

from __future__ import annotations

import functools

import numpy as np

from teakit.data import load_table
from teakit.errors import InputError, OutOfRangeError
from teakit.thermo.species import R, SpeciesSet, species_set
from teakit.validation import check_composition, check_finite, check_positive

__all__ = [
    "compressibility",
    "fugacity_coefficients",
    "kij_array",
    "kij_matrix",
    "residual_enthalpy",
    "residual_entropy",
]

_SQ2 = np.sqrt(2.0)
PHASES = ("vapour", "liquid", "stable")


@functools.cache
def _kij_table() -> dict[frozenset, float]:
    tab = load_table("pr_kij")
    return {
        frozenset((i, j)): float(k)
        for i, j, k in zip(tab["species_i"], tab["species_j"], tab["kij"], strict=True)
    }


def kij_matrix(species, overrides=None) -> np.ndarray:
    """Symmetric k_ij matrix for ``species`` from ``data/pr_kij.csv``, with optional overrides.

    Parameters
    ----------
    species : sequence of str or SpeciesSet
        Species, in order.
    overrides : dict, optional
        ``{("NH3", "H2"): 0.05, ...}`` replacing or adding table values [-].

    Returns
    -------
    ndarray (nc, nc)
        k_ij with a zero diagonal [-].
    """
    sset = species if isinstance(species, SpeciesSet) else species_set(species)
    table = _kij_table()
    k = np.zeros((sset.n, sset.n))
    for a in range(sset.n):
        for b in range(a + 1, sset.n):
            k[a, b] = k[b, a] = table.get(frozenset((sset.names[a], sset.names[b])), 0.0)
    if overrides is not None and not isinstance(overrides, dict):
        raise InputError(f"kij overrides must be a dict {{(species_i, species_j): k_ij}}, got {overrides!r}")
    for pair, v in (overrides or {}).items():
        if not (isinstance(pair, tuple) and len(pair) == 2):
            raise InputError(f"kij override keys must be pairs of species names, got {pair!r}")
        i, j = pair
        if not (i in sset.names and j in sset.names):
            raise InputError(
                f"kij override {pair!r} names a species that is not in this set; it holds "
                f"{', '.join(sset.names)}"
            )
        a, b = sset.index(i), sset.index(j)
        if a == b:
            raise InputError(f"kij override ({i!r}, {j!r}) must name two different species")
        v = check_finite(f"kij[{i},{j}]", v)
        if v.ndim != 0:
            raise InputError(f"kij[{i},{j}] must be a single number, got shape {v.shape}")
        v = float(v)
        if not -1.0 < v < 1.0:
            raise InputError(f"kij[{i},{j}] must lie in (-1, 1), got {v}")
        k[a, b] = k[b, a] = v
    return k


def kij_array(sset: SpeciesSet, kij) -> np.ndarray:
    """Checked k_ij matrix from ``kij``: None (the table), a dict of overrides or a matrix.

    Parameters
    ----------
    sset : SpeciesSet
        Species, in order.
    kij : None, dict or array_like (nc, nc)
        None: ``data/pr_kij.csv``; a dict: overrides as in :func:`kij_matrix`; a matrix: used
        as given [-].

    Returns
    -------
    ndarray (nc, nc)
        k_ij [-].

    Raises
    ------
    InputError
        A matrix of the wrong shape, not finite, not symmetric, with a non-zero diagonal or an
        entry outside (-1, 1); a bad override.
    """
    if kij is None or isinstance(kij, dict):
        return kij_matrix(sset, kij)
    k = check_finite("kij", kij)
    if k.shape != (sset.n, sset.n):
        raise InputError(
            f"kij must be a ({sset.n}, {sset.n}) matrix for {', '.join(sset.names)} or a dict "
            f"of pairs, got shape {k.shape}"
        )
    if not np.allclose(k, k.T) or np.any(np.diag(k) != 0.0) or np.any(np.abs(k) >= 1.0):
        raise InputError("kij must be symmetric with a zero diagonal and entries in (-1, 1)")
    return k


def _critical(sset: SpeciesSet, T: np.ndarray, h2_quantum: bool):
    """Tc, Pc, omega per state and species (shape T.shape + (nc,))."""
    Tc = np.broadcast_to(sset.Tc, T.shape + (sset.n,)).copy()
    Pc = np.broadcast_to(sset.Pc, T.shape + (sset.n,)).copy()
    om = np.broadcast_to(sset.omega, T.shape + (sset.n,)).copy()
    if h2_quantum and "H2" in sset.names:
        k = sset.index("H2")
        # Prausnitz et al. (1999) effective constants for quantum gases, M = 2.016 g/mol.
        Tc[..., k] = 43.6 / (1.0 + 21.8 / (2.016 * T))
        Pc[..., k] = 20.5e5 / (1.0 + 44.2 / (2.016 * T))
        om[..., k] = 0.0
    return Tc, Pc, om


def pure_parameters(sset: SpeciesSet, T, h2_quantum: bool = True):
    """Peng-Robinson a_i(T) [Pa m6/mol2], da_i/dT [Pa m6/(mol2 K)], b_i [m3/mol], shape T.shape + (nc,)."""
    return _pure_params(sset, np.asarray(T, dtype=float), h2_quantum)


def _pure_params(sset: SpeciesSet, T: np.ndarray, h2_quantum: bool = True):
    """a_i(T), da_i/dT, b_i; shapes T.shape + (nc,)."""
    Tc, Pc, om = _critical(sset, T, h2_quantum)
    kappa = np.where(
        om <= 0.491,
        0.37464 + 1.54226 * om - 0.26992 * om**2,
        0.379642 + 1.48503 * om - 0.164423 * om**2 + 0.016666 * om**3,
    )
    t = T[..., None]
    sqrt_tr = np.sqrt(t / Tc)
    m = 1.0 + kappa * (1.0 - sqrt_tr)
    ac = 0.45724 * (R * Tc) ** 2 / Pc
    a = ac * m**2
    dadT = -ac * m * kappa * sqrt_tr / t
    b = 0.07780 * R * Tc / Pc
    return a, dadT, b


def _vapour_root(A: np.ndarray, B: np.ndarray) -> np.ndarray:
    """Largest root of the PR cubic: Newton from Z = 1 + B, closed form where that fails.

    With A >= 0 the largest root lies below 1 + B (the root for A = 0), and Newton's method started
    there descends monotonically onto it while the cubic is convex, i.e. while the root lies above
    the inflection point (1 - B)/3. Members that do not meet that test in 12 steps take the closed
    form.
    """
    c2 = -(1.0 - B)
    c1 = A - 3.0 * B * B - 2.0 * B
    c0 = -(A * B - B * B - B * B * B)
    z = 1.0 + B
    for _ in range(12):
        f = ((z + c2) * z + c1) * z + c0
        df = (3.0 * z + 2.0 * c2) * z + c1
        z_new = z - f / np.where(df > 0, df, 1.0)
        if np.all(np.abs(z_new - z) <= 1e-13 * z):
            z = z_new
            break
        z = z_new
    f = ((z + c2) * z + c1) * z + c0
    df = (3.0 * z + 2.0 * c2) * z + c1
    ok = (z > -c2 / 3.0) & (df > 0) & (np.abs(f) <= 1e-12 * np.maximum(1.0, np.abs(c0)))
    if not np.all(ok):
        bad = ~np.asarray(ok)
        z = np.array(z, dtype=float)  # a writable copy, also for a single (0-d) state
        z[bad] = _cubic_roots(np.asarray(A)[bad], np.asarray(B)[bad], "vapour")
    return z


def _cubic_roots(A: np.ndarray, B: np.ndarray, phase: str) -> np.ndarray:
    """Root of Z^3 - (1-B) Z^2 + (A - 3B^2 - 2B) Z - (AB - B^2 - B^3) = 0 per ``phase``."""
    c2 = -(1.0 - B)
    c1 = A - 3.0 * B * B - 2.0 * B
    c0 = -(A * B - B * B - B * B * B)
    p = c1 - c2**2 / 3.0
    q = 2.0 * c2**3 / 27.0 - c2 * c1 / 3.0 + c0
    disc = (q / 2.0) ** 2 + (p / 3.0) ** 3
    shift = -c2 / 3.0
    one = disc > 0
    sq = np.sqrt(np.where(one, disc, 0.0))
    z_one = np.cbrt(-q / 2.0 + sq) + np.cbrt(-q / 2.0 - sq) + shift
    pneg = np.where(one, -1.0, p)  # p < 0 where three real roots
    r = 2.0 * np.sqrt(-pneg / 3.0)
    arg = np.clip(3.0 * q / (pneg * r), -1.0, 1.0)
    theta = np.arccos(arg) / 3.0
    z_hi = r * np.cos(theta) + shift
    z_lo = r * np.cos(theta - 4.0 * np.pi / 3.0) + shift
    z_lo = np.where(z_lo > B, z_lo, z_hi)  # a root below B is not physical
    if phase == "vapour":
        z = np.where(one, z_one, z_hi)
    elif phase == "liquid":
        z = np.where(one, z_one, z_lo)
    else:  # stable: lower Gibbs energy of the two outer roots
        g_hi = _g_dep(z_hi, A, B)
        g_lo = _g_dep(z_lo, A, B)
        z = np.where(one, z_one, np.where(g_lo < g_hi, z_lo, z_hi))
    for _ in range(2):  # Newton polish
        f = ((z + c2) * z + c1) * z + c0
        df = (3.0 * z + 2.0 * c2) * z + c1
        z = z - np.where(np.abs(df) > 1e-300, f / np.where(df == 0, 1.0, df), 0.0)
    return z


def _g_dep(Z, A, B):
    """Dimensionless residual Gibbs energy of a pure-like fluid at root Z (for root choice)."""
    Zb = np.maximum(Z - B, 1e-300)
    return (Z - 1.0) - np.log(Zb) - A / (2 * _SQ2 * B) * np.log(
        (Z + (1 + _SQ2) * B) / (Z + (1 - _SQ2) * B)
    )


def pr_state(T, P, y, sset: SpeciesSet, kij: np.ndarray, phase="vapour", h2_quantum=True,
             want_enthalpy=False):
    """Z, ln phi (and residual enthalpy) without argument checks: the internal hot path.

    ``T`` and ``P`` are arrays broadcast to ``y.shape[:-1]``; ``y`` sums to 1 along the last axis.
    Returns ``(Z, lnphi)`` or, with ``want_enthalpy``, ``(Z, lnphi, h_res, s_res)`` with the
    residual enthalpy in J/mol and the residual entropy in J/(mol K), both relative to the ideal
    gas at the same T and P.
    """
    shape = np.broadcast_shapes(np.shape(T), np.shape(P), y.shape[:-1])
    T = np.broadcast_to(T, shape)
    pure = _pure_params(sset, T, h2_quantum)
    return pr_mixture(pure, kij, T, P, y, phase, want_enthalpy)


def pr_mixture(pure, kij, T, P, y, phase="vapour", want_enthalpy=False):
    """Z and ln phi from pure-component parameters ``pure = (a, dadT, b)`` at the states' T.

    Lets a solver that iterates on composition at fixed T compute the T-dependent pure
    parameters once (see :func:`pure_parameters`).
    """
    a, dadT, b = pure
    shape = np.broadcast_shapes(np.shape(T), np.shape(P), y.shape[:-1])
    T = np.broadcast_to(T, shape)
    P = np.broadcast_to(P, shape)
    y = np.broadcast_to(y, shape + (y.shape[-1],))
    sa = np.sqrt(a)
    # sum_j y_j a_ij with a_ij = sqrt(a_i a_j) (1 - k_ij), without forming a_ij per state.
    sum_ya = sa * ((y * sa) @ (1.0 - kij).T)
    am = np.sum(y * sum_ya, axis=-1)
    bm = np.sum(y * b, axis=-1)
    RT = R * T
    A = am * P / RT**2
    B = bm * P / RT
    Z = _vapour_root(A, B) if phase == "vapour" else _cubic_roots(A, B, phase)
    L = np.log((Z + (1 + _SQ2) * B) / (Z + (1 - _SQ2) * B))
    bi_bm = b / bm[..., None]
    lnphi = (
        bi_bm * (Z[..., None] - 1.0)
        - np.log(Z - B)[..., None]
        - (A / (2 * _SQ2 * B))[..., None] * (2.0 * sum_ya / am[..., None] - bi_bm) * L[..., None]
    )
    if not want_enthalpy:
        return Z, lnphi
    # d a_m / dT for the vdW one-fluid rule with constant k_ij.
    aij = sa[..., :, None] * sa[..., None, :] * (1.0 - kij)
    daij = 0.5 * aij * (dadT[..., :, None] / a[..., :, None] + dadT[..., None, :] / a[..., None, :])
    dam = np.einsum("...i,...j,...ij->...", y, y, daij)
    h_res = RT * (Z - 1.0) + (T * dam - am) / (2 * _SQ2 * bm) * L
    s_res = R * np.log(Z - B) + dam / (2 * _SQ2 * bm) * L
    return Z, lnphi, h_res, s_res


def _check_inputs(T, P, y, species, phase, kij):
    sset = species if isinstance(species, SpeciesSet) else species_set(species)
    if phase not in PHASES:
        raise InputError(f"phase must be one of {', '.join(PHASES)}, got {phase!r}")
    T = check_positive("T", T, "K")
    P = check_positive("P", P, "Pa")
    y, _ = check_composition("y", y, sset.names, T, P)
    k = kij_array(sset, kij)
    return sset, T, P, y, k


def _scalar(x):
    return float(x) if np.ndim(x) == 0 else x


def _finite(what, out, T, P, per_species=False):
    """``out``, or OutOfRangeError naming T and P where it is not finite (float overflow)."""
    out = np.asarray(out)
    bad = ~np.isfinite(out)
    if per_species:
        bad = bad.any(axis=-1)
    if bad.any():
        shape = bad.shape
        k = int(np.flatnonzero(bad)[0])
        Tk = np.broadcast_to(T, shape).ravel()[k]
        Pk = np.broadcast_to(P, shape).ravel()[k]
        raise OutOfRangeError(
            f"Peng-Robinson {what} overflow float range at T = {Tk:g} K, P = {Pk:g} Pa: T is too "
            "low or P too high for this mixture (far outside any fluid state the equation "
            "describes)"
        )
    return out


def compressibility(T, P, y, species, phase="vapour", kij=None, h2_quantum=True):
    """Peng-Robinson compressibility factor Z = P v / (R T) of a mixture.

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    P : float or array_like
        Pressure [Pa], absolute.
    y : array_like, shape (..., nc)
        Mole fractions (normalised here) [-].
    species : sequence of str or SpeciesSet
        Species, the order of the last axis of ``y``.
    phase : {"vapour", "liquid", "stable"}
        Root to take where the cubic has three.
    kij : ndarray (nc, nc) or dict, optional
        Binary interaction parameters; default from ``data/pr_kij.csv`` [-].
    h2_quantum : bool
        Use the quantum-corrected effective critical constants for H2 (default). The residual
        enthalpy then neglects the temperature dependence of the effective constants.

    Returns
    -------
    float or ndarray
        Z [-], shape broadcast(T, P, y[..., 0]).

    Examples
    --------
    Pure nitrogen at 300 K and 200 bar; the reference equation of state of Span et al. (2000)
    gives Z = 1.0568, Peng-Robinson is 2.7 % low here (see tests/test_thermo.py):

    >>> round(compressibility(300.0, 200e5, [1.0], ["N2"]), 4)
    1.0277
    """
    sset, T, P, y, k = _check_inputs(T, P, y, species, phase, kij)
    with np.errstate(all="ignore"):
        Z, _ = pr_state(T, P, y, sset, k, phase, h2_quantum)
    return _scalar(_finite("compressibility", Z, T, P))


def fugacity_coefficients(T, P, y, species, phase="vapour", kij=None, h2_quantum=True):
    """Peng-Robinson fugacity coefficients phi_i of each species in a mixture.

    Parameters are those of :func:`compressibility`.

    Returns
    -------
    ndarray, shape broadcast(T, P, y[..., 0]) + (nc,)
        phi_i [-]; the fugacity of i is phi_i y_i P.
    """
    sset, T, P, y, k = _check_inputs(T, P, y, species, phase, kij)
    with np.errstate(all="ignore"):
        _, lnphi = pr_state(T, P, y, sset, k, phase, h2_quantum)
        phi = np.exp(lnphi)
    return _finite("fugacity coefficients", phi, T, P, per_species=True)


def residual_enthalpy(T, P, y, species, phase="vapour", kij=None, h2_quantum=True):
    """Peng-Robinson residual (departure) molar enthalpy h - h_ideal_gas.

    .. math:: h^R = RT(Z-1) + \\frac{T\\,da/dT - a}{2\\sqrt2 b}
              \\ln\\frac{Z+(1+\\sqrt2)B}{Z+(1-\\sqrt2)B}

    Parameters are those of :func:`compressibility`.

    Returns
    -------
    float or ndarray
        Residual enthalpy [J/mol].
    """
    sset, T, P, y, k = _check_inputs(T, P, y, species, phase, kij)
    with np.errstate(all="ignore"):
        _, _, h, _ = pr_state(T, P, y, sset, k, phase, h2_quantum, want_enthalpy=True)
    return _scalar(_finite("residual enthalpy", h, T, P))


def residual_entropy(T, P, y, species, phase="vapour", kij=None, h2_quantum=True):
    """Peng-Robinson residual molar entropy s - s_ideal_gas at the same T and P.

    .. math:: s^R = R \\ln(Z-B) + \\frac{da/dT}{2\\sqrt2 b}
              \\ln\\frac{Z+(1+\\sqrt2)B}{Z+(1-\\sqrt2)B}

    Parameters are those of :func:`compressibility`.

    Returns
    -------
    float or ndarray
        Residual entropy [J/(mol K)].
    """
    sset, T, P, y, k = _check_inputs(T, P, y, species, phase, kij)
    with np.errstate(all="ignore"):
        _, _, _, s = pr_state(T, P, y, sset, k, phase, h2_quantum, want_enthalpy=True)
    return _scalar(_finite("residual entropy", s, T, P))
