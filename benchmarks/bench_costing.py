"""Cost and cash-flow evaluation of 10^5 ammonia-plant cases in one call chain, against a loop.

Target (issue: money layer): the whole chain -- bare-module cost of every item, CEPCI escalation,
grassroots and working capital, annual operating cost and revenue, the cash-flow table and NPV --
evaluated vectorised over 10^5 cases at >= 1e5 cases/s on one core, and the ratio against the
same chain called one case at a time in a plain Python loop (>= 20x).

The batch is synthetic but shaped like the output of a process study of an ammonia synthesis loop:
sizes (vessel volumes and diameters, wall thicknesses, compressor powers, exchanger areas,
refrigeration duty, catalyst volume) come from teakit's sizing functions applied to seeded random
operating points, so they are consistent with each other. Every capacity lies inside its Turton
correlation's range (or is split into at most 10 parallel units, as the costing functions do).
The one deliberate exception is the design pressure of the four shell-and-tube exchangers inside
the synthesis loop (150-300 barg): Turton's shell-and-tube pressure factor stops at 140 barg, so
those calls extrapolate with a RangeWarning. The benchmark counts them once, prints the count, and
ignores RangeWarning (and only RangeWarning) while timing.

Sizing is setup and is not timed; the timed chain starts from the sizes and the prices.
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from _common import one_core, result, timed

one_core()

import numpy as np  # noqa: E402

from teakit.costing import (  # noqa: E402
    TURTON_CEPCI_BASIS,
    bare_module_cost,
    base_bare_module_cost,
    capital_breakdown,
    catalyst_cost,
    cooling_water_cost,
    cost_of_manufacture,
    electricity_cost,
    escalate,
    heat_cost,
    operating_hours,
    operating_labour_cost,
    product_revenue,
    raw_material_cost,
    vessel_cost_from_mass,
    vessel_diameter,
)
from teakit.equipment import (  # noqa: E402
    allowable_stress,
    compression_detail,
    exchanger_area,
    head_thickness,
    refrigeration_power,
    shell_thickness,
    vessel_mass,
)
from teakit.errors import RangeWarning  # noqa: E402
from teakit.finance import cash_flows, metrics  # noqa: E402

COST_YEAR = 2023  # a year of data/cepci.csv
M_NH3 = 17.031e-3  # kg/mol
M_H2 = 2.016e-3  # kg/mol
M_N2 = 28.014e-3  # kg/mol
BAR = 1e5  # Pa

# Study-wide settings (the same for every case).
PLANT_LIFE = 20  # yr
CONSTRUCTION = (0.3, 0.5, 0.2)  # fraction of FCI spent in each construction year
RAMP_UP = (0.7, 0.9)  # utilisation of the first two operating years
TAX_RATE = 0.25
INFLATION = 0.02
DEPRECIATION_LIFE = 10  # yr, straight line
N_NONPARTICULATE = 10  # 3 compressors + converter + 6 exchangers (Turton's N_np)
CATALYST_BULK_DENSITY = 2700.0  # kg/m3, an assumption for a fused-iron synthesis catalyst
CONVERTER_STEEL_USD_PER_KG = 15.0  # assumption, 2023 USD, clad Cr-Mo heavy-wall shell

# (name, kind, material, size key, pressure key or None, diameter key or None, pressure_on)
ITEMS = (
    ("converter", "vessel_vertical", "SS-clad", "V_conv", "P_loop_barg", "D_conv", "both"),
    ("separator", "vessel_vertical", "CS", "V_sep", "P_loop_barg", "D_sep", "both"),
    ("makeup_compressor", "compressor_centrifugal", "CS", "W_makeup", None, None, "both"),
    ("makeup_drive", "drive_electric_totally_enclosed", "CS", "W_makeup", None, None, "both"),
    ("circulator", "compressor_centrifugal", "CS", "W_circ", None, None, "both"),
    ("circulator_drive", "drive_electric_totally_enclosed", "CS", "W_circ", None, None, "both"),
    ("refrig_compressor", "compressor_centrifugal", "CS", "W_refrig", None, None, "both"),
    ("refrig_drive", "drive_electric_totally_enclosed", "CS", "W_refrig", None, None, "both"),
    # loop exchangers: both sides, or the tube (loop-gas) side, at loop pressure -> RangeWarning
    ("feed_effluent_hx", "hx_u_tube", "CS/SS", "A_fe", "P_loop_barg", None, "both"),
    ("waste_heat_boiler", "hx_fixed_tube", "CS", "A_whb", "P_loop_barg", None, "tube"),
    ("loop_water_cooler", "hx_fixed_tube", "CS", "A_wc", "P_loop_barg", None, "tube"),
    ("ammonia_chiller", "hx_u_tube", "CS", "A_chill", "P_loop_barg", None, "tube"),
    # outside the loop: inside Turton's pressure range
    ("refrig_condenser", "hx_fixed_tube", "CS", "A_cond", "P_cond_barg", None, "both"),
    ("makeup_intercoolers", "hx_fixed_tube", "CS", "A_ic", "P_ic_barg", None, "both"),
)


# --------------------------------------------------------------------------------------------
# synthetic batch (setup, not timed)


def make_cases(n: int, seed: int = 0) -> dict:
    """Sizes and prices of ``n`` ammonia-loop cases, from teakit's sizing functions."""
    rng = np.random.default_rng(seed)
    u = rng.uniform
    cap_tpd = u(500.0, 1500.0, n)  # NH3 capacity [t/d]
    m_nh3 = cap_tpd * 1e3 / 86400.0  # kg/s while operating
    n_nh3 = m_nh3 / M_NH3  # mol/s
    P_loop_barg = u(150.0, 300.0, n)  # converter design pressure [barg]
    P_op = (P_loop_barg / 1.1 + 1.0) * BAR  # loop operating pressure, absolute [Pa]

    # make-up compressor: 3:1 H2/N2 from the hydrogen supply pressure to the loop, 3 stages
    purge = u(1.02, 1.05, n)
    flow_mu = 2.0 * n_nh3 * purge  # mol/s of H2 + N2
    P_in_mu = u(20.0, 35.0, n) * BAR
    T_in_mu = u(305.0, 318.0, n)
    mu = compression_detail(
        flow_mu, T_in_mu, P_in_mu, P_op, {"H2": 0.75, "N2": 0.25}, stages=3,
        efficiency=u(0.74, 0.82, n), T_intercool=T_in_mu,
    )
    P_ic_barg = P_in_mu * mu.stage_ratio**2 / BAR - 1.0  # second-stage discharge
    # recycle circulator: loop gas over the loop pressure drop
    flow_rc = flow_mu * u(4.0, 6.0, n)
    dp = u(0.08, 0.12, n)
    W_circ = compression_detail(
        flow_rc, u(298.0, 310.0, n), P_op * (1.0 - dp), P_op,
        {"H2": 0.70, "N2": 0.235, "NH3": 0.04, "Ar": 0.025}, stages=1, efficiency=u(0.74, 0.8, n),
    ).power

    # refrigeration for product condensation
    Q_refrig = m_nh3 * u(0.6e6, 1.0e6, n)  # W
    T_evap, T_cond = u(243.0, 258.0, n), u(308.0, 318.0, n)
    W_refrig = refrigeration_power(Q_refrig, T_evap, T_cond)

    # exchanger areas from duty, U and terminal temperature differences
    def area(duty, U_lo, U_hi, dT1, dT2):
        return exchanger_area(duty, u(U_lo, U_hi, n), u(*dT1, n), u(*dT2, n))

    Q_whb = m_nh3 * u(1.0e6, 1.6e6, n)
    Q_wc = m_nh3 * u(1.0e6, 1.5e6, n)
    Q_ic = mu.intercooler_duty.sum(axis=-1)
    A = {
        "A_fe": area(m_nh3 * u(1.5e6, 2.5e6, n), 350.0, 550.0, (25.0, 45.0), (35.0, 60.0)),
        "A_whb": area(Q_whb, 600.0, 900.0, (100.0, 150.0), (60.0, 90.0)),
        "A_wc": area(Q_wc, 400.0, 600.0, (15.0, 25.0), (8.0, 12.0)),
        "A_chill": area(Q_refrig, 500.0, 800.0, (25.0, 40.0), (8.0, 15.0)),
        "A_cond": area(Q_refrig + W_refrig, 700.0, 1000.0, (8.0, 12.0), (4.0, 7.0)),
        "A_ic": area(Q_ic, 300.0, 500.0, (60.0, 100.0), (8.0, 12.0)),
    }

    # converter and separator: volume, diameter, wall from ASME VIII-1 with an allowable stress
    V_cat = cap_tpd * u(0.04, 0.08, n)  # m3
    V_conv = V_cat / u(0.55, 0.70, n)
    LD_conv = u(6.0, 10.0, n)
    D_conv = vessel_diameter(V_conv, LD_conv)
    S_conv = allowable_stress("SA-387 Gr 22 Cl 2", u(520.0, 620.0, n))
    t_conv = shell_thickness(P_loop_barg * BAR, D_conv, S_conv, corrosion_allowance=3e-3)
    th_conv = head_thickness(P_loop_barg * BAR, D_conv, S_conv, corrosion_allowance=3e-3,
                             head="hemispherical")
    mass_conv = vessel_mass(D_conv, LD_conv * D_conv, t_conv, th_conv, head="hemispherical",
                            allowance_factor=1.15)
    V_sep = cap_tpd * u(0.01, 0.025, n)
    D_sep = vessel_diameter(V_sep, u(3.0, 4.0, n))

    return {
        "P_loop_barg": P_loop_barg,
        "P_cond_barg": u(16.0, 22.0, n),  # refrigerant condenser design pressure
        "P_ic_barg": P_ic_barg,
        "V_conv": V_conv, "D_conv": D_conv, "mass_conv": mass_conv,
        "V_sep": V_sep, "D_sep": D_sep,
        "W_makeup": mu.power, "W_circ": W_circ, "W_refrig": W_refrig,
        **A,
        "Q_whb": Q_whb, "Q_cw": Q_wc + Q_ic + Q_refrig + W_refrig,
        "V_cat": V_cat,
        "m_nh3": m_nh3,
        "m_h2": 1.5 * n_nh3 * purge * M_H2,
        "m_n2": 0.5 * n_nh3 * purge * M_N2,
        # economics
        "availability": u(0.88, 0.96, n),
        "eta_motor": u(0.95, 0.97, n),
        "price_elec": u(0.03, 0.12, n),  # USD/kWh
        "price_h2": u(1.5, 6.0, n),  # USD/kg
        "price_n2": u(0.01, 0.04, n),  # USD/kg
        "price_nh3": u(0.45, 1.10, n),  # USD/kg
        "price_steam": u(5.0, 12.0, n),  # USD/GJ, credit for steam raised in the boiler
        "price_cw": u(0.3, 0.5, n),  # USD/GJ
        "price_cat": u(8.0, 20.0, n),  # USD/kg
        "life_cat": u(8.0, 15.0, n),  # yr
        "salary": u(60e3, 100e3, n),  # USD/yr per operator
        "discount_rate": u(0.06, 0.12, n),
    }


