"""Rate laws of the catalytic reactions, in one call shape for the process layer.

Every rate law is a callable object with

``.reaction``
    The :class:`~teakit.chemistry.reaction.Reaction` whose extent the rate measures.
``.species``
    Tuple naming the columns of the composition array ``y`` the law expects (any order; columns
    that the law does not use, such as Ar or CH4, are ignored).
``.activity``
    Catalyst-activity multiplier [-] (default 1): a factor a study can treat as uncertain. It can
    also be passed to the call, as a scalar or an array that broadcasts with the batch.
``law(T, P, y, **params)``
    Rate of reaction extent per unit volume of catalyst bed [mol/(s m3)], vectorised: ``T`` [K],
    ``P`` [Pa] and ``y[..., 0]`` broadcast against each other (and against array ``params``);
    scalars in give a ``float`` out. ``y`` is an array ``(..., len(species))`` of mole fractions
    [-] or a mapping of species name to mole fraction (keys not in ``.species`` are ignored).
``law.formation_rate(T, P, y, name, **params)``
    Rate of formation of species ``name``, ``nu_name`` times the extent rate [mol/(s m3)].

Laws:

:class:`AmmoniaTemkinPyzhev`
    N2 + 3 H2 = 2 NH3 on promoted iron, Temkin-Pyzhev in the fugacity form with the constants
    of Dyson & Simon (1968).
:class:`SO2Collina`
    SO2 + 1/2 O2 = SO3 on vanadium catalyst, Collina, Corbetta & Cappelli (1971) as reproduced
    by Froment & Bischoff (1990).
:class:`ReversibleRate`
    A generic reversible Arrhenius power law with a thermodynamic driving force (1 - Q/K).

Equilibrium constants are always teakit's own (:meth:`Reaction.equilibrium_constant`, ideal gas at
1 bar), converted to the pressure unit of the published law, so that every rate vanishes exactly
at the equilibrium teakit computes (:meth:`Reaction.equilibrium`). The conversion, derived once:

.. math::

    K^\\circ = \\prod_i \\left(\\frac{f_i}{p^\\circ}\\right)^{\\nu_i}
             = \\Big[\\prod_i f_i^{\\nu_i}\\Big]\\,(p^\\circ)^{-\\Delta\\nu}

so the number :math:`\\prod_i f_i^{\\nu_i}` with fugacities in atm, :math:`K_{atm}` [atm^Δν], and
the dimensionless 1-bar :math:`K_{bar}` are related through f[bar] = 1.01325 f[atm] by

.. math::  K_{bar} = 1.01325^{\\Delta\\nu} K_{atm}, \\qquad K_{atm} = 1.01325^{-\\Delta\\nu} K_{bar}

For 1/2 N2 + 3/2 H2 = NH3 (Δν = -1), :math:`K_a` [1/atm] = 1.01325 K_bar: a quotient with the
unit 1/pressure is numerically larger per atm than per bar. For SO2 + 1/2 O2 = SO3 (Δν = -1/2),
:math:`K_p` [atm^-1/2] = 1.01325^(1/2) K_bar.

Range policy, the same for every law: T <= 0, P <= 0, NaN, mole fractions outside [0, 1] or
summing above 1 raise :class:`~teakit.errors.InputError`, as does a temperature outside the
heat-capacity data of the reaction's species (needed for K); inside a law's operating window no
warning is given; outside it a :class:`~teakit.errors.RangeWarning` is issued and the rate is still
returned.
"""

from __future__ import annotations

import warnings
from collections.abc import Mapping
from types import SimpleNamespace

import numpy as np

from teakit.chemistry.reaction import Reaction
from teakit.errors import InputError, OutOfRangeError, RangeWarning
from teakit.thermo.fugacity import MODELS, dyson_simon_phi, fugacity_model
from teakit.thermo.species import P_REF, R, species_set
from teakit.units import to_si
from teakit.validation import (
    as_float_array,
    check_finite,
    check_positive,
    check_range,
    scalar_or_array,
)

__all__ = [
    "ATM",
    "AmmoniaTemkinPyzhev",
    "RateLaw",
    "ReversibleRate",
    "SO2Collina",
    "equilibrium_constant_atm",
    "gillespie_beattie_Ka",
]

#: One standard atmosphere [Pa] (exact by definition).
ATM = 101325.0
#: kmol/h to mol/s [mol h/(kmol s)].
_KMOL_H_TO_MOL_S = 1000.0 / 3600.0
#: Tolerance on the sum of the mole fractions given [-].
_SUM_TOL = 1e-6


def equilibrium_constant_atm(reaction: Reaction, T):
    """teakit's equilibrium constant of ``reaction`` on a 1-atm basis.

    .. math::  K_{atm} = K_{bar}\\,(1.01325)^{-\\Delta\\nu}, \\qquad \\Delta\\nu = \\sum_i \\nu_i

    (derivation in the module docstring).

    Parameters
    ----------
    reaction : Reaction
        The reaction; K_bar is :meth:`Reaction.equilibrium_constant` [-].
    T : array_like
        Temperature, within the species data range [K].

    Returns
    -------
    float or ndarray
        K with fugacities in atm [atm^Δν].
    """
    dnu = sum(reaction.stoichiometry.values())
    return reaction.equilibrium_constant(T) * (ATM / P_REF) ** (-dnu)


