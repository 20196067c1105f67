"""Ammonia synthesis loop: make-up compression, multi-bed converter, heat recovery, refrigerated
separation, purge and recycle, solved for a whole batch of operating points at once.

.. warning::

   Preliminary estimates for feasibility studies. Hydrogen at high pressure and temperature
   attacks carbon steels (see :mod:`teakit.equipment.vessel`), ammonia is toxic, and the loop holds
   a large stored energy: the applicable codes, local regulations and licensed engineers govern.

Flowsheet (one loop; flows at the plant's capacity):

1. Make-up H2/N2 (3:1, with settable Ar and CH4 fractions) is compressed from its supply pressure
   to loop pressure in intercooled stages (stage ratio <= 3).
2. It joins the recycle gas, which the circulator lifts from separator pressure (loop pressure less
   the loop pressure drop) back to loop pressure.
3. The converter feed is preheated against the converter effluent to the first-bed inlet
   temperature and passes ``n_beds`` adiabatic beds (Temkin-Pyzhev kinetics with the Dyson & Simon
   constants, :mod:`teakit.chemistry.kinetics`), cooled between beds by exchangers (raising steam)
   to the inter-bed inlet temperature.
4. The effluent raises steam down to ``max(first-bed inlet + approach, steam_min_temperature)``,
   preheats the feed, is water-cooled to ``cooling_water_temperature`` and refrigerated to the
   separator temperature, where a Peng-Robinson flash (:mod:`teakit.thermo.flash`) splits liquid
   ammonia (product, with the gases dissolved in it lost at let-down) from the vapour.
5. A fraction of the vapour is purged (inerts leave; H2 and NH3 go with them), the rest recycles.

The loop is solved by Broyden iteration (:mod:`teakit.process.loop`) on the recycle flows and
the make-up flow together: the make-up flow is set so that the liquid product equals the plant
capacity, so every feasible member produces exactly at capacity. Members where nothing condenses
at the separator, or the loop cannot reach capacity (its production peaks below it, or the
recycle runs away), are reported with a status reason and zero production, never NaN; the
statuses are listed in :data:`STATUSES`. The starting Jacobian of the tear comes from a coarser
bed integration; the separator flash of each member starts from its K-values of the previous
iteration.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from teakit.equipment.exchanger import exchanger_area
from teakit.equipment.refrigeration import refrigeration_power
from teakit.equipment.vessel import allowable_stress, shell_thickness_detail, vessel_mass
from teakit.errors import InputError
from teakit.process.cases.common import Spec, compress_staged, resolve_case
from teakit.process.loop import broyden
from teakit.process.reactor import multibed
from teakit.process.result import ProcessResult
from teakit.process.streams import Stream, enthalpy_flow, mix, temperature_from_enthalpy
from teakit.thermo.species import species_set
from teakit.validation import check_range

__all__ = ["DECISIONS", "FLASH_FAILED", "NOT_CONVERGED", "PHYSICS", "SPECIES", "STATUSES", "ammonia_loop"]

SPECIES = ("N2", "H2", "NH3", "Ar", "CH4")
NU = np.array([-1.0, -3.0, 2.0, 0.0, 0.0])  # N2 + 3 H2 = 2 NH3
M_NH3 = 17.031e-3  # kg/mol (IUPAC 2021 atomic weights)

DECISIONS: dict[str, Spec] = {
    "pressure": Spec("Pa", 60e5, 400e5, 200e5, "converter inlet (loop) pressure, absolute"),
    "inlet_temperature": Spec("K", 573.15, 793.15, 673.15, "first-bed inlet temperature"),
    "interbed_temperature": Spec("K", 573.15, 793.15, 693.15, "inlet temperature of the later beds"),
    "separator_temperature": Spec("K", 238.15, 313.15, 263.15, "refrigerated separator temperature"),
    "purge_fraction": Spec("-", 1e-3, 0.5, 0.03, "fraction of separator vapour purged"),
    "catalyst_volume": Spec("m3", 1.0, 1000.0, 60.0, "total catalyst volume of the converter"),
}

PHYSICS: dict[str, Spec] = {
    "capacity": Spec("kg/s", 1e-3, 100.0, 1000e3 / 86400, "ammonia production at capacity (1000 t/d default)"),
    "catalyst_activity": Spec("-", 0.05, 5.0, 1.0, "multiplier on the Dyson & Simon rate"),
    "makeup_argon": Spec("-", 0.0, 0.05, 0.002, "Ar mole fraction of the make-up gas"),
    "makeup_methane": Spec("-", 0.0, 0.05, 0.0, "CH4 mole fraction of the make-up gas"),
    "makeup_pressure": Spec("Pa", 1e5, 300e5, 30e5, "make-up gas supply pressure"),
    "makeup_temperature": Spec("K", 273.15, 373.15, 313.15, "make-up gas supply temperature"),
    "loop_pressure_drop": Spec("Pa", 0.0, 40e5, 10e5, "pressure drop round the loop"),
    "compressor_efficiency": Spec("-", 0.3, 1.0, 0.78, "isentropic efficiency, make-up compressor"),
    "circulator_efficiency": Spec("-", 0.3, 1.0, 0.75, "isentropic efficiency, recycle circulator"),
    "cooling_water_temperature": Spec("K", 283.15, 333.15, 308.15, "gas temperature after water cooling"),
    "approach_temperature": Spec("K", 2.0, 60.0, 15.0, "minimum exchanger approach"),
    "steam_min_temperature": Spec("K", 373.15, 673.15, 523.15, "effluent is cooled for steam down to this"),
    "refrigeration_fraction_of_carnot": Spec("-", 0.1, 1.0, 0.55, "refrigeration COP as a fraction of Carnot"),
    "refrigerant_condensing_temperature": Spec("K", 283.15, 343.15, 313.15, "refrigerant condensing temperature"),
    "evaporator_approach": Spec("K", 1.0, 20.0, 5.0, "separator temperature minus evaporating temperature"),
    "kij_NH3_H2": Spec("-", -0.5, 0.5, 0.0, "Peng-Robinson k_ij NH3-H2 (no verified published value)"),
    "kij_NH3_N2": Spec("-", -0.5, 0.5, 0.0, "Peng-Robinson k_ij NH3-N2 (no verified published value)"),
    "bed1_fraction": Spec("-", 0.05, 0.9, 0.25, "share of the catalyst in the first bed"),
    "bed2_fraction": Spec("-", 0.05, 0.9, 0.35, "share of the catalyst in the second bed"),
    "converter_L_over_D": Spec("-", 1.0, 20.0, 6.0, "converter height over diameter"),
    "converter_internals_factor": Spec("-", 1.0, 3.0, 1.4, "vessel volume over catalyst volume"),
    "shell_design_temperature": Spec("K", 273.15, 773.15, 573.15, "converter shell design temperature"),
    "design_pressure_factor": Spec("-", 1.0, 1.5, 1.1, "design pressure over operating pressure"),
    "corrosion_allowance": Spec("m", 0.0, 0.02, 3e-3, "corrosion allowance"),
    "U_boiler": Spec("W/(m2 K)", 10.0, 5000.0, 300.0, "overall coefficient, waste-heat boiler"),
    "U_gas_gas": Spec("W/(m2 K)", 10.0, 5000.0, 250.0, "overall coefficient, feed-effluent exchanger"),
    "U_water": Spec("W/(m2 K)", 10.0, 5000.0, 500.0, "overall coefficient, water cooler"),
    "U_chiller": Spec("W/(m2 K)", 10.0, 5000.0, 500.0, "overall coefficient, ammonia chiller"),
    "steam_temperature": Spec("K", 373.15, 623.15, 583.15, "saturation temperature of raised steam"),
}
N_BEDS = 3
#: Recycle over make-up above which a loop is called unable to reach capacity [-].
MAX_RECYCLE_RATIO = 30.0
#: Consecutive iterations of a growing recycle after which a loop is called unable to reach
#: capacity [-].
GROWING_ITERATIONS = 12
#: Iterations without halving the residual after which the loop solver stops a member [-].
STALL_ITERATIONS = 10
#: A member whose production stays short of capacity, with the loop asking for more make-up or
#: more recycle, for this many iterations in which neither its production closed PLATEAU_GAIN of its
#: best gap to capacity nor the loop residual halved is called unable to reach capacity: the
#: converter's output peaks below it [-].
PLATEAU_ITERATIONS = 5
PLATEAU_GAIN = 0.02
#: Loosest convergence of the separator flash inside the loop, max change of ln K, while the
#: loop residual is still large (see ``separator_flash`` in :func:`ammonia_loop`) [-].
FLASH_TOL_LOOSE = 1e-6
SHELL_MATERIAL = "SA-387 Gr 22 Cl 2"

NO_LIQUID = "separator above the dew point: nothing condenses"
RUNAWAY = f"capacity not reached: recycle above {MAX_RECYCLE_RATIO:g} x make-up"
GROWING = "capacity not reached: recycle keeps growing"
PEAKED = "capacity not reached: production peaks below capacity"
#: The one status that is not a physical reason: the solver stopped without an answer.
NOT_CONVERGED = "recycle loop did not converge"
#: Likewise: the Peng-Robinson flash of the converter effluent found no answer.
FLASH_FAILED = "separator flash did not converge"
#: Every status a member can get: "ok" or a reason (then zero production, other figures finite).
#: "capacity not reached": the loop found no steady state at capacity within the iteration
#: bound, because the recycle ran past MAX_RECYCLE_RATIO x make-up, kept growing for
#: GROWING_ITERATIONS iterations, or the production stalled below capacity while the loop asked
#: for more gas (PLATEAU_ITERATIONS). Checked over the demo study's whole decision space
#: (tests/test_convergence_grid.py): solving those points again with 400 iterations and no such
#: stops, about 97 % still find no steady state; the rest settle at recycle ratios of about 18 or
#: more, beyond practical loops (3-6, common practice).
STATUSES = ("ok", NO_LIQUID, RUNAWAY, GROWING, PEAKED, NOT_CONVERGED, FLASH_FAILED)


def _rate():
    from teakit.chemistry.kinetics import AmmoniaTemkinPyzhev

    return AmmoniaTemkinPyzhev(species=SPECIES)


def _kij(d):
    """k_ij matrix for one physics set (scalars)."""
    from teakit.thermo.peng_robinson import kij_matrix

    return kij_matrix(SPECIES, {("NH3", "H2"): d["kij_NH3_H2"], ("NH3", "N2"): d["kij_NH3_N2"]})


def _flash(T, P, z, kij, K=None, tol=1e-13):
    """Separator flash of a batch; members with a finite ``K`` (B, ns) start from it (a few
    substitution steps instead of a dozen; the same converged answer), the others from Wilson.

    Members whose flash does not converge (e.g. a stability test that stalls just above this
    tight tolerance) are flashed again from Wilson at the flash's default tolerance; members that
    fail again get a one-phase vapour result (beta = 1, x = y = z) and are flagged.

    Returns
    -------
    FlashResult, ndarray of bool (B,)
        The flash and the members whose flash failed.
    """
    from teakit.errors import ConvergenceError
    from teakit.thermo.flash import TOL, FlashResult, flash_tp

    B = len(T)
    has = np.zeros(B, dtype=bool) if K is None else np.isfinite(K).all(axis=-1)
    failed = np.zeros(B, dtype=bool)
    parts = []
    todo = [(g, tol, has[g[0]]) for g in (np.flatnonzero(has), np.flatnonzero(~has)) if g.size]
    while todo:
        g, tol_g, warm = todo.pop()
        try:
            parts.append((g, flash_tp(T[g], P[g], z[g], SPECIES, kij=kij, tol=tol_g, K_init=K[g] if warm else None)))
        except ConvergenceError as exc:
            bad = np.zeros(g.size, dtype=bool)
            bad[exc.members] = True
            if (~bad).any():
                todo.append((g[~bad], tol_g, warm))
            if warm or tol_g < TOL:
                todo.append((g[bad], max(tol_g, TOL), False))
            else:
                failed[g[bad]] = True
    if failed.any():
        f = np.flatnonzero(failed)
        zf = z[f]
        parts.append((f, FlashResult(beta=np.ones(f.size), x=zf.copy(), y=zf.copy(), K=np.ones_like(zf),
                                     phases=np.ones(f.size, dtype=int), iterations=np.zeros(f.size, dtype=int))))
    fl = parts[0][1] if len(parts) == 1 else _merge_flash(parts, B)
    return fl, failed


def _merge_flash(parts, B):
    """One FlashResult from flashes of disjoint members ``[(members, result), ...]``."""
    from teakit.thermo.flash import FlashResult

    out = {}
    for name in ("beta", "x", "y", "K", "phases", "iterations"):
        first = np.asarray(getattr(parts[0][1], name))
        arr = np.empty((B,) + first.shape[1:], dtype=first.dtype)
        for sel, fl in parts:
            arr[sel] = getattr(fl, name)
        out[name] = arr
    return FlashResult(**out)


def _flash_enthalpy(T, P, n, kij, K=None):
    """Real-fluid enthalpy flow [W] of flows n (B, ns) at T, P after a flash, the flash (started
    from ``K`` where finite) and the members whose flash failed (see :func:`_flash`)."""
    from teakit.thermo.flash import TOL, flash_enthalpy

    tot = n.sum(axis=-1)
    z = n / tot[:, None]
    fl, failed = _flash(T, P, z, kij, K, tol=TOL)
    return tot * flash_enthalpy(T, P, fl, SPECIES, kij=kij).h, fl, failed


def ammonia_loop(decisions: Mapping | None = None, physics: Mapping | None = None, *,
                 steps: int = 24, max_iter: int = 40, warm: Mapping | None = None,
                 tol: float = 3e-10, flash_tol: float = 1e-13) -> ProcessResult:
    """Solve a batch of ammonia synthesis loops.

    Parameters
    ----------
    decisions : mapping
        Operating decisions (names and SI units in :data:`DECISIONS`): ``pressure`` [Pa],
        ``inlet_temperature`` [K], ``interbed_temperature`` [K], ``separator_temperature`` [K],
        ``purge_fraction`` [-], ``catalyst_volume`` [m3]. Scalars or arrays (B,); strings with
        units ("200 bar") accepted. Missing names take their defaults.
    physics : mapping
        Physics and design parameters (:data:`PHYSICS`), e.g. ``capacity`` [kg/s],
        ``catalyst_activity`` [-], Peng-Robinson ``kij_NH3_H2`` [-].
    steps : int
        Integration steps per bed.
    max_iter : int
        Bound on the loop iterations.
    tol : float
        Loop convergence: largest change of the tear stream relative to its largest flow [-].
        With the default the element balances close to about 3e-10 of the converter feed
        (3e-9 of the make-up).
    flash_tol : float
        Tightest convergence of the separator flash inside the loop, max change of ln K (1e-14
        to 1e-8) [-]: each flash is solved to 1e-3 of the loop's residual so far, down to this
        as the loop converges. The default keeps its error far below the loop's; a looser value
        serves a looser ``tol`` (the optimiser's search).
    warm : mapping, optional
        ``result.state`` of an earlier call at nearby points (same batch size): the converged
        tear and inverse Jacobian start the solve, which then needs a few iterations only, and
        the K-values of its two-phase flashes (``K_sep``, ``K_T2``, optional) start the flashes.

    Returns
    -------
    ProcessResult
        Production, conversion, recycle ratio, inerts, purge losses, powers, duties, catalyst,
        vessel sizes and the peak catalyst temperature per member (``result.to_frame()`` lists
        them with units), the equipment list for costing, and bed profiles.

    Raises
    ------
    InputError
        For unknown names or values outside their ranges (the message names them).
    """
    d, B = resolve_case(decisions, physics, DECISIONS, PHYSICS)
    if isinstance(flash_tol, bool):
        raise InputError(f"flash_tol must be a number from 1e-14 to 1e-8, got {flash_tol!r}")
    flash_tol = float(check_range("flash_tol", flash_tol, 1e-14, 1e-8))
    if warm is not None:
        warm = _check_warm(warm, B)
    frac2_total = d["bed1_fraction"] + d["bed2_fraction"]
    if np.any(frac2_total >= 0.95):
        raise InputError("bed1_fraction + bed2_fraction must leave at least 5 % of the catalyst for bed 3")
    # k_ij enter the flash as one matrix per call: group members by their k_ij values.
    keys = np.stack([d["kij_NH3_H2"], d["kij_NH3_N2"]], axis=-1)
    uniq, inv = np.unique(keys, axis=0, return_inverse=True)
    parts = []
    for g in range(uniq.shape[0]):
        m = np.flatnonzero(inv.ravel() == g)
        sub = {k: v[m] for k, v in d.items()}
        w = None if warm is None else {k: np.asarray(v)[m] for k, v in warm.items()}
        parts.append((m, _solve(sub, len(m), _kij({"kij_NH3_H2": uniq[g, 0], "kij_NH3_N2": uniq[g, 1]}), steps, max_iter, w, tol,
                                flash_tol)))
    if len(parts) == 1:
        return parts[0][1]
    return _merge(parts, B)


def _check_warm(warm, B):
    """``warm`` as float arrays of the shapes that ``result.state`` has, or InputError."""
    if not isinstance(warm, Mapping):
        raise InputError(f"warm must be the state mapping of an earlier result (result.state), got {type(warm).__name__}")
    shapes = {"tear": (B, 6), "H": (B, 6, 6), "scale": (B, 6)}
    missing = [k for k in shapes if k not in warm]
    if missing:
        raise InputError(f"warm must hold {', '.join(shapes)} (result.state of an earlier call); missing {', '.join(missing)}")
    # Optional: K-values of the two-phase flashes (NaN where a flash was one phase).
    shapes |= {k: (B, len(SPECIES)) for k in ("K_sep", "K_T2") if k in warm}
    out = {}
    for k, shape in shapes.items():
        try:
            a = np.asarray(warm[k], dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"warm[{k!r}] must be an array of numbers") from None
        if a.shape != shape:
            raise InputError(f"warm[{k!r}] must have shape {shape} for a batch of {B}, got {a.shape}")
        out[k] = a
    if not np.all(np.isfinite(out["scale"]) & (out["scale"] > 0)):
        raise InputError("warm['scale'] must be finite and > 0")
    for k in ("K_sep", "K_T2"):
        if k in out and np.any(~np.isnan(out[k]) & ~(np.isfinite(out[k]) & (out[k] > 0))):
            raise InputError(f"warm[{k!r}] must hold K-values > 0 (NaN where a flash was one phase)")
    return out


def _merge(parts, B):
    first = parts[0][1]
    values = {k: np.zeros(B) for k in first.values}
    status = np.empty(B, dtype=object)
    equipment = {name: {k: (np.zeros(B) if not isinstance(v, str) else v) for k, v in item.items()} for name, item in first.equipment.items()}
    profiles = {k: np.zeros((B,) + v.shape[1:]) for k, v in first.profiles.items()}
    for m, r in parts:
        for k in values:
            values[k][m] = r.values[k]
        status[m] = r.status
        for name, item in r.equipment.items():
            for k, v in item.items():
                if not isinstance(v, str):
                    equipment[name][k][m] = v
        for k in profiles:
            profiles[k][m] = r.profiles[k]
    state = {k: np.zeros((B,) + v.shape[1:]) for k, v in first.state.items()}
    for m, r in parts:
        for k in state:
            state[k][m] = r.state[k]
    return ProcessResult(first.case, values, first.units, equipment, status.astype(str), profiles, state)


def _solve(d, B, kij, steps, max_iter, warm=None, tol=3e-10, flash_tol=1e-13):
    sset = species_set(SPECIES)
    rate = _rate()
    P = d["pressure"]
    P_sep = P - d["loop_pressure_drop"]
    if np.any(P_sep <= d["makeup_pressure"] * 0 + 1e5):
        raise InputError("pressure minus loop_pressure_drop must exceed 1 bar")
    cap = d["capacity"] / M_NH3  # mol/s NH3
    inert = d["makeup_argon"] + d["makeup_methane"]
    y_mu = np.stack([0.25 * (1 - inert), 0.75 * (1 - inert), np.zeros(B), d["makeup_argon"], d["makeup_methane"]], axis=-1)
    T_sep = d["separator_temperature"]
    T_cw = d["cooling_water_temperature"]
    fr = np.stack([d["bed1_fraction"], d["bed2_fraction"], 1.0 - d["bed1_fraction"] - d["bed2_fraction"]], axis=-1)
    V_beds = d["catalyst_volume"][:, None] * fr
    T_beds = np.stack([d["inlet_temperature"], d["interbed_temperature"], d["interbed_temperature"]], axis=-1)

    # Make-up compression to loop pressure (once: independent of the loop state per unit flow).
    def makeup_stream(F, idx):
        return Stream(SPECIES, F[:, None] * y_mu[idx], d["makeup_temperature"][idx], P[idx])

    def converter(feed: Stream, idx, steps=steps):
        """Preheat, beds with inter-bed cooling; returns effluent, bed results, duties."""
        conv = multibed(rate, feed, V_beds[idx], T_beds[idx], nu=NU, cooling="exchanger", steps=steps,
                        rate_params={"activity": d["catalyst_activity"][idx]})
        return conv.outlet, conv.beds, conv.interbed_duty

    full_steps = steps
    cache: dict[str, np.ndarray] = {}
    K_sep = np.full((B, len(SPECIES)), np.nan)  # K of each member's last two-phase separator flash
    if warm is not None and "K_sep" in warm:
        K_sep = warm["K_sep"].copy()

    def remember(idx, **arrays):
        """Keep what an evaluation at full accuracy computed, per member (for the final figures)."""
        for k, v in arrays.items():
            if k not in cache:
                cache[k] = np.zeros((B,) + v.shape[1:])
            cache[k][idx] = v

    def separator_flash(T, P_, z, idx, unique, jacobian):
        """The separator flash, started from each member's K of its previous flash where that
        was two-phase; a call that covers each member once keeps its K for the next.

        Inside the loop the flash need not be tighter than the loop itself (an inexact inner
        solve, as in inexact Newton methods: Dembo, Eisenstat & Steihaug, SIAM J. Numer. Anal.
        19, 400, 1982): it is solved to 1e-3 of the members' best loop residual so far, down
        to ``flash_tol`` as the loop converges. The difference Jacobian's calls keep
        ``flash_tol`` (their perturbations are small)."""
        tol_k = flash_tol
        if not jacobian:
            e = best_err[idx]
            tol_k = float(np.clip(1e-3 * e.min(), flash_tol, FLASH_TOL_LOOSE)) if e.size else flash_tol
        fl, failed = _flash(T, P_, z, kij, K_sep[idx], tol=tol_k)
        if unique:
            two = (fl.beta > 0.0) & (fl.beta < 1.0)
            K_sep[idx] = np.where(two[:, None], fl.K, np.nan)
        return fl, failed

    def loop_map(x, idx, steps=steps, jacobian=False):
        R = x[:, :5]
        F = x[:, 5]
        unique = idx.size == np.unique(idx).size
        recycle = Stream(SPECIES, R, T_sep[idx], P_sep[idx])
        mu = makeup_stream(F, idx)
        feed = mix(recycle.at(P=P[idx]), mu, P=P[idx])  # circulator temperature rise is small
        eff, bd, qi = converter(feed, idx, steps)
        if not jacobian and steps == full_steps and unique:
            remember(idx, feed_n=feed.n, feed_T=feed.T, eff_n=eff.n, eff_T=eff.T, q_inter=qi,
                     bed_T=np.stack([b.profile_T for b in bd], axis=1),
                     bed_xi=np.stack([b.profile_xi for b in bd], axis=1),
                     bed_V=np.stack([b.profile_V for b in bd], axis=1),
                     bed_Tmax=np.stack([b.T_max for b in bd], axis=1),
                     bed_n_out=np.stack([b.outlet.n for b in bd], axis=1))
        tot = eff.total
        fl, flash_failed = separator_flash(T_sep[idx], P_sep[idx], eff.n / tot[:, None], idx, unique, jacobian)
        vap = fl.beta * tot
        liq = (1.0 - fl.beta) * tot
        product = liq * fl.x[:, 2]
        R_new = (1.0 - d["purge_fraction"][idx])[:, None] * vap[:, None] * fl.y
        # Make-up from the nitrogen balance of the loop: at a fixed point the N fed equals the N
        # leaving as product (set to capacity), purge and gas dissolved in the liquid.
        purge = d["purge_fraction"][idx][:, None] * vap[:, None] * fl.y
        dissolved = liq[:, None] * fl.x
        n_loss = 2.0 * (purge[:, 0] + dissolved[:, 0]) + purge[:, 2]
        F_new = (cap[idx] + n_loss) / (2.0 * y_mu[idx, 0])
        gx = np.concatenate([R_new, F_new[:, None]], axis=-1)
        if jacobian:
            # A coarse integration far off (a very long bed in few steps) may give a state the
            # flash cannot settle: no difference Jacobian for that member (the solver starts it
            # from -I instead).
            return np.where(flash_failed[:, None], np.nan, gx), None
        gx = np.where(flash_failed[:, None], x, gx)
        failed_flash[idx] = flash_failed
        no_liquid = fl.beta >= 1.0
        dry[idx] = np.where(no_liquid, dry[idx] + 1, 0)
        runaway = R_new.sum(axis=-1) > MAX_RECYCLE_RATIO * F_new
        growing = R_new.sum(axis=-1) > R.sum(axis=-1) * (1.0 + 1e-3)
        grow[idx] = np.where(growing, grow[idx] + 1, 0)
        # Production peaking below capacity: short of it while the loop asks for more make-up or
        # recycle, for PLATEAU_ITERATIONS evaluations in which neither the production
        # closed PLATEAU_GAIN of its best gap to capacity nor the loop residual halved (a member
        # on its way to a steady state does one or the other at nearly every step).
        err = np.max(np.abs(gx - x), axis=-1) / np.maximum(np.max(np.abs(gx), axis=-1), 1e-300)
        short = (product < cap[idx]) & ((F_new > F) | (R_new.sum(axis=-1) > R.sum(axis=-1)))
        gap = cap[idx] - best_product[idx]
        better = (product > best_product[idx] + PLATEAU_GAIN * gap) | (err < 0.5 * best_err[idx])
        best_product[idx] = np.maximum(best_product[idx], product)
        best_err[idx] = np.where(err < 0.5 * best_err[idx], err, best_err[idx])
        flat[idx] = np.where(short & ~better, flat[idx] + 1, 0)
        peaked = flat[idx] >= PLATEAU_ITERATIONS
        halt = (dry[idx] >= 3) | runaway | (grow[idx] >= GROWING_ITERATIONS) | peaked | flash_failed
        info = {"product": product, "beta": fl.beta, "halt": halt, "runaway": runaway,
                "growing": grow[idx] >= GROWING_ITERATIONS, "peaked": peaked}
        return gx, info

    # Starting recycle: about three times the make-up of 1:3 N2/H2, 3 % NH3, and the inerts at
    # the level the purge would hold them to.
    F0 = 2.0 * cap / (1.0 - inert) / 0.97
    R0 = np.stack([0.75 * F0, 2.25 * F0, 0.1 * F0,
                   F0 * d["makeup_argon"] / d["purge_fraction"], F0 * d["makeup_methane"] / d["purge_fraction"]], axis=-1)
    x0 = np.concatenate([R0, F0[:, None]], axis=-1)
    dry = np.zeros(B, dtype=int)
    grow = np.zeros(B, dtype=int)
    flat = np.zeros(B, dtype=int)
    best_product = np.zeros(B)
    best_err = np.full(B, np.inf)
    failed_flash = np.zeros(B, dtype=bool)
    # Quasi-Newton on the tear; its starting Jacobian comes from a coarser bed integration.
    # An inert absent from the make-up stays absent: its column needs no difference (its
    # recycle and the rest of the tear do not interact).
    fd_columns = np.ones((B, 6), dtype=bool)
    fd_columns[:, 3] = d["makeup_argon"] > 0
    fd_columns[:, 4] = d["makeup_methane"] > 0
    keep: dict = {}
    if warm is not None:
        good = np.all(np.isfinite(warm["tear"]), axis=-1) & (warm["tear"][:, 5] > 0)
        x0 = np.where(good[:, None], warm["tear"], x0)
        H0 = np.where(good[:, None, None], warm["H"], -np.eye(6)[None])
        # Scaled variables differ with the start: rescale the inverse Jacobian to this x0.
        s_old = warm["scale"]
        s_new = np.max(np.abs(x0), axis=-1, keepdims=True) * np.ones_like(x0)
        H0 = H0 * (s_old[:, :, None] / s_new[:, :, None]) * (s_new[:, None, :] / s_old[:, None, :])
        x, info, conv, iters = broyden(loop_map, x0, tol=tol, max_iter=max_iter, raise_on_failure=False,
                                       H0=H0, keep=keep, stall=STALL_ITERATIONS)
    else:
        x, info, conv, iters = broyden(loop_map, x0, tol=tol, max_iter=max_iter, raise_on_failure=False,
                                       g_jacobian=lambda x, idx: loop_map(x, idx, steps=max(6, steps // 4), jacobian=True),
                                       fd_columns=fd_columns, keep=keep, stall=STALL_ITERATIONS)
    status = np.full(B, "ok", dtype=object)
    no_liquid = info.get("beta", np.ones(B)) >= 1.0
    status[no_liquid] = NO_LIQUID
    runaway = info.get("runaway", np.zeros(B, bool)).astype(bool) & ~no_liquid
    status[runaway] = RUNAWAY
    # Members still open at the iteration bound whose recycle was still growing have no steady
    # state at capacity either (the beds cannot convert the make-up); others are reported as
    # not converged.
    growing = info.get("growing", np.zeros(B, bool)).astype(bool)
    peaked = info.get("peaked", np.zeros(B, bool)).astype(bool) & ~growing
    open_ = ~conv & ~no_liquid & ~runaway
    status[open_ & growing] = GROWING
    status[open_ & peaked] = PEAKED
    status[open_ & ~growing & ~peaked] = NOT_CONVERGED
    # Every figure from the last evaluation of each member (at keep["x_eval"]): the converter is
    # not run again.
    x = keep["x_eval"]
    R, F = x[:, :5], x[:, 5]
    recycle = Stream(SPECIES, R, T_sep, P_sep)
    mu_power, mu_Tdis, mu_cool, mu_stages = compress_staged(
        F, d["makeup_temperature"], d["makeup_pressure"], P, y_mu, SPECIES, d["compressor_efficiency"], d["makeup_temperature"])
    y_rec = np.where(recycle.total[:, None] > 0, recycle.y, y_mu)  # a collapsed loop has no recycle
    circ_power, _, _, _ = compress_staged(
        recycle.total, T_sep, P_sep, P, y_rec, SPECIES, d["circulator_efficiency"], T_sep)
    feed = Stream(SPECIES, cache["feed_n"], cache["feed_T"], P.copy())
    eff = Stream(SPECIES, cache["eff_n"], cache["eff_T"], P.copy())
    q_inter = cache["q_inter"]
    beds = [_BedFigures(cache["bed_T"][:, j], cache["bed_xi"][:, j], cache["bed_V"][:, j],
                        cache["bed_Tmax"][:, j], Stream(SPECIES, cache["bed_n_out"][:, j], cache["bed_T"][:, j, -1], P.copy()))
            for j in range(N_BEDS)]
    H = lambda s: enthalpy_flow(s.n, s.T, sset)  # noqa: E731
    T_in1 = T_beds[:, 0]
    dTa = d["approach_temperature"]
    # Heat integration (one documented scheme, ideal-gas enthalpies on the hot side):
    # the feed is heated from its mixed temperature first by low-grade effluent heat (the
    # effluent between T_hg and feed + approach), then by high-grade heat (the inter-bed coolers
    # and the effluent above T_hg = max(steam_min_temperature, feed + approach)); what high-grade
    # heat is left raises steam; a shortfall is a fired heater duty.
    Q_pre = H(feed.at(T=T_in1)) - H(feed)
    T_out = eff.T
    T_lo = np.minimum(feed.T + dTa, T_out)
    T_hg = np.clip(d["steam_min_temperature"], T_lo, T_out)
    Q_hg = q_inter.sum(axis=-1) + H(eff) - H(eff.at(T=T_hg))
    Q_low = H(eff.at(T=T_hg)) - H(eff.at(T=T_lo))
    Q_pre_low = np.minimum(Q_pre, Q_low)
    Q_pre_high = Q_pre - Q_pre_low
    Q_steam = np.maximum(Q_hg - Q_pre_high, 0.0)
    fired = np.maximum(Q_pre_high - Q_hg, 0.0)
    T2 = temperature_from_enthalpy(eff.n, H(eff.at(T=T_hg)) - Q_pre_low, sset, T_lo)
    T_b = T_hg
    Q_steam_eff = np.maximum(H(eff) - H(eff.at(T=T_hg)) - np.maximum(Q_pre_high - q_inter.sum(axis=-1), 0.0), 0.0)
    # Cold end with real-fluid enthalpies (latent heat of the condensing ammonia).
    T_wc_out = np.minimum(T_cw, T2)
    H_T2, fl_T2, fail_T2 = _flash_enthalpy(T2, P_sep, eff.n, kij, None if warm is None else warm.get("K_T2"))
    # The effluent often leaves the feed-effluent exchanger below the cooling-water temperature
    # (the feed comes from the cold separator): the water cooler then does nothing and its outlet
    # is the T2 state, flashed once.
    H_cw, fail_cw = H_T2.copy(), fail_T2.copy()
    cool = np.flatnonzero(T_wc_out < T2)
    if cool.size:
        H_cw[cool], _, fail_cw[cool] = _flash_enthalpy(T_wc_out[cool], P_sep[cool], eff.n[cool], kij)
    H_sep, fl, fail_sep = _flash_enthalpy(T_sep, P_sep, eff.n, kij, K_sep)
    status[failed_flash | fail_T2 | fail_cw | fail_sep] = FLASH_FAILED
    Q_cw = np.maximum(H_T2 - H_cw, 0.0)
    Q_ref = np.maximum(H_cw - H_sep, 0.0)
    T_evap = T_sep - d["evaporator_approach"]
    W_ref = refrigeration_power(Q_ref, T_evap, np.maximum(d["refrigerant_condensing_temperature"], T_evap + 5.0),
                                fraction_of_carnot=d["refrigeration_fraction_of_carnot"])
    tot = eff.total
    vap = fl.beta * tot
    liq = (1.0 - fl.beta) * tot
    product = liq * fl.x[:, 2]
    purge = d["purge_fraction"][:, None] * vap[:, None] * fl.y
    dissolved = liq[:, None] * fl.x
    feed_y = feed.y
    ok = status == "ok"
    h2_in = F * y_mu[:, 1]
    n2_in = F * y_mu[:, 0]
    per_pass = (eff.component("NH3") - feed.component("NH3")) / 2.0 / np.maximum(feed.component("N2"), 1e-300)
    T_peak = np.max(np.stack([b.T_max for b in beds], axis=-1), axis=-1)
    # Converter vessel: volume from catalyst and internals, diameter from L/D, ASME VIII-1 shell.
    Vv = d["catalyst_volume"] * d["converter_internals_factor"]
    D = (4.0 * Vv / (np.pi * d["converter_L_over_D"])) ** (1.0 / 3.0)
    L = d["converter_L_over_D"] * D
    P_design_g = d["design_pressure_factor"] * P - 101325.0
    S = allowable_stress(SHELL_MATERIAL, d["shell_design_temperature"])
    shell = shell_thickness_detail(P_design_g, D, S, 1.0, d["corrosion_allowance"])
    mass = vessel_mass(D, L, shell.thickness, shell.thickness, head="hemispherical")
    # Exchanger areas (counter-current LMTD).
    T_steam = d["steam_temperature"]
    A_boiler = _area(Q_steam_eff, d["U_boiler"], T_out - T_steam, T_b - T_steam)
    A_fe = _area(Q_pre - fired, d["U_gas_gas"], np.maximum(T_out - T_in1, T_b - T_in1), T2 - feed.T)
    A_wc = _area(Q_cw, d["U_water"], T2 - (T_cw - 10.0), T_wc_out - (T_cw - 20.0))
    A_ch = _area(Q_ref, d["U_chiller"], T_wc_out - T_evap, T_sep - T_evap)
    zero = np.where(ok, 1.0, 0.0)
    values = {
        "production": product * M_NH3 * zero,
        "production_tpd": product * M_NH3 * 86400 / 1000 * zero,
        "makeup_flow": F,
        "hydrogen_feed": h2_in * 2.016e-3,
        "nitrogen_feed": n2_in * 28.014e-3,
        "hydrogen_per_tonne": np.where(product > 0, h2_in * 2.016e-3 / np.maximum(product * M_NH3, 1e-300) * 1000, 0.0),
        "converter_feed_flow": feed.total,
        "per_pass_conversion": per_pass,
        "converter_outlet_NH3": eff.y[:, 2],
        "converter_inlet_NH3": feed_y[:, 2],
        "converter_inlet_inerts": feed_y[:, 3] + feed_y[:, 4],
        "recycle_ratio": recycle.total / np.maximum(F, 1e-300),
        "purge_flow": purge.sum(axis=-1),
        "purge_H2": purge[:, 1] * 2.016e-3,
        "purge_NH3": purge[:, 2] * M_NH3,
        "dissolved_gas_loss": dissolved[:, [0, 1, 3, 4]].sum(axis=-1),
        "makeup_compressor_power": mu_power,
        "makeup_compressor_stages": mu_stages.astype(float),
        "makeup_discharge_temperature": mu_Tdis,
        "makeup_intercooler_duty": mu_cool,
        "circulator_power": circ_power,
        "refrigeration_duty": Q_ref,
        "refrigeration_power": W_ref,
        "electric_power": mu_power + circ_power + W_ref,
        "cooling_water_duty": Q_cw + mu_cool,
        "recovered_heat": Q_steam,
        "preheat_duty": Q_pre,
        "fired_heater_duty": fired,
        "catalyst_volume": d["catalyst_volume"],
        "peak_catalyst_temperature": T_peak,
        "converter_outlet_temperature": T_out,
        "converter_diameter": D,
        "converter_height": L,
        "converter_shell_thickness": shell.thickness,
        "converter_mass": mass,
        "shell_formula_margin": shell.validity_margin,
        "separator_vapour_NH3": fl.y[:, 2],
        "loop_iterations": np.full(B, float(iters)),
    }
    for k, sp in enumerate(SPECIES):
        values[f"makeup_{sp}"] = F * y_mu[:, k]
        values[f"purge_{sp}_flow"] = purge[:, k]
        values[f"dissolved_{sp}"] = dissolved[:, k]
        values[f"converter_inlet_y_{sp}"] = feed_y[:, k]
    values["product_NH3_flow"] = product
    for j in range(N_BEDS):
        values[f"bed{j + 1}_inlet_temperature"] = beds[j].profile_T[:, 0]
        values[f"bed{j + 1}_outlet_temperature"] = beds[j].outlet.T
    flows = {f"{pre}{sp}{post}" for sp in SPECIES for pre, post in (("makeup_", ""), ("purge_", "_flow"), ("dissolved_", ""))}
    units = {k: "mol/s" if k in flows or k == "product_NH3_flow" else _UNITS.get(k, "-") for k in values}
    equipment = {
        "converter": {"kind": "vessel_vertical", "volume": Vv, "diameter": D, "height": L,
                      "pressure_gauge": P_design_g, "shell_thickness": shell.thickness, "mass": mass},
        "makeup_compressor": {"kind": "compressor_centrifugal", "power": mu_power},
        "circulator": {"kind": "compressor_centrifugal", "power": circ_power},
        "waste_heat_boiler": {"kind": "hx_fixed_tube", "area": A_boiler, "pressure_gauge": P_design_g},
        "feed_effluent_exchanger": {"kind": "hx_fixed_tube", "area": A_fe, "pressure_gauge": P_design_g},
        "water_cooler": {"kind": "hx_fixed_tube", "area": A_wc, "pressure_gauge": P_design_g},
        "chiller": {"kind": "hx_fixed_tube", "area": A_ch, "pressure_gauge": P_design_g},
        "refrigeration_compressor": {"kind": "compressor_centrifugal", "power": W_ref},
    }
    profiles = {
        "bed_T": np.stack([b.profile_T for b in beds], axis=1),
        "bed_extent": np.stack([b.profile_xi for b in beds], axis=1),
        "bed_V": np.stack([b.profile_V for b in beds], axis=1),
        "bed_feed_N2": np.stack([b.outlet.n[:, 0] + b.extent for b in beds], axis=1),
    }
    # The solver state for warm starts at nearby points: the tear, its inverse Jacobian, and the
    # K-values of the separator and T2 flashes where two-phase.
    two_T2 = (fl_T2.beta > 0.0) & (fl_T2.beta < 1.0)
    state = {"tear": x, "H": keep["H"], "scale": keep["scale"], "K_sep": K_sep.copy(),
             "K_T2": np.where(two_T2[:, None], fl_T2.K, np.nan)}
    return ProcessResult("ammonia_loop", values, units, equipment, status.astype(str), profiles, state)


@dataclass(frozen=True)
class _BedFigures:
    """What the final figures read from a bed (kept from the loop's last evaluation)."""

    profile_T: np.ndarray
    profile_xi: np.ndarray
    profile_V: np.ndarray
    T_max: np.ndarray
    outlet: Stream

    @property
    def extent(self):
        return self.profile_xi[:, -1]


def _area(Q, U, dT1, dT2):
    """Exchanger area [m2], zero where there is no duty; approaches floored at 1 K."""
    dT1 = np.maximum(dT1, 1.0)
    dT2 = np.maximum(dT2, 1.0)
    return np.where(Q > 0, exchanger_area(np.maximum(Q, 0.0), U, dT1, dT2), 0.0) if np.ndim(Q) else exchanger_area(Q, U, dT1, dT2)


_UNITS = {
    "production": "kg/s", "production_tpd": "t/d", "makeup_flow": "mol/s", "hydrogen_feed": "kg/s",
    "nitrogen_feed": "kg/s", "hydrogen_per_tonne": "kg/t", "converter_feed_flow": "mol/s",
    "purge_flow": "mol/s", "purge_H2": "kg/s", "purge_NH3": "kg/s", "dissolved_gas_loss": "mol/s",
    "makeup_compressor_power": "W", "makeup_discharge_temperature": "K", "makeup_intercooler_duty": "W",
    "circulator_power": "W", "refrigeration_duty": "W", "refrigeration_power": "W", "electric_power": "W",
    "cooling_water_duty": "W", "recovered_heat": "W", "preheat_duty": "W", "fired_heater_duty": "W",
    "catalyst_volume": "m3", "peak_catalyst_temperature": "K", "converter_outlet_temperature": "K",
    "converter_diameter": "m", "converter_height": "m", "converter_shell_thickness": "m",
    "converter_mass": "kg", "bed1_inlet_temperature": "K", "bed2_inlet_temperature": "K",
    "bed3_inlet_temperature": "K", "bed1_outlet_temperature": "K", "bed2_outlet_temperature": "K",
    "bed3_outlet_temperature": "K",
}

