"""Pressure-vessel wall thickness, allowable stress and metal mass (sizing only, no money).

.. warning::

   Preliminary estimate, not for design or fabrication; the applicable pressure-vessel code, local
   regulations and a licensed engineer govern.

What this module does
---------------------
It applies the internal-pressure thickness rules of ASME Boiler and Pressure Vessel Code,
Section VIII, Division 1 to cylindrical shells (UG-27(c), Mandatory Appendix 1-2) and formed heads
(UG-32(d), (e), (f)), adds the corrosion allowance and the UG-16(b) minimum thickness, looks up the
maximum allowable stress of a few plate materials (``data/allowable_stress.csv``) and turns the
thicknesses into a metal mass. That is enough to put a weight, and so a cost, on a reactor or a
separator in a feasibility study.

What it does not do
-------------------
External pressure and vacuum (UG-28), wind, seismic and nozzle loads, openings and their
reinforcement (UG-37), flanges, supports, fatigue, weld details, impact testing and minimum design
metal temperature (UCS-66), post-weld heat treatment, mill under-tolerance (UG-16(c)) and
fabrication tolerances are all outside it. The thickness returned is a required minimum, not an
ordered plate thickness.

Service cautions
----------------
- **Hot hydrogen** (ammonia synthesis loops, hydrotreating): above roughly 200-250 degC at
  appreciable hydrogen partial pressure, carbon and C-0.5Mo steels can suffer high-temperature
  hydrogen attack (HTHA): methane forms at grain boundaries, fissures the steel and destroys its
  strength, with no warning from thickness measurements. Steel selection follows the Nelson
  curves of API RP 941 (hydrogen partial pressure versus temperature for each steel), which is why
  ammonia converters are built of 1.25Cr-0.5Mo or 2.25Cr-1Mo steels, often with austenitic
  stainless cladding or liners. teakit carries no Nelson-curve data: choosing the material for
  hydrogen service is a materials engineer's job with the current API RP 941 in hand.
- **Ammonia**: anhydrous liquid ammonia causes stress-corrosion cracking of carbon steel (held
  in check in practice by oxygen control, stress relief and limited strength; common practice),
  and hot ammonia nitrides steel surfaces.
- **SO2/SO3 converters**: sulphuric acid and oleum condensing below the acid dew point attack
  carbon steel; high-temperature passes are usually stainless or refractory lined (common
  practice).

Conventions
-----------
SI throughout: pressures are gauge [Pa], lengths [m], stresses [Pa], temperatures [K], masses
[kg]. Every function is vectorised: arguments broadcast against each other, a call with only
scalars returns a ``float``, any array argument gives an array of the broadcast shape.

References
----------
ASME Boiler and Pressure Vessel Code, Section VIII, Division 1, paragraphs UG-16, UG-27, UG-32 and
Mandatory Appendix 1-2; Section II, Part D, Table 1A (allowable stresses).
API RP 941, Steels for Hydrogen Service at Elevated Temperatures and Pressures in Petroleum
Refineries and Petrochemical Plants (Nelson curves).
"""

from __future__ import annotations

import functools
import unicodedata
import warnings
from dataclasses import dataclass

import numpy as np

from teakit.data import load_table
from teakit.errors import InputError, OutOfRangeError, RangeWarning
from teakit.validation import (
    broadcast_arrays,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "DEFAULT_THICK_WALL_FORM",
    "FORMULA_NAMES",
    "STEEL_DENSITY",
    "UG16_MINIMUM_THICKNESS",
    "ShellThickness",
    "allowable_stress",
    "allowable_stress_materials",
    "head_surface_area",
    "head_thickness",
    "shell_thickness",
    "shell_thickness_detail",
    "vessel_mass",
]

UG16_MINIMUM_THICKNESS = 1.5875e-3
"""UG-16(b) minimum thickness of shells and heads, 1/16 in = 1.5875 mm, exclusive of corrosion
allowance [m]. It applies to most services; UG-16(b) itself lists larger minima (e.g. unfired steam
boilers, compressed-air, steam and water service) that the caller must pass as ``t_min``."""

STEEL_DENSITY = 7850.0
"""Density of carbon and low-alloy steel, common practice [kg/m3]. Austenitic stainless steels are
nearer 7900-8000 kg/m3 (common practice)."""

DEFAULT_THICK_WALL_FORM = "lame"
"""Thick-wall form used beyond the UG-27 limits when ``method="auto"``: the Lamé form of Mandatory
Appendix 1-2 in older editions. See :func:`shell_thickness` for why it is the default."""

FORMULA_NAMES = (
    "UG-27(c)(1) circumferential stress",
    "UG-27(c)(2) longitudinal stress",
    "Appendix 1-2 Lamé form, circumferential stress",
    "Appendix 1-2 exponential form, circumferential stress",
    "Appendix 1-2 longitudinal stress",
    "UG-16(b) minimum thickness",
)
"""Names of the formula codes in :attr:`ShellThickness.formula` (index = code)."""

