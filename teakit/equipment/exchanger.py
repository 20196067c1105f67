"""Heat-exchange sizing: log-mean temperature difference, area, fired-heater fuel, cooling water.

Sizing only, no money. SI throughout: temperatures and temperature differences [K], duties [W],
heat-transfer coefficients [W/(m2 K)], areas [m2], mass flows [kg/s]. Every function is
vectorised: arguments broadcast, scalars in give a ``float`` out.

References
----------
F. P. Incropera, D. P. DeWitt, T. L. Bergman and A. S. Lavine, Fundamentals of Heat and Mass
Transfer, chapter 11 (heat exchangers: log-mean temperature difference and the correction factor
F for multipass and cross-flow exchangers).
"""

from __future__ import annotations

import warnings

import numpy as np

from teakit.errors import InputError, RangeWarning
from teakit.validation import (
    broadcast_arrays,
    check_finite,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "WATER_CP",
    "cooling_water_flow",
    "exchanger_area",
    "fired_heater_fuel",
    "lmtd",
]

WATER_CP = 4184.0
"""Specific heat capacity of liquid water used for cooling-water flows [J/(kg K)]. Liquid water at
15-40 degC lies between about 4178 and 4186 J/(kg K) (IAPWS-95, from memory); 4184 is the round
value of common practice."""

# A correction factor below about 0.75-0.8 signals a poor exchanger arrangement (steep slope of F
# against the temperature ratios, a temperature cross close by): common practice.
_F_WARN = 0.75




def _check_dT(name, value):
    a = check_finite(name, value)
    bad = a <= 0
    if bad.any():
        v = float(a[bad].ravel()[0])
        raise InputError(
            f"{name} must be > 0 K (a terminal temperature difference <= 0 is a temperature "
            f"cross: the exchanger cannot be built as specified), got {v!r} K"
        )
    return a


def lmtd(dT1, dT2):
    r"""Log-mean temperature difference of the two terminal temperature differences.

    .. math::

        \Delta T_{lm} = \frac{\Delta T_1 - \Delta T_2}{\ln(\Delta T_1 / \Delta T_2)},
        \qquad \lim_{\Delta T_2 \to \Delta T_1} \Delta T_{lm} = \Delta T_1

    For counter-current flow :math:`\Delta T_1 = T_{h,in} - T_{c,out}`,
    :math:`\Delta T_2 = T_{h,out} - T_{c,in}`; for co-current flow
    :math:`\Delta T_1 = T_{h,in} - T_{c,in}`, :math:`\Delta T_2 = T_{h,out} - T_{c,out}`. The
    formula is symmetric in the two. It is evaluated as
    :math:`\Delta T_1\, x / \ln(1 + x)`, :math:`x = \Delta T_2/\Delta T_1 - 1`, with the series
    :math:`1 + x/2 - x^2/12` for :math:`|x| < 10^{-4}`, so equal differences give exactly
    :math:`\Delta T_1` and nearly equal ones lose no precision.

    Parameters
    ----------
    dT1 : array_like
        Temperature difference between the streams at one end, > 0 [K].
    dT2 : array_like
        Temperature difference at the other end, > 0 [K].

    Returns
    -------
    float or numpy.ndarray
        Log-mean temperature difference [K].

    Raises
    ------
    InputError
        A difference <= 0 (temperature cross) or not finite; the message names ``dT1`` or ``dT2``.

    References
    ----------
    Incropera et al., Fundamentals of Heat and Mass Transfer, chapter 11.
    """
    a = _check_dT("dT1", dT1)
    b = _check_dT("dT2", dT2)
    a, b = broadcast_arrays(dT1=a, dT2=b)
    x = (b - a) / a  # b - a is exact when the two are close
    small = np.abs(x) < 1e-4
    near = np.abs(x) < 0.5
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        # log1p keeps its precision for nearby differences; far apart (where 1 + x may round
        # to 0 or overflow) the difference of the logarithms
        log_ratio = np.where(near, np.log1p(np.where(near, x, 0.0)), np.log(b) - np.log(a))
        lm = np.where(small, a * (1.0 + x / 2.0 - x * x / 12.0),
                      (b - a) / np.where(log_ratio == 0.0, 1.0, log_ratio))
    return scalar_or_array(finite_result("lmtd", lm, dT1=a, dT2=b))


