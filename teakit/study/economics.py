"""From a process result to money: capital, operating cost, revenue, cash flows and metrics.

The process layer reports sizes, powers, duties and flows (:class:`~teakit.process.result.
ProcessResult`); this module prices them with the costing and finance layers, for a whole batch
at once, from a table of economic parameters (:data:`ECONOMICS`, SI and USD of ``cost_year``):

- capital: bare-module cost of every listed equipment item (Turton et al., 4th ed., Appendix A;
  compressors get an explosion-proof electric drive on their shaft power), escalated by the CEPCI
  to the cost year, grassroots build-up (Turton ch. 7), the first catalyst charge, working capital;
- operating cost: electricity (compression and refrigeration, through a motor efficiency), raw
  materials, fired-heater fuel, cooling water, catalyst replacement, and Turton's cost of
  manufacture for labour, maintenance and overheads (COM_d = 0.180 FCI + 2.73 C_OL + 1.23 (C_UT +
  C_WT + C_RM), Turton Eq. 8.2), split into the part that scales with output and the fixed part;
- revenue: product sales and exported steam (recovered heat) as a credit;
- cash flows and metrics (:mod:`teakit.finance`): NPV, IRR, discounted payback, and the levelised
  cost of product.

Members whose process status is not "ok", or with an equipment item beyond the cost tables'
range (more than ten parallel units), get no revenue and no cost and a ``status`` saying why:
the study layer treats them as infeasible.
"""

from __future__ import annotations

import functools
import warnings
from collections.abc import Mapping

import numpy as np

from teakit.costing import (
    TURTON_CEPCI_BASIS,
    bare_module_cost,
    base_bare_module_cost,
    capital_breakdown,
    cepci,
    cooling_water_cost,
    cost_of_manufacture,
    electricity_cost,
    equipment_kinds,
    heat_cost,
    operating_hours,
    operating_labour_cost,
    raw_material_cost,
)
from teakit.errors import InputError, RangeWarning
from teakit.finance import cash_flows, metrics
from teakit.process.cases.common import Spec, resolve

__all__ = ["ECONOMICS", "RAW_MATERIAL_PRICES", "plant_economics"]

ECONOMICS: dict[str, Spec] = {
    "cost_year": Spec("-", 2001, 2023, 2023, "CEPCI year of all money (data/cepci.csv)"),
    "product_price": Spec("USD/kg", 0.0, 100.0, 0.60, "selling price of the product"),
    "electricity_price": Spec("USD/kWh", 0.0, 2.0, 0.06, "electricity price"),
    "hydrogen_price": Spec("USD/kg", 0.0, 50.0, 3.5, "hydrogen price (make-up gas)"),
    "nitrogen_price": Spec("USD/kg", 0.0, 5.0, 0.05, "nitrogen price (make-up gas)"),
    "sulfur_price": Spec("USD/kg", 0.0, 5.0, 0.15, "sulfur price"),
    "steam_credit": Spec("USD/GJ", 0.0, 100.0, 4.0, "value of recovered heat exported as steam"),
    "fuel_price": Spec("USD/GJ", 0.0, 100.0, 8.0, "fuel for fired heaters"),
    "fired_heater_efficiency": Spec("-", 0.3, 1.0, 0.85, "fired-heater efficiency (LHV)"),
    "cooling_water_price": Spec("USD/GJ", 0.0, 10.0, 0.35, "cooling water, per GJ removed"),
    "catalyst_price": Spec("USD/kg", 0.0, 1000.0, 15.0, "catalyst price"),
    "catalyst_bulk_density": Spec("kg/m3", 100.0, 5000.0, 2700.0, "catalyst bulk density"),
    "catalyst_life": Spec("yr", 0.5, 40.0, 10.0, "catalyst life"),
    "motor_efficiency": Spec("-", 0.5, 1.0, 0.95, "electric motor efficiency"),
    "availability": Spec("-", 0.3, 1.0, 0.913, "fraction of the year on stream (8000 h)"),
    "operator_salary": Spec("USD/yr", 0.0, 1e6, 70000.0, "operator cost per year"),
    "discount_rate": Spec("1/yr", 0.0, 0.5, 0.08, "real discount rate"),
    "tax_rate": Spec("-", 0.0, 0.6, 0.25, "income tax rate"),
    "plant_life": Spec("yr", 5.0, 50.0, 20.0, "operating life"),
    "working_capital_fraction": Spec("-", 0.0, 0.5, 0.15, "working capital over fixed capital"),
    "contingency": Spec("-", 0.0, 0.5, 0.15, "contingency over bare-module cost (Turton)"),
    "fee": Spec("-", 0.0, 0.2, 0.03, "contractor fee over bare-module cost (Turton)"),
    "auxiliary": Spec("-", 0.0, 1.0, 0.50, "auxiliary facilities over base bare-module cost (Turton)"),
}