_CIRC_UG27, _LONG_UG27, _CIRC_LAME, _CIRC_EXP, _LONG_THICK, _MINIMUM = range(6)
_METHODS = ("auto", "lame", "exponential", "ug27")
_HEADS = ("ellipsoidal", "torispherical", "hemispherical")
_CAUTION = (
    "preliminary estimate, not for design or fabrication; the applicable pressure-vessel code, "
    "local regulations and a licensed engineer govern"
)
# Standard torispherical ("flanged and dished") head of UG-32(e): crown radius L, knuckle 6 % of L.
_KNUCKLE_FRACTION = 0.06


# --------------------------------------------------------------------------------------------
# helpers
# --------------------------------------------------------------------------------------------


def _check_choice(name: str, value, choices: tuple[str, ...], aliases=None) -> str:
    if not isinstance(value, str):
        raise InputError(f"{name} must be one of {', '.join(map(repr, choices))}, got {value!r}")
    key = unicodedata.normalize("NFC", value.strip().lower())
    if aliases and key in aliases:
        key = aliases[key]
    if key not in choices:
        raise InputError(f"{name} must be one of {', '.join(map(repr, choices))}, got {value!r}")
    return key


def _first(mask: np.ndarray, a: np.ndarray) -> float:
    return float(np.asarray(a)[mask].ravel()[0])


def _joint_efficiency(name: str, value) -> np.ndarray:
    return check_range(name, value, 0.0, 1.0, inclusive=(False, True))


# --------------------------------------------------------------------------------------------
# cylindrical shells
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class ShellThickness:
    """Required shell thickness and how it was obtained (see :func:`shell_thickness_detail`).

    Preliminary estimate, not for design or fabrication; the applicable pressure-vessel code, local
    regulations and a licensed engineer govern.

    Scalars when every input was a scalar, otherwise arrays of the broadcast shape.

    Attributes
    ----------
    thickness : float or numpy.ndarray
        Required thickness including corrosion allowance,
        ``max(pressure_thickness, t_min) + corrosion_allowance`` [m].
    pressure_thickness : float or numpy.ndarray
        Governing pressure thickness, the larger of ``circumferential`` and ``longitudinal``,
        exclusive of corrosion allowance [m].
    circumferential : float or numpy.ndarray
        Thickness for circumferential (hoop) stress, UG-27(c)(1) or its Appendix 1-2 thick-wall
        replacement [m].
    longitudinal : float or numpy.ndarray
        Thickness for longitudinal stress, UG-27(c)(2) or its Appendix 1-2 thick-wall
        replacement [m].
    formula : int or numpy.ndarray of int
        Code of the governing formula; ``FORMULA_NAMES[code]`` names it (0 UG-27(c)(1),
        1 UG-27(c)(2), 2 Appendix 1-2 Lamé, 3 Appendix 1-2 exponential, 4 Appendix 1-2
        longitudinal, 5 UG-16(b) minimum) [-].
    thick_wall : bool or numpy.ndarray of bool
        True where a UG-27 validity limit was exceeded in either direction and an Appendix 1-2
        thick-wall form was used [-].
    validity_margin : float or numpy.ndarray
        ``1 - P / P_limit`` with ``P_limit`` the lowest pressure at which any UG-27(c) validity
        limit is reached: positive inside the UG-27 range, zero on its edge, negative beyond.
        Finite and linear in ``P``, so a study can use it as an inequality constraint
        ``validity_margin >= 0`` [-].
    """

    thickness: float | np.ndarray
    pressure_thickness: float | np.ndarray
    circumferential: float | np.ndarray
    longitudinal: float | np.ndarray
    formula: int | np.ndarray
    thick_wall: bool | np.ndarray
    validity_margin: float | np.ndarray

    @property
    def formula_name(self) -> str | np.ndarray:
        """Name of the governing formula (a str, or an array of str) [-]."""
        names = np.asarray(FORMULA_NAMES, dtype=object)
        f = np.asarray(self.formula)
        return str(names[f]) if f.ndim == 0 else names[f]


#: Upper bound on an allowable stress [Pa]: Division 1 allowables (the lesser of tensile strength
#: / 3.5 and 2/3 of yield) of listed plate steels stay below about 250 MPa (from memory, confirm
#: against ASME Section II Part D Table 1A); 400 MPa leaves room and catches unit slips (psi, MPa).
S_MAX = 400e6


def _check_S(S):
    S = check_positive("S", S, "Pa")
    bad = S > S_MAX
    if bad.any():
        raise InputError(
            f"S = {_first(bad, S):.6g} Pa is above any ASME VIII-1 allowable stress of plate steels "
            f"(valid: 0 < S <= {S_MAX:g} Pa); S is in Pa, e.g. 138e6 for SA-516 Gr 70"
        )
    return S