def exchanger_area(duty, U, dT1, dT2, F=1.0):
    r"""Heat-transfer area from the duty, the overall coefficient and the terminal differences.

    .. math::

        A = \frac{Q}{U\, F\, \Delta T_{lm}}

    with :math:`\Delta T_{lm}` from :func:`lmtd` (counter-current terminal differences when F < 1,
    F being the correction factor of the multipass or cross-flow arrangement). A
    :class:`~teakit.errors.RangeWarning` is issued for F < 0.75: such an arrangement is poor and
    usually redesigned with more shells in series (common practice).

    Parameters
    ----------
    duty : array_like
        Heat duty (magnitude), >= 0 [W].
    U : array_like
        Overall heat-transfer coefficient referred to the area returned, > 0 [W/(m2 K)].
    dT1 : array_like
        Terminal temperature difference at one end, > 0 [K].
    dT2 : array_like
        Terminal temperature difference at the other end, > 0 [K].
    F : array_like, optional
        LMTD correction factor, 0 < F <= 1 [-].

    Returns
    -------
    float or numpy.ndarray
        Heat-transfer area [m2].

    Raises
    ------
    InputError
        A bad argument; the message names it.

    References
    ----------
    Incropera et al., Fundamentals of Heat and Mass Transfer, chapter 11.
    """
    Q = check_positive("duty", duty, "W", allow_zero=True)
    U = check_positive("U", U, "W/(m2 K)")
    F = check_range("F", F, 0.0, 1.0, inclusive=(False, True))
    low = F < _F_WARN
    if low.any():
        warnings.warn(
            f"LMTD correction factor F = {float(np.min(F)):.3g} < {_F_WARN}: the exchanger "
            "arrangement is poor (common practice is to add shells in series)",
            RangeWarning,
            stacklevel=2,
        )
    dTlm = lmtd(dT1, dT2)
    Q, U, F, dTlm = broadcast_arrays(duty=Q, U=U, F=F, lmtd=dTlm)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        A = Q / (U * F * dTlm)
    return scalar_or_array(finite_result("exchanger area", A, duty=Q, U=U, F=F, dT1=dT1, dT2=dT2))


def fired_heater_fuel(duty, efficiency):
    r"""Fuel firing rate of a fired heater for an absorbed duty.

    .. math::

        \dot Q_{fuel} = \frac{\dot Q_{absorbed}}{\eta}

    The fuel rate is on the same heating-value basis (LHV or HHV) as the efficiency; fired
    process heaters are usually quoted on LHV (common practice).

    Parameters
    ----------
    duty : array_like
        Heat absorbed by the process fluid, >= 0 [W].
    efficiency : array_like
        Thermal efficiency of the heater, 0 < efficiency <= 1 [-].

    Returns
    -------
    float or numpy.ndarray
        Fuel heat release rate [W].
    """
    Q = check_positive("duty", duty, "W", allow_zero=True)
    eta = check_range("efficiency", efficiency, 0.0, 1.0, inclusive=(False, True))
    Q, eta = broadcast_arrays(duty=Q, efficiency=eta)
    with np.errstate(over="ignore"):
        fuel = Q / eta
    return scalar_or_array(finite_result("fired-heater fuel", fuel, duty=Q, efficiency=eta))


def cooling_water_flow(duty, dT_water, cp=WATER_CP):
    r"""Cooling-water mass flow that removes a duty with a given water temperature rise.

    .. math::

        \dot m = \frac{\dot Q}{c_p\, \Delta T_w}

    Parameters
    ----------
    duty : array_like
        Heat removed, >= 0 [W].
    dT_water : array_like
        Temperature rise of the cooling water, > 0 [K].
    cp : array_like, optional
        Specific heat capacity of the water, > 0; default 4184 [J/(kg K)].

    Returns
    -------
    float or numpy.ndarray
        Cooling-water mass flow [kg/s].
    """
    Q = check_positive("duty", duty, "W", allow_zero=True)
    dT = check_positive("dT_water", dT_water, "K")
    cp = check_positive("cp", cp, "J/(kg K)")
    Q, dT, cp = broadcast_arrays(duty=Q, dT_water=dT, cp=cp)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        m = Q / (cp * dT)
    return scalar_or_array(finite_result("cooling-water flow", m, duty=Q, dT_water=dT, cp=cp))