def gillespie_beattie_Ka(T):
    """Equilibrium constant of 1/2 N2 + 3/2 H2 = NH3 from Gillespie & Beattie (1930).

    .. math::

        \\log_{10} K_a = -2.691122 \\log_{10} T - 5.519265\\times10^{-5}\\,T
                        + 1.848863\\times10^{-7}\\,T^2 + 2001.6/T + 2.6899

    Gillespie, L. J. & Beattie, J. A., "The thermodynamic treatment of chemical equilibria in
    systems composed of real gases. II. A relation for the heat of reaction applied to the
    ammonia synthesis reaction. The energy and entropy constants for ammonia", Phys. Rev. 36,
    743 (1930); the correlation Dyson & Simon (1968) used with their rate constants (constants
    from memory, confirm against Dyson & Simon, Ind. Eng. Chem. Fundam. 7, 605, 1968).

    Parameters
    ----------
    T : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        K_a with fugacities in atm [1/atm].
    """
    T = np.asarray(T, dtype=float)
    log10_Ka = (
        -2.691122 * np.log10(T) - 5.519265e-5 * T + 1.848863e-7 * T**2 + 2001.6 / T + 2.6899
    )
    return 10.0**log10_Ka


def _check_species(species, required, law):
    try:
        ok = not isinstance(species, str) and all(isinstance(s, str) for s in species)
    except TypeError:
        ok = False
    if not ok:
        raise InputError(f"species must be a tuple of species names, got {species!r}")
    species = tuple(species)
    species_set(species)  # unknown names and duplicates raise InputError here
    missing = [s for s in required if s not in species]
    if missing:
        raise InputError(
            f"species of {law} must include {', '.join(required)}; {', '.join(missing)} "
            f"missing from {species}"
        )
    return species


def _warn_window(law, T, P, T_window, P_window, P_unit=("atm", ATM), stacklevel=4):
    """One RangeWarning per argument with values outside the operating window."""
    unit, scale = P_unit
    for name, a, (lo, hi), shown in (
        ("T", T, T_window, lambda v: f"{v:.6g} K ({v - 273.15:.6g} degC)"),
        ("P", P, P_window, lambda v: f"{v:.6g} Pa ({v / scale:.6g} {unit})"),
    ):
        bad = (a < lo) | (a > hi)
        if bad.any():
            v = float(np.asarray(a)[bad].ravel()[0])
            n = int(np.count_nonzero(bad))
            more = f" ({n} values in all)" if n > 1 else ""
            warnings.warn(
                f"{name} = {shown(v)}{more} is outside the window {shown(lo)} to {shown(hi)} "
                f"in which {law} is used without warning; the rate is an extrapolation",
                RangeWarning,
                stacklevel=stacklevel,
            )


class RateLaw:
    """Common part of the rate laws: composition input, checks, broadcasting, formation rates.

    Subclasses set :attr:`reaction`, :attr:`species` and :attr:`activity` and implement
    ``__call__(T, P, y, **params)`` returning the extent rate [mol/(s m3 cat)].
    """

    reaction: Reaction
    species: tuple[str, ...]
    activity: float | np.ndarray

    def __call__(self, T, P, y, **params):  # pragma: no cover - abstract
        raise NotImplementedError

    def __repr__(self):
        return f"{type(self).__name__}(species={self.species!r}, activity={self.activity!r})"

    def kernel(self, T, P, y, **params):
        """The rate for the reactor's hot path; laws with a faster unchecked form override it."""
        return self(T, P, y, **params)

    def formation_rate(self, T, P, y, name: str, **params):
        """Rate of formation of one species, ``nu_name`` times the extent rate.

        Parameters
        ----------
        T, P, y, **params
            As for the call.
        name : str
            A species of :attr:`reaction`.

        Returns
        -------
        float or ndarray
            Formation rate, negative for a reactant consumed [mol/(s m3 cat)].
        """
        nu = self.reaction.stoichiometry
        if name not in nu:
            raise InputError(
                f"name must be a species of {self.reaction.equation!r}, got {name!r}"
            )
        return nu[name] * self(T, P, y, **params)

    # -- shared input handling -------------------------------------------------------------------
    def _composition(self, y) -> np.ndarray:
        ns = len(self.species)
        if isinstance(y, Mapping):
            missing = [s for s in self.species if s not in y]
            if missing:
                raise InputError(
                    f"y is missing {', '.join(map(repr, missing))}; a mapping must give every "
                    f"species of {self.species} (other keys are ignored)"
                )
            cols = [check_finite(f"y[{s!r}]", y[s]) for s in self.species]
            try:
                cols = np.broadcast_arrays(*cols)
            except ValueError as exc:
                shapes = ", ".join(f"{s} {np.shape(c)}" for s, c in zip(self.species, cols, strict=True))
                raise InputError(f"mole fractions in y do not broadcast: {shapes}") from exc
            Y = np.stack(cols, axis=-1)
        else:
            Y = check_finite("y", y)
            if Y.ndim == 0 or Y.shape[-1] != ns:
                raise InputError(
                    f"y must be an array of shape (..., {ns}) with columns {self.species}, "
                    f"got shape {Y.shape}"
                )
        for k, s in enumerate(self.species):
            check_range(f"y[..., {k}] (y_{s})", Y[..., k], 0.0, 1.0)
        total = Y.sum(axis=-1)
        if (total > 1.0 + _SUM_TOL).any():
            v = float(np.max(total))
            raise InputError(
                f"mole fractions y must sum to at most 1 (within {_SUM_TOL:g}), got a sum of {v!r}"
            )
        return Y

    def _state(self, T, P, y, **multipliers):
        """Checked, broadcast T [K], P [Pa], y (..., ns) and multipliers, plus the batch shape."""
        T = check_positive("T", to_si(T, "K", "T"), "K")
        P = check_positive("P", to_si(P, "Pa", "P"), "Pa")
        Y = self._composition(y)
        shapes = {"T": T.shape, "P": P.shape, "y[..., 0]": Y.shape[:-1]}
        shapes.update({k: np.shape(v) for k, v in multipliers.items()})
        try:
            shape = np.broadcast_shapes(*shapes.values())
        except ValueError as exc:
            detail = ", ".join(f"{k} {s}" for k, s in shapes.items())
            raise InputError(f"arguments do not broadcast against each other: {detail}") from exc
        self.reaction._sset.check_T(T)
        st = SimpleNamespace(
            shape=shape,
            T=np.broadcast_to(T, shape),
            P=np.broadcast_to(P, shape),
            Y=np.broadcast_to(Y, shape + (Y.shape[-1],)),
        )
        for k, v in multipliers.items():
            setattr(st, k, np.broadcast_to(v, shape))
        return st

    def _y(self, st, name):
        return st.Y[..., self.species.index(name)]

    @staticmethod
    def _activity(value):
        return check_positive("activity", value, allow_zero=True)


