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
from teakit.validation import check_finite, check_positive, check_range

__all__ = [
    "Stream",
    "enthalpy_flow",
    "heat_capacity_flow",
    "mix",
    "split",
    "temperature_from_enthalpy",
]


def _h_flow(n, T, sset):
    return R * T * np.sum(n * ideal_gas.h_RT(T, sset), axis=-1)


def _cp_flow(n, T, sset):
    return R * np.sum(n * ideal_gas.cp_R(T, sset), axis=-1)


def _checked_flows(n, T, sset: SpeciesSet):
    """n (B, ns) finite and >= 0, T (B,) within the species data range, as float arrays."""
    if not isinstance(sset, SpeciesSet):
        raise InputError(f"sset must be a SpeciesSet (teakit.thermo.species_set), got {type(sset).__name__}")
    n = check_positive("n", n, "mol/s", allow_zero=True)
    T = sset.check_T(T)
    if n.ndim != 2 or n.shape[-1] != sset.n or T.shape != n.shape[:1]:
        raise InputError(f"n must have shape (B, {sset.n}) and T shape (B,), got {n.shape} and {T.shape}")
    return n, T


def enthalpy_flow(n: np.ndarray, T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """Ideal-gas enthalpy flow sum_i n_i h_i(T) [W] for flows n (B, ns) [mol/s] at T (B,) [K]."""
    n, T = _checked_flows(n, T, sset)
    return _h_flow(n, T, sset)


def heat_capacity_flow(n: np.ndarray, T: np.ndarray, sset: SpeciesSet) -> np.ndarray:
    """Ideal-gas heat-capacity flow sum_i n_i cp_i(T) [W/K]."""
    n, T = _checked_flows(n, T, sset)
    return _cp_flow(n, T, sset)


def temperature_from_enthalpy(n, H, sset: SpeciesSet, T_guess, max_iter: int = 30, tol: float = 1e-13):
    """Temperature at which flows ``n`` carry ideal-gas enthalpy flow ``H`` (Newton, bounded).

    Parameters
    ----------
    n : ndarray (B, ns)
        Molar flows [mol/s], finite and >= 0. A member with no flow keeps its guess.
    H : ndarray (B,)
        Target enthalpy flow [W].
    sset : SpeciesSet
        Species of the last axis of ``n``.
    T_guess : ndarray (B,)
        Starting temperature [K].
    max_iter : int
        Bound on the Newton steps (1 to 1000).
    tol : float
        Convergence on the relative temperature step, in (0, 1e-3] [-].

    Returns
    -------
    ndarray (B,)
        Temperature [K], within the species data range.

    Raises
    ------
    InputError
        For bad arguments, or an enthalpy that corresponds to a temperature outside the species
        data range (the message names ``H``).
    """
    if not isinstance(sset, SpeciesSet):
        raise InputError(f"sset must be a SpeciesSet (teakit.thermo.species_set), got {type(sset).__name__}")
    if isinstance(max_iter, bool) or not isinstance(max_iter, int | np.integer) or not 1 <= max_iter <= 1000:
        raise InputError(f"max_iter must be a whole number from 1 to 1000, got {max_iter!r}")
    tol = float(check_range("tol", tol, 0.0, 1e-3, inclusive=(False, True)))
    n = check_positive("n", n, "mol/s", allow_zero=True)
    lo, hi = sset.T_range
    T = np.clip(check_positive("T_guess", T_guess, "K"), lo, hi)
    H = check_finite("H", H)
    if n.ndim != 2 or n.shape[-1] != sset.n:
        raise InputError(f"n must have shape (B, {sset.n}), got {n.shape}")
    try:
        T = np.broadcast_to(T, n.shape[:1]).copy()
        H = np.broadcast_to(H, n.shape[:1])
    except ValueError:
        raise InputError(f"H and T_guess must broadcast to the batch of n ({n.shape[0]}), got shapes "
                         f"{np.shape(H)} and {np.shape(T_guess)}") from None
    return _temperature(n, H, sset, T, max_iter, tol)


def _temperature(n, H, sset, T, max_iter=30, tol=1e-13):
    """Newton on the enthalpy balance without argument checks (T already a float copy).

    Where the species share one range boundary the flows' NASA coefficients are combined once
    (one polynomial per member instead of one per species and member)."""
    lo, hi = sset.T_range
    flowing = n.sum(axis=-1) > 0
    if np.all(sset.T_mid == sset.T_mid[0]):
        c = ideal_gas.combined_coefficients(sset, n)  # (B, 2, 7)
        T_mid = float(sset.T_mid[0])

        def h_cp(T):
            return R * T * ideal_gas.poly_h_RT(c, T, T_mid), R * ideal_gas.poly_cp_R(c, T, T_mid)
    else:
        def h_cp(T):
            return _h_flow(n, T, sset), _cp_flow(n, T, sset)
    for _ in range(max_iter):
        h, cp = h_cp(T)
        step = np.where(flowing, (h - H) / np.where(flowing, cp, 1.0), 0.0)
        T_new = np.clip(T - step, lo, hi)
        if np.all(np.abs(T_new - T) < tol * T):
            T = T_new
            break
        T = T_new
    h, cp = h_cp(T)
    resid = np.where(flowing, (h - H) / np.maximum(cp, 1e-300), 0.0)
    bad = ~(np.abs(resid) <= 1e-3)
    if bad.any():
        raise InputError(
            f"H: an energy balance needs a temperature outside the species data range "
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

    def __post_init__(self):
        sp = self.species
        if isinstance(sp, str) or not isinstance(sp, tuple | list) or not all(isinstance(x, str) for x in sp):
            raise InputError(f"species must be a tuple of species names, got {sp!r}")
        sset = species_set(sp)  # unknown or repeated names raise here
        n = check_positive("n", self.n, "mol/s", allow_zero=True)
        if n.ndim != 2 or n.shape[1] != sset.n:
            raise InputError(f"n must have shape (B, {sset.n}) for species {', '.join(sp)}, got {n.shape}")
        T = check_positive("T", self.T, "K")
        P = check_positive("P", self.P, "Pa")
        B = n.shape[0]
        try:
            T = np.broadcast_to(T, (B,)).astype(float)
            P = np.broadcast_to(P, (B,)).astype(float)
        except ValueError:
            raise InputError(f"T and P must be scalars or arrays of the batch size {B}, got shapes "
                             f"{np.shape(self.T)} and {np.shape(self.P)}") from None
        object.__setattr__(self, "species", tuple(sp))
        object.__setattr__(self, "n", n)
        object.__setattr__(self, "T", T)
        object.__setattr__(self, "P", P)

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
        """Ideal-gas enthalpy flow [W]; the temperature must lie in the species data range."""
        return _h_flow(self.n, self.sset.check_T(self.T), self.sset)

    def at(self, T=None, P=None) -> Stream:
        """The same flows at another temperature [K] and/or pressure [Pa]."""
        return replace(
            self,
            T=self.T if T is None else np.broadcast_to(np.asarray(T, float), self.T.shape).copy(),
            P=self.P if P is None else np.broadcast_to(np.asarray(P, float), self.P.shape).copy(),
        )

    def scaled(self, factor) -> Stream:
        """Flows multiplied by ``factor`` (B,) or scalar, >= 0 [-]."""
        f = check_positive("factor", factor, allow_zero=True)
        try:
            return replace(self, n=self.n * (f[..., None] if f.ndim else f))
        except ValueError:
            raise InputError(f"factor must be a scalar or an array of the batch size {len(self)}, got shape {f.shape}") from None

    def component(self, name: str) -> np.ndarray:
        """Flow of one species [mol/s]."""
        return self.n[:, self.species.index(name)]

    def __len__(self) -> int:
        return self.n.shape[0]


def mix(*streams: Stream, P=None) -> Stream:
    """Adiabatic mixer: flows add, enthalpy is conserved; pressure is the lowest inlet (or ``P``).

    Parameters
    ----------
    *streams : Stream
        Inlets of one batch size and species list [mol/s, K, Pa].
    P : float or array_like (B,), optional
        Outlet pressure [Pa], > 0; default the lowest inlet pressure.

    Returns
    -------
    Stream
        The mixed stream [mol/s, K, Pa]; a member with no flow at all takes the mean of the
        inlet temperatures.
    """
    if not streams:
        raise InputError("mix needs at least one stream")
    if not all(isinstance(s, Stream) for s in streams):
        bad = next(type(s).__name__ for s in streams if not isinstance(s, Stream))
        raise InputError(f"streams to mix must be Stream objects, got {bad}")
    sp = streams[0].species
    if any(s.species != sp for s in streams):
        raise InputError("streams to mix must carry the same species in the same order")
    B = len(streams[0])
    if any(len(s) != B for s in streams):
        raise InputError(f"streams to mix must have one batch size, got {[len(s) for s in streams]}")
    sset = species_set(sp)
    H = sum(s.H for s in streams)
    n = sum(s.n for s in streams)
    tot_in = n.sum(axis=-1)
    T_mean = sum(s.T for s in streams) / len(streams)
    T_guess = np.where(tot_in > 0, sum(s.T * s.n.sum(axis=-1) for s in streams) / np.maximum(tot_in, 1e-300), T_mean)
    lo, hi = sset.T_range
    try:
        T = _temperature(n, H, sset, np.clip(T_guess, lo, hi))
    except InputError as exc:
        raise InputError(f"streams: {exc}".replace("H: ", "")) from None
    T = np.where(tot_in > 0, T, T_mean)
    if P is None:
        P_out = np.minimum.reduce([s.P for s in streams])
    else:
        P_out = check_positive("P", P, "Pa")
        try:
            P_out = np.broadcast_to(P_out, T.shape).astype(float)
        except ValueError:
            raise InputError(f"P must be a scalar or an array of the batch size {B}, got shape {P_out.shape}") from None
    return Stream(sp, n, T, P_out)


def split(stream: Stream, fraction) -> tuple[Stream, Stream]:
    """Splitter: ``fraction`` of every flow to the first outlet, the rest to the second.

    Parameters
    ----------
    fraction : array_like (B,) or float
        Fraction to the first outlet, in [0, 1] [-].
    """
    if not isinstance(stream, Stream):
        raise InputError(f"stream must be a Stream, got {type(stream).__name__}")
    f = check_range("fraction", fraction, 0.0, 1.0)
    try:
        f = np.broadcast_to(f, stream.T.shape)[:, None]
    except ValueError:
        raise InputError(f"fraction must be a scalar or an array of the batch size {len(stream)}, got shape {f.shape}") from None
    return replace(stream, n=stream.n * f), replace(stream, n=stream.n * (1.0 - f))
