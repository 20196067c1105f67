"""SO2 converter of a sulfur-burning contact sulfuric-acid plant: blower, four adiabatic vanadium
beds with inter-bed coolers, optional intermediate absorption (double contact), final absorption,
solved for a whole batch of operating points at once.

.. warning::

   Preliminary estimates for feasibility studies. SO2, SO3, oleum and sulfuric acid are toxic and
   corrosive; acid condensing below its dew point attacks carbon steel, and a converter holds hot
   gas and a large catalyst inventory. The applicable codes, emission permits, local regulations
   and licensed engineers govern any real design.

Flowsheet (per member; defaults marked "invented" are round numbers chosen for this kit, not data):

1. **Burner gas.** Dry air (per mol: 0.21 O2 and 0.79 N2, the 0.93 % argon of air lumped into N2)
   burns s mol of sulfur, S + O2 = SO2, which uses s mol O2 and makes s mol SO2 with no change in
   the number of moles: the gas is ``so2_strength`` = s SO2, 0.21 - s O2, 0.79 N2, no SO3. Its
   flow equals the air flow. The burner and its waste-heat boiler are outside this case: the gas
   arrives at the first bed at ``bed1_inlet_temperature``.
2. **Blower.** Dry air is compressed from ambient to ``pressure`` plus ``upstream_pressure_drop``
   (drying tower, burner, boiler) by a centrifugal machine
   (:func:`teakit.process.cases.common.compress_staged`, stage ratio <= 3).
3. **Beds.** Four adiabatic beds, SO2 + 1/2 O2 = SO3 with the Collina rate
   (:class:`teakit.chemistry.kinetics.SO2Collina`) and the Ergun pressure drop. The gas is brought
   to each bed's inlet temperature between beds by exchangers (raising or superheating steam).
4. **Intermediate absorption** (``interpass_absorption`` = k in 1..3, default 3: "3+1" double
   contact): after bed k the gas is cooled to ``absorber_temperature``, ``absorption_efficiency``
   of its SO3 is absorbed, and the gas is reheated to the next bed's inlet against hot gas.
   ``interpass_absorption`` = 0 is single contact.
5. **Final absorption** after bed 4 (same efficiency); the rest of the SO2 and SO3 goes to the
   stack. Acid production is the SO3 absorbed, as 100 % H2SO4.

Capacity and catalyst. The catalyst of each bed is a decision per unit of feed:
``bedk_catalyst`` is the catalyst volume per unit of acid-equivalent SO2 fed [m3 s/kg], i.e. per
kg/s of H2SO4 that the SO2 fed would make at full conversion (the trade quotes litres per t/d of
acid; 1 L/(t/d) = 0.0864 m3 s/kg and strings such as ``"45 L/(t/d)"`` are accepted). With the
converter diameter set by a superficial velocity (area proportional to flow), every bed depth,
pressure drop and temperature is then independent of scale, so the converter is solved once per
member and the flows are scaled so that the acid produced equals ``capacity`` exactly: no
iteration on the gas flow. Catalyst volumes in m3 are results. (An absolute volume decision would
need a fixed-point iteration on the flow, which fails to converge where the conversion is nearly
proportional to the catalyst, below light-off.)

Beds are integrated along catalyst volume by :func:`teakit.process.bed.run_bed` (ROS2, with the
Ergun pressure drop), the same integrator as the ammonia converter. Light-off (the rate growing
with the temperature it raises) is taken by Heun's explicit second-order step, the approach to
equilibrium by the L-stable Rosenbrock step; with the default steps a 420 degC first bed reaches
its 68 % adiabatic equilibrium to 1e-8 (tests/test_so2_converter.py checks against 2000 steps and
against Cantera's adiabatic equilibrium).

Heat. ``heat_recovered`` is the gas cooling between beds plus the cooling of the gas ahead of
each absorber down to ``steam_min_temperature`` (steam raising, superheating, boiler feed water),
less the heat needed to reheat the absorber exit gas and to heat any bed inlet that lies above the
previous bed's outlet; a shortfall is ``heater_duty``. The gas cooling below
``steam_min_temperature`` and the heat of SO3 absorption into acid (not computed: there is no
liquid-acid thermodynamics in teakit) go to the acid coolers.

Emissions. ``so2_emission`` [kg SO2 per tonne of 100 % acid] and ``emission_margin`` = limit -
emission, the limit defaulting to 2 kg/t, the new-source standard for sulfuric acid plants of the
US federal rules (40 CFR 60 Subpart H, from memory: 4 lb per short ton = 2 kg per tonne). A
negative margin is not an infeasible point: the study layer applies constraints. At full
absorption the hand formula emission = (1 - X)/X * M_SO2/M_H2SO4 * 1000 holds (653.2 kg/t at
X -> 0; the 2 kg/t limit is X = 99.69 %). ``so3_emission`` is the SO3 left in the stack gas by the
final absorber, before any mist eliminator (not modelled).

Findings with these kinetics (recorded when written, not tuned): the Collina SO3 inhibition
K3 = exp(-71.745 + 52596/T) grows steeply below ~440 degC, so beds 3 and 4 fed at 420-430 degC
convert little: at 10.5 % SO2 and 1.4 bar with 45/55/60/70 L/(t/d) of catalyst and inlets of
420/440/430/420 degC a single-contact converter reaches 94.2 % (double contact 99.73 %); with the
later-bed inlets at 445 degC (the defaults) single contact reaches 97.8 % (14.5 kg SO2/t) and "3+1"
double contact 99.91 % (0.60 kg SO2/t).

Infeasible members (status not "ok", production zero, other values explicit and finite): the
converter converts under 1 % of the SO2 (capacity out of reach), the gas would leave the final
absorber below ambient pressure, or a bed's Ergun pressure drop consumes most of its inlet
pressure.
"""

