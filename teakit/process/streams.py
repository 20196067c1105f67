"""Gas streams and the simple units of a flowsheet: mixer, splitter, heater/cooler duty.

A :class:`Stream` holds molar flows of an ordered species set for a whole batch of cases
(``n`` of shape (B, ns) [mol/s]), with temperature and pressure per case. Enthalpies are
ideal-gas on the formation basis (teakit.thermo.ideal_gas); where a liquid is present the flash
(teakit.thermo.flash) adds the real-fluid departure. Every function works on the whole batch.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from teakit.errors import InputError
from teakit.thermo import ideal_gas
from teakit.thermo.species import R, SpeciesSet, species_set

__all__ = [
    "Stream",
    "enthalpy_flow",
    "heat_capacity_flow",
    "mix",
    "split",
    "temperature_from_enthalpy",
]


def enthalpy_flow(n: np.ndarray, T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """Ideal-gas enthalpy flow sum_i n_i h_i(T) [W] for flows n (B, ns) [mol/s] at T (B,) [K]."""
    return R * T * np.sum(n * ideal_gas.h_RT(T, sset), axis=-1)


def heat_capacity_flow(n: np.ndarray, T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """Ideal-gas heat-capacity flow sum_i n_i cp_i(T) [W/K]."""
    return R * np.sum(n * ideal_gas.cp_R(T, sset), axis=-1)


def temperature_from_enthalpy(n, H, sset: SpeciesSet, T_guess, max_iter: int = 30, tol: float = 1e-13):
    """Temperature at which flows ``n`` carry ideal-gas enthalpy flow ``H`` (Newton, bounded).

    Parameters
    ----------
    n : ndarray (B, ns)
        Molar flows [mol/s].
    H : ndarray (B,)
        Target enthalpy flow [W].
    sset : SpeciesSet
        Species of the last axis of ``n``.
    T_guess : ndarray (B,)
        Starting temperature [K].

    Returns
    -------
    ndarray (B,)
        Temperature [K], within the species data range.

    Raises
    ------
    InputError
        If the enthalpy corresponds to a temperature outside the species data range.
    """
    lo, hi = sset.T_range
    T = np.clip(np.asarray(T_guess, dtype=float), lo, hi)
    for _ in range(max_iter):
        step = (enthalpy_flow(n, T, sset) - H) / heat_capacity_flow(n, T, sset)
        T_new = np.clip(T - step, lo, hi)
        if np.all(np.abs(T_new - T) < tol * T):
            T = T_new
            break
        T = T_new
    resid = (enthalpy_flow(n, T, sset) - H) / np.maximum(heat_capacity_flow(n, T, sset), 1e-300)
    bad = np.abs(resid) > 1e-3
    if bad.any():
        raise InputError(
            f"an energy balance needs a temperature outside the species data range "
            f"({lo:g} to {hi:g} K) for {int(bad.sum())} case(s)"
        )
    return T


@dataclass(frozen=True)
class Stream:
    """Molar flows of a batch of gas streams.

    Attributes
    ----------
    species : tuple of str
        Species, the last axis of ``n``.
    n : ndarray (B, ns)
        Molar flows [mol/s].
    T : ndarray (B,)
        Temperature [K].
    P : ndarray (B,)
        Pressure, absolute [Pa].
    """

    species: tuple[str, ...]
    n: np.ndarray
    T: np.ndarray
    P: np.ndarray

    @property
    def sset(self) -> SpeciesSet:
        return species_set(self.species)

    @property
    def total(self) -> np.ndarray:
        """Total molar flow [mol/s]."""
        return self.n.sum(axis=-1)

    @property
    def y(self) -> np.ndarray:
        """Mole fractions (B, ns) [-]."""
        tot = self.total[:, None]
        return np.divide(self.n, tot, out=np.zeros_like(self.n), where=tot > 0)

    @property
    def H(self) -> np.ndarray:
        """Ideal-gas enthalpy flow [W]."""
        return enthalpy_flow(self.n, self.T, self.sset)

    def at(self, T=None, P=None) -> Stream:
        """The same flows at another temperature [K] and/or pressure [Pa]."""
        return replace(
            self,
            T=self.T if T is None else np.broadcast_to(np.asarray(T, float), self.T.shape).copy(),
            P=self.P if P is None else np.broadcast_to(np.asarray(P, float), self.P.shape).copy(),
        )

    def scaled(self, factor) -> Stream:
        """Flows multiplied by ``factor`` (B,) or scalar [-]."""
        return replace(self, n=self.n * np.asarray(factor, float)[..., None] if np.ndim(factor) else self.n * factor)

    def component(self, name: str) -> np.ndarray:
        """Flow of one species [mol/s]."""
        return self.n[:, self.species.index(name)]

    def __len__(self) -> int:
        return self.n.shape[0]


def mix(*streams: Stream, P=None) -> Stream:
    """Adiabatic mixer: flows add, enthalpy is conserved; pressure is the lowest inlet (or ``P``).

    Returns
    -------
    Stream
        The mixed stream [mol/s, K, Pa].
    """
    if not streams:
        raise InputError("mix needs at least one stream")
    sp = streams[0].species
    if any(s.species != sp for s in streams):
        raise InputError("streams to mix must carry the same species in the same order")
    n = sum(s.n for s in streams)
    H = sum(s.H for s in streams)
    tot_in = sum(s.n.sum(axis=-1) for s in streams)
    T_guess = sum(s.T * s.n.sum(axis=-1) for s in streams) / np.maximum(tot_in, 1e-300)
    T = temperature_from_enthalpy(n, H, species_set(sp), T_guess)
    P_out = np.minimum.reduce([s.P for s in streams]) if P is None else np.broadcast_to(P, T.shape).astype(float)
    return Stream(sp, n, T, P_out)


def split(stream: Stream, fraction) -> tuple[Stream, Stream]:
    """Splitter: ``fraction`` of every flow to the first outlet, the rest to the second.

    Parameters
    ----------
    fraction : array_like (B,) or float
        Fraction to the first outlet, in [0, 1] [-].
    """
    f = np.asarray(fraction, dtype=float)
    if np.any(~np.isfinite(f)) or np.any((f < 0) | (f > 1)):
        raise InputError("split fraction must lie in [0, 1]")
    f = np.broadcast_to(f, stream.T.shape)[:, None]
    return replace(stream, n=stream.n * f), replace(stream, n=stream.n * (1.0 - f))
