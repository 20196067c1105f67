"""Capital cost build-up: total module, grassroots, fixed and working capital; Lang cross-check.

Following Turton, Bailie, Whiting, Shaeiwitz & Bhattacharyya, *Analysis, Synthesis, and Design of
Chemical Processes*, 4th ed. (2012), Ch. 7 (read):

.. math::

   C_{TM} = \\sum_i C_{BM,i} \\,(1 + a_\\mathrm{cont} + a_\\mathrm{fee}) = 1.18 \\sum_i C_{BM,i}

   C_{GR} = C_{TM} + a_\\mathrm{aux} \\sum_i C_{BM,i}^0 = C_{TM} + 0.50 \\sum_i C_{BM,i}^0

with contingency a_cont = 0.15 and fee a_fee = 0.03 of the bare-module cost, and auxiliary
facilities a_aux = 0.50 of the bare-module cost at base conditions (carbon steel, ambient
pressure). The fixed capital investment (FCI) is C_GR for a new (grassroots) plant and C_TM for an
expansion of an existing site. Working capital is a fraction of FCI, 15 % by default (common
practice puts it at 15-20 % of FCI).

The Lang-factor estimate (Lang, Chem. Eng. 1947-1948; quoted in Turton 4th ed. Ch. 7, from memory)

.. math:: C_\\mathrm{FCI} \\approx F_\\mathrm{Lang} \\sum_i C_{p,i}^\\mathrm{delivered},
   \\qquad F_\\mathrm{Lang} = 3.10,\\ 3.63,\\ 4.74

for solids, solid-fluid and fluid processing plants is a cross-check only.

Every function sums the equipment costs over ``axis`` (default the last axis), so a batch of
flowsheets is an array of shape ``(..., n_items)``; a 1-d list of items gives a float.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import InputError
from teakit.validation import (
    broadcast_arrays,
    check_fraction,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "LANG_FACTORS",
    "capital_breakdown",
    "fixed_capital_investment",
    "grassroots_cost",
    "lang_estimate",
    "total_module_cost",
    "working_capital",
]

#: Lang factors (Lang 1947-1948, quoted in Turton 4th ed. Ch. 7; from memory) [-].
LANG_FACTORS = {"solids": 3.10, "solid-fluid": 3.63, "fluid": 4.74}



def _sum(name: str, costs, axis: int) -> np.ndarray:
    c = check_positive(name, costs, unit="USD", allow_zero=True)
    if c.ndim == 0:
        return c
    if isinstance(axis, bool) or not isinstance(axis, int | np.integer) or not -c.ndim <= axis < c.ndim:
        raise InputError(
            f"axis must be a whole number in [{-c.ndim}, {c.ndim - 1}] (the axis of the equipment "
            f"items of {name}, shape {c.shape}), got {axis!r}"
        )
    with np.errstate(over="ignore", invalid="ignore"):
        total = c.sum(axis=axis)
    return finite_result(f"sum of {name}", total, **{name: c})


def total_module_cost(C_BM, contingency=0.15, fee=0.03, axis: int = -1):
    """Total module cost: bare-module cost plus contingency and fee (Turton 4th ed. Ch. 7).

    .. math:: C_{TM} = (1 + a_\\mathrm{cont} + a_\\mathrm{fee}) \\sum_i C_{BM,i}

    With the defaults the factor is 1.18 (Turton 4th ed. (2012), Ch. 7, read).

    Parameters
    ----------
    C_BM : float or array_like
        Bare-module costs of the equipment items, summed over ``axis`` [USD of the cost year].
    contingency : float, optional
        Contingency as a fraction of the bare-module cost, default 0.15 (Turton, read) [-].
    fee : float, optional
        Contractor fee as a fraction of the bare-module cost, default 0.03 (Turton, read) [-].
    axis : int, optional
        Axis of the equipment items [-].

    Returns
    -------
    float or numpy.ndarray
        Total module cost [USD of the same cost year].
    """
    a_c = check_fraction("contingency", contingency)
    a_f = check_fraction("fee", fee)
    total, a_c, a_f = broadcast_arrays(C_BM=_sum("C_BM", C_BM, axis), contingency=a_c, fee=a_f)
    with np.errstate(over="ignore"):
        out = total * (1.0 + a_c + a_f)
    return scalar_or_array(finite_result("total module cost", out, C_BM=C_BM))


def grassroots_cost(C_BM, C_BM_base, contingency=0.15, fee=0.03, auxiliary=0.50, axis: int = -1):
    """Grassroots cost: total module cost plus auxiliary facilities (Turton 4th ed. Ch. 7).

    .. math:: C_{GR} = (1 + a_\\mathrm{cont} + a_\\mathrm{fee}) \\sum_i C_{BM,i}
       + a_\\mathrm{aux} \\sum_i C^0_{BM,i}

    With the defaults: C_GR = 1.18 sum C_BM + 0.50 sum C_BM^0 (Turton 4th ed. (2012), Ch. 7,
    read). C_BM^0 is the bare-module cost at base conditions, see
    :func:`teakit.costing.equipment_cost.base_bare_module_cost`.

    Parameters
    ----------
    C_BM : float or array_like
        Bare-module costs at actual conditions, summed over ``axis`` [USD of the cost year].
    C_BM_base : float or array_like
        Bare-module costs at base conditions (carbon steel, ambient pressure), same shape rules
        [USD of the same cost year].
    contingency, fee : float, optional
        Fractions of the bare-module cost, defaults 0.15 and 0.03 (Turton, read) [-].
    auxiliary : float, optional
        Auxiliary facilities (site development, auxiliary buildings, off-sites and utilities) as
        a fraction of the base bare-module cost, default 0.50 (Turton, read) [-].
    axis : int, optional
        Axis of the equipment items [-].

    Returns
    -------
    float or numpy.ndarray
        Grassroots cost [USD of the same cost year].
    """
    a_x = check_fraction("auxiliary", auxiliary)
    tm = np.asarray(total_module_cost(C_BM, contingency, fee, axis))
    tm, a_x, base = broadcast_arrays(C_BM=tm, auxiliary=a_x,
                                     C_BM_base=_sum("C_BM_base", C_BM_base, axis))
    with np.errstate(over="ignore"):
        out = tm + a_x * base
    return scalar_or_array(finite_result("grassroots cost", out, C_BM=C_BM, C_BM_base=C_BM_base))


def fixed_capital_investment(
    C_BM, C_BM_base=None, contingency=0.15, fee=0.03, auxiliary=0.50, grassroots=True, axis=-1
):
    """Fixed capital investment: the grassroots cost (new site) or the total module cost.

    .. math:: \\mathrm{FCI} = C_{GR} \\text{ (grassroots)} \\quad\\text{or}\\quad C_{TM}
       \\text{ (expansion of an existing site)}

    Turton 4th ed. (2012), Ch. 7.

    Parameters
    ----------
    C_BM : float or array_like
        Bare-module costs at actual conditions [USD of the cost year].
    C_BM_base : float or array_like, optional
        Bare-module costs at base conditions; required when ``grassroots`` [USD of the cost year].
    contingency, fee, auxiliary : float, optional
        As in :func:`grassroots_cost` [-].
    grassroots : bool, optional
        New plant on a new site (default) or an addition to an existing site [-].
    axis : int, optional
        Axis of the equipment items [-].

    Returns
    -------
    float or numpy.ndarray
        FCI [USD of the same cost year].
    """
    if not grassroots:
        return total_module_cost(C_BM, contingency, fee, axis)
    if C_BM_base is None:
        raise InputError(
            "C_BM_base (bare-module costs at base conditions) is required for a grassroots FCI; "
            "pass grassroots=False for an expansion (FCI = total module cost)"
        )
    return grassroots_cost(C_BM, C_BM_base, contingency, fee, auxiliary, axis)


def working_capital(FCI, fraction=0.15):
    """Working capital as a fraction of the fixed capital investment.

    .. math:: C_{WC} = f_{WC} \\, \\mathrm{FCI}

    Default 0.15; common practice puts working capital at 15-20 % of FCI.

    Parameters
    ----------
    FCI : float or array_like
        Fixed capital investment [USD of the cost year].
    fraction : float or array_like, optional
        Working capital over FCI, in [0, 1]; default 0.15 (common practice) [-].

    Returns
    -------
    float or numpy.ndarray
        Working capital [USD of the same cost year].
    """
    f = check_positive("FCI", FCI, unit="USD", allow_zero=True)
    f, frac = broadcast_arrays(FCI=f, fraction=check_fraction("fraction", fraction))
    return scalar_or_array(f * frac)


def capital_breakdown(
    C_BM,
    C_BM_base=None,
    contingency=0.15,
    fee=0.03,
    auxiliary=0.50,
    working_capital_fraction=0.15,
    grassroots=True,
    axis: int = -1,
) -> dict:
    """The whole capital build-up as a dict of its parts (Turton 4th ed. Ch. 7).

    .. math:: C_{TCI} = \\mathrm{FCI} + C_{WC}

    Parameters
    ----------
    C_BM, C_BM_base : float or array_like
        As in :func:`fixed_capital_investment` [USD of the cost year].
    contingency, fee, auxiliary : float, optional
        As in :func:`grassroots_cost` [-].
    working_capital_fraction : float, optional
        As ``fraction`` in :func:`working_capital` [-].
    grassroots : bool, optional
        As in :func:`fixed_capital_investment` [-].
    axis : int, optional
        Axis of the equipment items [-].

    Returns
    -------
    dict
        ``bare_module``, ``contingency``, ``fee``, ``total_module``, ``auxiliary_facilities``
        (0 unless grassroots), ``fixed_capital``, ``working_capital`` and ``total_capital``
        [USD of the cost year], each a float or an array over the batch.
    """
    tm = np.asarray(total_module_cost(C_BM, contingency, fee, axis))
    fci = np.asarray(
        fixed_capital_investment(C_BM, C_BM_base, contingency, fee, auxiliary, grassroots, axis)
    )
    wc = np.asarray(working_capital(fci, working_capital_fraction))
    bm, a_c, a_f, tm, fci, wc = broadcast_arrays(
        C_BM=_sum("C_BM", C_BM, axis), contingency=check_fraction("contingency", contingency),
        fee=check_fraction("fee", fee), total_module=tm, fixed_capital=fci, working_capital=wc,
    )
    with np.errstate(over="ignore"):
        finite_result("total capital", fci + wc, C_BM=C_BM, C_BM_base=C_BM_base)
    return {
        "bare_module": scalar_or_array(bm),
        "contingency": scalar_or_array(a_c * bm),
        "fee": scalar_or_array(a_f * bm),
        "total_module": scalar_or_array(tm),
        "auxiliary_facilities": scalar_or_array(fci - tm),
        "fixed_capital": scalar_or_array(fci),
        "working_capital": scalar_or_array(wc),
        "total_capital": scalar_or_array(fci + wc),
    }


def lang_estimate(delivered_equipment_cost, plant_type: str = "fluid", factor=None, axis=-1):
    """Fixed capital by a Lang factor on delivered equipment cost (a cross-check).

    .. math:: \\mathrm{FCI} \\approx F_\\mathrm{Lang} \\sum_i C_{p,i}^\\mathrm{delivered}

    Lang factors 3.10 (solids), 3.63 (solid-fluid), 4.74 (fluid processing): Lang, Chem. Eng.
    (1947-1948), as quoted in Turton 4th ed. (2012), Ch. 7 (from memory).

    Parameters
    ----------
    delivered_equipment_cost : float or array_like
        Delivered purchased costs of the equipment items, summed over ``axis``
        [USD of the cost year].
    plant_type : {"fluid", "solid-fluid", "solids"}, optional
        Kind of plant; default "fluid" (gas-phase synthesis loops) [-].
    factor : float, optional
        A Lang factor to use instead of the tabulated one, in [1, 10] [-].
    axis : int, optional
        Axis of the equipment items [-].

    Returns
    -------
    float or numpy.ndarray
        Estimated fixed capital investment [USD of the same cost year].
    """
    if factor is None:
        if plant_type not in LANG_FACTORS:
            raise InputError(
                f"plant_type = {plant_type!r} is not a Lang plant type; valid: "
                + ", ".join(LANG_FACTORS)
            )
        f = LANG_FACTORS[plant_type]
    else:
        f = check_range("factor", factor, 1.0, 10.0)
    with np.errstate(over="ignore"):
        out = _sum("delivered_equipment_cost", delivered_equipment_cost, axis) * f
    return scalar_or_array(finite_result("Lang estimate", out,
                                         delivered_equipment_cost=delivered_equipment_cost))