from __future__ import annotations

import warnings
from collections.abc import Mapping

import numpy as np

from teakit.equipment.exchanger import exchanger_area
from teakit.equipment.vessel import allowable_stress, shell_thickness_detail, vessel_mass
from teakit.errors import InputError, RangeWarning
from teakit.process.bed import P_FLOOR, ErgunBed, run_bed
from teakit.process.cases.common import Spec, compress_staged, resolve_case
from teakit.process.result import ProcessResult
from teakit.process.streams import Stream, enthalpy_flow, heat_capacity_flow
from teakit.thermo import ideal_gas
from teakit.thermo.species import R, species_set

__all__ = ["DECISIONS", "NU", "PHYSICS", "SPECIES", "STATUSES", "equilibrium_line", "so2_converter"]

SPECIES = ("SO2", "O2", "SO3", "N2")
NU = np.array([-1.0, -0.5, 1.0, 0.0])  # SO2 + 1/2 O2 = SO3
N_BEDS = 4
AIR_O2 = 0.21  # dry air, Ar lumped into N2 (20.95 % O2, 78.08 % N2, 0.93 % Ar; common practice)
AIR_N2 = 0.79
_SSET = species_set(SPECIES)
_MM = dict(zip(SPECIES, _SSET.molar_mass, strict=True))  # kg/mol, IUPAC 2021 atomic weights
#: Molar mass of H2SO4 = SO3 + H2O from the kit's atomic weights [kg/mol] (98.072 g/mol).
M_H2SO4 = float(_MM["SO3"] + species_set(("H2O",)).molar_mass[0])
M_SO2 = float(_MM["SO2"])
M_SO3 = float(_MM["SO3"])
M_S = float(M_SO2 - species_set(("O2",)).molar_mass[0])
#: 1 litre of catalyst per t/d of acid in SI [m3 s/kg].
L_PER_TPD = 1e-3 / (1000.0 / 86400.0)
SHELL_MATERIAL = "SA-240 304"
STAINLESS_DENSITY = 7900.0  # kg/m3, austenitic stainless (common practice, see vessel.py)
_CU = "m**3*s/kg"

DECISIONS: dict[str, Spec] = {
    "so2_strength": Spec("-", 0.02, AIR_O2, 0.105,
                         "SO2 mole fraction of the burner gas; below 0.21, the O2 of dry air"),
    "pressure": Spec("Pa", 1.1e5, 5e5, 1.4e5, "first-bed inlet pressure, absolute"),
    "bed1_inlet_temperature": Spec("K", 623.15, 773.15, 693.15, "bed 1 inlet (420 degC default)"),
    "bed2_inlet_temperature": Spec("K", 623.15, 773.15, 718.15, "bed 2 inlet (445 degC default)"),
    "bed3_inlet_temperature": Spec("K", 623.15, 773.15, 718.15, "bed 3 inlet (445 degC default)"),
    "bed4_inlet_temperature": Spec("K", 623.15, 773.15, 718.15, "bed 4 inlet (445 degC default)"),
    "bed1_catalyst": Spec(_CU, 0.0, 200.0, 45 * L_PER_TPD,
                          "bed 1 catalyst per acid-equivalent SO2 fed (45 L per t/d default)"),
    "bed2_catalyst": Spec(_CU, 0.0, 200.0, 55 * L_PER_TPD,
                          "bed 2 catalyst per acid-equivalent SO2 fed (55 L per t/d default)"),
    "bed3_catalyst": Spec(_CU, 0.0, 200.0, 60 * L_PER_TPD,
                          "bed 3 catalyst per acid-equivalent SO2 fed (60 L per t/d default)"),
    "bed4_catalyst": Spec(_CU, 0.0, 200.0, 70 * L_PER_TPD,
                          "bed 4 catalyst per acid-equivalent SO2 fed (70 L per t/d default)"),
    "interpass_absorption": Spec("-", 0, 3, 3,
                                 "bed after which SO3 is absorbed, a whole number; 0: single contact"),
}

