"""Reactions from equations, their equilibrium constants and equilibrium compositions.

>>> from teakit import Reaction
>>> r = Reaction("N2 + 3 H2 = 2 NH3")
>>> x = r.equilibrium(T="450 degC", P="300 atm", feed={"N2": 1, "H2": 3})
>>> round(float(x["NH3"]), 3)   # Larson (1924) measured 0.3582 at these conditions
0.358

K(T) is computed from the species data (standard state: ideal gas at 1 bar):

.. math:: \\ln K = -\\sum_i \\nu_i\\, g_i^\\circ(T) / (R T)

Equilibrium for one or several independent reactions, ideal gas or real gas, is solved by
:func:`teakit.chemistry.equilibrium.solve_extents` for a whole batch of (T, P, feed) at once.

Caution: an equilibrium composition is a thermodynamic bound for a feasibility study, not an
inventory or release estimate; ammonia, SO2 and SO3 are toxic, hydrogen-rich gas at pressure
attacks steels, and the applicable codes, local regulations and licensed engineers govern any
design that uses these numbers.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence

import numpy as np

from teakit.chemistry.equilibrium import solve_extents
from teakit.errors import InputError
from teakit.thermo import ideal_gas
from teakit.thermo.fugacity import MODELS, fugacity_model
from teakit.thermo.species import P_REF, R, known_species, species_set
from teakit.units import to_si
from teakit.validation import check_finite, check_positive

__all__ = ["EquilibriumResult", "Reaction", "ReactionSystem", "parse_equation"]

_ARROWS = ("<=>", "<->", "⇌", "=")
_TERM = re.compile(r"^\s*(\d+(?:\.\d*)?(?:/\d+)?|\.\d+)?\s*([A-Za-z][A-Za-z0-9]*)\s*$")

def _coefficient(text: str, equation: str) -> float:
    num, _, den = text.partition("/")
    value = float(num)
    if den:
        value = value / float(den) if float(den) != 0.0 else np.nan
    if not np.isfinite(value):
        raise InputError(
            f"coefficient {text!r} in equation {equation!r} is not a finite number (division by "
            "zero or too many digits)"
        )
    return value

def parse_equation(equation: str) -> dict[str, float]:
    """Signed stoichiometric coefficients of a reaction equation.

    Parameters
    ----------
    equation : str
        E.g. ``"N2 + 3 H2 = 2 NH3"``, ``"SO2 + 0.5 O2 = SO3"``, ``"SO2 + 1/2 O2 <=> SO3"``.

    Returns
    -------
    dict
        Species name to coefficient, negative for reactants, positive for products [-].

    Raises
    ------
    InputError
        For a malformed equation, an unknown species, a species on both sides, or an equation
        whose elements do not balance.
    """
    if not isinstance(equation, str):
        raise InputError(f"equation must be a string such as 'N2 + 3 H2 = 2 NH3', got {equation!r}")
    for arrow in _ARROWS:
        if arrow in equation:
            sides = equation.split(arrow)
            break
    else:
        raise InputError(
            f"equation {equation!r} has no '=' (or '<=>') between reactants and products"
        )
    if len(sides) != 2 or not sides[0].strip() or not sides[1].strip():
        raise InputError(f"equation {equation!r} must have exactly one left and one right side")
    known = set(known_species())
    nu: dict[str, float] = {}
    for sign, side in ((-1.0, sides[0]), (1.0, sides[1])):
        for term in side.split("+"):
            m = _TERM.match(term)
            if not m:
                raise InputError(f"cannot read the term {term.strip()!r} of equation {equation!r}")
            coef = _coefficient(m.group(1), equation) if m.group(1) else 1.0
            name = m.group(2)
            if name not in known:
                raise InputError(
                    f"unknown species {name!r} in equation {equation!r}; known species: "
                    f"{', '.join(sorted(known))}"
                )
            if coef <= 0:
                raise InputError(f"coefficient of {name} in equation {equation!r} must be > 0")
            if name in nu and np.sign(nu[name]) != sign:
                raise InputError(f"species {name} appears on both sides of equation {equation!r}")
            nu[name] = nu.get(name, 0.0) + sign * coef
    sset = species_set(tuple(nu))
    imbalance = sset.element_matrix @ np.array(list(nu.values()))
    if np.any(np.abs(imbalance) > 1e-9):
        detail = ", ".join(
            f"{e}: {v:+g}" for e, v in zip(sset.elements, imbalance, strict=True) if abs(v) > 1e-9
        )
        raise InputError(f"equation {equation!r} does not balance (products minus reactants {detail})")
    return nu

class EquilibriumResult(Mapping):
    """Equilibrium composition: a mapping from species name to mole-fraction array.

    Attributes
    ----------
    species : tuple of str
        Species, the order of the last axis of :attr:`y` and :attr:`moles`.
    y : ndarray (..., ns)
        Equilibrium mole fractions [-].
    moles : ndarray (..., ns)
        Equilibrium amounts on the basis of the feed given [mol per feed basis].
    extent : ndarray (..., R)
        Extents of the reactions [mol per feed basis].
    T, P : ndarray
        Temperature [K] and pressure [Pa], broadcast to the batch shape.
    eos : str
        Fugacity model used.
    """

    def __init__(self, species, y, moles, extent, T, P, eos):
        self.species = tuple(species)
        self.y, self.moles, self.extent = y, moles, extent
        self.T, self.P, self.eos = T, P, eos

    def __getitem__(self, name):
        try:
            k = self.species.index(name)
        except ValueError:
            raise KeyError(f"{name!r} is not in this result; species: {', '.join(self.species)}") from None
        out = self.y[..., k]
        return float(out) if out.ndim == 0 else out

    def __iter__(self):
        return iter(self.species)

    def __len__(self):
        return len(self.species)

    def to_frame(self):
        """A pandas DataFrame, one row per state: T [K], P [Pa] and y_<species> [-]."""
        import pandas as pd

        shape = self.y.shape[:-1]
        cols = {"T [K]": np.broadcast_to(self.T, shape).ravel(), "P [Pa]": np.broadcast_to(self.P, shape).ravel()}
        for k, s in enumerate(self.species):
            cols[f"y_{s} [-]"] = self.y[..., k].ravel()
        return pd.DataFrame(cols)

    def __repr__(self):
        shape = self.y.shape[:-1]
        if not shape:
            comp = ", ".join(f"{s}: {v:.4f}" for s, v in zip(self.species, self.y, strict=True))
            return f"EquilibriumResult(T={float(self.T):.2f} K, P={float(self.P):.4g} Pa, eos={self.eos!r}; {comp})"
        return f"EquilibriumResult(shape={shape}, species={self.species}, eos={self.eos!r})"

class ReactionSystem:
    """Several independent reactions in one gas phase.

    Parameters
    ----------
    equations : sequence of str or Reaction
        E.g. ``["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"]``.

    Raises
    ------
    InputError
        If an equation is malformed or unbalanced, or the reactions are not independent.
    """

    def __init__(self, equations: Sequence):
        if isinstance(equations, str | Reaction):
            equations = [equations]
        if not isinstance(equations, Sequence):
            raise InputError(
                f"equations must be an equation, a Reaction or a sequence of them, got {equations!r}"
            )
        eqs = [e.equation if isinstance(e, Reaction) else e for e in equations]
        if not eqs:
            raise InputError("a reaction system needs at least one equation")
        self._nu_maps = [parse_equation(e) for e in eqs]
        self.equations = tuple(eqs)
        names: list[str] = []
        for m in self._nu_maps:
            names += [s for s in m if s not in names]
        self.species = tuple(names)
        self.nu = np.array([[m.get(s, 0.0) for s in names] for m in self._nu_maps])
        if np.linalg.matrix_rank(self.nu) < len(eqs):
            raise InputError(f"the reactions {list(eqs)} are not independent (one is a combination of others)")
        self._sset = species_set(self.species)
        self._T_mid = float(self._sset.T_mid[0])
        self._c_nu = (
            ideal_gas.combined_coefficients(self._sset, self.nu)
            if np.all(self._sset.T_mid == self._T_mid)
            else None
        )

    def __repr__(self):
        return f"{type(self).__name__}({list(self.equations)!r})"

    # -- thermodynamics of reaction ------------------------------------------------------------
    def _T(self, T):
        return self._sset.check_T(check_positive("T", to_si(T, "K", "T"), "K"))

    def equilibrium_constant(self, T):
        """Equilibrium constant of each reaction, standard state ideal gas at 1 bar.

        Parameters
        ----------
        T : float, array_like, str or pint.Quantity
            Temperature [K].

        Returns
        -------
        float or ndarray
            K [-]; shape of ``T`` for a single reaction, else ``T.shape + (R,)``.
        """
        T = self._T(T)
        return self._squeeze(np.exp(self._lnK(T)))

    def _lnK(self, T):
        """ln K per reaction, shape T.shape + (R,), without argument checks (hot path)."""
        if self._c_nu is not None:
            return -ideal_gas.poly_g_RT(self._c_nu, np.asarray(T, float)[..., None], self._T_mid)
        g = ideal_gas.g_RT(T, self._sset)  # (..., ns)
        return -(g @ self.nu.T)

    def enthalpy_of_reaction(self, T):
        """Standard enthalpy change per unit extent, sum nu_i h_i(T) [J/mol].

        Parameters
        ----------
        T : float, array_like, str or pint.Quantity
            Temperature [K].
        """
        T = self._T(T)
        h = R * T[..., None] * ideal_gas.h_RT(T, self._sset)
        return self._squeeze(h @ self.nu.T)

    def gibbs_energy_of_reaction(self, T):
        """Standard Gibbs energy change per unit extent at 1 bar, sum nu_i g_i(T) [J/mol]."""
        T = self._T(T)
        return self._squeeze(R * T[..., None] * (ideal_gas.g_RT(T, self._sset) @ self.nu.T))

    def _squeeze(self, out):
        if self.nu.shape[0] == 1:
            out = out[..., 0]
        return float(out) if np.ndim(out) == 0 else out

    # -- equilibrium -------------------------------------------------------------------------
    def default_eos(self) -> str:
        """The fugacity model used when ``eos="default"``.

        For ammonia synthesis (a system whose species are N2, H2, NH3 and optionally Ar and CH4)
        the default is ``"dyson-simon"``, which reproduces the equilibrium data of Larson & Dodge
        (1923) and Larson (1924) within about 1 mol % to 300 atm (tests/test_equilibrium.py);
        otherwise ``"peng-robinson"``.
        """
        if {"N2", "H2", "NH3"} <= set(self.species) and set(self.species) <= {"N2", "H2", "NH3", "Ar", "CH4"}:
            return "dyson-simon"
        return "peng-robinson"

    def equilibrium(self, T, P, feed: Mapping, eos: str = "default", kij=None) -> EquilibriumResult:
        """Equilibrium composition at T, P from a feed, broadcast over arrays of T, P and feed.

        Parameters
        ----------
        T : float, array_like, str or pint.Quantity
            Temperature [K] (strings such as ``"450 degC"`` are converted).
        P : float, array_like, str or pint.Quantity
            Pressure, absolute [Pa] (strings such as ``"300 atm"`` are converted).
        feed : mapping
            Species name to amount [mol, or any amount basis]; amounts may be arrays that
            broadcast with T and P. Species not in any reaction are inert.
        eos : {"default", "ideal", "peng-robinson", "dyson-simon"}
            Fugacity model; see :meth:`default_eos` and :mod:`teakit.thermo.fugacity`.
        kij : dict, optional
            Peng-Robinson interaction-parameter overrides ``{("NH3", "H2"): 0.1}`` [-].

        Returns
        -------
        EquilibriumResult
            Mole fractions by species (``result["NH3"]``), shaped like broadcast(T, P, feed).

        Raises
        ------
        InputError
            Bad T or P (non-positive, NaN, outside the species data range), unknown species,
            negative amounts, or a feed in which the reactions can proceed neither way.
        ConvergenceError
            If the solver does not converge (names the batch members).
        """
        choices = ("default", *MODELS)
        if eos not in choices:
            raise InputError(f"eos must be one of {', '.join(choices)}, got {eos!r}")
        model = self.default_eos() if eos == "default" else eos
        T = self._T(T)
        P = check_positive("P", to_si(P, "Pa", "P"), "Pa")
        if not isinstance(feed, Mapping) or not feed:
            raise InputError(f"feed must be a non-empty mapping of species to amounts, got {feed!r}")
        known = set(known_species())
        inerts = [s for s in feed if s not in self.species]
        bad = [s for s in feed if s not in known]
        if bad:
            raise InputError(f"unknown feed species {bad}; known species: {', '.join(sorted(known))}")
        names = self.species + tuple(inerts)
        sset = species_set(names)
        sset.check_T(T)
        amounts = []
        for s in names:
            a = check_finite(f"feed[{s!r}]", feed.get(s, 0.0))
            if (a < 0).any():
                raise InputError(f"feed[{s!r}] must be >= 0, got {a.min()}")
            amounts.append(a)
        shape = np.broadcast_shapes(T.shape, P.shape, *(a.shape for a in amounts))
        n0 = np.stack([np.broadcast_to(a, shape) for a in amounts], axis=-1).reshape(-1, len(names))
        if (n0.sum(axis=-1) <= 0).any():
            raise InputError("feed amounts must not all be zero")
        nu = np.hstack([self.nu, np.zeros((self.nu.shape[0], len(inerts)))])
        Tb = np.broadcast_to(T, shape).ravel()
        Pb = np.broadcast_to(P, shape).ravel()
        lnK = -(ideal_gas.g_RT(Tb, sset) @ nu.T)
        lnphi = fugacity_model(model, sset, kij)
        n = solve_extents(nu, n0.astype(float), lnK, np.log(Pb / P_REF), lnphi, Tb, Pb)
        extent = np.linalg.lstsq(nu.T, (n - n0).T, rcond=None)[0].T
        y = n / n.sum(axis=-1, keepdims=True)
        nsp = len(names)
        return EquilibriumResult(
            names,
            y.reshape(shape + (nsp,)),
            n.reshape(shape + (nsp,)),
            extent.reshape(shape + (nu.shape[0],)),
            np.broadcast_to(T, shape),
            np.broadcast_to(P, shape),
            model,
        )

class Reaction(ReactionSystem):
    """One gas-phase reaction written as an equation, e.g. ``Reaction("N2 + 3 H2 = 2 NH3")``.

    Attributes
    ----------
    equation : str
        The equation as given.
    species : tuple of str
        Species in order of appearance.
    stoichiometry : dict
        Signed coefficients, negative for reactants [-].
    """

    def __init__(self, equation: str):
        super().__init__([equation])
        self.equation = equation

    @property
    def stoichiometry(self) -> dict[str, float]:
        return dict(self._nu_maps[0])

    @property
    def reactants(self) -> tuple[str, ...]:
        return tuple(s for s, v in self.stoichiometry.items() if v < 0)

    @property
    def products(self) -> tuple[str, ...]:
        return tuple(s for s, v in self.stoichiometry.items() if v > 0)

    def __repr__(self):
        return f"Reaction({self.equation!r})"