# ------------------------------------------------------------------------------------------------
# Ammonia synthesis: Temkin-Pyzhev with the constants of Dyson & Simon (1968)
# ------------------------------------------------------------------------------------------------

#: Pre-exponential factor of k2 [kmol/(m3 h)], Dyson & Simon (1968) (from memory, confirm
#: against Dyson & Simon, Ind. Eng. Chem. Fundam. 7, 605, 1968; the NH3 rate is 2 k2 [...], and
#: some reproductions write 2 x 8.849e14 = 1.7698e15 as one constant).
DS_K2_PRE = 8.849e14
#: Activation energy of k2 [cal/mol] (from memory, confirm against Dyson & Simon, 1968).
DS_E_CAL = 40765.0
#: Gas constant in the units Dyson & Simon wrote it [cal/(mol K)].
DS_R_CAL = 1.987

_KA_CHOICES = ("teakit", "gillespie-beattie")


class AmmoniaTemkinPyzhev(RateLaw):
    """Ammonia synthesis on promoted iron: Temkin-Pyzhev in the fugacity form of Dyson & Simon.

    .. math::

        r_{NH_3} = 2 k_2 \\left[K_a^2\\, a_{N_2} \\left(\\frac{a_{H_2}^3}{a_{NH_3}^2}\\right)^{\\alpha}
                   - \\left(\\frac{a_{NH_3}^2}{a_{H_2}^3}\\right)^{1-\\alpha}\\right]
                   \\; \\eta\\, \\lambda
        \\qquad
        k_2 = 8.849\\times10^{14} \\exp\\left(-\\frac{40765}{1.987\\, T}\\right)

    in kmol NH3/(m3 catalyst h), with :math:`a_i = y_i \\phi_i P` (P in atm, phi from the
    Dyson-Simon fits, :func:`teakit.thermo.fugacity.dyson_simon_phi`), :math:`K_a` the equilibrium
    constant of 1/2 N2 + 3/2 H2 = NH3 [1/atm], :math:`\\alpha` = 0.5, :math:`\\eta` the
    effectiveness factor and :math:`\\lambda` the catalyst-activity multiplier. The call returns
    the extent rate of N2 + 3 H2 = 2 NH3, :math:`r_{NH_3}/2`, converted to mol/(s m3 catalyst)
    (x 1000/3600); :meth:`nh3_rate` returns :math:`r_{NH_3}` itself in mol NH3/(s m3). The
    constants of k2 are from memory (they agree with secondary reproductions): confirm against
    Dyson & Simon (1968).

    The rate vanishes where :math:`a_{NH_3} = a^{eq}_{NH_3} = K_a a_{N_2}^{1/2} a_{H_2}^{3/2}`
    (then both terms equal :math:`(a_{NH_3}^2/a_{H_2}^3)^{1-\\alpha}`), i.e. at teakit's
    equilibrium with ``eos="dyson-simon"`` when ``Ka="teakit"``.

    **Zero ammonia.** For :math:`\\alpha > 0` the forward term grows without bound as
    :math:`a_{NH_3} \\to 0` (the rate-determining-step assumption behind the form fails there; the
    real rate is finite). teakit evaluates the forward term at
    :math:`\\max(a_{NH_3},\\ f\\, a^{eq}_{NH_3})`, with ``nh3_floor`` f = 1e-3 by default, i.e. at
    no less than 0.1 % of the equilibrium NH3 activity at the present N2 and H2 activities, and
    the reverse term at the actual :math:`a_{NH_3}`. Below the floor the rate is therefore
    finite, positive and continuous: the forward term at the floor less a reverse term that goes
    to zero with :math:`a_{NH_3}`; at :math:`y_{NH_3}` = 0 and :math:`\\alpha` = 0.5 it is
    :math:`2 k_2 K_a a_{N_2}^{1/2}/f` (times :math:`\\eta\\lambda`). Because the floor is a
    fraction of the equilibrium activity it never moves the equilibrium and never changes the
    sign of the rate, at any pressure. In 3:1 H2:N2 gas with 12 % inerts the default floor is an
    NH3 mole fraction of about 0.04 % at 450 degC and 200 atm, and at most about 1 % at the
    coldest, highest-pressure corner of the operating window (300 degC, 400 atm; 0.4 % at 300 degC
    and 200 atm). Converter beds start from recycle gas (typically 2-4 % NH3), above the floor;
    a bed fed with NH3-free gas starts at the floor rate, and its first few tenths of a per cent
    of conversion should be read with care.

    Parameters
    ----------
    species : sequence of str, optional
        Column order of ``y``; must include N2, H2 and NH3 (others ignored) [-].
    alpha : float, optional
        Temkin's alpha, in (0, 1); Dyson & Simon's k2 belongs to 0.5 [-].
    activity : float or array_like, optional
        Catalyst-activity multiplier lambda, >= 0 (default 1) [-].
    effectiveness : float or array_like, optional
        Effectiveness factor eta, in (0, 1] (default 1) [-]. Dyson & Simon (their Table I) give a
        correlation of eta with temperature and conversion for the larger industrial particles;
        its constants are not reproduced here: pass eta in. For particles below about 6 mm,
        eta of about 1 is common practice.
    Ka : {"teakit", "gillespie-beattie"}, optional
        Source of K_a: teakit's thermodynamics, K_bar x 1.01325 (Δν = -1; module docstring), so
        the rate vanishes at teakit's equilibrium (default); or Gillespie & Beattie (1930), the
        correlation Dyson & Simon used (:func:`gillespie_beattie_Ka`; within 0.7-2.5 % of
        teakit's at 300-550 degC) [-].
    nh3_floor : float, optional
        Floor of the NH3 activity in the forward term as a fraction of the equilibrium NH3
        activity at the present N2 and H2 activities, in (0, 1) (default 1e-3) [-].

    Notes
    -----
    Validity: Nielsen, Kjaer & Hansen (J. Catal. 3, 68, 1964; citation details from memory)
    found the Temkin-Pyzhev form applicable at 370-495 degC and 150-310 atm on an industrial
    promoted-iron catalyst; Dyson & Simon's constants are for about 150-300 atm. Policy: no
    warning inside the catalyst's operating window, 300-550 degC and 50-400 atm; a
    :class:`~teakit.errors.RangeWarning` outside it. InputError for T <= 0, P <= 0, NaN, mole
    fractions outside [0, 1], y_H2 = 0 (the reverse term is singular at zero hydrogen) or a T
    outside the species data (200-6000 K); :class:`~teakit.errors.OutOfRangeError` where the
    fugacity-coefficient fits stop giving positive values (far outside their range, e.g. above
    about 1800 K).

    References
    ----------
    Temkin, M. & Pyzhev, V., Acta Physicochim. URSS 12, 327 (1940) (citation from memory).
    Dyson, D. C. & Simon, J. M., "A kinetic expression with diffusion correction for ammonia
    synthesis on industrial catalyst", Ind. Eng. Chem. Fundam. 7, 605-610 (1968).
    Nielsen, A., Kjaer, J. & Hansen, B., "Rate equation and mechanism of ammonia synthesis at
    industrial conditions", J. Catal. 3, 68-79 (1964).
    Gillespie, L. J. & Beattie, J. A., Phys. Rev. 36, 743 (1930).
    """

    #: Operating window without warning: 300-550 degC [K].
    T_WINDOW = (573.15, 823.15)
    #: Operating window without warning: 50-400 atm [Pa].
    P_WINDOW = (50.0 * ATM, 400.0 * ATM)

    def __init__(
        self,
        species=("N2", "H2", "NH3"),
        *,
        alpha: float = 0.5,
        activity=1.0,
        effectiveness=1.0,
        Ka: str = "teakit",
        nh3_floor: float = 1e-3,
    ):
        self.reaction = Reaction("N2 + 3 H2 = 2 NH3")
        self._half = Reaction("0.5 N2 + 1.5 H2 = NH3")
        self.species = _check_species(species, ("N2", "H2", "NH3"), type(self).__name__)
        self.alpha = float(check_range("alpha", alpha, 0.0, 1.0, inclusive=(False, False)))
        self.activity = scalar_or_array(self._activity(activity))
        self.effectiveness = scalar_or_array(self._effectiveness(effectiveness))
        if Ka not in _KA_CHOICES:
            raise InputError(f"Ka must be one of {', '.join(_KA_CHOICES)}, got {Ka!r}")
        self.Ka = Ka
        self.nh3_floor = float(
            check_range("nh3_floor", nh3_floor, 0.0, 1.0, inclusive=(False, False))
        )

    def __repr__(self):
        return (
            f"{type(self).__name__}(species={self.species!r}, alpha={self.alpha!r}, "
            f"activity={self.activity!r}, effectiveness={self.effectiveness!r}, "
            f"Ka={self.Ka!r}, nh3_floor={self.nh3_floor!r})"
        )

    @staticmethod
    def _effectiveness(value):
        return check_range("effectiveness", value, 0.0, 1.0, inclusive=(False, True))

    def equilibrium_constant(self, T):
        """K_a of 1/2 N2 + 3/2 H2 = NH3 from the source chosen by ``Ka``.

        Parameters
        ----------
        T : array_like
            Temperature [K].

        Returns
        -------
        float or ndarray
            K_a with fugacities in atm [1/atm].
        """
        T = self._half._sset.check_T(check_positive("T", to_si(T, "K", "T"), "K"))
        if self.Ka == "teakit":
            return equilibrium_constant_atm(self._half, T)
        return scalar_or_array(gillespie_beattie_Ka(T))

    def __call__(self, T, P, y, *, activity=None, effectiveness=None):
        """Extent rate of N2 + 3 H2 = 2 NH3 per unit catalyst volume.

        Parameters
        ----------
        T : float, array_like, str or pint.Quantity
            Temperature [K].
        P : float, array_like, str or pint.Quantity
            Pressure, absolute [Pa].
        y : array_like (..., len(species)) or mapping
            Mole fractions [-].
        activity : float or array_like, optional
            Catalyst-activity multiplier, overriding :attr:`activity` [-].
        effectiveness : float or array_like, optional
            Effectiveness factor, overriding :attr:`effectiveness` [-].

        Returns
        -------
        float or ndarray
            Extent rate, half the NH3 formation rate, shape broadcast(T, P, y[..., 0],
            activity, effectiveness) [mol/(s m3 cat)].
        """
        return scalar_or_array(0.5 * self._nh3(T, P, y, activity, effectiveness))

    def nh3_rate(self, T, P, y, *, activity=None, effectiveness=None):
        """Rate of NH3 formation, :math:`r_{NH_3}` of Dyson & Simon, in SI.

        Parameters
        ----------
        T, P, y, activity, effectiveness
            As for the call.

        Returns
        -------
        float or ndarray
            NH3 formation rate, twice the extent rate [mol NH3/(s m3 cat)].
        """
        return scalar_or_array(self._nh3(T, P, y, activity, effectiveness))

    def _nh3(self, T, P, y, activity, effectiveness):
        act = self._activity(self.activity if activity is None else activity)
        eff = self._effectiveness(self.effectiveness if effectiveness is None else effectiveness)
        st = self._state(T, P, y, activity=act, effectiveness=eff)
        _warn_window(type(self).__name__, st.T, st.P, self.T_WINDOW, self.P_WINDOW)
        yN2, yH2, yNH3 = (self._y(st, s) for s in ("N2", "H2", "NH3"))
        if (yH2 <= 0).any():
            raise InputError(
                "y_H2 must be > 0: the Temkin-Pyzhev reverse term is singular at zero hydrogen"
            )
        phi = np.stack(dyson_simon_phi(st.T, st.P), axis=-1)
        bad = ~(np.isfinite(phi) & (phi > 0)).all(axis=-1)
        if bad.any():
            k = np.flatnonzero(bad.ravel())[0]
            raise OutOfRangeError(
                f"the Dyson-Simon fugacity-coefficient fits give a non-positive value at "
                f"T = {st.T.ravel()[k]:g} K, P = {st.P.ravel()[k]:g} Pa, far outside their "
                "fitted range (about 600-800 K, 150-300 atm)"
            )
        p = st.P / ATM
        aN2 = yN2 * phi[..., 0] * p
        aH2 = yH2 * phi[..., 1] * p
        aNH3 = yNH3 * phi[..., 2] * p
        Ka = np.asarray(self.equilibrium_constant(st.T))
        k2 = DS_K2_PRE * np.exp(-DS_E_CAL / (DS_R_CAL * st.T))
        a = self.alpha
        a_eq = Ka * np.sqrt(aN2) * aH2**1.5
        a_fwd = np.maximum(aNH3, self.nh3_floor * a_eq)
        # a_fwd = 0 only where a_N2 = 0 and a_NH3 = 0: the forward term is then 0.
        fwd_ok = aN2 > 0
        a_safe = np.where(fwd_ok, a_fwd, 1.0)
        forward = np.where(fwd_ok, Ka**2 * aN2 * (aH2**3 / a_safe**2) ** a, 0.0)
        reverse = (aNH3**2 / aH2**3) ** (1.0 - a)
        r = 2.0 * k2 * (forward - reverse) * st.activity * st.effectiveness  # kmol/(m3 h)
        return _finite(type(self).__name__, r * _KMOL_H_TO_MOL_S, st)

    def compiled_constants(self):
        """What the compiled bed integration (:mod:`teakit.process._bed_jit`) needs of this law,
        or None where it does not apply (``Ka`` other than teakit's, alpha other than 1/2, or an
        effectiveness that varies over the batch: those stay on the numpy path).

        Returns
        -------
        dict or None
            Species indices, effectiveness [-], ln K coefficients, constants of k2.
        """
        half = self._half
        if self.Ka != "teakit" or self.alpha != 0.5 or np.ndim(self.effectiveness) != 0 or half._c_nu is None:
            return None
        return {"index": tuple(self.species.index(n) for n in ("N2", "H2", "NH3")),
                "effectiveness": float(self.effectiveness), "cK": np.ascontiguousarray(half._c_nu[0], dtype=float),
                "T_midK": float(half._T_mid), "nh3_floor": self.nh3_floor,
                "k2": (DS_K2_PRE, DS_E_CAL, DS_R_CAL)}

    def kernel(self, T, P, y, activity=1.0):
        """The extent rate without argument checks or warnings: the reactor's hot path.

        Same expression as the call; T [K] and P [Pa] are arrays (B,) inside the species data
        range and the fits' validity, y (B, len(species)) [-] in the order of :attr:`species`
        with y_H2 > 0, activity scalar or (B,) [-]. Returns the extent rate [mol/(s m3 cat)].
        """
        iN2, iH2, iNH3 = (self.species.index(n) for n in ("N2", "H2", "NH3"))
        phi_n2, phi_h2, phi_nh3 = dyson_simon_phi(T, P)
        p = P / ATM
        aN2 = y[..., iN2] * phi_n2 * p
        aH2 = np.maximum(y[..., iH2] * phi_h2 * p, 1e-100)  # the bed keeps H2 > 0; guard round-off
        aNH3 = y[..., iNH3] * phi_nh3 * p
        if self.Ka == "teakit":
            Ka = np.exp(self._half._lnK(T)[..., 0]) * 1.01325  # K_atm = K_bar 1.01325^(-dnu)
        else:
            Ka = gillespie_beattie_Ka(T)
        k2 = DS_K2_PRE * np.exp(-DS_E_CAL / (DS_R_CAL * T))
        a = self.alpha
        sq_aH2 = np.sqrt(aH2)
        a_eq = Ka * np.sqrt(aN2) * aH2 * sq_aH2
        a_fwd = np.maximum(aNH3, self.nh3_floor * a_eq)
        a_safe = np.where(aN2 > 0, a_fwd, 1.0)
        if a == 0.5:
            forward = Ka**2 * aN2 * aH2 * sq_aH2 / a_safe
            reverse = aNH3 / (aH2 * sq_aH2)
        else:
            forward = Ka**2 * aN2 * (aH2**3 / a_safe**2) ** a
            reverse = (aNH3**2 / aH2**3) ** (1.0 - a)
        forward = np.where(aN2 > 0, forward, 0.0)
        r = k2 * (forward - reverse) * activity * self.effectiveness  # extent: half of 2 k2 (...)
        return r * _KMOL_H_TO_MOL_S