PHYSICS: dict[str, Spec] = {
    "capacity": Spec("kg/s", 0.1, 100.0, 1000e3 / 86400, "acid production as 100 % H2SO4 (1000 t/d default)"),
    "catalyst_activity": Spec("-", 0.05, 5.0, 1.0, "multiplier on the Collina rate"),
    "bulk_density": Spec("kg/m3", 300.0, 1000.0, 550.0, "catalyst bulk density (500-600 common practice)"),
    "ambient_temperature": Spec("K", 243.15, 323.15, 298.15, "air temperature at the blower suction"),
    "ambient_pressure": Spec("Pa", 0.7e5, 1.1e5, 101325.0, "ambient (blower suction and stack) pressure"),
    "blower_efficiency": Spec("-", 0.3, 1.0, 0.80, "isentropic efficiency of the main blower (invented)"),
    "upstream_pressure_drop": Spec("Pa", 0.0, 1e5, 15e3, "drying tower, burner and boiler, blower to bed 1 (invented)"),
    "interbed_pressure_drop": Spec("Pa", 0.0, 3e4, 2e3, "per inter-bed cooler (invented)"),
    "absorber_pressure_drop": Spec("Pa", 0.0, 5e4, 8e3, "per absorption stage with its coolers and reheat (invented)"),
    "absorption_efficiency": Spec("-", 0.9, 1.0, 0.999, "fraction of the SO3 each absorber takes (common practice)"),
    "absorber_temperature": Spec("K", 313.15, 423.15, 353.15, "gas leaving an absorber (~80 degC, common practice)"),
    "steam_min_temperature": Spec("K", 373.15, 623.15, 473.15, "gas cooling above this is recovered heat (invented)"),
    "steam_temperature": Spec("K", 373.15, 623.15, 523.15, "saturation temperature of the steam raised (invented)"),
    "U_steam": Spec("W/(m2 K)", 5.0, 1000.0, 50.0, "overall coefficient, gas to steam or water (invented)"),
    "U_gas_gas": Spec("W/(m2 K)", 5.0, 1000.0, 25.0, "overall coefficient, gas-gas reheat exchanger (invented)"),
    "approach_temperature": Spec("K", 2.0, 100.0, 20.0, "smallest terminal difference used for areas (invented)"),
    "superficial_velocity": Spec("m/s", 0.2, 2.0, 0.7, "gas velocity at the first-bed inlet (0.5-1 common practice)"),
    "particle_diameter": Spec("m", 2e-3, 0.03, 8e-3, "equivalent spherical diameter of the catalyst (invented)"),
    "void_fraction": Spec("-", 0.3, 0.7, 0.5, "bed voidage (rings; invented)"),
    "gas_viscosity": Spec("Pa s", 1e-5, 6e-5, 3.5e-5, "converter gas viscosity (~3.5e-5 at 450 degC, from memory)"),
    "bed_spacing": Spec("m", 0.3, 5.0, 2.0, "vessel height per bed beyond its depth: grids, plenums (invented)"),
    "catalyst_max_temperature": Spec("K", 823.15, 973.15, 903.15, "catalyst limit (600-630 degC, common practice)"),
    "emission_limit": Spec("kg/t", 0.0, 20.0, 2.0, "SO2 per tonne of acid, 40 CFR 60 Subpart H (from memory)"),
    "shell_design_temperature": Spec("K", 273.15, 810.9278, 810.9278, "converter shell design temperature"),
    "design_pressure_factor": Spec("-", 1.0, 1.5, 1.1, "design over operating pressure (gauge)"),
    "corrosion_allowance": Spec("m", 0.0, 0.01, 1e-3, "corrosion allowance, stainless shell"),
    "minimum_shell_thickness": Spec("m", 1.5875e-3, 0.05, 8e-3, "catalyst load and wind govern, not pressure (invented)"),
    "absorber_velocity": Spec("m/s", 0.3, 5.0, 1.5, "superficial gas velocity in the absorbers (invented)"),
    "absorber_height": Spec("m", 2.0, 40.0, 10.0, "absorber tower height (invented)"),
}