# --------------------------------------------------------------------------------------------
# the chain under test: arrays in (batch) or floats in (one case), same code


def evaluate(c: dict) -> dict:
    """Capital, operating cost, revenue, cash flows and NPV of the cases in ``c``."""
    cbm, cbm0 = [], []
    for _, kind, material, size, p, d, on in ITEMS:
        P = 0.0 if p is None else c[p]
        D = None if d is None else c[d]
        cbm.append(bare_module_cost(kind, c[size], P, material, D, pressure_on=on))
        cbm0.append(base_bare_module_cost(kind, c[size]))
    # USD at CEPCI 397 -> USD of the cost year; items on the last axis
    C_BM = escalate(np.stack(cbm, axis=-1), TURTON_CEPCI_BASIS, COST_YEAR)
    C_BM0 = escalate(np.stack(cbm0, axis=-1), TURTON_CEPCI_BASIS, COST_YEAR)
    cap = capital_breakdown(C_BM, C_BM0, working_capital_fraction=0.15)
    FCI, WC = cap["fixed_capital"], cap["working_capital"]
    conv_mass_cost = vessel_cost_from_mass(c["mass_conv"], CONVERTER_STEEL_USD_PER_KG)

    hours = operating_hours(c["availability"])
    W_el = (c["W_makeup"] + c["W_circ"] + c["W_refrig"]) / c["eta_motor"]
    C_UT = electricity_cost(W_el, c["price_elec"], hours) + cooling_water_cost(
        c["Q_cw"], c["price_cw"], hours
    )
    C_RM = (
        raw_material_cost(c["m_h2"], c["price_h2"], hours)
        + raw_material_cost(c["m_n2"], c["price_n2"], hours)
        + catalyst_cost(c["V_cat"], CATALYST_BULK_DENSITY, c["price_cat"], c["life_cat"])
    )
    C_OL = operating_labour_cost(N_NONPARTICULATE, c["salary"])
    # Turton's COM_d split into the part that scales with throughput and the part that does not
    variable = cost_of_manufacture(0.0, 0.0, C_UT, 0.0, C_RM)
    fixed = cost_of_manufacture(FCI, C_OL, 0.0, 0.0, 0.0)
    revenue = product_revenue(c["m_nh3"], c["price_nh3"], hours) + heat_cost(
        c["Q_whb"], c["price_steam"], 1.0, hours
    )
    cf = cash_flows(
        FCI, revenue, variable,
        discount_rate=c["discount_rate"], tax_rate=TAX_RATE, plant_life=PLANT_LIFE,
        construction_schedule=CONSTRUCTION, working_capital=WC, fixed_operating_cost=fixed,
        ramp_up=RAMP_UP, depreciation="straight_line", depreciation_life=DEPRECIATION_LIFE,
        inflation=INFLATION,
    )
    return {"npv": cf.npv, "FCI": FCI, "C_BM": C_BM, "conv_mass_cost": conv_mass_cost,
            "cf": cf, "nh3_kg_per_yr": c["m_nh3"] * 3600.0 * hours}