# ------------------------------------------------------------------------------------------------
# SO2 oxidation: Collina, Corbetta & Cappelli (1971), as reproduced by Froment & Bischoff
# ------------------------------------------------------------------------------------------------

#: ln of the pre-exponential of k1 and its activation temperature [-, K] (from memory, confirm
#: against Froment & Bischoff, Chemical Reactor Analysis and Design, 2nd ed., 1990).
COLLINA_K1 = (12.160, 5473.0)
#: ln K2 = -9.953 + 8619/T [-, K] (from memory, confirm against Froment & Bischoff, 1990).
COLLINA_K2 = (-9.953, 8619.0)
#: ln K3 = -71.745 + 52596/T [-, K] (from memory, confirm against Froment & Bischoff, 1990).
COLLINA_K3 = (-71.745, 52596.0)
#: The 22.414 of the published expression (molar volume at 0 degC, 1 atm [m3(NTP)/kmol]).
COLLINA_VM = 22.414
#: Default bulk density of vanadium SO2 catalyst [kg/m3]: common practice (loaded beds of
#: rings or pellets about 500-600 kg/m3), not from the kinetic source.
SO2_BULK_DENSITY = 550.0


class SO2Collina(RateLaw):
    """SO2 oxidation on vanadium catalyst: Collina, Corbetta & Cappelli (1971).

    As reproduced by Froment & Bischoff (1990) in their SO2-converter example:

    .. math::

        r_{SO_2} = \\frac{k_1\\, p_{O_2}\\, p_{SO_2}
                   \\left(1 - \\dfrac{p_{SO_3}}{K_p\\, p_{SO_2}\\, p_{O_2}^{1/2}}\\right)}
                   {22.414\\,\\left(1 + K_2\\, p_{SO_2} + K_3\\, p_{SO_3}\\right)^2}\\,\\lambda

    .. math::

        k_1 = e^{12.160 - 5473/T}, \\quad K_2 = e^{-9.953 + 8619/T}, \\quad
        K_3 = e^{-71.745 + 52596/T}

    in kmol SO2/(kg catalyst h), partial pressures :math:`p_i = y_i P` in atm, T in K, and
    :math:`\\lambda` the catalyst-activity multiplier. These constants are from memory: confirm
    against Froment & Bischoff. :math:`K_p` [atm^-1/2] is teakit's for SO2 + 1/2 O2 = SO3,
    :math:`K_{bar}\\times1.01325^{1/2}` (Δν = -1/2; module docstring), so the rate vanishes at
    teakit's ideal-gas equilibrium. The numerator is evaluated as
    :math:`p_{O_2} p_{SO_2} - p_{O_2}^{1/2} p_{SO_3}/K_p`, which is the same expression and finite
    at zero SO2 or O2. The extent rate of SO2 + 1/2 O2 = SO3 equals the SO2 consumption rate;
    the call returns it per unit bed volume, :math:`r_{SO_2}\\rho_b \\times 1000/3600`
    [mol/(s m3 bed)], and :meth:`rate_per_mass` per kg of catalyst [mol/(s kg)].

    Parameters
    ----------
    species : sequence of str, optional
        Column order of ``y``; must include SO2, O2 and SO3 (others, e.g. N2, ignored) [-].
    activity : float or array_like, optional
        Catalyst-activity multiplier lambda, >= 0 (default 1) [-].
    bulk_density : float or array_like, optional
        Bulk density of the catalyst bed, > 0; default 550, common practice for vanadium
        catalyst (500-600) rather than a value of the source [kg cat/m3 bed].

    Notes
    -----
    Validity: measured near atmospheric pressure over roughly 420-590 degC (from memory, confirm
    against Froment & Bischoff, 1990). Policy: no warning inside 380-650 degC and 0.5-20 atm; a
    :class:`~teakit.errors.RangeWarning` outside; InputError for T <= 0, P <= 0, NaN, mole
    fractions outside [0, 1] or a T outside the species data (200-3000 K).

    References
    ----------
    Collina, A., Corbetta, D. & Cappelli, A., "Use of computers in the design of chemical plants",
    in Symposium on Computers in the Design and Erection of Chemical Plants, Karlovy Vary (1971)
    (title and venue from memory).
    Froment, G. F. & Bischoff, K. B., Chemical Reactor Analysis and Design, 2nd ed., Wiley (1990),
    the SO2 converter example.
    """

    #: Operating window without warning: 380-650 degC [K].
    T_WINDOW = (653.15, 923.15)
    #: Operating window without warning: 0.5-20 atm [Pa].
    P_WINDOW = (0.5 * ATM, 20.0 * ATM)

    def __init__(self, species=("SO2", "O2", "SO3"), *, activity=1.0, bulk_density=SO2_BULK_DENSITY):
        self.reaction = Reaction("SO2 + 0.5 O2 = SO3")
        self.species = _check_species(species, ("SO2", "O2", "SO3"), type(self).__name__)
        self.activity = scalar_or_array(self._activity(activity))
        self.bulk_density = scalar_or_array(self._bulk_density(bulk_density))

    def __repr__(self):
        return (
            f"{type(self).__name__}(species={self.species!r}, activity={self.activity!r}, "
            f"bulk_density={self.bulk_density!r})"
        )

    @staticmethod
    def _bulk_density(value):
        return check_positive("bulk_density", value, "kg/m3")

    def __call__(self, T, P, y, *, activity=None, bulk_density=None):
        """Extent rate of SO2 + 1/2 O2 = SO3 per unit bed volume.

        Parameters
        ----------
        T : float, array_like, str or pint.Quantity
            Temperature [K].
        P : float, array_like, str or pint.Quantity
            Pressure, absolute [Pa].
        y : array_like (..., len(species)) or mapping
            Mole fractions [-].
        activity : float or array_like, optional
            Catalyst-activity multiplier, overriding :attr:`activity` [-].
        bulk_density : float or array_like, optional
            Bed bulk density, overriding :attr:`bulk_density` [kg/m3].

        Returns
        -------
        float or ndarray
            Extent rate (= SO2 consumption rate) [mol/(s m3 bed)].
        """
        rho = self._bulk_density(self.bulk_density if bulk_density is None else bulk_density)
        return scalar_or_array(self._per_mass(T, P, y, activity, rho=rho))

    def rate_per_mass(self, T, P, y, *, activity=None):
        """Extent rate per unit catalyst mass, the basis of the source.

        Parameters
        ----------
        T, P, y, activity
            As for the call.

        Returns
        -------
        float or ndarray
            Extent rate (= SO2 consumption rate) [mol/(s kg cat)].
        """
        return scalar_or_array(self._per_mass(T, P, y, activity))

    def _per_mass(self, T, P, y, activity, rho=None):
        act = self._activity(self.activity if activity is None else activity)
        extra = {"activity": act} if rho is None else {"activity": act, "bulk_density": rho}
        st = self._state(T, P, y, **extra)
        _warn_window(type(self).__name__, st.T, st.P, self.T_WINDOW, self.P_WINDOW)
        p = st.P / ATM
        pSO2, pO2, pSO3 = (self._y(st, s) * p for s in ("SO2", "O2", "SO3"))
        T = st.T
        k1 = np.exp(COLLINA_K1[0] - COLLINA_K1[1] / T)
        K2 = np.exp(COLLINA_K2[0] + COLLINA_K2[1] / T)
        K3 = np.exp(COLLINA_K3[0] + COLLINA_K3[1] / T)
        Kp = np.asarray(equilibrium_constant_atm(self.reaction, T))
        num = pO2 * pSO2 - np.sqrt(pO2) * pSO3 / Kp
        r = k1 * num / (COLLINA_VM * (1.0 + K2 * pSO2 + K3 * pSO3) ** 2)  # kmol/(kg h)
        r = r * st.activity * _KMOL_H_TO_MOL_S
        if rho is not None:
            r = r * st.bulk_density
        return _finite(type(self).__name__, r, st)

    def kernel(self, T, P, y, activity=1.0):
        """The extent rate per bed volume without checks or warnings: the reactor's hot path.

        T [K], P [Pa] arrays (B,), y (B, len(species)) [-] in the order of :attr:`species`,
        activity scalar or (B,) [-]. Returns [mol/(s m3 bed)] with :attr:`bulk_density`.
        """
        iSO2, iO2, iSO3 = (self.species.index(n) for n in ("SO2", "O2", "SO3"))
        p = P / ATM
        pSO2, pO2, pSO3 = y[..., iSO2] * p, y[..., iO2] * p, y[..., iSO3] * p
        k1 = np.exp(COLLINA_K1[0] - COLLINA_K1[1] / T)
        K2 = np.exp(COLLINA_K2[0] + COLLINA_K2[1] / T)
        K3 = np.exp(COLLINA_K3[0] + COLLINA_K3[1] / T)
        Kp = np.exp(self.reaction._lnK(T)[..., 0]) * 1.01325**0.5  # K_atm = K_bar 1.01325^(1/2)
        num = pO2 * pSO2 - np.sqrt(pO2) * pSO3 / Kp
        r = k1 * num / (COLLINA_VM * (1.0 + K2 * pSO2 + K3 * pSO3) ** 2)
        return r * activity * self.bulk_density * _KMOL_H_TO_MOL_S


