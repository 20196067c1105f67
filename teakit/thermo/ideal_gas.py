"""Ideal-gas heat capacity, enthalpy, entropy and Gibbs energy of species and mixtures.

NASA 7-coefficient polynomials (McBride, Gordon & Reno, NASA TM-4513, 1993):

.. math::

    c_p/R &= a_1 + a_2 T + a_3 T^2 + a_4 T^3 + a_5 T^4 \\\\
    h/(RT) &= a_1 + a_2 T/2 + a_3 T^2/3 + a_4 T^3/4 + a_5 T^4/5 + a_6/T \\\\
    s^\\circ/R &= a_1 \\ln T + a_2 T + a_3 T^2/2 + a_4 T^3/3 + a_5 T^4/4 + a_7

Enthalpies are absolute on the formation basis (elements in their reference states have h = 0
at 298.15 K), so reaction enthalpies and Gibbs energies follow from stoichiometric sums.
Standard state: ideal gas at 1 bar.

Every function takes ``T`` as a float or array [K] and a species argument: a single name (the
result has the shape of ``T``), a sequence of names or a :class:`~teakit.thermo.species.SpeciesSet`
(the result has shape ``T.shape + (nc,)``).
"""

from __future__ import annotations

import numpy as np

from teakit.errors import InputError
from teakit.thermo.species import P_REF, R, SpeciesSet, species_set
from teakit.validation import check_finite, check_positive

__all__ = [
    "cp",
    "enthalpy",
    "entropy",
    "gibbs",
    "mixture_cp",
    "mixture_enthalpy",
    "mixture_entropy",
]


def _resolve(species):
    single = isinstance(species, str)
    sset = species if isinstance(species, SpeciesSet) else species_set(species)
    return sset, single


def _coeffs_at(sset: SpeciesSet, T: np.ndarray) -> np.ndarray:
    """Coefficient set per state and species, shape T.shape + (nc, 7)."""
    high = T[..., None] > sset.T_mid
    return np.where(high[..., None], sset.coeffs[1], sset.coeffs[0])


def _prepare(T, species):
    sset, single = _resolve(species)
    T = sset.check_T(check_positive("T", T, "K"))
    return sset, single, T


def _finish(out, single):
    out = out[..., 0] if single else out
    return float(out) if np.ndim(out) == 0 else out