COLLAPSED = "a bed's Ergun pressure drop takes most of its inlet pressure: shallower beds or lower velocity"
BELOW_AMBIENT = "gas leaves the final absorber below ambient pressure: raise the pressure"
LOW_CONVERSION = "the converter converts under 1 % of the SO2 fed: capacity cannot be reached"
#: Every status a member can get: "ok" or a reason (then zero production, other figures finite).
STATUSES = ("ok", COLLAPSED, BELOW_AMBIENT, LOW_CONVERSION)

# Collina rate window of teakit's kinetics: 380-650 degC [K].
_T_WINDOW = (653.15, 923.15)
_P_FLOOR = P_FLOOR  # a bed whose pressure would fall below this fraction of its inlet is infeasible
_T_MID = float(_SSET.T_mid[0])
_C_NU = ideal_gas.combined_coefficients(_SSET, NU)  # (2, 7)
_RATE = None


def _rate():
    global _RATE
    if _RATE is None:
        from teakit.chemistry.kinetics import SO2Collina

        _RATE = SO2Collina(species=SPECIES)
    return _RATE


# ------------------------------------------------------------------------------------------------
# one adiabatic bed per member (run_bed, with the Ergun pressure drop)
# ------------------------------------------------------------------------------------------------


def _adiabatic_bed(n0, T0, P0, V, activity, ergun, steps):
    """One adiabatic bed per member, integrated by :func:`teakit.process.bed.run_bed` with the
    Ergun pressure drop; returns the dict the case reads (n, T, P, extent, T_max, profiles,
    collapsed)."""
    area, dp, eps, mu = ergun
    inlet = Stream(SPECIES, n0, T0, P0)
    res = run_bed(_rate(), inlet, V, nu=NU, steps=steps, rate_params={"activity": activity},
                  ergun=ErgunBed(diameter=np.sqrt(4.0 * area / np.pi), particle_diameter=dp,
                                 void_fraction=eps, viscosity=mu))
    return {
        "n": res.outlet.n, "T": res.outlet.T, "P": res.outlet.P, "extent": res.extent,
        "T_max": res.T_max, "profile_V": res.profile_V, "profile_T": res.profile_T,
        "profile_xi": res.profile_xi, "collapsed": res.collapsed,
    }


# ------------------------------------------------------------------------------------------------
# the case
# ------------------------------------------------------------------------------------------------


def equilibrium_line(T, P, feed, basis=None):
    """SO2 conversion at equilibrium against temperature, for drawing under the bed paths.

    Parameters
    ----------
    T : array_like
        Temperatures [K].
    P : float or array_like
        Pressure, absolute [Pa]; broadcasts with T.
    feed : mapping or array_like
        Gas entering the bed: ``{"SO2": ..., "O2": ..., "SO3": ..., "N2": ...}`` or an array over
        :data:`SPECIES` [mol/s or any amount basis].
    basis : float or array_like, optional
        Amount the conversion refers to (the SO2 fed to the converter); default the feed's
        SO2 + SO3, which for the first bed is the SO2 fed [same basis as ``feed``].

    Returns
    -------
    ndarray
        Equilibrium conversion 1 - n_SO2,eq / basis, ideal gas (teakit's
        :meth:`~teakit.chemistry.reaction.Reaction.equilibrium`) [-].
    """
    from teakit.chemistry.reaction import Reaction

    if not isinstance(feed, Mapping):
        a = np.asarray(feed, dtype=float)
        if a.shape[-1:] != (len(SPECIES),):
            raise InputError(f"feed must be a mapping or an array over {SPECIES}, got shape {a.shape}")
        feed = {s: a[..., i] for i, s in enumerate(SPECIES)}
    res = Reaction("SO2 + 0.5 O2 = SO3").equilibrium(T=T, P=P, feed=dict(feed), eos="ideal")
    so2 = res.moles[..., res.species.index("SO2")]
    if basis is None:
        basis = np.asarray(feed.get("SO2", 0.0), float) + np.asarray(feed.get("SO3", 0.0), float)
    return 1.0 - so2 / np.asarray(basis, dtype=float)


