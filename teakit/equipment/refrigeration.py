"""Refrigeration shaft power from the Carnot coefficient of performance.

Sizing only, no money. Used for the product-recovery chillers of ammonia loops, where the
refrigerant (usually ammonia) evaporates at 240-270 K and condenses against cooling water or
air at 305-320 K. Temperatures [K], duties and powers [W]. Vectorised; scalars in give a
``float`` out.

Caution: the power is a preliminary estimate. An ammonia refrigeration circuit holds a toxic
(and, in air, flammable) inventory that teakit does not size or assess; its design, charge and
machinery-room requirements follow the applicable refrigeration safety standard, local
regulations and a licensed engineer.

References
----------
The Carnot (reversed) cycle bound on the coefficient of performance of a refrigerator, e.g.
Y. A. Cengel and M. A. Boles, Thermodynamics: An Engineering Approach, chapter 6 (the Carnot
refrigerator), from memory.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import InputError
from teakit.validation import (
    broadcast_arrays,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = ["DEFAULT_FRACTION_OF_CARNOT", "carnot_cop", "refrigeration_power"]

DEFAULT_FRACTION_OF_CARNOT = 0.55
"""Ratio of the real to the Carnot COP for an industrial single-fluid (ammonia) vapour-compression
plant, between evaporating and condensing temperatures: 0.5-0.6 is common practice; 0.55 is its
middle [-]."""




def _temperatures(T_evap, T_cond):
    Te = check_positive("T_evap", T_evap, "K")
    Tc = check_positive("T_cond", T_cond, "K")
    Te, Tc = broadcast_arrays(T_evap=Te, T_cond=Tc)
    bad = Tc <= Te
    if bad.any():
        raise InputError(
            f"T_cond must be > T_evap (heat is pumped from the evaporator up to the condenser), "
            f"got T_cond = {float(Tc[bad].ravel()[0])!r} K, T_evap = {float(Te[bad].ravel()[0])!r} K"
        )
    return Te, Tc


def carnot_cop(T_evap, T_cond):
    r"""Coefficient of performance of a Carnot refrigerator.

    .. math::

        \mathrm{COP}_{Carnot} = \frac{T_{evap}}{T_{cond} - T_{evap}}

    Parameters
    ----------
    T_evap : array_like
        Temperature at which heat is taken in (refrigerant evaporating temperature), > 0 [K].
    T_cond : array_like
        Temperature at which heat is rejected (refrigerant condensing temperature), > T_evap [K].

    Returns
    -------
    float or numpy.ndarray
        Carnot COP, heat removed per unit work [-].

    Raises
    ------
    InputError
        ``T_cond <= T_evap`` or a non-positive temperature.
    """
    Te, Tc = _temperatures(T_evap, T_cond)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        cop = Te / (Tc - Te)
    return scalar_or_array(finite_result("carnot_cop", cop, T_evap=Te, T_cond=Tc))


def refrigeration_power(duty, T_evap, T_cond, fraction_of_carnot=DEFAULT_FRACTION_OF_CARNOT):
    r"""Compressor shaft power of a vapour-compression refrigeration plant.

    .. math::

        W = \frac{\dot Q_{evap}}{\mathrm{COP}}, \qquad
        \mathrm{COP} = \phi\, \frac{T_{evap}}{T_{cond} - T_{evap}}

    :math:`\phi` is the fraction of the Carnot COP achieved; the default 0.55 is common practice
    for industrial ammonia vapour-compression plant (0.5-0.6). The temperatures are the
    refrigerant's evaporating and condensing temperatures, so the caller includes the approach
    temperature differences of evaporator and condenser.

    Parameters
    ----------
    duty : array_like
        Refrigeration duty, heat removed at the evaporator, >= 0 [W].
    T_evap : array_like
        Refrigerant evaporating temperature, > 0 [K].
    T_cond : array_like
        Refrigerant condensing temperature, > T_evap [K].
    fraction_of_carnot : array_like, optional
        Real COP over Carnot COP, 0 < phi <= 1 [-].

    Returns
    -------
    float or numpy.ndarray
        Shaft power [W].

    Raises
    ------
    InputError
        ``T_cond <= T_evap`` or another bad argument; the message names it.
    """
    Q = check_positive("duty", duty, "W", allow_zero=True)
    phi = check_range("fraction_of_carnot", fraction_of_carnot, 0.0, 1.0, inclusive=(False, True))
    Te, Tc = _temperatures(T_evap, T_cond)
    Q, phi, Te, Tc = broadcast_arrays(duty=Q, fraction_of_carnot=phi, T_evap=Te, T_cond=Tc)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        W = Q * (Tc - Te) / (phi * Te)
    return scalar_or_array(finite_result("refrigeration power", W, duty=Q, T_evap=Te, T_cond=Tc,
                                         fraction_of_carnot=phi))