def _shell_arrays(P, D, S, E, corrosion_allowance, t_min, method, E_circumferential):
    P = check_positive("P", P, "Pa", allow_zero=True)
    D = check_positive("D", D, "m")
    S = _check_S(S)
    E = _joint_efficiency("E", E)
    Ec = (
        E
        if E_circumferential is None
        else _joint_efficiency("E_circumferential", E_circumferential)
    )
    ca = check_positive("corrosion_allowance", corrosion_allowance, "m", allow_zero=True)
    tm = check_positive("t_min", t_min, "m", allow_zero=True)
    method = _check_choice("method", method, _METHODS, {"lamé": "lame"})
    thick_form = DEFAULT_THICK_WALL_FORM if method == "auto" else method
    P, D, S, E, Ec, ca, tm = broadcast_arrays(
        P=P, D=D, S=S, E=E, E_circumferential=Ec, corrosion_allowance=ca, t_min=tm
    )

    R = 0.5 * D + ca  # inside radius in the corroded condition
    SE = S * E  # longitudinal joints -> circumferential stress
    SEc = S * Ec  # circumferential joints -> longitudinal stress

    # UG-27(c)(1) applies while t <= R/2 and P <= 0.385 SE. With t = PR/(SE - 0.6P) the first is
    # exactly P <= SE/2.6 (R cancels), so both limits are pressure limits.
    p_lim_c = np.minimum(SE / 2.6, 0.385 * SE)
    # UG-27(c)(2) applies while t <= R/2 and P <= 1.25 SE_c; t = PR/(2 SE_c + 0.4P) <= R/2 is
    # exactly P <= 1.25 SE_c, the same limit.
    p_lim_l = 1.25 * SEc
    ok_c = p_lim_c >= P
    ok_l = p_lim_l >= P
    margin = np.minimum(1.0 - P / p_lim_c, 1.0 - P / p_lim_l)

    if method == "ug27" and not (ok_c.all() and ok_l.all()):
        bad = ~(ok_c & ok_l)
        lim = np.minimum(p_lim_c, p_lim_l)
        raise OutOfRangeError(
            f"P = {_first(bad, P):.6g} Pa is beyond the UG-27(c) validity range (P <= "
            f"{_first(bad, lim):.6g} Pa here: t <= R/2 and P <= 0.385 S E for circumferential "
            "stress, P <= 1.25 S E for longitudinal stress); use method='auto', 'lame' or "
            "'exponential' for the Appendix 1-2 thick-wall forms"
        )
    bad = ~ok_c & (P >= SE)
    if bad.any():
        raise OutOfRangeError(
            f"P must be < S*E for a thick-wall shell (the Lamé form has no solution at P >= S E; "
            f"teakit applies the same bound to the exponential form, whose wall would exceed 1.7 R), "
            f"got P = {_first(bad, P):.6g} Pa with S*E = {_first(bad, SE):.6g} Pa; such vessels "
            "fall under high-pressure rules outside a preliminary estimate"
        )

    with np.errstate(divide="ignore", invalid="ignore"):
        t_c_ug = P * R / (SE - 0.6 * P)
        t_l_ug = P * R / (2.0 * SEc + 0.4 * P)
        x = np.where(ok_c, 0.0, P / SE)
        if thick_form == "lame":
            t_c_thick = R * (np.sqrt((1.0 + x) / (1.0 - x)) - 1.0)
            code_c_thick = _CIRC_LAME
        else:
            t_c_thick = R * np.expm1(x)
            code_c_thick = _CIRC_EXP
        t_l_thick = R * (np.sqrt(1.0 + P / SEc) - 1.0)
    t_c = np.where(ok_c, t_c_ug, t_c_thick)
    t_l = np.where(ok_l, t_l_ug, t_l_thick)
    circ_governs = t_c >= t_l
    t_p = np.where(circ_governs, t_c, t_l)
    code = np.where(
        circ_governs,
        np.where(ok_c, _CIRC_UG27, code_c_thick),
        np.where(ok_l, _LONG_UG27, _LONG_THICK),
    )
    code = np.where(t_p < tm, _MINIMUM, code)
    total = np.maximum(t_p, tm) + ca
    inputs = dict(P=P, D=D, S=S, E=E, E_circumferential=Ec, corrosion_allowance=ca, t_min=tm)
    for a in (total, t_c, t_l, margin):
        finite_result("shell thickness", a, **inputs)
    return ShellThickness(
        thickness=scalar_or_array(total),
        pressure_thickness=scalar_or_array(t_p),
        circumferential=scalar_or_array(t_c),
        longitudinal=scalar_or_array(t_l),
        formula=scalar_or_array(code.astype(int)),
        thick_wall=scalar_or_array(~(ok_c & ok_l)),
        validity_margin=scalar_or_array(margin),
    )