def so2_converter(decisions: Mapping | None = None, physics: Mapping | None = None, *,
                  steps: int = 40) -> ProcessResult:
    """Solve a batch of SO2 converters (module docstring for the flowsheet and conventions).

    Parameters
    ----------
    decisions : mapping
        Operating decisions (names and SI units in :data:`DECISIONS`): ``so2_strength`` [-],
        ``pressure`` [Pa], ``bed1_inlet_temperature`` .. ``bed4_inlet_temperature`` [K],
        ``bed1_catalyst`` .. ``bed4_catalyst`` [m3 s/kg, per acid-equivalent SO2 fed; strings
        such as ``"45 L/(t/d)"`` accepted], ``interpass_absorption`` (0-3, whole number).
        Scalars or arrays (B,); missing names take their defaults.
    physics : mapping
        Physics and design parameters (:data:`PHYSICS`), e.g. ``capacity`` [kg/s],
        ``catalyst_activity`` [-], ``absorption_efficiency`` [-].
    steps : int
        Points of the bed profiles: steps + 1 per bed, uniform in bed volume, 4 to 2000 (the
        integration itself runs on its own grid in extent).

    Returns
    -------
    ProcessResult
        Conversion, emissions, production, heat recovered, blower power, catalyst, converter
        size, bed temperatures per member (``result.to_frame()`` lists them with units), the
        equipment list for costing, and bed profiles ``bed_V``, ``bed_T``, ``bed_conversion``
        (B, 4, steps + 1) with ``bed_inlet_n``, ``bed_outlet_n`` (B, 4, 4) [mol/s].

    Raises
    ------
    InputError
        For unknown names, values outside their ranges, a non-whole ``interpass_absorption`` or
        an ``so2_strength`` that leaves no oxygen (the message names them).
    """
    if not (isinstance(steps, int | np.integer) and 4 <= steps <= 2000):
        raise InputError(f"steps must be a whole number from 4 to 2000, got {steps!r}")
    d, B = resolve_case(decisions, physics, DECISIONS, PHYSICS)
    ip = d["interpass_absorption"]
    if np.any(ip != np.round(ip)):
        bad = ip[ip != np.round(ip)][0]
        raise InputError(f"decision 'interpass_absorption' = {bad:g} must be a whole number 0, 1, 2 or 3 "
                         "(the bed after which SO3 is absorbed; 0: single contact)")
    ip = ip.astype(int)
    s = d["so2_strength"]
    if np.any(s >= AIR_O2):
        raise InputError(f"decision 'so2_strength' = {s[s >= AIR_O2][0]:g} leaves no oxygen: burning sulfur in dry "
                         f"air uses one O2 per SO2, so so2_strength must be below {AIR_O2} (valid [0.02, 0.21))")
    return _solve(d, B, ip, steps)


