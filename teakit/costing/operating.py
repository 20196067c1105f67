"""Operating costs: cost of manufacture, operating labour, utilities, materials, credits, emissions.

Cost of manufacture without depreciation, Turton, Bailie, Whiting, Shaeiwitz & Bhattacharyya,
*Analysis, Synthesis, and Design of Chemical Processes*, 4th ed. (2012), Ch. 8 (read):

.. math:: \\mathrm{COM}_d = 0.180\\,\\mathrm{FCI} + 2.73\\,C_{OL} + 1.23\\,(C_{UT} + C_{WT} + C_{RM})

It condenses the itemised factors of Turton's Table 8.2 (direct, fixed and general manufacturing
expenses; the item factors in :data:`TABLE_8_2` are from memory, and they reproduce the three
rounded coefficients above, which is how they were checked). Operating labour uses Turton's
correlation for operators per shift (Ch. 8)

.. math:: N_{OL} = (6.29 + 31.7 P^2 + 0.23 N_{np})^{0.5}

with P the number of processing steps that handle particulate solids and N_np the number of the
other processing steps (compressors, towers, reactors, heaters, exchangers; not pumps or
vessels), and about 4.5 operators hired per operator position (from memory; 1095 shifts a year
over about 245 shifts worked per operator).

Utility, material and emission costs are annual: a rate times a price times the operating hours,
default :data:`DEFAULT_OPERATING_HOURS` = 8000 h/yr (common practice; about 91 % availability).
All money is in the cost year of the prices passed, USD/yr. Breakdowns are dicts of floats or
arrays; :func:`breakdown_frame` turns them into a :class:`pandas.DataFrame` whose column names
carry their units, e.g. ``"electricity [USD/yr]"``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from teakit.errors import InputError
from teakit.validation import (
    broadcast_arrays,
    check_finite,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "DEFAULT_OPERATING_HOURS",
    "DEPRECIATION_FRACTION",
    "HOURS_PER_YEAR",
    "OPERATORS_PER_POSITION",
    "TABLE_8_2",
    "breakdown_frame",
    "catalyst_cost",
    "com_breakdown",
    "cooling_water_cost",
    "cost_of_manufacture",
    "electricity_cost",
    "emissions_cost",
    "heat_cost",
    "operating_breakdown",
    "operating_hours",
    "operating_labour_cost",
    "operators_per_shift",
    "product_revenue",
    "raw_material_cost",
    "refrigeration_cost",
]

#: Hours in a (non-leap) year [h/yr].
HOURS_PER_YEAR = 8760.0
#: Default operating hours, common practice (about 91 % on stream) [h/yr].
DEFAULT_OPERATING_HOURS = 8000.0
#: Operators hired per operator position, Turton 4th ed. Ch. 8 (from memory) [-].
OPERATORS_PER_POSITION = 4.5

#: Turton 4th ed. (2012) Table 8.2 typical factors (from memory): item -> (multiplier of FCI,
#: multiplier of C_OL, multiplier of COM). C_RM, C_WT, C_UT enter at 1.
TABLE_8_2 = {
    "supervisory_clerical_labour": (0.0, 0.18, 0.0),
    "maintenance_repairs": (0.06, 0.0, 0.0),
    "operating_supplies": (0.009, 0.0, 0.0),
    "laboratory_charges": (0.0, 0.15, 0.0),
    "patents_royalties": (0.0, 0.0, 0.03),
    "local_taxes_insurance": (0.032, 0.0, 0.0),
    "plant_overhead": (0.036, 0.708, 0.0),
    "administration": (0.009, 0.177, 0.0),
    "distribution_selling": (0.0, 0.0, 0.11),
    "research_development": (0.0, 0.0, 0.05),
}
#: Depreciation in Turton's Table 8.2 (from memory), excluded from COM_d [fraction of FCI / yr].
DEPRECIATION_FRACTION = 0.10

_GROUPS = {
    "direct": (
        "raw_materials",
        "waste_treatment",
        "utilities",
        "operating_labour",
        "supervisory_clerical_labour",
        "maintenance_repairs",
        "operating_supplies",
        "laboratory_charges",
        "patents_royalties",
    ),
    "fixed": ("local_taxes_insurance", "plant_overhead"),
    "general": ("administration", "distribution_selling", "research_development"),
}

_J_PER_GJ = 1e9
_S_PER_H = 3600.0
_W_PER_KW = 1e3



def _hours(hours) -> np.ndarray:
    return check_range("hours", hours, 0.0, HOURS_PER_YEAR, unit="h/yr", inclusive=(False, True))


def _money(name: str, value) -> np.ndarray:
    return check_positive(name, value, unit="USD/yr", allow_zero=True)


def operating_hours(availability):
    """Operating hours from an on-stream availability.

    .. math:: t_\\mathrm{op} = a \\times 8760\\ \\mathrm{h/yr}

    Parameters
    ----------
    availability : float or array_like
        Fraction of the year on stream, in (0, 1] [-].

    Returns
    -------
    float or numpy.ndarray
        Operating hours [h/yr].
    """
    a = check_range("availability", availability, 0.0, 1.0, inclusive=(False, True))
    return scalar_or_array(a * HOURS_PER_YEAR)


def electricity_cost(power_W, price_USD_per_kWh, hours=DEFAULT_OPERATING_HOURS):
    """Annual cost of electric power.

    .. math:: C = \\frac{W}{1000} \\, p_{kWh} \\, t_\\mathrm{op}

    Also the credit for exported power (pass the exported power).

    Parameters
    ----------
    power_W : float or array_like
        Electric power drawn, >= 0 [W].
    price_USD_per_kWh : float or array_like
        Electricity price, >= 0 [USD/kWh].
    hours : float or array_like, optional
        Operating hours, in (0, 8760]; default 8000 (common practice) [h/yr].

    Returns
    -------
    float or numpy.ndarray
        Annual cost [USD/yr, cost year of the price].
    """
    w = check_positive("power_W", power_W, unit="W", allow_zero=True)
    p = check_positive("price_USD_per_kWh", price_USD_per_kWh, unit="USD/kWh", allow_zero=True)
    h = _hours(hours)
    w, p, h = broadcast_arrays(power_W=w, price_USD_per_kWh=p, hours=h)
    with np.errstate(over="ignore", invalid="ignore"):
        out = w / _W_PER_KW * p * h
    return scalar_or_array(finite_result("electricity cost", out, power_W=w,
                                         price_USD_per_kWh=p, hours=h))


def heat_cost(duty_W, price_USD_per_GJ, efficiency=1.0, hours=DEFAULT_OPERATING_HOURS):
    """Annual cost of heat bought as fuel or steam.

    .. math:: C = \\frac{\\dot Q}{\\eta} \\, 3600\\, t_\\mathrm{op} \\, 10^{-9} \\, p_{GJ}

    Also the credit for exported steam (pass the exported duty, efficiency 1).

    Parameters
    ----------
    duty_W : float or array_like
        Heat delivered to the process, >= 0 [W].
    price_USD_per_GJ : float or array_like
        Price of the fuel (per GJ of its heating value) or steam (per GJ of heat), >= 0
        [USD/GJ].
    efficiency : float or array_like, optional
        Fraction of the bought energy that reaches the process (fired-heater or boiler
        efficiency), in (0, 1]; default 1 [-].
    hours : float or array_like, optional
        Operating hours, in (0, 8760]; default 8000 [h/yr].

    Returns
    -------
    float or numpy.ndarray
        Annual cost [USD/yr, cost year of the price].
    """
    q = check_positive("duty_W", duty_W, unit="W", allow_zero=True)
    p = check_positive("price_USD_per_GJ", price_USD_per_GJ, unit="USD/GJ", allow_zero=True)
    eta = check_range("efficiency", efficiency, 0.0, 1.0, inclusive=(False, True))
    h = _hours(hours)
    q, p, eta, h = broadcast_arrays(duty_W=q, price_USD_per_GJ=p, efficiency=eta, hours=h)
    with np.errstate(over="ignore", invalid="ignore"):
        out = q / eta * _S_PER_H * h / _J_PER_GJ * p
    return scalar_or_array(finite_result("heat cost", out, duty_W=q, price_USD_per_GJ=p,
                                         efficiency=eta, hours=h))


def cooling_water_cost(duty_W, price_USD_per_GJ, hours=DEFAULT_OPERATING_HOURS):
    """Annual cost of cooling water, priced per GJ of heat removed.

    .. math:: C = \\dot Q \\, 3600\\, t_\\mathrm{op} \\, 10^{-9} \\, p_{GJ}

    Parameters
    ----------
    duty_W : float or array_like
        Heat removed by the cooling water, >= 0 [W].
    price_USD_per_GJ : float or array_like
        Cooling-water price per GJ of heat removed, >= 0 [USD/GJ].
    hours : float or array_like, optional
        Operating hours, in (0, 8760]; default 8000 [h/yr].

    Returns
    -------
    float or numpy.ndarray
        Annual cost [USD/yr, cost year of the price].
    """
    return heat_cost(duty_W, price_USD_per_GJ, 1.0, hours)


def refrigeration_cost(duty_W, cop, price_USD_per_kWh, hours=DEFAULT_OPERATING_HOURS):
    """Annual cost of electrically driven refrigeration.

    .. math:: C = \\frac{\\dot Q / \\mathrm{COP}}{1000} \\, p_{kWh} \\, t_\\mathrm{op}

    Parameters
    ----------
    duty_W : float or array_like
        Refrigeration duty (heat removed at low temperature), >= 0 [W].
    cop : float or array_like
        Coefficient of performance of the refrigeration cycle, in (0, 20] [-].
    price_USD_per_kWh : float or array_like
        Electricity price, >= 0 [USD/kWh].
    hours : float or array_like, optional
        Operating hours, in (0, 8760]; default 8000 [h/yr].

    Returns
    -------
    float or numpy.ndarray
        Annual cost [USD/yr, cost year of the price].
    """
    q = check_positive("duty_W", duty_W, unit="W", allow_zero=True)
    c = check_range("cop", cop, 0.0, 20.0, inclusive=(False, True))
    q, c = broadcast_arrays(duty_W=q, cop=c)
    with np.errstate(over="ignore"):
        w = finite_result("refrigeration power", q / c, duty_W=q, cop=c)
    return electricity_cost(w, price_USD_per_kWh, hours)


def catalyst_cost(volume_m3, bulk_density_kg_m3, price_USD_per_kg, life_yr):
    """Annualised cost of catalyst replacement.

    .. math:: C = \\frac{V \\rho_b \\, p_{kg}}{t_\\mathrm{life}}

    Parameters
    ----------
    volume_m3 : float or array_like
        Catalyst inventory (bed volume), >= 0 [m^3].
    bulk_density_kg_m3 : float or array_like
        Bulk density of the catalyst bed, > 0 [kg/m^3].
    price_USD_per_kg : float or array_like
        Catalyst price, >= 0 [USD/kg].
    life_yr : float or array_like
        Catalyst life between replacements, > 0 [yr].

    Returns
    -------
    float or numpy.ndarray
        Annual cost [USD/yr, cost year of the price].
    """
    v = check_positive("volume_m3", volume_m3, unit="m^3", allow_zero=True)
    rho = check_positive("bulk_density_kg_m3", bulk_density_kg_m3, unit="kg/m^3")
    p = check_positive("price_USD_per_kg", price_USD_per_kg, unit="USD/kg", allow_zero=True)
    life = check_positive("life_yr", life_yr, unit="yr")
    v, rho, p, life = broadcast_arrays(volume_m3=v, bulk_density_kg_m3=rho, price_USD_per_kg=p,
                                       life_yr=life)
    with np.errstate(over="ignore", invalid="ignore"):
        out = v * rho * p / life
    return scalar_or_array(finite_result("catalyst cost", out, volume_m3=v, bulk_density_kg_m3=rho,
                                         price_USD_per_kg=p, life_yr=life))


def raw_material_cost(flow_kg_s, price_USD_per_kg, hours=DEFAULT_OPERATING_HOURS):
    """Annual cost of a raw material bought at a mass flow.

    .. math:: C = \\dot m \\, 3600\\, t_\\mathrm{op} \\, p_{kg}

    Parameters
    ----------
    flow_kg_s : float or array_like
        Mass flow while operating, >= 0 [kg/s].
    price_USD_per_kg : float or array_like
        Price, >= 0 [USD/kg].
    hours : float or array_like, optional
        Operating hours, in (0, 8760]; default 8000 [h/yr].

    Returns
    -------
    float or numpy.ndarray
        Annual cost [USD/yr, cost year of the price].
    """
    m = check_positive("flow_kg_s", flow_kg_s, unit="kg/s", allow_zero=True)
    p = check_positive("price_USD_per_kg", price_USD_per_kg, unit="USD/kg", allow_zero=True)
    h = _hours(hours)
    m, p, h = broadcast_arrays(flow_kg_s=m, price_USD_per_kg=p, hours=h)
    with np.errstate(over="ignore", invalid="ignore"):
        out = m * _S_PER_H * h * p
    return scalar_or_array(finite_result("annual amount", out, flow_kg_s=m, price_USD_per_kg=p,
                                         hours=h))


def product_revenue(flow_kg_s, price_USD_per_kg, hours=DEFAULT_OPERATING_HOURS):
    """Annual revenue of a product (or by-product credit) sold at a mass flow.

    .. math:: R = \\dot m \\, 3600\\, t_\\mathrm{op} \\, p_{kg}

    Parameters
    ----------
    flow_kg_s : float or array_like
        Mass flow sold while operating, >= 0 [kg/s].
    price_USD_per_kg : float or array_like
        Selling price, >= 0 [USD/kg].
    hours : float or array_like, optional
        Operating hours, in (0, 8760]; default 8000 [h/yr].

    Returns
    -------
    float or numpy.ndarray
        Annual revenue [USD/yr, cost year of the price].
    """
    return raw_material_cost(flow_kg_s, price_USD_per_kg, hours)


def emissions_cost(mass_kg_per_yr, price_USD_per_t):
    """Annual emissions charge (e.g. a CO2 or SO2 price).

    .. math:: C = \\frac{m_\\mathrm{yr}}{1000} \\, p_t

    Parameters
    ----------
    mass_kg_per_yr : float or array_like
        Mass emitted in a year, >= 0 (a flow in kg/s times 3600 times the operating hours)
        [kg/yr].
    price_USD_per_t : float or array_like
        Charge per metric tonne, >= 0 [USD/t].

    Returns
    -------
    float or numpy.ndarray
        Annual charge [USD/yr, cost year of the price].
    """
    m = check_positive("mass_kg_per_yr", mass_kg_per_yr, unit="kg/yr", allow_zero=True)
    p = check_positive("price_USD_per_t", price_USD_per_t, unit="USD/t", allow_zero=True)
    m, p = broadcast_arrays(mass_kg_per_yr=m, price_USD_per_t=p)
    with np.errstate(over="ignore", invalid="ignore"):
        out = m / 1000.0 * p
    return scalar_or_array(finite_result("emissions cost", out, mass_kg_per_yr=m,
                                         price_USD_per_t=p))


def operators_per_shift(n_nonparticulate, n_particulate=0):
    """Operators needed per shift, Turton's correlation (Turton 4th ed. (2012), Ch. 8).

    .. math:: N_{OL} = (6.29 + 31.7 P^2 + 0.23 N_{np})^{0.5}

    Parameters
    ----------
    n_nonparticulate : float or array_like
        Number of processing steps that do not handle particulate solids (compressors, towers,
        reactors, heaters, exchangers; pumps and vessels are not counted), >= 0 [-].
    n_particulate : float or array_like, optional
        Number of processing steps handling particulate solids, >= 0; default 0 [-].

    Returns
    -------
    float or numpy.ndarray
        Operators per shift [-].
    """
    nnp = check_positive("n_nonparticulate", n_nonparticulate, allow_zero=True)
    npart = check_positive("n_particulate", n_particulate, allow_zero=True)
    nnp, npart = broadcast_arrays(n_nonparticulate=nnp, n_particulate=npart)
    with np.errstate(over="ignore", invalid="ignore"):
        out = np.sqrt(6.29 + 31.7 * npart**2 + 0.23 * nnp)
    return scalar_or_array(finite_result("operators per shift", out, n_nonparticulate=nnp,
                                         n_particulate=npart))


def operating_labour_cost(
    n_nonparticulate,
    salary_USD_per_yr,
    n_particulate=0,
    operators_per_position=OPERATORS_PER_POSITION,
    round_up=False,
):
    """Annual cost of operating labour.

    .. math:: C_{OL} = N_{OL} \\, n_\\mathrm{pos} \\, s

    with N_OL from :func:`operators_per_shift` and n_pos = 4.5 operators hired per position
    (Turton 4th ed. Ch. 8, from memory). With ``round_up`` the number of operators hired,
    N_OL n_pos, is rounded up to a whole number as Turton does in his examples.

    Parameters
    ----------
    n_nonparticulate, n_particulate : float or array_like
        Processing steps, as in :func:`operators_per_shift` [-].
    salary_USD_per_yr : float or array_like
        Yearly cost of one operator (salary and benefits), > 0 [USD/yr].
    operators_per_position : float, optional
        Operators hired per operator position, in [1, 10]; default 4.5 [-].
    round_up : bool, optional
        Round the operators hired up to a whole number [-].

    Returns
    -------
    float or numpy.ndarray
        C_OL [USD/yr, cost year of the salary].
    """
    s = check_positive("salary_USD_per_yr", salary_USD_per_yr, unit="USD/yr")
    k = check_range("operators_per_position", operators_per_position, 1.0, 10.0)
    hired, s, k = broadcast_arrays(
        operators=operators_per_shift(n_nonparticulate, n_particulate), salary_USD_per_yr=s,
        operators_per_position=k,
    )
    hired = hired * k
    if round_up:
        hired = np.ceil(hired - 1e-9)
    with np.errstate(over="ignore", invalid="ignore"):
        out = hired * s
    return scalar_or_array(finite_result("operating labour cost", out,
                                         n_nonparticulate=n_nonparticulate,
                                         salary_USD_per_yr=s, n_particulate=n_particulate))


def cost_of_manufacture(FCI, C_OL, C_UT, C_WT, C_RM, depreciation=False):
    """Turton's cost of manufacture (Turton 4th ed. (2012), Ch. 8).

    .. math:: \\mathrm{COM}_d = 0.180\\,\\mathrm{FCI} + 2.73\\,C_{OL}
       + 1.23\\,(C_{UT} + C_{WT} + C_{RM})

    (read). With ``depreciation`` the FCI coefficient is 0.280 (COM including 10 %/yr
    depreciation, Turton Ch. 8, from memory).

    Parameters
    ----------
    FCI : float or array_like
        Fixed capital investment [USD].
    C_OL : float or array_like
        Operating labour [USD/yr].
    C_UT : float or array_like
        Utilities [USD/yr].
    C_WT : float or array_like
        Waste treatment (teakit also books emissions charges here) [USD/yr].
    C_RM : float or array_like
        Raw materials [USD/yr].
    depreciation : bool, optional
        Include depreciation (COM instead of COM_d) [-].

    Returns
    -------
    float or numpy.ndarray
        COM_d (or COM) [USD/yr, all inputs in money of the same cost year].
    """
    fci = check_positive("FCI", FCI, unit="USD", allow_zero=True)
    ol = _money("C_OL", C_OL)
    ut, wt, rm = _money("C_UT", C_UT), _money("C_WT", C_WT), _money("C_RM", C_RM)
    fci, ol, ut, wt, rm = broadcast_arrays(FCI=fci, C_OL=ol, C_UT=ut, C_WT=wt, C_RM=rm)
    a = 0.180 + DEPRECIATION_FRACTION if depreciation else 0.180
    with np.errstate(over="ignore", invalid="ignore"):
        out = a * fci + 2.73 * ol + 1.23 * (ut + wt + rm)
    return scalar_or_array(finite_result("cost of manufacture", out, FCI=fci, C_OL=ol, C_UT=ut,
                                         C_WT=wt, C_RM=rm))


def com_breakdown(FCI, C_OL, C_UT, C_WT, C_RM) -> dict:
    """Itemised cost of manufacture without depreciation, Turton 4th ed. Table 8.2.

    Each item is a multiple of FCI, C_OL and COM_d (factors in :data:`TABLE_8_2`, from memory);
    COM_d is solved exactly from the items:

    .. math:: \\mathrm{COM}_d = \\frac{C_{RM} + C_{WT} + C_{UT} + 2.215\\,C_{OL}
       + 0.146\\,\\mathrm{FCI}}{1 - 0.19}

    which :func:`cost_of_manufacture` rounds to 1.23, 2.73 and 0.180 (agreement within 0.4 %).

    Parameters
    ----------
    FCI, C_OL, C_UT, C_WT, C_RM : float or array_like
        As in :func:`cost_of_manufacture` [USD] and [USD/yr].

    Returns
    -------
    dict
        The items of Table 8.2 (``raw_materials``, ``waste_treatment``, ``utilities``,
        ``operating_labour``, ``supervisory_clerical_labour``, ... ``research_development``),
        the group totals ``direct``, ``fixed``, ``general`` and ``COM_d`` [USD/yr].
    """
    fci = check_positive("FCI", FCI, unit="USD", allow_zero=True)
    ol = _money("C_OL", C_OL)
    ut, wt, rm = _money("C_UT", C_UT), _money("C_WT", C_WT), _money("C_RM", C_RM)
    fci, ol, ut, wt, rm = broadcast_arrays(FCI=fci, C_OL=ol, C_UT=ut, C_WT=wt, C_RM=rm)
    a_fci = sum(v[0] for v in TABLE_8_2.values())
    a_ol = 1.0 + sum(v[1] for v in TABLE_8_2.values())
    a_com = sum(v[2] for v in TABLE_8_2.values())
    with np.errstate(over="ignore", invalid="ignore"):
        com = (rm + wt + ut + a_ol * ol + a_fci * fci) / (1.0 - a_com)
    finite_result("cost of manufacture", com, FCI=fci, C_OL=ol, C_UT=ut, C_WT=wt, C_RM=rm)
    items = {
        "raw_materials": rm,
        "waste_treatment": wt,
        "utilities": ut,
        "operating_labour": ol,
    }
    for name, (f_fci, f_ol, f_com) in TABLE_8_2.items():
        items[name] = f_fci * fci + f_ol * ol + f_com * com
    out = {k: scalar_or_array(v) for k, v in items.items()}
    for g, names in _GROUPS.items():
        out[g] = scalar_or_array(sum(items[n] for n in names))
    out["COM_d"] = scalar_or_array(com)
    return out


def _group(name: str, items) -> dict:
    if items is None:
        return {}
    if not isinstance(items, dict):
        raise InputError(f"{name} must be a dict of item name -> annual amount (USD/yr)")
    return {k: _money(f"{name}[{k!r}]", v) for k, v in items.items()}


def operating_breakdown(
    FCI, C_OL, utilities=None, raw_materials=None, waste_treatment=None, revenues=None, credits=None
) -> dict:
    """Annual operating costs and revenues, itemised, with Turton's COM_d.

    .. math:: C_{UT} = \\sum \\text{utilities}, \\quad C_{RM} = \\sum \\text{raw materials},
       \\quad C_{WT} = \\sum \\text{waste treatment and emissions}

    COM_d by :func:`cost_of_manufacture`; ``margin`` = revenues + credits - COM_d.

    Parameters
    ----------
    FCI : float or array_like
        Fixed capital investment [USD].
    C_OL : float or array_like
        Operating labour, e.g. from :func:`operating_labour_cost` [USD/yr].
    utilities, raw_materials, waste_treatment, revenues, credits : dict, optional
        Item name -> annual amount (e.g. ``{"electricity": electricity_cost(...)}``); credits are
        by-product sales such as exported steam or power [USD/yr].

    Returns
    -------
    dict
        Every item, then ``C_UT``, ``C_RM``, ``C_WT``, ``C_OL``, ``COM_d``, ``revenue``,
        ``credits`` and ``margin`` [USD/yr].

    Raises
    ------
    InputError
        A negative or non-finite amount, or an item name used twice.
    """
    groups = {
        "utilities": _group("utilities", utilities),
        "raw_materials": _group("raw_materials", raw_materials),
        "waste_treatment": _group("waste_treatment", waste_treatment),
        "revenues": _group("revenues", revenues),
        "credits": _group("credits", credits),
    }
    out: dict = {}
    for g in groups.values():
        for k, v in g.items():
            if k in out:
                raise InputError(f"item name {k!r} is used twice in the operating breakdown")
            out[k] = scalar_or_array(v)

    def total(g):
        items = groups[g]
        try:
            np.broadcast_shapes(*(np.shape(v) for v in items.values()))
        except ValueError:
            shapes = ", ".join(f"{k!r} {np.shape(v)}" for k, v in items.items())
            raise InputError(f"the items of {g} do not broadcast against each other: {shapes}") from None
        with np.errstate(over="ignore", invalid="ignore"):
            t = sum(items.values(), np.asarray(0.0))
        return finite_result(f"total of {g}", t, **{f"{g}[{k!r}]": v for k, v in items.items()})

    c_ut, c_rm, c_wt = total("utilities"), total("raw_materials"), total("waste_treatment")
    c_ol = _money("C_OL", C_OL)
    com = np.asarray(cost_of_manufacture(FCI, c_ol, c_ut, c_wt, c_rm))
    rev, cred = total("revenues"), total("credits")
    summary = {
        "C_UT": c_ut,
        "C_RM": c_rm,
        "C_WT": c_wt,
        "C_OL": c_ol,
        "COM_d": com,
        "revenue": rev,
        "credits": cred,
        "margin": finite_result("margin", rev + cred - com, revenues=rev, credits=cred, COM_d=com),
    }
    for k, v in summary.items():
        if k in out:
            raise InputError(f"item name {k!r} clashes with a total of the operating breakdown")
        out[k] = scalar_or_array(v)
    return out


def breakdown_frame(breakdown: dict, units=None, default_unit: str = "USD/yr") -> pd.DataFrame:
    """A breakdown dict as a DataFrame, one column per item, units in the column names.

    Parameters
    ----------
    breakdown : dict
        Item name -> float or array (all broadcast to one shape, flattened to rows) [-].
    units : dict, optional
        Item name -> unit for items not in ``default_unit`` [-].
    default_unit : str, optional
        Unit of the other items, default ``"USD/yr"`` [-].

    Returns
    -------
    pandas.DataFrame
        Columns such as ``"electricity [USD/yr]"``; one row per batch member [-].
    """
    if not isinstance(breakdown, dict) or not breakdown:
        raise InputError("breakdown must be a non-empty dict of item name -> value")
    units = units or {}
    try:
        arrays = np.broadcast_arrays(*(check_finite(f"breakdown[{k!r}]", v)
                                       for k, v in breakdown.items()))
    except ValueError as exc:
        if isinstance(exc, InputError):
            raise
        shapes = ", ".join(f"{k!r} {np.shape(v)}" for k, v in breakdown.items())
        raise InputError(f"the items of breakdown do not broadcast against each other: {shapes}") from None
    cols = {
        f"{k} [{units.get(k, default_unit)}]": np.atleast_1d(a).ravel()
        for k, a in zip(breakdown, arrays, strict=True)
    }
    return pd.DataFrame(cols)