def shell_thickness_detail(
    P,
    D,
    S,
    E=1.0,
    corrosion_allowance=0.0,
    t_min=UG16_MINIMUM_THICKNESS,
    method="auto",
    *,
    E_circumferential=None,
) -> ShellThickness:
    """Required cylindrical-shell thickness with the governing formula and the UG-27 margin.

    Preliminary estimate, not for design or fabrication; the applicable pressure-vessel code, local
    regulations and a licensed engineer govern.

    Same arguments and rules as :func:`shell_thickness`, which returns only the ``thickness`` field.

    Parameters
    ----------
    P : array_like
        Internal design pressure, gauge [Pa].
    D : array_like
        Inside diameter in the new (uncorroded) condition [m].
    S : array_like
        Maximum allowable stress at the design temperature [Pa].
    E : array_like, optional
        Joint efficiency of the longitudinal joints (UW-12), used for circumferential stress,
        0 < E <= 1 [-].
    corrosion_allowance : array_like, optional
        Corrosion allowance, >= 0 [m].
    t_min : array_like, optional
        Minimum thickness exclusive of corrosion allowance, >= 0; default 1/16 in per UG-16(b) [m].
    method : {"auto", "lame", "exponential", "ug27"}, optional
        Formula beyond the UG-27 limits: ``"auto"`` is :data:`DEFAULT_THICK_WALL_FORM`
        (``"lame"``); ``"ug27"`` raises :class:`~teakit.errors.OutOfRangeError` instead [-].
    E_circumferential : array_like, optional
        Joint efficiency of the circumferential joints, used for longitudinal stress; defaults to
        ``E`` [-].

    Returns
    -------
    ShellThickness
        Thicknesses [m], governing formula code [-], thick-wall flag [-] and UG-27 validity
        margin [-].

    Raises
    ------
    InputError
        A negative or non-finite argument, E outside (0, 1], an unknown ``method``.
    OutOfRangeError
        ``P >= S E`` where a thick-wall form is needed, or any point beyond the UG-27 limits with
        ``method="ug27"``.
    """
    return _shell_arrays(P, D, S, E, corrosion_allowance, t_min, method, E_circumferential)


def shell_thickness(
    P,
    D,
    S,
    E=1.0,
    corrosion_allowance=0.0,
    t_min=UG16_MINIMUM_THICKNESS,
    method="auto",
    *,
    E_circumferential=None,
):
    r"""Required thickness of a cylindrical shell under internal pressure, ASME VIII-1 UG-27(c).

    Preliminary estimate, not for design or fabrication; the applicable pressure-vessel code, local
    regulations and a licensed engineer govern.

    Within the UG-27 limits the thickness is the larger of the circumferential-stress rule
    UG-27(c)(1) and the longitudinal-stress rule UG-27(c)(2), with :math:`R` the inside radius in
    the corroded condition, :math:`R = D/2 + c`:

    .. math::

        t_c = \frac{P R}{S E - 0.6 P} \quad (t_c \le R/2,\ P \le 0.385\,S E), \qquad
        t_l = \frac{P R}{2 S E_c + 0.4 P} \quad (t_l \le R/2,\ P \le 1.25\,S E_c)

    Beyond those limits Mandatory Appendix 1-2 applies. For circumferential stress older editions
    give the Lamé form and recent editions an exponential form (the form of Division 2, 4.3.3;
    the edition that made the change is not recalled here, from memory); for longitudinal stress
    both give the Lamé-type form:

    .. math::

        t_c^{\mathrm{Lam\acute e}} = R\left(\sqrt{\frac{S E + P}{S E - P}} - 1\right), \qquad
        t_c^{\exp} = R\left(e^{P/(S E)} - 1\right), \qquad
        t_l = R\left(\sqrt{\frac{P}{S E_c} + 1} - 1\right)

    The result is :math:`\max(t_c, t_l, t_{min}) + c`, the minimum thickness of UG-16(b) being
    exclusive of corrosion allowance.

    **Default thick-wall form: Lamé** (``method="auto"`` = ``"lame"``). UG-27(c)(1) reaches
    :math:`t = R/2` at :math:`P = S E/2.6 = 0.3846\,S E`, where the Lamé form gives exactly
    :math:`R/2` too: thickness stays continuous and increasing in P across the switch, which an
    optimiser over operating pressure needs, and the Lamé form is the thicker (conservative) one.
    The exponential form (``method="exponential"``) is the rule of recent editions but at the
    switch it gives :math:`R(e^{1/2.6} - 1) = 0.4690\,R`, so the required thickness *drops* by
    about 6 % as P crosses 0.3846 S E. At :math:`P = 0.385\,S E` the two forms give 0.5007 R
    (Lamé) and 0.4696 R (exponential): Lamé is 6.6 % thicker, the exponential 6.2 % thinner
    (not the 9 % sometimes quoted). The gap grows with P: Lamé is 13 % thicker at P = 0.5 S E and
    63 % at P = 0.8 S E, and has no solution at P >= S E.

    Parameters
    ----------
    P : array_like
        Internal design pressure, gauge, >= 0 (external pressure is not covered) [Pa].
    D : array_like
        Inside diameter in the new (uncorroded) condition, > 0 [m].
    S : array_like
        Maximum allowable stress at the design temperature, > 0 (see :func:`allowable_stress`)
        [Pa].
    E : array_like, optional
        Joint efficiency of the longitudinal joints (UW-12), used for circumferential stress,
        0 < E <= 1 [-].
    corrosion_allowance : array_like, optional
        Corrosion allowance, added to the radius and to the thickness, >= 0 [m].
    t_min : array_like, optional
        Minimum thickness exclusive of corrosion allowance, >= 0; default 1/16 in = 1.5875 mm per
        UG-16(b), which lists larger minima for some services [m].
    method : {"auto", "lame", "exponential", "ug27"}, optional
        Thick-wall form used beyond the UG-27 limits (inside them UG-27 always applies):
        ``"auto"`` = ``"lame"``; ``"exponential"``; ``"ug27"`` raises instead of switching [-].
    E_circumferential : array_like, optional
        Joint efficiency of the circumferential joints, used for the longitudinal-stress rule;
        defaults to ``E``. With equal efficiencies the longitudinal rule never governs; it does
        when ``E_circumferential < (S E - P) / (2 S)`` [-].

    Returns
    -------
    float or numpy.ndarray
        Required thickness including corrosion allowance [m].

    Raises
    ------
    InputError
        A negative or non-finite argument, E outside (0, 1], an unknown ``method``.
    OutOfRangeError
        ``P >= S E`` where a thick-wall form is needed, or a point beyond the UG-27 limits with
        ``method="ug27"``.

    See Also
    --------
    shell_thickness_detail : the same with the governing formula and the UG-27 validity margin.

    References
    ----------
    ASME Boiler and Pressure Vessel Code, Section VIII, Division 1, UG-16(b), UG-27(c), Mandatory
    Appendix 1-2(a).

    Examples
    --------
    >>> round(shell_thickness(P=200e5, D=1.8, S=138e6, E=1.0, corrosion_allowance=3e-3), 5)
    0.14633
    """
    return _shell_arrays(
        P, D, S, E, corrosion_allowance, t_min, method, E_circumferential
    ).thickness