#: Which process flow [kg/s] is bought at which price parameter.
RAW_MATERIAL_PRICES = {
    "hydrogen_feed": "hydrogen_price",
    "nitrogen_feed": "nitrogen_price",
    "sulfur_feed": "sulfur_price",
}

#: Construction schedule (fraction of fixed capital per year) and ramp-up: common practice.
CONSTRUCTION = (0.3, 0.5, 0.2)
RAMP_UP = (0.7, 0.9)
DRIVE = "drive_electric_explosion_proof"
#: Non-particulate processing steps counted per equipment kind for Turton's operator estimate.
_COUNTED = ("compressor", "hx_", "vessel", "tower", "heater", "fan")

#: The capacity each equipment kind is priced on, from the item's sizes.
_CAPACITY = {"vessel": "volume", "tower": "volume", "hx_": "area", "compressor": "power",
             "heater": "duty", "fan": "gas_flow", "pump": "power"}


@functools.cache
def _kind_limits() -> dict[str, tuple[float, float]]:
    """Capacity range [SI] of every costed equipment kind (read once)."""
    k = equipment_kinds()
    return {kind: (float(r["capacity_min_SI"]), float(r["capacity_max_SI"])) for kind, r in k.iterrows()}


def _capacity_key(kind: str) -> str:
    for prefix, key in _CAPACITY.items():
        if kind.startswith(prefix):
            return key
    raise KeyError(f"no capacity rule for equipment kind {kind!r}")


def _one_life(plant_life) -> int:
    """The plant life of a call: one whole number of years for the whole batch."""
    lives = np.unique(plant_life)
    if lives.size != 1 or lives[0] != round(lives[0]):
        raise InputError(f"plant_life must be one whole number of years per call, got {lives.tolist()}")
    return int(lives[0])


