"""Species data: ideal-gas heat-capacity polynomials, formation properties, critical constants.

The data live in ``data/species.csv`` (one row per species, with source columns) and
``data/elements.csv``. :func:`species_set` returns an immutable :class:`SpeciesSet` of stacked
arrays for an ordered list of species, cached per list, which every thermodynamic function uses.

Heat capacity follows the NASA 7-coefficient form (McBride, Gordon & Reno, NASA TM-4513, 1993):

.. math::  c_p / R = a_1 + a_2 T + a_3 T^2 + a_4 T^3 + a_5 T^4

in two temperature ranges. The table holds only :math:`a_1 \\ldots a_5`; the integration constants
(:math:`a_6`, :math:`a_7`) are computed here so that :math:`h(298.15\\,K)` equals the tabulated
enthalpy of formation and :math:`s(298.15\\,K, 1\\,bar)` the tabulated entropy, with h and s
continuous at the range boundary. The enthalpy-of-formation choice is therefore explicit in the
table (see the NH3 row: Active Thermochemical Tables rather than NIST-JANAF).
"""

from __future__ import annotations

import functools
import re
from dataclasses import dataclass

import numpy as np

from teakit.data import load_table
from teakit.errors import InputError

__all__ = ["P_REF", "T_REF", "R", "SpeciesSet", "known_species", "parse_formula", "species_set"]

#: Molar gas constant [J/(mol K)] (CODATA 2018, exact).
R = 8.314462618
#: Reference temperature of formation data [K].
T_REF = 298.15
#: Standard-state pressure [Pa] (1 bar, IUPAC).
P_REF = 1.0e5


def parse_formula(formula: str) -> dict[str, float]:
    """Element counts of a simple formula such as ``"H3N"`` or ``"CH3OH"`` (no brackets)."""
    counts: dict[str, float] = {}
    pos = 0
    for m in re.finditer(r"([A-Z][a-z]?)(\d*(?:\.\d+)?)", formula):
        if m.start() != pos:
            raise InputError(f"formula {formula!r} is not a simple element formula")
        pos = m.end()
        counts[m.group(1)] = counts.get(m.group(1), 0.0) + float(m.group(2) or 1)
    if pos != len(formula) or not counts:
        raise InputError(f"formula {formula!r} is not a simple element formula")
    return counts


@functools.cache
def _table():
    df = load_table("species").set_index("species")
    return df


def known_species() -> tuple[str, ...]:
    """Names of the species in ``data/species.csv``, in table order."""
    return tuple(_table().index)


@functools.cache
def _atomic_masses() -> dict[str, float]:
    el = load_table("elements")
    return dict(zip(el["element"], el["atomic_mass_g_mol"] * 1e-3, strict=True))


@dataclass(frozen=True, eq=False)
class SpeciesSet:
    """Stacked data of an ordered tuple of species (use :func:`species_set` to build one).

    Attributes
    ----------
    names : tuple of str
        Species names, the order of the last axis of every per-species array.
    molar_mass : ndarray (nc,)
        Molar mass [kg/mol].
    elements : tuple of str
        Elements present.
    element_matrix : ndarray (n_elements, nc)
        Atoms of each element per molecule [-].
    coeffs : ndarray (2, nc, 7)
        NASA 7-coefficient sets, low range [0] and high range [1], with a6, a7 fitted to
        Hf298 and S298 [-, 1/K, ..., K, -].
    T_mid, T_low, T_high : ndarray (nc,)
        Range boundary and validity limits [K].
    Hf298 : ndarray (nc,)
        Enthalpy of formation at 298.15 K [J/mol].
    S298 : ndarray (nc,)
        Standard entropy at 298.15 K, 1 bar [J/(mol K)].
    Tc, Pc, omega : ndarray (nc,)
        Critical temperature [K], critical pressure [Pa], acentric factor [-].
    """

    names: tuple[str, ...]
    molar_mass: np.ndarray
    elements: tuple[str, ...]
    element_matrix: np.ndarray
    coeffs: np.ndarray
    T_mid: np.ndarray
    T_low: np.ndarray
    T_high: np.ndarray
    Hf298: np.ndarray
    S298: np.ndarray
    Tc: np.ndarray
    Pc: np.ndarray
    omega: np.ndarray

    @property
    def n(self) -> int:
        """Number of species."""
        return len(self.names)

    def index(self, name: str) -> int:
        """Position of species ``name``."""
        try:
            return self.names.index(name)
        except ValueError:
            raise InputError(
                f"species {name!r} is not in this set; it holds {', '.join(self.names)}"
            ) from None

    @property
    def T_range(self) -> tuple[float, float]:
        """Temperature range over which every species has data [K]."""
        return float(self.T_low.max()), float(self.T_high.min())

    def check_T(self, T, name: str = "T") -> np.ndarray:
        """Float array of ``T``; InputError if outside the common data range."""
        from teakit.validation import check_finite

        T = check_finite(name, T)
        lo, hi = self.T_range
        bad = (T < lo) | (T > hi)
        if bad.any():
            v = T[bad].ravel()[0] if T.ndim else float(T)
            raise InputError(
                f"{name} = {v:g} K is outside the heat-capacity data range of "
                f"{', '.join(self.names)}: valid {lo:g} to {hi:g} K"
            )
        return T

    def __repr__(self) -> str:
        return f"SpeciesSet({', '.join(self.names)})"