# --------------------------------------------------------------------------------------------
# formed heads
# --------------------------------------------------------------------------------------------
def head_thickness(
    P,
    D,
    S,
    E=1.0,
    corrosion_allowance=0.0,
    t_min=UG16_MINIMUM_THICKNESS,
    head="ellipsoidal",
    crown_radius=None,
    method="auto",
):
    r"""Required thickness of a formed head under internal pressure, ASME VIII-1 UG-32.

    Preliminary estimate, not for design or fabrication; the applicable pressure-vessel code, local
    regulations and a licensed engineer govern.

    Dimensions are taken in the corroded condition (:math:`D_c = D + 2c`, :math:`L_c = L + c`):

    .. math::

        \text{2:1 ellipsoidal, UG-32(d):}\quad t = \frac{P D_c}{2 S E - 0.2 P}

        \text{torispherical, UG-32(e):}\quad t = \frac{0.885\, P L_c}{S E - 0.1 P}

        \text{hemispherical, UG-32(f):}\quad t = \frac{P L_c}{2 S E - 0.2 P}
        \quad (t \le 0.356 L_c,\ P \le 0.665\,S E)

    The torispherical rule is for the standard head whose knuckle radius is 6 % of the inside
    crown radius :math:`L` (default :math:`L = D`; UG-32(j) caps it at the skirt's outside
    diameter). Beyond its limits the hemispherical head follows Mandatory Appendix 1-2(b) for
    spheres, Lamé form :math:`t = L_c (Y^{1/3} - 1)`, :math:`Y = 2(S E + P)/(2 S E - P)`
    (default, continuous with UG-32(f) at the switch), or exponential form
    :math:`t = L_c(e^{0.5 P/(S E)} - 1)` (from memory, as in recent editions; here it is the
    thicker of the two). The result is :math:`\max(t, t_{min}) + c`.

    UG-32(d) and (e) apply to heads with :math:`t/L \ge 0.002` (:math:`L = 0.9 D` for a 2:1
    ellipsoidal head); thinner heads are governed by Appendix 1-4(f) (knuckle buckling), which
    teakit does not apply: a :class:`~teakit.errors.RangeWarning` is issued (from memory).

    Parameters
    ----------
    P : array_like
        Internal design pressure, gauge, 0 <= P < S E [Pa].
    D : array_like
        Inside diameter of the head skirt in the new condition, > 0 [m].
    S : array_like
        Maximum allowable stress at the design temperature, > 0 [Pa].
    E : array_like, optional
        Joint efficiency of any joint in the head (1 for a seamless head), 0 < E <= 1 [-].
    corrosion_allowance : array_like, optional
        Corrosion allowance, >= 0 [m].
    t_min : array_like, optional
        Minimum thickness exclusive of corrosion allowance; default 1/16 in per UG-16(b) [m].
    head : {"ellipsoidal", "torispherical", "hemispherical"}, optional
        Head shape; ``"ellipsoidal"`` is the 2:1 semi-ellipsoidal head [-].
    crown_radius : array_like, optional
        Inside crown radius of a torispherical head, 0 < L <= about D; default ``D``. Ignored for
        the other heads [m].
    method : {"auto", "lame", "exponential", "ug27"}, optional
        Thick-wall form for a hemispherical head beyond the UG-32(f) limits, as for
        :func:`shell_thickness` [-].

    Returns
    -------
    float or numpy.ndarray
        Required head thickness including corrosion allowance [m].

    Raises
    ------
    InputError
        A bad argument or an unknown ``head`` or ``method``.
    OutOfRangeError
        ``P >= S E``; a hemispherical head beyond the UG-32(f) limits with ``method="ug27"``.

    References
    ----------
    ASME Boiler and Pressure Vessel Code, Section VIII, Division 1, UG-16(b), UG-32(d), (e), (f),
    (j), Mandatory Appendix 1-2(b), Appendix 1-4(f).
    """
    head = _check_choice("head", head, _HEADS)
    method = _check_choice("method", method, _METHODS, {"lamé": "lame"})
    P = check_positive("P", P, "Pa", allow_zero=True)
    D = check_positive("D", D, "m")
    S = _check_S(S)
    E = _joint_efficiency("E", E)
    ca = check_positive("corrosion_allowance", corrosion_allowance, "m", allow_zero=True)
    tm = check_positive("t_min", t_min, "m", allow_zero=True)
    Lc = D if crown_radius is None else check_positive("crown_radius", crown_radius, "m")
    P, D, S, E, ca, tm, Lc = broadcast_arrays(
        P=P, D=D, S=S, E=E, corrosion_allowance=ca, t_min=tm, crown_radius=Lc
    )
    SE = S * E
    bad = P >= SE
    if bad.any():
        raise OutOfRangeError(
            f"P must be < S*E for a formed head in teakit, got P = {_first(bad, P):.6g} Pa with "
            f"S*E = {_first(bad, SE):.6g} Pa"
        )
    if head == "ellipsoidal":
        t = P * (D + 2.0 * ca) / (2.0 * SE - 0.2 * P)
        L_ratio = 0.9 * (D + 2.0 * ca)
    elif head == "torispherical":
        L_ratio = Lc + ca
        t = 0.885 * P * L_ratio / (SE - 0.1 * P)
    else:
        L = 0.5 * D + ca
        # t <= 0.356 L with t = PL/(2SE - 0.2P) is P <= 0.712 SE / 1.0712 = 0.6647 SE.
        p_lim = np.minimum(0.712 * SE / 1.0712, 0.665 * SE)
        ok = p_lim >= P
        if method == "ug27" and not ok.all():
            raise OutOfRangeError(
                f"P = {_first(~ok, P):.6g} Pa is beyond the UG-32(f) validity range "
                f"(P <= {_first(~ok, p_lim):.6g} Pa here: t <= 0.356 L and P <= 0.665 S E); use "
                "method='auto', 'lame' or 'exponential' for the Appendix 1-2 thick-wall forms"
            )
        thick_form = DEFAULT_THICK_WALL_FORM if method == "auto" else method
        x = P / SE
        if thick_form == "lame":
            t_thick = L * (np.cbrt(2.0 * (1.0 + x) / (2.0 - x)) - 1.0)
        else:
            t_thick = L * np.expm1(0.5 * x)
        t = np.where(ok, P * L / (2.0 * SE - 0.2 * P), t_thick)
        L_ratio = None
    t_s = np.maximum(t, tm)
    if L_ratio is not None:
        thin = (t_s / L_ratio < 0.002) & (P > 0)
        if thin.any():
            warnings.warn(
                f"{head} head with t/L = {_first(thin, t_s / L_ratio):.4g} < 0.002: UG-32 "
                "(d)/(e) do not cover such thin heads (Appendix 1-4(f), knuckle buckling, "
                "governs and may require more); thickness returned from UG-32 anyway",
                RangeWarning,
                stacklevel=2,
            )
    return scalar_or_array(
        finite_result("head thickness", t_s + ca, P=P, D=D, S=S, E=E, corrosion_allowance=ca,
                      t_min=tm, crown_radius=Lc)
    )


