"""Catalyst inventory and bed geometry: mass, cylinder dimensions and gas hourly space velocity.

Sizing only, no money. Volumes [m3], lengths [m], densities [kg/m3], molar flows [mol/s],
volumetric flows at normal conditions [m3/s], space velocity [1/h] (the trade's unit). Vectorised;
scalars in give a ``float`` out.

Normal conditions are 273.15 K and 101325 Pa (as in DIN 1343); some industries quote "standard"
volumes at 15 degC or 60 degF instead, larger by about 5.5 %: convert before comparing space
velocities.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from teakit.errors import InputError
from teakit.validation import broadcast_arrays, check_positive, finite_result, scalar_or_array

__all__ = [
    "NORMAL_MOLAR_VOLUME",
    "P_NORMAL",
    "T_NORMAL",
    "BedDimensions",
    "catalyst_bed_dimensions",
    "catalyst_mass",
    "catalyst_volume_from_space_velocity",
    "gas_hourly_space_velocity",
    "normal_volumetric_flow",
]

T_NORMAL = 273.15
"""Normal temperature [K]."""
P_NORMAL = 101325.0
"""Normal pressure [Pa]."""
_R = 8.314462618
# Molar gas constant, N_A k with both exact since the 2019 SI redefinition (CODATA 2018), 10 digits.
NORMAL_MOLAR_VOLUME = _R * T_NORMAL / P_NORMAL
"""Ideal-gas molar volume at 273.15 K, 101325 Pa, R T_N / P_N = 0.022413970 [m3/mol]."""




class BedDimensions(NamedTuple):
    """Diameter and height of a cylindrical catalyst bed.

    Attributes
    ----------
    diameter : float or numpy.ndarray
        Bed (inside vessel) diameter [m].
    height : float or numpy.ndarray
        Bed height [m].
    """

    diameter: float | np.ndarray
    height: float | np.ndarray


def catalyst_mass(volume, bulk_density):
    r"""Mass of catalyst that fills a bed volume.

    .. math::

        m = V \rho_b

    Parameters
    ----------
    volume : array_like
        Bed volume, >= 0 [m3].
    bulk_density : array_like
        Bulk (loaded, including void) density of the catalyst, > 0 [kg/m3].

    Returns
    -------
    float or numpy.ndarray
        Catalyst mass [kg].
    """
    V = check_positive("volume", volume, "m3", allow_zero=True)
    rho = check_positive("bulk_density", bulk_density, "kg/m3")
    V, rho = broadcast_arrays(volume=V, bulk_density=rho)
    with np.errstate(over="ignore", invalid="ignore"):
        m = V * rho
    return scalar_or_array(finite_result("catalyst mass", m, volume=V, bulk_density=rho))


def catalyst_bed_dimensions(volume, diameter=None, L_over_D=None) -> BedDimensions:
    r"""Diameter and height of a cylindrical bed of given volume.

    Give exactly one of ``diameter`` and ``L_over_D``:

    .. math::

        H = \frac{4 V}{\pi D^2} \quad\text{or}\quad
        D = \left(\frac{4 V}{\pi\, (L/D)}\right)^{1/3},\ H = (L/D)\, D

    Parameters
    ----------
    volume : array_like
        Bed volume, > 0 [m3].
    diameter : array_like, optional
        Bed diameter, > 0 [m].
    L_over_D : array_like, optional
        Ratio of bed height to diameter, > 0 [-].

    Returns
    -------
    BedDimensions
        ``(diameter, height)`` [m].

    Raises
    ------
    InputError
        Neither or both of ``diameter`` and ``L_over_D`` given, or a bad value.
    """
    if (diameter is None) == (L_over_D is None):
        raise InputError("give exactly one of diameter [m] and L_over_D [-]")
    V = check_positive("volume", volume, "m3")
    if diameter is not None:
        D = check_positive("diameter", diameter, "m")
        V, D = broadcast_arrays(volume=V, diameter=D)
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            H = 4.0 * V / (np.pi * D**2)
        inputs = dict(volume=V, diameter=D)
    else:
        r = check_positive("L_over_D", L_over_D)
        V, r = broadcast_arrays(volume=V, L_over_D=r)
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            D = np.cbrt(4.0 * V / (np.pi * r))
            H = r * D
        inputs = dict(volume=V, L_over_D=r)
    for a in (D, H):
        finite_result("bed dimensions", a, **inputs)
    return BedDimensions(scalar_or_array(D), scalar_or_array(H))


def normal_volumetric_flow(molar_flow):
    r"""Ideal-gas volumetric flow at normal conditions (273.15 K, 101325 Pa).

    .. math::

        \dot V_N = \dot n \frac{R T_N}{P_N}

    Parameters
    ----------
    molar_flow : array_like
        Molar flow, >= 0 [mol/s].

    Returns
    -------
    float or numpy.ndarray
        Volumetric flow at normal conditions [m3/s].
    """
    n = check_positive("molar_flow", molar_flow, "mol/s", allow_zero=True)
    return scalar_or_array(finite_result("normal volumetric flow", n * NORMAL_MOLAR_VOLUME,
                                         molar_flow=n))


def gas_hourly_space_velocity(normal_flow, volume):
    r"""Gas hourly space velocity of a catalyst bed.

    .. math::

        \mathrm{GHSV} = \frac{3600\, \dot V_N}{V_{cat}}

    with :math:`\dot V_N` the feed's volumetric flow at normal conditions (273.15 K, 101325 Pa; see
    :func:`normal_volumetric_flow`) and :math:`V_{cat}` the bed volume.

    Parameters
    ----------
    normal_flow : array_like
        Volumetric gas flow at normal conditions, >= 0 [m3/s].
    volume : array_like
        Catalyst bed volume, > 0 [m3].

    Returns
    -------
    float or numpy.ndarray
        Gas hourly space velocity [1/h].
    """
    Q = check_positive("normal_flow", normal_flow, "m3/s", allow_zero=True)
    V = check_positive("volume", volume, "m3")
    Q, V = broadcast_arrays(normal_flow=Q, volume=V)
    with np.errstate(over="ignore"):
        ghsv = 3600.0 * Q / V
    return scalar_or_array(finite_result("gas hourly space velocity", ghsv, normal_flow=Q,
                                         volume=V))


def catalyst_volume_from_space_velocity(normal_flow, ghsv):
    r"""Catalyst bed volume that gives a chosen gas hourly space velocity.

    .. math::

        V_{cat} = \frac{3600\, \dot V_N}{\mathrm{GHSV}}

    Parameters
    ----------
    normal_flow : array_like
        Volumetric gas flow at normal conditions, >= 0 [m3/s].
    ghsv : array_like
        Gas hourly space velocity, > 0 [1/h].

    Returns
    -------
    float or numpy.ndarray
        Catalyst bed volume [m3].
    """
    Q = check_positive("normal_flow", normal_flow, "m3/s", allow_zero=True)
    s = check_positive("ghsv", ghsv, "1/h")
    Q, s = broadcast_arrays(normal_flow=Q, ghsv=s)
    with np.errstate(over="ignore"):
        V = 3600.0 * Q / s
    return scalar_or_array(finite_result("catalyst volume", V, normal_flow=Q, ghsv=s))