def _integration_constants(low, high, T_mid, Hf, S):
    """a6, a7 for both ranges so that h(T_REF) = Hf, s(T_REF) = S, continuous at T_mid."""

    def h_rt_poly(a, T):  # h/RT without the a6/T term
        return a[0] + a[1] * T / 2 + a[2] * T**2 / 3 + a[3] * T**3 / 4 + a[4] * T**4 / 5

    def s_r_poly(a, T):  # s/R without a7
        return a[0] * np.log(T) + a[1] * T + a[2] * T**2 / 2 + a[3] * T**3 / 3 + a[4] * T**4 / 4

    first = low if T_REF <= T_mid else high
    a6_first = Hf / R - h_rt_poly(first, T_REF) * T_REF
    a7_first = S / R - s_r_poly(first, T_REF)
    if first is low:
        a6_l, a7_l = a6_first, a7_first
        a6_h = (h_rt_poly(low, T_mid) - h_rt_poly(high, T_mid)) * T_mid + a6_l
        a7_h = s_r_poly(low, T_mid) - s_r_poly(high, T_mid) + a7_l
    else:
        a6_h, a7_h = a6_first, a7_first
        a6_l = (h_rt_poly(high, T_mid) - h_rt_poly(low, T_mid)) * T_mid + a6_h
        a7_l = s_r_poly(high, T_mid) - s_r_poly(low, T_mid) + a7_h
    return (a6_l, a7_l), (a6_h, a7_h)


@functools.cache
def _species_set(names: tuple[str, ...]) -> SpeciesSet:
    tab = _table()
    masses = _atomic_masses()
    unknown = [n for n in names if n not in tab.index]
    if unknown:
        raise InputError(
            f"unknown species {', '.join(map(repr, unknown))}; known species: "
            f"{', '.join(tab.index)}"
        )
    if len(set(names)) != len(names):
        raise InputError(f"species listed twice in {names}")
    rows = tab.loc[list(names)]
    formulas = [parse_formula(f) for f in rows["formula"]]
    elements = tuple(sorted({e for f in formulas for e in f}))
    missing = [e for e in elements if e not in masses]
    if missing:
        raise InputError(f"no atomic mass for element(s) {missing} in data/elements.csv")
    emat = np.array([[f.get(e, 0.0) for f in formulas] for e in elements])
    mm = np.array([sum(masses[e] * c for e, c in f.items()) for f in formulas])
    low = rows[[f"low_a{i}" for i in range(1, 6)]].to_numpy(float)
    high = rows[[f"high_a{i}" for i in range(1, 6)]].to_numpy(float)
    T_mid = rows["T_mid_K"].to_numpy(float)
    Hf = rows["Hf298_J_mol"].to_numpy(float)
    S = rows["S298_J_molK"].to_numpy(float)
    coeffs = np.zeros((2, len(names), 7))
    for k in range(len(names)):
        (a6l, a7l), (a6h, a7h) = _integration_constants(low[k], high[k], T_mid[k], Hf[k], S[k])
        coeffs[0, k, :5], coeffs[0, k, 5], coeffs[0, k, 6] = low[k], a6l, a7l
        coeffs[1, k, :5], coeffs[1, k, 5], coeffs[1, k, 6] = high[k], a6h, a7h
    out = SpeciesSet(
        names=names,
        molar_mass=mm,
        elements=elements,
        element_matrix=emat,
        coeffs=coeffs,
        T_mid=T_mid,
        T_low=rows["T_low_K"].to_numpy(float),
        T_high=rows["T_high_K"].to_numpy(float),
        Hf298=Hf,
        S298=S,
        Tc=rows["Tc_K"].to_numpy(float),
        Pc=rows["Pc_Pa"].to_numpy(float),
        omega=rows["omega"].to_numpy(float),
    )
    for field in ("molar_mass", "element_matrix", "coeffs", "T_mid", "T_low", "T_high",
                  "Hf298", "S298", "Tc", "Pc", "omega"):
        getattr(out, field).flags.writeable = False
    return out


def species_set(names) -> SpeciesSet:
    """The :class:`SpeciesSet` for an ordered sequence of species names (cached).

    Parameters
    ----------
    names : str or sequence of str
        Species names as in ``data/species.csv`` (e.g. ``["N2", "H2", "NH3"]``).

    Raises
    ------
    InputError
        For an unknown species (the message lists the known ones), a repeated name, an empty
        list or anything that is not a name or a sequence of names.
    """
    if isinstance(names, str):
        names = (names,)
    elif isinstance(names, SpeciesSet):
        return names
    try:
        names = tuple(names)
    except TypeError:
        raise InputError(
            f"species must be a species name or a sequence of names, got {names!r}"
        ) from None
    if not names:
        raise InputError("species must name at least one species, got an empty sequence")
    bad = [n for n in names if not isinstance(n, str)]
    if bad:
        raise InputError(
            f"unknown species {', '.join(map(repr, bad))} (species are given by name); known "
            f"species: {', '.join(_table().index)}"
        )
    return _species_set(names)