def cp_R(T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """cp/R, shape T.shape + (nc,); no input checks (internal hot path)."""
    a = _coeffs_at(sset, T)
    t = T[..., None]
    return a[..., 0] + t * (a[..., 1] + t * (a[..., 2] + t * (a[..., 3] + t * a[..., 4])))


def h_RT(T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """h/(RT), shape T.shape + (nc,); no input checks (internal hot path)."""
    a = _coeffs_at(sset, T)
    t = T[..., None]
    poly = a[..., 0] + t * (a[..., 1] / 2 + t * (a[..., 2] / 3 + t * (a[..., 3] / 4 + t * a[..., 4] / 5)))
    return poly + a[..., 5] / t


def s_R(T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """Standard entropy s/R at 1 bar, shape T.shape + (nc,); no input checks."""
    a = _coeffs_at(sset, T)
    t = T[..., None]
    poly = t * (a[..., 1] + t * (a[..., 2] / 2 + t * (a[..., 3] / 3 + t * a[..., 4] / 4)))
    return a[..., 0] * np.log(t) + poly + a[..., 6]


def g_RT(T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """Standard Gibbs energy g/(RT) at 1 bar, shape T.shape + (nc,); no input checks."""
    return h_RT(T, sset) - s_R(T, sset)


def cp(T, species):
    """Ideal-gas isobaric heat capacity.

    Parameters
    ----------
    T : float or array_like
        Temperature [K], within the data range of every species.
    species : str, sequence of str or SpeciesSet
        Species name(s).

    Returns
    -------
    float or ndarray
        Heat capacity [J/(mol K)]; shape of ``T`` for one name, else ``T.shape + (nc,)``.

    Examples
    --------
    >>> round(cp(298.15, "N2"), 2)   # NIST-JANAF (Chase 1998) table N-023: 29.124
    29.12
    """
    sset, single, T = _prepare(T, species)
    return _finish(R * cp_R(T, sset), single)


def enthalpy(T, species):
    """Ideal-gas molar enthalpy on the formation basis (h = Hf at 298.15 K).

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    species : str, sequence of str or SpeciesSet
        Species name(s).

    Returns
    -------
    float or ndarray
        Enthalpy [J/mol].
    """
    sset, single, T = _prepare(T, species)
    return _finish(R * T[..., None] * h_RT(T, sset), single)


def entropy(T, species):
    """Ideal-gas standard molar entropy at 1 bar.

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    species : str, sequence of str or SpeciesSet
        Species name(s).

    Returns
    -------
    float or ndarray
        Entropy [J/(mol K)].
    """
    sset, single, T = _prepare(T, species)
    return _finish(R * s_R(T, sset), single)


def gibbs(T, species):
    """Ideal-gas standard molar Gibbs energy g = h - T s at 1 bar (formation basis for h).

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    species : str, sequence of str or SpeciesSet
        Species name(s).

    Returns
    -------
    float or ndarray
        Gibbs energy [J/mol].
    """
    sset, single, T = _prepare(T, species)
    return _finish(R * T[..., None] * g_RT(T, sset), single)


def _mole_fractions(y, nc):
    y = check_finite("y", y)
    if y.shape[-1:] != (nc,):
        raise InputError(
            f"y must have a last axis of length {nc} (one entry per species), got shape {y.shape}"
        )
    if (y < 0).any():
        raise InputError("y (mole fractions) must be >= 0")
    total = y.sum(axis=-1, keepdims=True)
    if (total <= 0).any():
        raise InputError("y (mole fractions) must not all be zero")
    return y / total


def mixture_cp(T, y, species):
    """Ideal-gas heat capacity of a mixture, sum of y_i cp_i.

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    y : array_like, shape (..., nc)
        Mole fractions (normalised here) [-].
    species : sequence of str or SpeciesSet
        Species, the order of the last axis of ``y``.

    Returns
    -------
    float or ndarray
        Heat capacity [J/(mol K)], shape broadcast(T, y[..., 0]).
    """
    sset, _, T = _prepare(T, species)
    y = _mole_fractions(y, sset.n)
    return _finish(R * np.sum(cp_R(T, sset) * y, axis=-1), False)


def mixture_enthalpy(T, y, species):
    """Ideal-gas molar enthalpy of a mixture (formation basis) [J/mol]; arguments as mixture_cp."""
    sset, _, T = _prepare(T, species)
    y = _mole_fractions(y, sset.n)
    return _finish(R * T * np.sum(h_RT(T, sset) * y, axis=-1), False)


def mixture_entropy(T, P, y, species):
    """Ideal-gas molar entropy of a mixture at T, P, including the mixing term.

    .. math:: s = \\sum_i y_i \\left(s_i^\\circ - R \\ln y_i\\right) - R \\ln(P/P^\\circ)

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    P : float or array_like
        Pressure [Pa].
    y : array_like, shape (..., nc)
        Mole fractions [-].
    species : sequence of str or SpeciesSet
        Species.

    Returns
    -------
    float or ndarray
        Entropy [J/(mol K)].
    """
    sset, _, T = _prepare(T, species)
    P = check_positive("P", P, "Pa")
    y = _mole_fractions(y, sset.n)
    with np.errstate(divide="ignore", invalid="ignore"):
        ylny = np.where(y > 0, y * np.log(np.where(y > 0, y, 1.0)), 0.0)
    s = np.sum(y * s_R(T, sset) - ylny, axis=-1) - np.log(P / P_REF)
    return _finish(R * s, False)


# -- fast paths for linear combinations of species (mixtures, reactions) --------------------------


def combined_coefficients(sset: SpeciesSet, w) -> np.ndarray:
    """NASA coefficients of a linear combination sum_i w_i (species i), per range.

    Parameters
    ----------
    sset : SpeciesSet
        Species; all must share one range boundary T_mid.
    w : array_like (..., nc)
        Weights, e.g. molar flows [mol/s] or stoichiometric coefficients [-].

    Returns
    -------
    ndarray (..., 2, 7)
        Coefficients of the low [0] and high [1] range; with :func:`poly_h_RT` and friends they
        give sum_i w_i h_i / (R T) etc. in one polynomial evaluation.
    """
    if not np.all(sset.T_mid == sset.T_mid[0]):
        raise InputError("combined coefficients need species with one common range boundary T_mid")
    return np.einsum("...i,rik->...rk", np.asarray(w, dtype=float), sset.coeffs)


def _select(c: np.ndarray, T: np.ndarray, T_mid: float) -> np.ndarray:
    high = T > T_mid
    if not high.any():
        return c[..., 0, :]
    if high.all():
        return c[..., 1, :]
    return np.where(high[..., None], c[..., 1, :], c[..., 0, :])


def poly_h_RT(c: np.ndarray, T: np.ndarray, T_mid: float) -> np.ndarray:
    """sum w_i h_i/(R T) from combined coefficients ``c`` (..., 2, 7) at T (...) [-]."""
    a = _select(c, T, T_mid)
    return a[..., 0] + T * (a[..., 1] / 2 + T * (a[..., 2] / 3 + T * (a[..., 3] / 4 + T * a[..., 4] / 5))) + a[..., 5] / T


def poly_cp_R(c: np.ndarray, T: np.ndarray, T_mid: float) -> np.ndarray:
    """sum w_i cp_i / R from combined coefficients [-]."""
    a = _select(c, T, T_mid)
    return a[..., 0] + T * (a[..., 1] + T * (a[..., 2] + T * (a[..., 3] + T * a[..., 4])))


def poly_g_RT(c: np.ndarray, T: np.ndarray, T_mid: float) -> np.ndarray:
    """sum w_i g_i/(R T) at 1 bar from combined coefficients [-]."""
    a = _select(c, T, T_mid)
    h = a[..., 0] + T * (a[..., 1] / 2 + T * (a[..., 2] / 3 + T * (a[..., 3] / 4 + T * a[..., 4] / 5))) + a[..., 5] / T
    s = a[..., 0] * np.log(T) + T * (a[..., 1] + T * (a[..., 2] / 2 + T * (a[..., 3] / 3 + T * a[..., 4] / 4))) + a[..., 6]
    return h - s