# ------------------------------------------------------------------------------------------------
# Generic reversible power law
# ------------------------------------------------------------------------------------------------


class ReversibleRate(RateLaw):
    """A reversible Arrhenius power law with the thermodynamic driving force (1 - Q/K).

    .. math::

        r = \\lambda\\, A\\, e^{-E_a/(R T)} \\prod_i \\left(\\frac{p_i}{p^\\circ}\\right)^{n_i}
            \\left(1 - \\frac{Q}{K}\\right), \\qquad
        Q = \\prod_i \\left(\\frac{y_i \\phi_i P}{p^\\circ}\\right)^{\\nu_i}

    with partial pressures :math:`p_i = y_i P` over :math:`p^\\circ` = 1 bar (so A carries the
    unit of the rate, whatever the orders), orders :math:`n_i`, :math:`\\lambda` the
    catalyst-activity multiplier, :math:`\\phi_i` from the teakit fugacity model ``eos`` and K
    from :meth:`Reaction.equilibrium_constant` (1 bar), so the rate is zero at teakit's
    equilibrium with the same ``eos``, positive before it and negative beyond it (rate constant
    after Arrhenius, Z. Phys. Chem. 4, 226, 1889; citation from memory). It is evaluated as the
    difference of a forward term :math:`\\prod (p_i/p^\\circ)^{n_i}` and a reverse term
    :math:`\\prod (p_i/p^\\circ)^{n_i} Q/K` (exponents :math:`n_i + \\nu_i`), so that zero mole
    fractions are handled exactly: the forward term is zero when a reactant is absent, the reverse
    term when a product is absent (neither direction can use a species that is not there), a
    factor :math:`0^{e}` with e > 0 makes its term zero, and a term left with :math:`0^{e}`,
    e < 0 (a negative order of an absent species, or an absent reactant whose order is below its
    stoichiometric coefficient while every product is present) is singular and raises InputError.

    Parameters
    ----------
    reaction : Reaction or str
        The reaction whose extent the rate measures [-].
    A : float
        Pre-exponential factor, >= 0 [mol/(s m3 cat)].
    Ea : float
        Activation energy (finite; may be negative for an apparent value) [J/mol].
    orders : mapping, optional
        Species name to order n_i; species not given have order 0; default: mass action, the
        reactants' stoichiometric coefficients [-].
    species : sequence of str, optional
        Column order of ``y``; must include the reaction's species; default the reaction's [-].
    eos : {"ideal", "peng-robinson", "dyson-simon"}, optional
        Fugacity model for Q (:mod:`teakit.thermo.fugacity`); with a real-gas model every column
        of ``y`` enters the mixture, so give the whole composition [-].
    activity : float or array_like, optional
        Catalyst-activity multiplier, >= 0 (default 1) [-].
    valid_T : tuple of float, optional
        Window (low, high) in which no RangeWarning is given [K]; default none.
    valid_P : tuple of float, optional
        Window (low, high) in which no RangeWarning is given [Pa]; default none.
    """

    def __init__(
        self,
        reaction,
        A: float,
        Ea: float,
        orders: Mapping | None = None,
        *,
        species=None,
        eos: str = "ideal",
        activity=1.0,
        valid_T=None,
        valid_P=None,
    ):
        if isinstance(reaction, str):
            reaction = Reaction(reaction)
        if not isinstance(reaction, Reaction):
            raise InputError(f"reaction must be a Reaction or an equation string, got {reaction!r}")
        self.reaction = reaction
        nu = reaction.stoichiometry
        self.species = _check_species(
            reaction.species if species is None else species,
            reaction.species,
            type(self).__name__,
        )
        self.A = float(check_positive("A", _scalar("A", A), "mol/(s m3)", allow_zero=True))
        self.Ea = float(check_finite("Ea", _scalar("Ea", Ea)))
        if orders is None:
            orders = {s: -v for s, v in nu.items() if v < 0}
        if not isinstance(orders, Mapping):
            raise InputError(f"orders must be a mapping of species name to order, got {orders!r}")
        unknown = [s for s in orders if s not in self.species]
        if unknown:
            raise InputError(
                f"orders name species not in {self.species}: {', '.join(map(repr, unknown))}"
            )
        self.orders = {s: float(check_finite(f"orders[{s!r}]", _scalar(f"orders[{s!r}]", v)))
                       for s, v in orders.items()}
        if eos not in MODELS:
            raise InputError(f"eos must be one of {', '.join(MODELS)}, got {eos!r}")
        self.eos = eos
        self._fug = fugacity_model(eos, species_set(self.species))
        self.activity = scalar_or_array(self._activity(activity))
        self.valid_T = _window("valid_T", valid_T, "K")
        self.valid_P = _window("valid_P", valid_P, "Pa")
        self._nu = np.array([nu.get(s, 0.0) for s in self.species])
        self._n = np.array([self.orders.get(s, 0.0) for s in self.species])

    def __repr__(self):
        return (
            f"{type(self).__name__}({self.reaction.equation!r}, A={self.A!r}, Ea={self.Ea!r}, "
            f"orders={self.orders!r}, species={self.species!r}, eos={self.eos!r}, "
            f"activity={self.activity!r})"
        )

    def __call__(self, T, P, y, *, activity=None):
        """Extent rate of :attr:`reaction` per unit catalyst volume.

        Parameters
        ----------
        T : float, array_like, str or pint.Quantity
            Temperature [K].
        P : float, array_like, str or pint.Quantity
            Pressure, absolute [Pa].
        y : array_like (..., len(species)) or mapping
            Mole fractions [-].
        activity : float or array_like, optional
            Catalyst-activity multiplier, overriding :attr:`activity` [-].

        Returns
        -------
        float or ndarray
            Extent rate [mol/(s m3 cat)].
        """
        act = self._activity(self.activity if activity is None else activity)
        st = self._state(T, P, y, activity=act)
        T, P, Y = st.T, st.P, st.Y
        name = type(self).__name__
        if self.valid_T is not None or self.valid_P is not None:
            _warn_window(
                name,
                T,
                P,
                self.valid_T or (-np.inf, np.inf),
                self.valid_P or (-np.inf, np.inf),
                P_unit=("bar", P_REF),
                stacklevel=3,
            )
        nu, n = self._nu, self._n
        e_rev = n + nu
        zero = Y == 0.0
        fwd_zero = (zero & ((n > 0) | (nu < 0))).any(axis=-1)
        rev_zero = (zero & ((e_rev > 0) | (nu > 0))).any(axis=-1)
        for term, e, killed in (("forward", n, fwd_zero), ("reverse", e_rev, rev_zero)):
            sing = (zero & (e < 0)).any(axis=-1) & ~killed
            if sing.any():
                k = np.flatnonzero(sing.ravel())[0]
                row = zero.reshape(-1, len(self.species))[k] & (e < 0)
                which = ", ".join(s for s, b in zip(self.species, row, strict=True) if b)
                raise InputError(
                    f"the {term} term of {name} for {self.reaction.equation!r} is singular at "
                    f"y = 0 of {which} (its exponent there is negative); give a mole fraction > 0"
                )
        with np.errstate(divide="ignore"):
            lnp = np.where(zero, 0.0, np.log(np.where(zero, 1.0, Y)) + np.log(P / P_REF)[..., None])
        rxn = nu != 0
        lnphi = self._fug(T, P, Y)[..., rxn] if self.eos != "ideal" else 0.0
        lnK = np.log(np.asarray(self.reaction.equilibrium_constant(T)))
        ln_fwd = lnp @ n
        ln_rev = lnp @ e_rev + np.sum(nu[rxn] * lnphi, axis=-1) - lnK
        with np.errstate(over="ignore"):
            fwd = np.where(fwd_zero, 0.0, np.exp(np.where(fwd_zero, 0.0, ln_fwd)))
            rev = np.where(rev_zero, 0.0, np.exp(np.where(rev_zero, 0.0, ln_rev)))
            k = st.activity * self.A * np.exp(-self.Ea / (R * T))
            r = k * (fwd - rev)
        return scalar_or_array(_finite(name, r, st))


def _scalar(name, value):
    a = as_float_array(name, value)
    if a.ndim != 0:
        raise InputError(f"{name} must be a single number, got an array of shape {a.shape}")
    return a


def _finite(law, r, st):
    """``r`` unchanged, or OutOfRangeError naming the first state where it is not finite."""
    r = np.asarray(r, dtype=float)
    bad = ~np.isfinite(r)
    if bad.any():
        k = np.flatnonzero(bad.ravel())[0]
        raise OutOfRangeError(
            f"{law} is not finite at T = {np.ravel(st.T)[k]:g} K, P = {np.ravel(st.P)[k]:g} Pa "
            "(overflow far outside the validity range; check the inputs and parameters)"
        )
    return r


def _window(name, value, unit):
    if value is None:
        return None
    try:
        lo, hi = (float(v) for v in value)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be a pair (low, high) in {unit}, got {value!r}") from exc
    if not (lo < hi):
        raise InputError(f"{name} must satisfy low < high [{unit}], got {value!r}")
    return (lo, hi)