def loop(cases: dict, idx) -> list:
    """Baseline: the same chain, one case at a time with Python floats."""
    out = []
    for i in idx:
        out.append(evaluate({k: float(v[i]) for k, v in cases.items()})["npv"])
    return out


def main(n=100_000, n_loop=200):
    cases = make_cases(n)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        evaluate({k: v[:100] for k, v in cases.items()})  # warm caches, see what warns
    kinds = sorted({str(w.message).split(" = ")[0] for w in caught})
    print(f"warnings in one batch call: {len(caught)} ({'; '.join(kinds) or 'none'}); "
          "RangeWarning ignored below")

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RangeWarning)
        t_batch, res = timed(evaluate, cases)
        t_loop, npv_loop = timed(loop, cases, range(n_loop), repeat=1)
        t_met, met = timed(metrics, res["cf"], res["nh3_kg_per_yr"], repeat=1)

    npv_b = res["npv"][:n_loop]
    rel = np.max(np.abs(np.array(npv_loop) - npv_b) / np.abs(npv_b))
    rate_batch = n / t_batch
    rate_loop = n_loop / t_loop
    fci = res["FCI"]
    print(f"batch: {n} cases in {t_batch:.3f} s ({rate_batch:.3g} cases/s); loop: {n_loop} cases "
          f"in {t_loop:.3f} s ({rate_loop:.3g} cases/s); max |NPV batch - loop| / |NPV| = {rel:.1e}")
    print(f"cases: {len(ITEMS)} items each; FCI {np.percentile(fci, 5) / 1e6:.0f}-"
          f"{np.percentile(fci, 95) / 1e6:.0f} M USD{COST_YEAR} (5-95 %); NPV > 0 in "
          f"{np.mean(res['npv'] > 0):.0%}; converter Turton C_BM / mass-based cost, median "
          f"{np.median(res['C_BM'][:, 0] / res['conv_mass_cost']):.2f}")
    print(f"metrics (IRR, payback, LCOP) on the batch, not in the target: {t_met:.3f} s "
          f"({n / t_met:.3g} cases/s); median LCOP {np.nanmedian(met.lcop):.3f} USD/kg NH3")
    result("costing_cases_per_s", rate_batch, "1/s", ">=", 1e5)
    result("costing_speedup_vs_loop", rate_batch / rate_loop, "x", ">=", 20)


if __name__ == "__main__":
    main()