def _solve(d, B, ip, steps):
    s = d["so2_strength"]
    cap = d["capacity"]
    rate = _rate()
    act = d["catalyst_activity"] * d["bulk_density"] / float(rate.bulk_density)  # rate is per bed volume
    y_feed = np.stack([s, AIR_O2 - s, np.zeros(B), np.full(B, AIR_N2)], axis=-1)
    # Basis: SO2 fed = capacity / M_H2SO4 (full conversion); flows are scaled at the end.
    F_so2 = cap / M_H2SO4
    F = F_so2 / s
    n = F[:, None] * y_feed
    V_beds = np.stack([d[f"bed{k + 1}_catalyst"] for k in range(N_BEDS)], axis=-1) * cap[:, None]
    T_in = np.stack([d[f"bed{k + 1}_inlet_temperature"] for k in range(N_BEDS)], axis=-1)
    P1 = d["pressure"]
    u = d["superficial_velocity"]
    area = F * R * T_in[:, 0] / (P1 * u)  # first-bed inlet, one diameter for all beds
    ergun = (area, d["particle_diameter"], d["void_fraction"], d["gas_viscosity"])
    H = lambda n_, T_: enthalpy_flow(n_, T_, _SSET)  # noqa: E731
    T_abs = d["absorber_temperature"]
    T_smin = d["steam_min_temperature"]
    eta = d["absorption_efficiency"]
    P_amb = d["ambient_pressure"]

    beds, q_inter, q_cool_abs, q_reheat, q_low = [], [], np.zeros(B), np.zeros(B), np.zeros(B)
    absorbed_int = np.zeros(B)
    collapsed = np.zeros(B, bool)
    inlet_n, inlet_P, outlet_n = [], [], []
    interpass_gas = np.zeros(B)  # gas flow through the intermediate absorber [mol/s]
    T_out_ip, T_next_ip, n_ip = np.zeros(B), np.zeros(B), np.zeros((B, len(SPECIES)))
    P = P1.copy()
    for k in range(N_BEDS):
        inlet_n.append(n.copy())
        inlet_P.append(P.copy())
        res = _adiabatic_bed(n, T_in[:, k], P, V_beds[:, k], act, ergun, steps)
        beds.append(res)
        collapsed |= res["collapsed"]
        outlet_n.append(res["n"].copy())
        n, T_out, P = res["n"], res["T"], res["P"]
        if k == N_BEDS - 1:
            break
        here = ip == k + 1
        # Inter-bed cooler (or heater where the next inlet lies above this outlet).
        q = H(n, T_out) - H(n, T_in[:, k + 1])
        q_inter.append(np.where(here, 0.0, q))
        # Interpass: cool for steam down to steam_min, then to the absorber; absorb; reheat.
        T_hi_end = np.minimum(T_out, np.maximum(T_smin, T_abs))
        cool_hi = H(n, T_out) - H(n, T_hi_end)
        cool_lo = H(n, T_hi_end) - H(n, T_abs)
        taken = eta * n[:, 2]
        n_after = n.copy()
        n_after[:, 2] -= taken
        reheat = H(n_after, T_in[:, k + 1]) - H(n_after, T_abs)
        q_cool_abs += np.where(here, cool_hi, 0.0)
        q_low += np.where(here, cool_lo, 0.0)
        q_reheat += np.where(here, reheat, 0.0)
        absorbed_int += np.where(here, taken, 0.0)
        interpass_gas += np.where(here, n_after.sum(axis=-1), 0.0)
        T_out_ip = np.where(here, T_out, T_out_ip)
        T_next_ip = np.where(here, T_in[:, k + 1], T_next_ip)
        n_ip = np.where(here[:, None], n, n_ip)
        n = np.where(here[:, None], n_after, n)
        P = P - np.where(here, d["absorber_pressure_drop"], d["interbed_pressure_drop"])
        low_P = P <= _P_FLOOR * P1
        collapsed |= low_P
        P = np.maximum(P, _P_FLOOR * P1)
    # Final cooling and absorption.
    T4 = beds[-1]["T"]
    T_hi_end = np.minimum(T4, np.maximum(T_smin, T_abs))
    q_final = H(n, T4) - H(n, T_hi_end)
    q_low += H(n, T_hi_end) - H(n, T_abs)
    absorbed_fin = eta * n[:, 2]
    stack = n.copy()
    stack[:, 2] -= absorbed_fin
    P_stack = P - d["absorber_pressure_drop"]
    absorbed = absorbed_int + absorbed_fin
    p = absorbed / F_so2  # acid made per SO2 fed [mol/mol]

    status = np.full(B, "ok", dtype=object)
    low_conv = p < 0.01
    status[collapsed] = COLLAPSED
    status[~collapsed & (P_stack < P_amb)] = BELOW_AMBIENT
    status[low_conv] = LOW_CONVERSION
    ok = status == "ok"
    f = np.where(low_conv, 1.0, 1.0 / np.maximum(p, 1e-300))  # scale from the basis to capacity

    # ---- blower (dry air from ambient) ----
    P_dis = P1 + d["upstream_pressure_drop"]
    y_air = np.broadcast_to(np.array([0.0, AIR_O2, 0.0, AIR_N2]), (B, 4))
    T_amb = d["ambient_temperature"]
    W_blower, T_dis, _, stages = compress_staged(
        F * f, T_amb, P_amb, np.maximum(P_dis, P_amb), y_air, SPECIES, d["blower_efficiency"], T_amb)
    air_volume = F * f * R * T_amb / P_amb

    # ---- heat ----
    q_inter = np.stack(q_inter, axis=-1) * f[:, None]  # (B, 3)
    gross = np.clip(q_inter, 0.0, None).sum(axis=-1) + (q_cool_abs + q_final) * f
    demand = np.clip(-q_inter, 0.0, None).sum(axis=-1) + q_reheat * f
    net = gross - demand

    # ---- converter vessel ----
    area_f = area * f
    D = np.sqrt(4.0 * area_f / np.pi)
    depths = V_beds / area[:, None]  # scale-free
    height = depths.sum(axis=-1) + N_BEDS * d["bed_spacing"]
    P_design_g = np.maximum(d["design_pressure_factor"] * P1 - P_amb, 0.0)
    S = allowable_stress(SHELL_MATERIAL, d["shell_design_temperature"])
    shell = shell_thickness_detail(P_design_g, D, S, 1.0, d["corrosion_allowance"], t_min=d["minimum_shell_thickness"])
    mass = vessel_mass(D, height, shell.thickness, shell.thickness, head="ellipsoidal", density=STAINLESS_DENSITY)
    V_cat = V_beds * f[:, None]

    # ---- exchanger areas (rough: terminal differences floored at the approach) ----
    dTa = d["approach_temperature"]
    T_st = d["steam_temperature"]
    areas = {}
    for k in range(N_BEDS - 1):
        Q = np.clip(q_inter[:, k], 0.0, None)
        areas[f"interbed_cooler_{k + 1}"] = _area(Q, d["U_steam"], beds[k]["T"] - T_st, T_in[:, k + 1] - T_st, dTa)
    T_sink = np.minimum(T_st, T_smin - dTa)
    has_ip = ip > 0
    areas["interpass_cooler"] = _area(q_cool_abs * f, d["U_steam"], T_out_ip - T_sink, T_smin - T_sink, dTa)
    areas["final_cooler"] = _area(q_final * f, d["U_steam"], T4 - T_sink, T_smin - T_sink, dTa)
    # Reheat against the hot interpass gas (hot end: bed outlet vs next inlet; cold end: the hot
    # gas after giving the reheat duty vs the absorber exit gas).
    # (hot-gas outlet from its heat capacity at the bed outlet: an estimate, for the area only)
    Cp_ip = heat_capacity_flow(np.where(has_ip[:, None], n_ip, 1.0), np.where(has_ip, T_out_ip, 700.0), _SSET)
    T_h2 = np.where(has_ip, T_out_ip - q_reheat / Cp_ip, T_abs + dTa)
    areas["reheat_exchanger"] = _area(q_reheat * f, d["U_gas_gas"], T_out_ip - T_next_ip, T_h2 - T_abs, dTa)

    # ---- absorbers (towers sized by a superficial velocity) ----
    def tower(gas, P_):
        a = gas * R * T_abs / (np.maximum(P_, 1.0) * d["absorber_velocity"])
        return a * d["absorber_height"], np.sqrt(4.0 * a / np.pi)

    Vt_int, Dt_int = tower(interpass_gas * f, P1)
    Vt_fin, Dt_fin = tower(stack.sum(axis=-1) * f, P_stack)

    # ---- emissions (intensive: independent of the scale) ----
    acid_b = absorbed * M_H2SO4
    with np.errstate(divide="ignore", invalid="ignore"):
        so2_em = np.where(acid_b > 0, stack[:, 0] * M_SO2 / acid_b * 1000.0, 0.0)
        so3_em = np.where(acid_b > 0, stack[:, 2] * M_SO3 / acid_b * 1000.0, 0.0)
    X = 1.0 - stack[:, 0] / F_so2
    production = np.where(ok, absorbed * f * M_H2SO4, 0.0)

    T_peak_beds = np.stack([b["T_max"] for b in beds], axis=-1)
    T_peak = T_peak_beds.max(axis=-1)
    lo_w, hi_w = _T_WINDOW
    outside = (T_in.min(axis=-1) < lo_w) | (T_peak > hi_w)
    if outside.any():
        warnings.warn(
            f"{int(outside.sum())} member(s) run a bed outside 380-650 degC, the window of teakit's Collina "
            "rate: read their conversions with care", RangeWarning, stacklevel=3)

    values = {
        "overall_conversion": X,
        "so2_emission": so2_em,
        "emission_margin": d["emission_limit"] - so2_em,
        "so3_emission": so3_em,
        "production": production,
        "production_tpd": production * 86400.0 / 1000.0,
        "sulfur_feed": F_so2 * f * M_S,
        "acid_per_so2_fed": p,
        "air_flow": F * f,
        "feed_SO2_flow": F_so2 * f,
        "feed_O2_flow": F * f * (AIR_O2 - s),
        "feed_N2_flow": F * f * AIR_N2,
        "so3_absorbed_intermediate": absorbed_int * f,
        "so3_absorbed_final": absorbed_fin * f,
        "stack_SO2_flow": stack[:, 0] * f,
        "stack_O2_flow": stack[:, 1] * f,
        "stack_SO3_flow": stack[:, 2] * f,
        "stack_N2_flow": stack[:, 3] * f,
        "blower_power": W_blower,
        "blower_discharge_pressure": P_dis,
        "blower_discharge_temperature": T_dis,
        "blower_stages": stages.astype(float),
        "blower_suction_flow": air_volume,
        "heat_recovered": np.maximum(net, 0.0),
        "heater_duty": np.maximum(-net, 0.0),
        "heat_recovered_gross": gross,
        "interbed_cooling": np.clip(q_inter, 0.0, None).sum(axis=-1),
        "absorber_gas_cooling": (q_cool_abs + q_final) * f,
        "reheat_duty": q_reheat * f,
        "low_grade_heat": q_low * f,
        "catalyst_volume": V_cat.sum(axis=-1),
        "catalyst_mass": V_cat.sum(axis=-1) * d["bulk_density"],
        "catalyst_loading": V_beds.sum(axis=-1) / (np.maximum(p, 1e-300) * cap),
        "converter_diameter": D,
        "converter_height": height,
        "converter_shell_thickness": np.asarray(shell.thickness, float),
        "converter_mass": np.asarray(mass, float),
        "converter_volume": area_f * height,
        "peak_catalyst_temperature": T_peak,
        "catalyst_temperature_margin": d["catalyst_max_temperature"] - T_peak,
        "stack_pressure": P_stack,
        "stack_pressure_margin": P_stack - P_amb,
        "intermediate_absorber_diameter": Dt_int,
        "final_absorber_diameter": Dt_fin,
    }
    # The names every case reports for the costing layer (teakit.study.economics).
    values["electric_power"] = values["blower_power"]
    values["recovered_heat"] = values["heat_recovered"]
    values["fired_heater_duty"] = values["heater_duty"]
    values["cooling_water_duty"] = values["low_grade_heat"]
    for k in range(N_BEDS):
        b = beds[k]
        values[f"bed{k + 1}_catalyst_volume"] = V_cat[:, k]
        values[f"bed{k + 1}_depth"] = depths[:, k]
        values[f"bed{k + 1}_inlet_temperature"] = T_in[:, k]
        values[f"bed{k + 1}_outlet_temperature"] = b["T"]
        values[f"bed{k + 1}_peak_temperature"] = b["T_max"]
        values[f"bed{k + 1}_conversion"] = 1.0 - b["n"][:, 0] / F_so2
        values[f"bed{k + 1}_inlet_pressure"] = inlet_P[k]
        values[f"bed{k + 1}_pressure_drop"] = inlet_P[k] - b["P"]
    units = {k: _unit(k) for k in values}
    equipment = {
        "converter": {"kind": "vessel_vertical", "volume": area_f * height, "diameter": D, "height": height,
                      "pressure_gauge": P_design_g, "shell_thickness": np.asarray(shell.thickness, float),
                      "mass": np.asarray(mass, float), "material": "SS"},  # cost tables: stainless (plate SA-240 304)
        "blower": {"kind": "compressor_centrifugal", "power": W_blower, "flow": air_volume},
    }
    for name, A in areas.items():
        equipment[name] = {"kind": "hx_fixed_tube", "area": A}
    equipment["intermediate_absorber"] = {"kind": "tower", "volume": Vt_int, "diameter": Dt_int,
                                          "height": np.where(has_ip, d["absorber_height"], 0.0)}
    equipment["final_absorber"] = {"kind": "tower", "volume": Vt_fin, "diameter": Dt_fin,
                                   "height": d["absorber_height"]}
    profiles = {
        "bed_V": np.stack([b["profile_V"] for b in beds], axis=1) * f[:, None, None],
        "bed_T": np.stack([b["profile_T"] for b in beds], axis=1),
        "bed_extent": np.stack([b["profile_xi"] for b in beds], axis=1) * f[:, None, None],
        "bed_conversion": np.stack(
            [1.0 - (inlet_n[k][:, 0:1] - beds[k]["profile_xi"]) / F_so2[:, None] for k in range(N_BEDS)], axis=1),
        "bed_inlet_n": np.stack(inlet_n, axis=1) * f[:, None, None],
        "bed_outlet_n": np.stack(outlet_n, axis=1) * f[:, None, None],
    }
    return ProcessResult("so2_converter", values, units, equipment, status.astype(str), profiles)