# --------------------------------------------------------------------------------------------
# geometry and mass
# --------------------------------------------------------------------------------------------
def _ellipsoidal_area(D):
    # Half of an oblate spheroid, semi-axes a = D/2 and c = a/2: eccentricity e^2 = 1 - c^2/a^2
    # = 3/4, area = pi a^2 (1 + (1 - e^2)/e * artanh e) = 1.08399 D^2.
    e = np.sqrt(0.75)
    return np.pi * (0.5 * D) ** 2 * (1.0 + (1.0 - e * e) / e * np.arctanh(e))


def _torispherical_area(D, Rc, rk):
    # Spherical crown (radius Rc) plus toroidal knuckle (radius rk) whose centre circle has
    # radius a = D/2 - rk; alpha is the half-angle of the crown cap.
    a = 0.5 * D - rk
    alpha = np.arcsin(a / (Rc - rk))
    crown = 2.0 * np.pi * Rc**2 * (1.0 - np.cos(alpha))
    knuckle = 2.0 * np.pi * rk * (a * (0.5 * np.pi - alpha) + rk * np.cos(alpha))
    return crown + knuckle


def head_surface_area(D, head="ellipsoidal"):
    r"""Surface area of one formed head (dished part, no straight flange).

    .. math::

        \text{2:1 ellipsoidal:}\quad A = \frac{\pi D^2}{4}\left(1 + \frac{1-e^2}{e}
        \operatorname{artanh} e\right) = 1.0840\,D^2, \quad e = \sqrt{3}/2

        \text{hemispherical:}\quad A = \frac{\pi D^2}{2}

        \text{torispherical:}\quad A = 2\pi R_c^2 (1-\cos\alpha)
        + 2\pi r_k\left[a\left(\tfrac{\pi}{2}-\alpha\right) + r_k\cos\alpha\right] = 0.9306\,D^2

    The ellipsoidal area is the exact area of half an oblate spheroid with axis ratio 2:1. The
    torispherical head is the standard one of UG-32(e) with crown radius :math:`R_c = D` and
    knuckle radius :math:`r_k = 0.06 D`; :math:`a = D/2 - r_k`,
    :math:`\sin\alpha = a/(R_c - r_k)`.

    Parameters
    ----------
    D : array_like
        Diameter of the surface (inside, outside or mean, as the caller needs), > 0 [m].
    head : {"ellipsoidal", "torispherical", "hemispherical"}, optional
        Head shape [-].

    Returns
    -------
    float or numpy.ndarray
        Area of one head [m2].
    """
    head = _check_choice("head", head, _HEADS)
    D = check_positive("D", D, "m")
    if head == "ellipsoidal":
        A = _ellipsoidal_area(D)
    elif head == "hemispherical":
        A = 0.5 * np.pi * D**2
    else:
        A = _torispherical_area(D, D, _KNUCKLE_FRACTION * D)
    return scalar_or_array(finite_result("head surface area", A, D=D))


