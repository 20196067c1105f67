"""Gas compression: isentropic and polytropic head, multi-stage with intercooling, shaft power.

One function serves the process layer and the costing layer (:func:`compressor_power`); the
stage-by-stage figures (discharge temperatures, intercooler duties, a discharge-temperature
margin for constraints) come from :func:`compression_detail`.

Methods (``method=``):

``"average-z"`` (default)
    Ideal-gas head with the mean of inlet and isentropic-outlet compressibility from
    Peng-Robinson, and k = cp/cv of the ideal gas at the stage's mean temperature:

    .. math:: w_s = \\bar Z R T_1 \\frac{k}{k-1}\\left[r^{(k-1)/k} - 1\\right], \\qquad
              w = w_s / \\eta_s

    (Perry's Chemical Engineers' Handbook, 8th ed., section 10, compressor head equations; GPSA
    Engineering Data Book, section 13). Against reference equations of state it lands within
    about 1 % for H2/N2 from 30 to 200 bar (tests/test_compressor.py); with Z = 1 it is 3-5 % low.
``"peng-robinson"``
    The isentropic path of the Peng-Robinson equation of state itself: the outlet temperature
    solves s(T2s, P2) = s(T1, P1) with ideal-gas plus residual entropy, and the isentropic work is
    the enthalpy rise including residual enthalpies.
``"polytropic"``
    Polytropic head with polytropic efficiency eta_p, (n-1)/n = (k-1)/(k eta_p):

    .. math:: w = \\bar Z R T_1 \\frac{n}{n-1}\\left[r^{(n-1)/n} - 1\\right] / \\eta_p

Multi-stage: equal pressure ratios per stage, intercooling back to ``T_intercool`` before each
stage after the first (no interstage pressure drop). Discharge temperatures are reported per stage;
a limit (default 150 degC, a common limit for hydrogen-rich reciprocating service; API 618 and
vendor practice set the real one) gives a margin for constraints and is not enforced.

Preliminary estimates: machine selection, surge, rod load and discharge-temperature limits are
for the vendor and a licensed engineer; hydrogen service needs material and sealing choices that
no cost model makes.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from teakit.errors import InputError
from teakit.thermo import ideal_gas
from teakit.thermo.peng_robinson import kij_matrix, pr_state
from teakit.thermo.species import R, species_set
from teakit.validation import (
    broadcast_arrays,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "METHODS",
    "CompressionResult",
    "compression_detail",
    "compressor_power",
    "isentropic_head",
    "polytropic_head",
]

METHODS = ("average-z", "peng-robinson", "polytropic")
#: Default discharge-temperature limit [K] (150 degC; common practice for H2-rich service).
T_DISCHARGE_MAX = 423.15


def _head(T_in, pressure_ratio, exponent, Z, name):
    """Z R T1 x/(x-1) [r^((x-1)/x) - 1] for an exponent x (k or n), with the checks of both heads."""
    T_in = check_positive("T_in", T_in, "K")
    r = check_range("pressure_ratio", pressure_ratio, 1.0, np.inf)
    x = check_range(name, exponent, 1.0, np.inf, inclusive=(False, True))
    Z = check_positive("Z", Z)
    T_in, r, x, Z = broadcast_arrays(T_in=T_in, pressure_ratio=r, **{name: x}, Z=Z)
    e = (x - 1.0) / x
    with np.errstate(over="ignore", invalid="ignore"):
        w = Z * R * T_in / e * (r**e - 1.0)
    return scalar_or_array(finite_result(f"head (with {name})", w, T_in=T_in, pressure_ratio=r,
                                         **{name: x}, Z=Z))


def isentropic_head(T_in, pressure_ratio, k, Z=1.0):
    """Ideal-gas isentropic head per mole, scaled by a compressibility factor.

    .. math:: w_s = Z R T_1 \\frac{k}{k-1}\\left[r^{(k-1)/k} - 1\\right]

    Parameters
    ----------
    T_in : array_like
        Suction temperature [K].
    pressure_ratio : array_like
        Discharge over suction pressure, >= 1 [-].
    k : array_like
        Heat-capacity ratio cp/cv, > 1 [-].
    Z : array_like
        Compressibility factor (mean over the stage) [-].

    Returns
    -------
    float or ndarray
        Isentropic work [J/mol].
    """
    return _head(T_in, pressure_ratio, k, Z, "k")


def polytropic_head(T_in, pressure_ratio, n, Z=1.0):
    """Polytropic head per mole for polytropic exponent n (reversible polytropic work).

    .. math:: w_p = Z R T_1 \\frac{n}{n-1}\\left[r^{(n-1)/n} - 1\\right]

    Parameters
    ----------
    T_in : array_like
        Suction temperature [K].
    pressure_ratio : array_like
        Discharge over suction pressure, >= 1 [-].
    n : array_like
        Polytropic exponent, > 1 [-].
    Z : array_like
        Mean compressibility factor [-].

    Returns
    -------
    float or ndarray
        Polytropic head [J/mol].
    """
    return _head(T_in, pressure_ratio, n, Z, "n")


@dataclass(frozen=True)
class CompressionResult:
    """Stage-by-stage result of :func:`compression_detail` (arrays broadcast over the batch).

    Attributes
    ----------
    power : ndarray
        Total shaft power [W].
    stage_power : ndarray (..., stages)
        Shaft power per stage [W].
    T_discharge : ndarray (..., stages)
        Discharge temperature of each stage [K].
    intercooler_duty : ndarray (..., stages)
        Heat removed after each stage back to ``T_intercool`` [W]; the last entry is the
        aftercooler (zero when ``T_intercool`` is None).
    stage_ratio : ndarray
        Pressure ratio per stage [-].
    discharge_margin : ndarray
        ``T_discharge_max - max(T_discharge)`` [K]; negative means a stage runs too hot.
    method : str
        Method used.
    """

    power: np.ndarray
    stage_power: np.ndarray
    T_discharge: np.ndarray
    intercooler_duty: np.ndarray
    stage_ratio: np.ndarray
    discharge_margin: np.ndarray
    method: str


def _composition(composition, names=None):
    if isinstance(composition, Mapping):
        names = tuple(composition)
        if not names:
            raise InputError("composition must name at least one species, got an empty mapping")
        y = {f"composition[{k!r}]": check_range(f"composition[{k!r}]", v, 0.0, 1.0)
             for k, v in composition.items()}
        y = np.stack(broadcast_arrays(**y), axis=-1)
    else:
        if names is None:
            raise InputError("composition must be a mapping {species: mole fraction} or an array with species=")
        y = check_range("composition", composition, 0.0, 1.0)
        names = tuple(names)
        if y.shape[-1:] != (len(names),):
            raise InputError(f"composition must have a last axis of length {len(names)}")
    sset = species_set(names)
    tot = y.sum(axis=-1, keepdims=True)
    if np.any(tot <= 0):
        raise InputError("composition must not be all zero")
    return sset, y / tot


def _stage_isentropic(method, sset, kij, y, T1, P1, P2, eta, cp_fn):
    """Isentropic (or polytropic) work per mole and discharge temperature of one stage."""
    r = P2 / P1
    if method == "peng-robinson":
        _, _, h1r, s1r = pr_state(T1, P1, y, sset, kij, want_enthalpy=True)
        s1 = np.sum(y * ideal_gas.s_R(T1, sset), axis=-1) * R + s1r
        h1 = np.sum(y * ideal_gas.h_RT(T1, sset), axis=-1) * R * T1 + h1r
        T2 = T1 * r ** (R / cp_fn(T1))
        for _ in range(30):
            _, _, h2r, s2r = pr_state(T2, P2, y, sset, kij, want_enthalpy=True)
            s2 = np.sum(y * ideal_gas.s_R(T2, sset), axis=-1) * R - R * np.log(r) + s2r
            step = (s2 - s1) / (cp_fn(T2) / T2)
            T2 = T2 - step
            if np.all(np.abs(step) < 1e-9 * T2):
                break
        _, _, h2r, _ = pr_state(T2, P2, y, sset, kij, want_enthalpy=True)
        h2 = np.sum(y * ideal_gas.h_RT(T2, sset), axis=-1) * R * T2 + h2r
        w_s = h2 - h1
        w = w_s / eta
        # Actual discharge: h(T2a, P2) = h1 + w.
        T2a = T2 + (w - w_s) / cp_fn(T2)
        for _ in range(30):
            _, _, hr, _ = pr_state(T2a, P2, y, sset, kij, want_enthalpy=True)
            h = np.sum(y * ideal_gas.h_RT(T2a, sset), axis=-1) * R * T2a + hr
            step = (h - h1 - w) / cp_fn(T2a)
            T2a = T2a - step
            if np.all(np.abs(step) < 1e-9 * T2a):
                break
        return w, T2a
    Z1 = pr_state(T1, P1, y, sset, kij)[0]
    Tm = T1
    for _ in range(4):  # k at the mean temperature of the path the head is taken along
        k = cp_fn(Tm) / (cp_fn(Tm) - R)
        if method == "polytropic":
            e = (k - 1.0) / (k * eta)
            T2 = T1 * r**e
            Tm = 0.5 * (T1 + T2)
        else:
            e = (k - 1.0) / k
            T2s = T1 * r**e
            T2 = T1 + (T2s - T1) / eta
            Tm = 0.5 * (T1 + T2s)
    T_end = T2 if method == "polytropic" else T2s
    Z2 = pr_state(T_end, P2, y, sset, kij)[0]
    Zm = 0.5 * (Z1 + Z2)
    head = Zm * R * T1 / e * (r**e - 1.0)
    return head / eta, T2


def compression_detail(
    flow,
    T_in,
    P_in,
    P_out,
    composition,
    stages=1,
    efficiency=0.78,
    T_intercool=None,
    method="average-z",
    species=None,
    T_discharge_max=T_DISCHARGE_MAX,
    kij=None,
) -> CompressionResult:
    """Multi-stage compression with intercooling: power, discharge temperatures, duties.

    Preliminary estimate: the discharge temperatures and their margin against
    ``T_discharge_max`` screen operating points; they are not a machine rating. Compressor
    selection, the real discharge-temperature limit (API 617/618 and the vendor), and materials
    and seals for hydrogen or ammonia service are for the vendor, the applicable codes, local
    regulations and a licensed engineer.

    Parameters
    ----------
    flow : array_like
        Molar flow [mol/s].
    T_in : array_like
        Suction temperature of the first stage [K].
    P_in, P_out : array_like
        Suction and final discharge pressure, absolute [Pa]; ``P_out >= P_in``.
    composition : mapping or array_like
        Mole fractions, ``{"H2": 0.75, "N2": 0.25}`` or an array (..., nc) with ``species``.
    stages : int
        Number of stages with equal pressure ratio, 1 to 10 [-].
    efficiency : array_like
        Isentropic efficiency (``"average-z"``, ``"peng-robinson"``) or polytropic efficiency
        (``"polytropic"``), in (0, 1] [-].
    T_intercool : array_like, optional
        Gas temperature after each intercooler (and the aftercooler) [K]; None: the first-stage
        suction temperature before each later stage and no aftercooler.
    method : {"average-z", "peng-robinson", "polytropic"}
        See the module docstring.
    species : sequence of str, optional
        Species of an array ``composition``.
    T_discharge_max : float
        Discharge-temperature limit used for the margin [K].
    kij : dict, optional
        Peng-Robinson interaction-parameter overrides [-].

    Returns
    -------
    CompressionResult
        Power [W], per-stage power [W], discharge temperatures [K], cooler duties [W], stage
        pressure ratio [-], discharge margin [K].
    """
    if method not in METHODS:
        raise InputError(f"method must be one of {', '.join(METHODS)}, got {method!r}")
    if not (isinstance(stages, int | np.integer) and 1 <= stages <= 10):
        raise InputError(f"stages must be a whole number from 1 to 10, got {stages!r}")
    flow = check_positive("flow", flow, "mol/s", allow_zero=True)
    T_in = check_positive("T_in", T_in, "K")
    P_in = check_positive("P_in", P_in, "Pa")
    P_out = check_positive("P_out", P_out, "Pa")
    eta = check_range("efficiency", efficiency, 0.0, 1.0, inclusive=(False, True))
    T_ic = T_in if T_intercool is None else check_positive("T_intercool", T_intercool, "K")
    T_dmax = check_positive("T_discharge_max", T_discharge_max, "K")
    sset, y = _composition(composition, species)
    flow, T_in, P_in, P_out, eta, T_ic, T_dmax = broadcast_arrays(
        flow=flow, T_in=T_in, P_in=P_in, P_out=P_out, efficiency=eta, T_intercool=T_ic,
        T_discharge_max=T_dmax,
    )
    if np.any(P_out < P_in):
        raise InputError("P_out must be >= P_in (this is a compressor, not an expander)")
    try:
        shape = np.broadcast_shapes(flow.shape, y.shape[:-1])
    except ValueError:
        raise InputError(
            f"composition (batch shape {y.shape[:-1]}) does not broadcast with flow, T_in, P_in, "
            f"P_out, efficiency and T_intercool (shape {flow.shape})"
        ) from None
    flow, T_in, P_in, P_out, eta, T_ic, T_dmax = (
        np.broadcast_to(a, shape) for a in (flow, T_in, P_in, P_out, eta, T_ic, T_dmax)
    )
    y = np.broadcast_to(y, shape + (sset.n,))
    sset.check_T(T_in, "T_in")
    k = kij_matrix(sset, kij)

    def cp_fn(T):
        return R * np.sum(y * ideal_gas.cp_R(np.clip(T, *sset.T_range), sset), axis=-1)

    ratio = (P_out / P_in) ** (1.0 / stages)
    stage_w, T_dis, duty = [], [], []
    T1, P1 = T_in, P_in
    for j in range(stages):
        P2 = P1 * ratio
        w, T2 = _stage_isentropic(method, sset, k, y, T1, P1, P2, eta, cp_fn)
        w = np.where(ratio > 1.0, w, 0.0)
        T2 = np.where(ratio > 1.0, T2, T1)
        stage_w.append(w * flow)
        T_dis.append(T2)
        last = j == stages - 1
        T_next = T_ic if not (last and T_intercool is None) else T2
        Tm = 0.5 * (T2 + T_next)
        duty.append(np.maximum(cp_fn(Tm) * (T2 - T_next), 0.0) * flow)
        T1, P1 = (T_ic if T_intercool is not None else T_in), P2
    stage_power = np.stack(stage_w, axis=-1)
    T_discharge = np.stack(T_dis, axis=-1)
    duties = np.stack(duty, axis=-1)
    margin = T_dmax - T_discharge.max(axis=-1)
    inputs = dict(flow=flow, T_in=T_in, P_in=P_in, P_out=P_out, efficiency=eta, T_intercool=T_ic,
                  T_discharge_max=T_dmax)
    for a in (stage_power, T_discharge, duties, margin, stage_power.sum(axis=-1)):
        finite_result("compression", a, **inputs)
    return CompressionResult(
        power=scalar_or_array(stage_power.sum(axis=-1)),
        stage_power=stage_power,
        T_discharge=T_discharge,
        intercooler_duty=duties,
        stage_ratio=scalar_or_array(ratio),
        discharge_margin=scalar_or_array(margin),
        method=method,
    )


def compressor_power(
    flow,
    T_in,
    P_in,
    P_out,
    composition,
    stages=1,
    efficiency=0.78,
    T_intercool=None,
    method="average-z",
    species=None,
    kij=None,
):
    """Shaft power of a multi-stage intercooled compressor.

    Parameters are those of :func:`compression_detail`.

    Returns
    -------
    float or ndarray
        Shaft power [W] (before driver losses).

    Examples
    --------
    Make-up gas of an ammonia loop, 100 mol/s of 3:1 H2/N2 from 30 to 200 bar in three stages:

    >>> W = compressor_power(flow=100.0, T_in=313.15, P_in=30e5, P_out=200e5,
    ...                      composition={"H2": 0.75, "N2": 0.25}, stages=3, efficiency=0.78,
    ...                      T_intercool=313.15)
    >>> round(W / 1e3)   # kW
    724
    """
    return compression_detail(
        flow, T_in, P_in, P_out, composition, stages, efficiency, T_intercool, method, species,
        kij=kij,
    ).power