def _area(Q, U, dT1, dT2, dTa):
    """Exchanger area [m2], zero where there is no duty; terminal differences floored at dTa."""
    dT1 = np.maximum(dT1, dTa)
    dT2 = np.maximum(dT2, dTa)
    return np.where(Q > 0, exchanger_area(np.maximum(Q, 0.0), U, dT1, dT2), 0.0)


_UNITS = {
    "so2_emission": "kg/t", "emission_margin": "kg/t", "so3_emission": "kg/t", "production": "kg/s",
    "production_tpd": "t/d", "sulfur_feed": "kg/s", "acid_per_so2_fed": "mol/mol", "blower_suction_flow": "m3/s",
    "blower_discharge_pressure": "Pa", "blower_discharge_temperature": "K", "catalyst_volume": "m3",
    "catalyst_mass": "kg", "catalyst_loading": "m3*s/kg", "converter_diameter": "m", "converter_height": "m",
    "converter_shell_thickness": "m", "converter_mass": "kg", "converter_volume": "m3",
    "peak_catalyst_temperature": "K", "catalyst_temperature_margin": "K", "stack_pressure": "Pa",
    "stack_pressure_margin": "Pa", "intermediate_absorber_diameter": "m", "final_absorber_diameter": "m",
}


def _unit(name: str) -> str:
    if name in _UNITS:
        return _UNITS[name]
    if name.endswith("_flow") or name.startswith("so3_absorbed") or name == "air_flow":
        return "mol/s"
    if name.endswith(("_power", "_duty", "_heat", "_cooling", "_gross")) or name == "heat_recovered":
        return "W"
    if name.endswith(("_temperature",)):
        return "K"
    if name.endswith(("_pressure", "_pressure_drop")):
        return "Pa"
    if name.endswith("_catalyst_volume"):
        return "m3"
    if name.endswith("_depth"):
        return "m"
    return "-"