def vessel_mass(
    D,
    L,
    t_shell,
    t_head,
    head="ellipsoidal",
    density=STEEL_DENSITY,
    allowance_factor=1.0,
):
    r"""Metal mass of a cylindrical vessel: the shell plus two formed heads.

    Preliminary estimate for costing, not for design or fabrication (no nozzles, supports or
    internals unless ``allowance_factor`` adds them); the applicable pressure-vessel code, local
    regulations and a licensed engineer govern.

    .. math::

        m = f\,\rho\left[\pi D_{m} L\, t_s + 2 V_h\right], \qquad D_{m} = D + t_s

    The shell term is exact for a cylinder of inside diameter :math:`D` and wall :math:`t_s`
    (:math:`\tfrac{\pi}{4}(D_o^2 - D^2) = \pi D_m t_s`). Two hemispherical heads make an exact
    spherical shell, :math:`2 V_h = \tfrac{4}{3}\pi\left[(D/2 + t_h)^3 - (D/2)^3\right]`. For
    ellipsoidal and torispherical heads :math:`V_h = A(D + t_h)\, t_h`, the area of the
    mid-surface (:func:`head_surface_area`) times the thickness, a thin-shell approximation whose
    relative error is of order :math:`(t_h/D)^2`.

    Parameters
    ----------
    D : array_like
        Inside diameter, > 0 [m].
    L : array_like
        Length of the cylindrical shell, tangent to tangent (any straight flanges of the heads
        included), >= 0 [m].
    t_shell : array_like
        Shell wall thickness, including corrosion allowance, > 0 [m].
    t_head : array_like
        Head thickness, including corrosion allowance, > 0 [m].
    head : {"ellipsoidal", "torispherical", "hemispherical"}, optional
        Shape of both heads (torispherical: the standard head, crown radius D, knuckle 6 %) [-].
    density : array_like, optional
        Metal density; default 7850 for carbon and low-alloy steel (common practice) [kg/m3].
    allowance_factor : array_like, optional
        Multiplier >= 1 for nozzles, manways, supports, internals and weld metal. The default 1.0
        gives the bare shell and heads; a study that wants a weight allowance must set it [-].

    Returns
    -------
    float or numpy.ndarray
        Metal mass [kg].
    """
    head = _check_choice("head", head, _HEADS)
    D = check_positive("D", D, "m")
    L = check_positive("L", L, "m", allow_zero=True)
    ts = check_positive("t_shell", t_shell, "m")
    th = check_positive("t_head", t_head, "m")
    rho = check_positive("density", density, "kg/m3")
    f = check_range("allowance_factor", allowance_factor, 1.0, np.inf)
    D, L, ts, th, rho, f = broadcast_arrays(
        D=D, L=L, t_shell=ts, t_head=th, density=rho, allowance_factor=f
    )
    shell = np.pi * (D + ts) * L * ts
    if head == "hemispherical":
        heads = 4.0 / 3.0 * np.pi * ((0.5 * D + th) ** 3 - (0.5 * D) ** 3)
    elif head == "ellipsoidal":
        heads = 2.0 * _ellipsoidal_area(D + th) * th
    else:
        Dm = D + th
        # offset surfaces of a torispherical head share the crown and knuckle centres
        Rc = D + 0.5 * th
        rk = _KNUCKLE_FRACTION * D + 0.5 * th
        heads = 2.0 * _torispherical_area(Dm, Rc, rk) * th
    return scalar_or_array(
        finite_result("vessel mass", f * rho * (shell + heads), D=D, L=L, t_shell=ts, t_head=th,
                      density=rho, allowance_factor=f)
    )