def plant_economics(process, economics: Mapping | None = None, *, with_metrics: bool = True) -> dict:
    """Capital, operating cost, revenue, cash flows and metrics of a batch of process results.

    Parameters
    ----------
    process : ProcessResult
        The batch to price (values, equipment list, status).
    economics : mapping, optional
        Economic parameters (names, units and ranges in :data:`ECONOMICS`), scalars or arrays (B,)
        or strings with units; missing names take their defaults.
    with_metrics : bool
        Also compute IRR, payback and LCOP (slower than NPV alone).

    Returns
    -------
    dict of ndarray (B,)
        ``capex_<item>`` and ``fixed_capital`` [USD], ``working_capital`` [USD], annual
        ``opex_<item>`` and ``revenue`` [USD/yr], ``npv`` [USD], and with metrics ``irr`` [1/yr],
        ``payback`` [yr], ``lcop`` [USD/kg]; money in USD of ``cost_year``.
    """
    econ, B_e = resolve(economics, ECONOMICS, "economic parameter")
    B = len(process)
    e = {k: np.broadcast_to(v, (B,)) if v.shape == (1,) or B_e == B else v for k, v in econ.items()}
    if any(v.shape != (B,) for v in e.values()):
        raise InputError(f"economic parameters have {B_e} members, the process {B}: they must match or be scalars")
    vals = process.values
    years = np.unique(e["cost_year"])
    if years.size != 1:
        raise InputError(f"cost_year must be one year per call, got {years.tolist()}")
    year = int(years[0])
    out: dict[str, np.ndarray] = {}
    cbm, cbm0 = [], []
    status = np.where(process.ok, "ok", "process infeasible").astype(object)
    with warnings.catch_warnings():
        # Loop equipment above a correlation's pressure range warns once per call; the study
        # reports correlation ranges in its result instead of flooding the notebook.
        warnings.simplefilter("ignore", RangeWarning)
        limits = _kind_limits()
        for name, item in process.equipment.items():
            kind = item["kind"]
            cap = np.asarray(item[_capacity_key(kind)], dtype=float)
            live = cap > 0
            # The cost tables accept [min/10, 10 max] (10 parallel units at most): a member
            # whose item lies beyond is priced at the limit and flagged, not an error.
            lo = limits[kind][0] / 10.0
            hi = limits[kind][1] * 10.0
            beyond = live & ((cap > hi) | (cap < lo))
            status = np.where(beyond & (status == "ok"), f"{name} beyond the cost correlation's range", status)
            cap_safe = np.where(live, np.clip(cap, lo, hi), lo)  # absent items: any valid size, cost zeroed
            P_barg = np.maximum(np.asarray(item.get("pressure_gauge", 0.0), float) / 1e5, 0.0)
            D = item.get("diameter")
            c = bare_module_cost(kind, cap_safe, P_barg, item.get("material", "CS"), D) * live
            c0 = base_bare_module_cost(kind, cap_safe) * live
            if kind.startswith("compressor"):
                drive = np.clip(cap_safe / e["motor_efficiency"], limits[DRIVE][0] / 10.0, limits[DRIVE][1] * 10.0)
                c = c + bare_module_cost(DRIVE, drive) * live
                c0 = c0 + base_bare_module_cost(DRIVE, drive) * live
            cbm.append(c)
            cbm0.append(c0)
            out[f"capex_{name}"] = c * cepci(year) / TURTON_CEPCI_BASIS
    ok = (status == "ok").astype(float)
    C_BM = np.stack(cbm, axis=-1) * cepci(year) / TURTON_CEPCI_BASIS
    C_BM0 = np.stack(cbm0, axis=-1) * cepci(year) / TURTON_CEPCI_BASIS
    cap = capital_breakdown(C_BM, C_BM0, contingency=e["contingency"], fee=e["fee"],
                            auxiliary=e["auxiliary"], working_capital_fraction=e["working_capital_fraction"])
    catalyst_charge = vals["catalyst_volume"] * e["catalyst_bulk_density"] * e["catalyst_price"]
    FCI = (cap["fixed_capital"] + catalyst_charge) * ok
    WC = cap["working_capital"] * ok
    hours = operating_hours(e["availability"])
    opex = {
        "electricity": electricity_cost(vals["electric_power"] / e["motor_efficiency"], e["electricity_price"], hours),
        "fuel": heat_cost(vals.get("fired_heater_duty", np.zeros(B)), e["fuel_price"], e["fired_heater_efficiency"], hours),
        "cooling_water": cooling_water_cost(vals.get("cooling_water_duty", np.zeros(B)), e["cooling_water_price"], hours),
        "catalyst": vals["catalyst_volume"] * e["catalyst_bulk_density"] * e["catalyst_price"] / e["catalyst_life"],
    }
    for flow, price in RAW_MATERIAL_PRICES.items():
        if flow in vals:
            opex[flow.replace("_feed", "")] = raw_material_cost(vals[flow], e[price], hours)
    opex = {k: np.asarray(v, float) * ok for k, v in opex.items()}
    n_steps = sum(1 for item in process.equipment.values() if item["kind"].startswith(_COUNTED))
    C_OL = operating_labour_cost(n_steps, e["operator_salary"])
    C_UT = opex["electricity"] + opex["fuel"] + opex["cooling_water"]
    C_RM = sum(v for k, v in opex.items() if k not in ("electricity", "fuel", "cooling_water"))
    variable = cost_of_manufacture(0.0, 0.0, C_UT, 0.0, C_RM)
    fixed = cost_of_manufacture(FCI, C_OL, 0.0, 0.0, 0.0) * ok
    opex["labour_maintenance_overheads"] = fixed
    annual_product = vals["production"] * hours * 3600.0  # kg/yr
    sales = annual_product * e["product_price"]
    steam = heat_cost(vals.get("recovered_heat", np.zeros(B)), e["steam_credit"], 1.0, hours) * ok
    revenue = sales + steam
    cf = cash_flows(FCI, revenue, variable, discount_rate=e["discount_rate"], tax_rate=e["tax_rate"],
                    plant_life=_one_life(e["plant_life"]), construction_schedule=CONSTRUCTION,
                    working_capital=WC, fixed_operating_cost=fixed, ramp_up=RAMP_UP)
    out.update({
        "bare_module_cost": C_BM.sum(axis=-1) * ok,
        "catalyst_charge": catalyst_charge * ok,
        "fixed_capital": FCI,
        "working_capital": WC,
        **{f"opex_{k}": v for k, v in opex.items()},
        "opex_total": variable + fixed,
        "revenue_product": sales,
        "revenue_steam": steam,
        "revenue": revenue,
        "annual_profit": revenue - variable - fixed,
        "npv": np.asarray(cf.npv, float) * ok,
    })
    if with_metrics:
        m = metrics(cf, np.where(annual_product > 0, annual_product, 1.0))
        out["irr"] = np.where(ok > 0, np.nan_to_num(m.irr, nan=-1.0), -1.0)
        out["payback"] = np.where(ok > 0, m.discounted_payback, np.inf)
        out["lcop"] = np.where(ok > 0, m.lcop, np.inf)
    out["_cash_flows"] = cf
    out["status"] = status.astype(str)
    return out
