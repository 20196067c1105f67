"""Fugacity-coefficient models used for reaction equilibrium: one registry, one call shape.

Each model is a function ``lnphi(T, P, y) -> ndarray (..., nc)`` built for an ordered species set
by :func:`fugacity_model`. Models:

``"ideal"``
    phi = 1.
``"peng-robinson"``
    Peng-Robinson mixture fugacity coefficients (:mod:`teakit.thermo.peng_robinson`), vapour root,
    k_ij from ``data/pr_kij.csv`` (zero for NH3 pairs) and the quantum-corrected H2 constants.
``"dyson-simon"``
    Pure-gas fugacity-coefficient fits for N2, H2 and NH3 used by Dyson & Simon, Ind. Eng. Chem.
    Fundam. 7, 605 (1968) (after Cooper, Hydrocarbon Process. 46(2), 159, 1967), combined by the
    Lewis-Randall rule; any other species (Ar, CH4) takes its Peng-Robinson mixture value. The fits
    were made for about 150-300 atm and 600-800 K; below about 50 atm they drift from the real
    values (phi of N2 about 1.02 at 10 atm instead of 1.00), which matters little there because
    the gas is nearly ideal.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import InputError, OutOfRangeError
from teakit.thermo.peng_robinson import kij_array, pr_mixture, pure_parameters
from teakit.thermo.species import SpeciesSet, species_set
from teakit.validation import check_composition, check_positive

__all__ = ["MODELS", "FugacityModel", "dyson_simon_phi", "fugacity_model"]

ATM = 101325.0
MODELS = ("ideal", "peng-robinson", "dyson-simon")


def dyson_simon_phi(T, P):
    """Fugacity coefficients of pure N2, H2 and NH3 from the fits used by Dyson & Simon (1968).

    .. math::

        \\phi_{N_2} &= 0.93431737 + 0.3101804\\times10^{-3} T + 0.295896\\times10^{-3} P
                       - 0.2707279\\times10^{-6} T^2 + 0.4775207\\times10^{-6} P^2 \\\\
        \\phi_{H_2} &= \\exp\\{e^{-3.8402 T^{0.125} + 0.541} P - e^{-0.1263 T^{0.5} - 15.980} P^2
                       + 300\\, e^{-0.011901 T - 5.941} (e^{-P/300} - 1)\\} \\\\
        \\phi_{NH_3} &= 0.1438996 + 0.2028538\\times10^{-2} T - 0.4487672\\times10^{-3} P
                       - 0.1142945\\times10^{-5} T^2 + 0.2761216\\times10^{-6} P^2

    with T in K and P in atm.

    Parameters
    ----------
    T : array_like
        Temperature [K].
    P : array_like
        Pressure [Pa].

    Returns
    -------
    tuple of ndarray
        (phi_N2, phi_H2, phi_NH3) [-].
    """
    T = np.asarray(T, dtype=float)
    p = np.asarray(P, dtype=float) / ATM
    phi_n2 = 0.93431737 + 0.3101804e-3 * T + 0.295896e-3 * p - 0.2707279e-6 * T**2 + 0.4775207e-6 * p**2
    phi_h2 = np.exp(
        np.exp(-3.8402 * T**0.125 + 0.541) * p
        - np.exp(-0.1263 * T**0.5 - 15.980) * p**2
        + 300.0 * np.exp(-0.011901 * T - 5.941) * (np.exp(-p / 300.0) - 1.0)
    )
    phi_nh3 = 0.1438996 + 0.2028538e-2 * T - 0.4487672e-3 * p - 0.1142945e-5 * T**2 + 0.2761216e-6 * p**2
    return phi_n2, phi_h2, phi_nh3


class FugacityModel:
    """ln phi of every species of a set, for one model; see :func:`fugacity_model`.

    Call it as ``model(T, P, y)``; a solver that iterates on composition at fixed states calls
    ``model.bind(T, P)`` once and then the returned ``lnphi(y, idx)`` for the members ``idx``,
    so the temperature-dependent parts are computed once.
    """

    def __init__(self, eos: str, sset: SpeciesSet, kij=None):
        if not isinstance(eos, str) or eos not in MODELS:
            raise InputError(f"eos must be one of {', '.join(MODELS)}, got {eos!r}")
        sset = species_set(sset)  # a SpeciesSet, or names
        self.eos, self.sset = eos, sset
        self.kij = kij_array(sset, kij)
        if eos == "dyson-simon":
            self._fitted = [n for n in ("N2", "H2", "NH3") if n in sset.names]
            if not self._fitted:
                raise InputError(
                    "eos='dyson-simon' has fits only for N2, H2 and NH3; none is in "
                    f"{', '.join(sset.names)}"
                )
            self._idx = [sset.index(n) for n in self._fitted]
            self._others = [i for i in range(sset.n) if sset.names[i] not in self._fitted]

    def __repr__(self):
        return f"FugacityModel({self.eos!r}, {self.sset!r})"

    def __call__(self, T, P, y):
        """ln phi [-], shape broadcast(T, P, y[..., 0]) + (nc,); T [K], P [Pa], y [-].

        ``y`` is normalised here. Raises InputError for a non-positive or non-finite T or P,
        a y of the wrong length, negative or all zero, or shapes that do not broadcast;
        OutOfRangeError where the model gives no finite ln phi (far outside its range).
        """
        T = check_positive("T", T, "K")
        P = check_positive("P", P, "Pa")
        n = self.sset.n
        y, shape = check_composition("y", y, self.sset.names, T, P)
        Tf = np.broadcast_to(T, shape).reshape(-1)
        Pf = np.broadcast_to(P, shape).reshape(-1)
        yb = np.broadcast_to(y, shape + (n,)).reshape(-1, n)
        with np.errstate(all="ignore"):
            out = self.bind(Tf, Pf)(yb)
        bad = ~np.isfinite(out).all(axis=-1)
        if bad.any():
            k = int(np.flatnonzero(bad)[0])
            raise OutOfRangeError(
                f"eos={self.eos!r} gives no finite ln phi at T = {Tf[k]:g} K, P = {Pf[k]:g} Pa: "
                "T or P is far outside the range of the model"
            )
        return out.reshape(shape + (n,))

    def bind(self, T, P):
        """Precompute at the flat state arrays T [K], P [Pa]; return ``lnphi(y, idx=None)``."""
        T = np.asarray(T, dtype=float)
        P = np.asarray(P, dtype=float)
        n = self.sset.n
        if self.eos == "ideal":
            return lambda y, idx=None: np.zeros(y.shape[:-1] + (n,))
        pure = pure_parameters(self.sset, T, h2_quantum=True)

        def lnphi_pr(y, idx=None):
            if idx is None:
                return pr_mixture(pure, self.kij, T, P, y)[1]
            sub = tuple(p[idx] for p in pure)
            return pr_mixture(sub, self.kij, T[idx], P[idx], y)[1]

        if self.eos == "peng-robinson":
            return lnphi_pr
        with np.errstate(all="ignore"):
            phi = np.stack(dyson_simon_phi(T, P), axis=-1)  # (..., 3) for N2, H2, NH3
        bad = ~(np.isfinite(phi) & (phi > 0)).all(axis=-1)
        if bad.any():
            k = np.flatnonzero(bad.ravel())[0]
            raise OutOfRangeError(
                f"eos='dyson-simon': the fugacity-coefficient fits give a non-positive or "
                f"non-finite value at T = {np.broadcast_to(T, bad.shape).ravel()[k]:g} K, "
                f"P = {np.broadcast_to(P, bad.shape).ravel()[k]:g} Pa, far outside their fitted "
                "range (about 600-800 K, 150-300 atm); use eos='peng-robinson' there"
            )
        fits = np.log(phi)
        col = {"N2": 0, "H2": 1, "NH3": 2}
        cols = [col[nm] for nm in self._fitted]

        def lnphi_ds(y, idx=None):
            out = np.empty(y.shape[:-1] + (n,))
            if self._others:
                out[..., self._others] = lnphi_pr(y, idx)[..., self._others]
            f = fits if idx is None else fits[idx]
            out[..., self._idx] = f[..., cols]
            return out

        return lnphi_ds


def fugacity_model(eos: str, sset: SpeciesSet, kij=None) -> FugacityModel:
    """The fugacity-coefficient model ``eos`` for species set ``sset``.

    Parameters
    ----------
    eos : str
        One of :data:`MODELS`.
    sset : SpeciesSet or sequence of str
        Species, the order of the last axis of ``y``.
    kij : ndarray or dict, optional
        Peng-Robinson interaction parameters (overrides of ``data/pr_kij.csv``) [-].

    Returns
    -------
    FugacityModel
        ``model(T, P, y)`` gives ln phi with shape broadcast + (nc,) [-].

    Raises
    ------
    InputError
        An unknown model or species, or a bad ``kij``. Evaluating the model raises
        OutOfRangeError (an InputError) where it gives no finite ln phi, e.g. the Dyson-Simon
        fits above about 1750 K, where their fitted phi turns negative.
    """
    return FugacityModel(eos, sset, kij)