# --------------------------------------------------------------------------------------------
# allowable stress
# --------------------------------------------------------------------------------------------
def _norm(name: str) -> str:
    return " ".join(str(name).split()).casefold()


@functools.cache
def _stress_table() -> dict[str, tuple[str, np.ndarray, np.ndarray]]:
    df = load_table("allowable_stress")
    out = {}
    for name in dict.fromkeys(df["material"]):
        g = df[df["material"] == name].sort_values("temperature_K")
        out[_norm(name)] = (
            str(name),
            g["temperature_K"].to_numpy(dtype=float),
            g["S_Pa"].to_numpy(dtype=float),
        )
    return out


def allowable_stress_materials() -> tuple[str, ...]:
    """Names of the materials in ``data/allowable_stress.csv``, in table order."""
    return tuple(v[0] for v in _stress_table().values())


def allowable_stress(material: str, T):
    r"""Maximum allowable stress of a plate material at metal temperature T (ASME II-D Table 1A).

    Linear interpolation in temperature between the rows of ``data/allowable_stress.csv``:

    .. math::

        S(T) = S_i + (S_{i+1} - S_i)\,\frac{T - T_i}{T_{i+1} - T_i}, \qquad T_i \le T \le T_{i+1}

    **Every value in the table was recalled from memory and must be confirmed against ASME Section
    II Part D Table 1A** of the edition that governs; the standard's own rule is to use the value at
    the next higher tabulated temperature, which interpolation slightly exceeds between rows.
    Allowable stress alone does not make a material suitable: in hot hydrogen (ammonia converters)
    carbon and C-0.5Mo steels suffer high-temperature hydrogen attack and the Nelson curves of
    API RP 941 set the steel; carbon steel above about 800 degF (700 K) graphitises in long
    service. Below the table's lowest temperature (-20 degF, 244 K) the lowest-temperature value is
    returned with a :class:`~teakit.errors.RangeWarning`: impact testing and the minimum design
    metal temperature rules (UCS-66) then govern whether the material may be used at all.

    Parameters
    ----------
    material : str
        Material as named in the table, e.g. ``"SA-516 Gr 70"`` (case and repeated spaces
        ignored); :func:`allowable_stress_materials` lists them [-].
    T : array_like
        Design metal temperature, > 0 and not above the table's maximum for the material [K].

    Returns
    -------
    float or numpy.ndarray
        Maximum allowable stress S [Pa].

    Raises
    ------
    InputError
        Unknown material (the message lists the table's materials) or a non-positive T.
    OutOfRangeError
        T above the table's maximum temperature for the material.

    References
    ----------
    ASME Boiler and Pressure Vessel Code, Section II, Part D, Table 1A; API RP 941.
    """
    table = _stress_table()
    key = _norm(material) if isinstance(material, str) else None
    if key not in table:
        raise InputError(
            f"material must be one of {', '.join(map(repr, allowable_stress_materials()))}, "
            f"got {material!r}"
        )
    name, Tk, Sk = table[key]
    T = check_positive("T", T, "K")
    hi = T > Tk[-1]
    if hi.any():
        raise OutOfRangeError(
            f"T must lie in [{Tk[0]:.2f}, {Tk[-1]:.2f}] K ({Tk[0] * 1.8 - 459.67:.0f} to "
            f"{Tk[-1] * 1.8 - 459.67:.0f} degF) for {name} in data/allowable_stress.csv, got "
            f"T = {_first(hi, T):.6g} K"
        )
    lo = T < Tk[0]
    if lo.any():
        warnings.warn(
            f"T = {_first(lo, T):.6g} K is below the lowest temperature of the {name} table "
            f"({Tk[0]:.2f} K = -20 degF): the value at {Tk[0]:.2f} K is returned; impact testing "
            "and minimum design metal temperature rules (UCS-66) govern use at this temperature",
            RangeWarning,
            stacklevel=2,
        )
    return scalar_or_array(np.interp(T, Tk, Sk))
