"""Property-based (fuzz) tests of the equipment-sizing, costing and finance entry points.

Every generated input - in range, out of range, NaN, inf, negative, huge, subnormal, of the wrong
shape or type - must give a finite result or a typed teakit error (InputError, OutOfRangeError,
ConvergenceError) whose message names an argument; never NaN or inf in a result (except where
teakit documents it: the NaN of an IRR that does not exist or is ambiguous, with its
``irr_count``, and the infinite payback of an investment never recovered), never an untyped
exception. Where the inputs are valid a property is checked as well. Profiles and how to run
the long one: tests/conftest.py.

Sources of the properties (named again beside each check):
- ASME Boiler and Pressure Vessel Code, Section VIII, Division 1, UG-27(c)(1) and UG-32(d), the
  formulas applied by hand in the test; thickness rising with pressure (UG-27 and the Lamé form
  of Mandatory Appendix 1-2 are both increasing in P, and continuous at the switch: the vessel
  module's docstring).
- Geometry: a spherical shell's volume 4/3 pi (r_o^3 - r_i^3); a cylinder's volume pi D^2 H / 4.
- Thermodynamics: isothermal work R T ln r is the least work of compression; polytropic and
  isentropic heads exceed it for exponents > 1 (e.g. Perry's 8th ed., section 10).
- The logarithmic mean lies between the geometric and the arithmetic mean (a standard
  inequality, e.g. B. C. Carlson, Amer. Math. Monthly 79, 615 (1972), from memory).
- Carnot refrigerator: W = Q / COP (e.g. Cengel & Boles, ch. 6, from memory).
- Turton et al., 4th ed. (2012), Ch. 7: escalation by the index ratio I_2 / I_1; the power law
  of capacity scaling.
- numpy-financial 1.0 (npv, irr, pmt), a test-only reference library; NPV at rate 0 is the sum
  of the cash flows (definition).
"""

import math

import numpy as np
import numpy_financial as npf
import pytest
from fuzzing import (
    ANY,
    ANY_CHOICE,
    ANY_FLOAT,
    assert_finite,
    call,
    mutated,
)
from hypothesis import assume, given
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from teakit import finance as F
from teakit.costing import (
    bare_module_cost,
    base_bare_module_cost,
    capacity_scale,
    capital_breakdown,
    catalyst_cost,
    cepci,
    cepci_years,
    com_breakdown,
    cooling_water_cost,
    cost_of_manufacture,
    electricity_cost,
    emissions_cost,
    equipment_kinds,
    escalate,
    fixed_capital_investment,
    grassroots_cost,
    heat_cost,
    lang_estimate,
    material_factor,
    materials,
    operating_breakdown,
    operating_hours,
    operating_labour_cost,
    parallel_units,
    pressure_factor,
    purchased_cost,
    raw_material_cost,
    refrigeration_cost,
    total_module_cost,
    vessel_cost_from_mass,
    vessel_diameter,
    working_capital,
)
from teakit.costing import breakdown_frame as cost_frame
from teakit.costing.equipment_cost import bare_module_factor
from teakit.equipment import (
    allowable_stress,
    allowable_stress_materials,
    carnot_cop,
    catalyst_bed_dimensions,
    catalyst_mass,
    catalyst_volume_from_space_velocity,
    compression_detail,
    compressor_power,
    cooling_water_flow,
    exchanger_area,
    fired_heater_fuel,
    gas_hourly_space_velocity,
    head_surface_area,
    head_thickness,
    isentropic_head,
    lmtd,
    normal_volumetric_flow,
    polytropic_head,
    refrigeration_power,
    shell_thickness,
    shell_thickness_detail,
    vessel_mass,
)
from teakit.thermo.species import R


def fuzz(fn, inputs, **extra):
    kw, bad = inputs
    return call(fn, bad=bad, names=tuple(kw), **kw, **extra)


def pos(lo, hi):
    """Plausible positive values spread over decades, as floats or small arrays."""
    one = st.floats(lo, hi)
    return st.one_of(one, hnp.arrays(np.float64, st.integers(1, 3), elements=one))


# ---------------------------------------------------------------------------------------------
# pressure vessels

METHODS = ["auto", "lame", "exponential", "ug27", "Lamé", " AUTO "]
HEADS = ["ellipsoidal", "torispherical", "hemispherical"]
#: Plausible arguments shared by the shell and head thickness rules.
WALL = {
    "P": pos(0.0, 2e8),
    "D": pos(0.05, 10.0),
    "S": pos(20e6, 300e6),
    "E": st.floats(0.3, 1.0),
    "corrosion_allowance": st.floats(0.0, 0.01),
    "t_min": st.floats(0.0, 0.01),
}
SHELL = {**WALL, "method": st.sampled_from(METHODS)}


@given(inputs=mutated(SHELL, {"method": ANY_CHOICE}), detail=st.booleans())
def test_shell_thickness_fuzz(inputs, detail):
    fuzz(shell_thickness_detail if detail else shell_thickness, inputs)


@given(
    P1=st.floats(0.0, 1.0),
    P2=st.floats(0.0, 1.0),
    D=st.floats(0.05, 10.0),
    S=st.floats(20e6, 300e6),
    E=st.floats(0.3, 1.0),
    ca=st.floats(0.0, 0.01),
    method=st.sampled_from(["auto", "lame"]),
)
def test_shell_thickness_rises_with_pressure(P1, P2, D, S, E, ca, method):
    lo, hi = sorted((P1, P2))
    SE = S * E
    t1 = shell_thickness(0.99 * lo * SE, D, S, E, ca, method=method)
    t2 = shell_thickness(0.99 * hi * SE, D, S, E, ca, method=method)
    # UG-27(c)(1) and the Lamé form of Appendix 1-2 are increasing in P and meet continuously at
    # P = S E / 2.6 (the vessel module's docstring): thickness never falls as P rises.
    assert t2 >= t1 * (1 - 1e-12)
    assert t1 >= 1.5875e-3 + ca - 1e-15  # UG-16(b) minimum plus corrosion allowance
    P = 0.99 * lo * SE
    if P <= 0.385 * SE:
        # UG-27(c)(1) by hand with the corroded radius R = D/2 + c (ASME VIII-1); with equal joint
        # efficiencies the longitudinal rule UG-27(c)(2) never governs.
        R_c = D / 2 + ca
        assert t1 == pytest.approx(max(P * R_c / (SE - 0.6 * P), 1.5875e-3) + ca, rel=1e-12)


HEAD = {
    **WALL,
    "head": st.sampled_from(HEADS),
    "crown_radius": st.one_of(st.none(), pos(0.05, 10.0)),
    "method": st.sampled_from(METHODS),
}


@given(inputs=mutated(HEAD, {"method": ANY_CHOICE, "head": ANY_CHOICE}))
def test_head_thickness_fuzz(inputs):
    fuzz(head_thickness, inputs)


@given(
    P1=st.floats(0.0, 1.0),
    P2=st.floats(0.0, 1.0),
    D=st.floats(0.05, 10.0),
    S=st.floats(20e6, 300e6),
    head=st.sampled_from(HEADS),
)
def test_head_thickness_rises_with_pressure(P1, P2, D, S, head):
    lo, hi = sorted((P1, P2))
    t1 = call(head_thickness, 0.99 * lo * S, D, S, head=head)
    t2 = call(head_thickness, 0.99 * hi * S, D, S, head=head)
    assert t1 is not None and t2 is not None
    assert t2 >= t1 * (1 - 1e-12)
    P = 0.99 * lo * S
    if head == "ellipsoidal":
        # UG-32(d) by hand: t = P D / (2 S E - 0.2 P), at least the UG-16(b) minimum
        assert t1 == pytest.approx(max(P * D / (2 * S - 0.2 * P), 1.5875e-3), rel=1e-12)


@given(
    D=st.one_of(pos(0.05, 20.0), ANY),
    L=st.one_of(st.floats(0.0, 50.0), ANY),
    t_shell=st.one_of(st.floats(1e-3, 0.3), ANY),
    t_head=st.one_of(st.floats(1e-3, 0.3), ANY),
    head=st.one_of(st.sampled_from(HEADS), ANY_CHOICE),
    density=st.one_of(st.just(7850.0), ANY),
    allowance_factor=st.one_of(st.floats(1.0, 3.0), ANY),
)
def test_vessel_mass_and_area_fuzz(D, L, t_shell, t_head, head, density, allowance_factor):
    call(vessel_mass, D, L, t_shell, t_head, head, density, allowance_factor,
         names=("D", "L", "t_shell", "t_head", "head", "density", "allowance_factor"))
    call(head_surface_area, D, head, names=("D", "head"))


@given(D=st.floats(0.05, 20.0), t=st.floats(1e-3, 0.5), rho=st.floats(1000.0, 20000.0))
def test_two_hemispherical_heads_make_a_spherical_shell(D, t, rho):
    # A spherical shell of inside radius D/2 and wall t has volume 4/3 pi ((D/2 + t)^3 - (D/2)^3)
    # (geometry); with L = 0 the vessel is exactly that shell.
    m = vessel_mass(D, 0.0, t, t, head="hemispherical", density=rho)
    assert m == pytest.approx(rho * 4 / 3 * math.pi * ((D / 2 + t) ** 3 - (D / 2) ** 3), rel=1e-12)
    assert head_surface_area(D, "hemispherical") == pytest.approx(math.pi * D**2 / 2, rel=1e-14)


@given(
    material=st.one_of(st.sampled_from(allowable_stress_materials()),
                       st.sampled_from(allowable_stress_materials()).map(str.upper), ANY_CHOICE),
    T=st.one_of(st.floats(100.0, 1200.0), ANY),
)
def test_allowable_stress_fuzz(material, T):
    S = call(allowable_stress, material, T, names=("material", "T"))
    if S is not None:
        assert np.all(np.asarray(S) > 0)


# ---------------------------------------------------------------------------------------------
# compression

COMPOSITIONS = [
    {"H2": 0.75, "N2": 0.25},
    {"H2": 0.6, "N2": 0.2, "NH3": 0.1, "Ar": 0.05, "CH4": 0.05},
    {"N2": 0.79, "O2": 0.21},
    {"SO2": 0.1, "O2": 0.11, "N2": 0.79},
    {"NH3": 1.0},
]
COMPRESSOR = {
    "flow": pos(0.0, 5e3),
    "T_in": st.floats(220.0, 600.0),
    "P_in": st.floats(5e4, 5e6),
    "P_out": st.floats(5e6, 3e7),
    "composition": st.sampled_from(COMPOSITIONS),
    "stages": st.integers(1, 4),
    "efficiency": st.floats(0.5, 1.0),
    "method": st.sampled_from(["average-z", "peng-robinson", "polytropic"]),
}
BAD_COMPRESSOR = {
    "composition": st.one_of(
        ANY,
        st.just({}),
        st.just({"Xx": 1.0}),
        st.just({"H2": -0.5, "N2": 1.5}),
        st.just({"H2": 0.0, "N2": 0.0}),
        st.dictionaries(st.sampled_from(["H2", "N2", "NH3"]), ANY, min_size=1, max_size=2),
    ),
    "stages": st.one_of(ANY, st.integers(-3, 30)),
    "method": ANY_CHOICE,
}


@given(inputs=mutated(COMPRESSOR, BAD_COMPRESSOR),
       T_intercool=st.one_of(st.none(), st.floats(250.0, 400.0), ANY),
       T_discharge_max=st.one_of(st.just(423.15), ANY),
       detail=st.booleans())
def test_compressor_fuzz(inputs, T_intercool, T_discharge_max, detail):
    kw, bad = inputs
    if detail:
        call(compression_detail, bad=(*bad, "T_intercool", "T_discharge_max"), names=tuple(kw),
             T_intercool=T_intercool, T_discharge_max=T_discharge_max, **kw)
    else:
        call(compressor_power, bad=(*bad, "T_intercool"), names=tuple(kw), T_intercool=T_intercool,
             **kw)


@given(
    flow=st.floats(0.1, 1e3),
    T_in=st.floats(250.0, 450.0),
    P_in=st.floats(1e5, 3e6),
    r1=st.floats(1.0, 10.0),
    r2=st.floats(1.0, 10.0),
    composition=st.sampled_from(COMPOSITIONS[:4]),
    stages=st.integers(1, 3),
    method=st.sampled_from(["average-z", "peng-robinson", "polytropic"]),
)
def test_compressor_power_is_linear_in_flow_and_rises_with_discharge(flow, T_in, P_in, r1, r2,
                                                                   composition, stages, method):
    lo, hi = sorted((r1, r2))
    kw = dict(T_in=T_in, P_in=P_in, composition=composition, stages=stages, method=method,
              T_intercool=T_in)
    w1 = call(compressor_power, flow, P_out=P_in * lo, **kw)
    w2 = call(compressor_power, flow, P_out=P_in * hi, **kw)
    w2x = call(compressor_power, 2 * flow, P_out=P_in * hi, **kw)
    assume(None not in (w1, w2, w2x))
    # shaft power = molar flow x specific work, and compressing further takes more work
    # (the head is increasing in the pressure ratio: Perry's 8th ed., section 10)
    assert w2x == pytest.approx(2 * w2, rel=1e-9)
    assert w2 >= w1 * (1 - 1e-9)


@given(
    T_in=st.one_of(st.floats(100.0, 2000.0), ANY),
    pressure_ratio=st.one_of(st.floats(1.0, 100.0), ANY),
    x=st.one_of(st.floats(1.01, 1.8), ANY),
    Z=st.one_of(st.floats(0.3, 2.0), ANY),
    poly=st.booleans(),
)
def test_heads_fuzz_and_exceed_isothermal_work(T_in, pressure_ratio, x, Z, poly):
    name = "n" if poly else "k"
    fn = polytropic_head if poly else isentropic_head
    w = call(fn, T_in, pressure_ratio, x, Z, names=("T_in", "pressure_ratio", name, "Z"))
    if w is None or not all(isinstance(v, float) for v in (T_in, pressure_ratio, x, Z)):
        return
    # isothermal work Z R T ln r is the least work of compression (exponent > 1)
    assert w >= Z * R * T_in * math.log(pressure_ratio) * (1 - 1e-12)


# ---------------------------------------------------------------------------------------------
# heat exchange, refrigeration, catalyst


@given(
    dT1=st.one_of(pos(1e-3, 500.0), ANY),
    dT2=st.one_of(pos(1e-3, 500.0), ANY),
    duty=st.one_of(pos(0.0, 1e9), ANY),
    U=st.one_of(st.floats(1.0, 2000.0), ANY),
    F_=st.one_of(st.floats(0.5, 1.0), ANY),
)
def test_exchanger_fuzz(dT1, dT2, duty, U, F_):
    m = call(lmtd, dT1, dT2, names=("dT1", "dT2"))
    call(exchanger_area, duty, U, dT1, dT2, F_, names=("duty", "U", "dT1", "dT2", "F"))
    if m is not None and isinstance(dT1, float) and isinstance(dT2, float):
        # logarithmic mean between the geometric and the arithmetic mean (Carlson 1972)
        mean = (dT1 + dT2) / 2 if dT1 + dT2 < math.inf else dT1 / 2 + dT2 / 2
        assert math.sqrt(dT1) * math.sqrt(dT2) * (1 - 1e-12) <= m <= mean * (1 + 1e-12)


@given(a=st.floats(1e-300, 1e300), b=st.floats(1e-300, 1e300))
def test_lmtd_over_the_whole_float_range(a, b):
    m = lmtd(a, b)
    # closed form (a - b)/ln(a/b), evaluated by hand with math.log of each (exact limit a for
    # a == b); the log-mean inequality holds over the whole float range (Carlson 1972)
    x = b / a - 1.0
    want = a * (1 + x / 2) if abs(x) < 1e-6 else (a - b) / (math.log(a) - math.log(b))
    assert m == pytest.approx(want, rel=1e-9)
    mean = (a + b) / 2 if a + b < math.inf else a / 2 + b / 2
    assert math.sqrt(a) * math.sqrt(b) * (1 - 1e-12) <= m <= mean * (1 + 1e-12)


@given(duty=st.one_of(pos(0.0, 1e9), ANY), eff=st.one_of(st.floats(0.3, 1.0), ANY),
       dT=st.one_of(st.floats(1.0, 30.0), ANY), cp=st.one_of(st.just(4184.0), ANY))
def test_heater_and_cooling_water_fuzz(duty, eff, dT, cp):
    call(fired_heater_fuel, duty, eff, names=("duty", "efficiency"))
    call(cooling_water_flow, duty, dT, cp, names=("duty", "dT_water", "cp"))


@given(
    duty=st.one_of(pos(0.0, 1e8), ANY),
    T_evap=st.one_of(st.floats(200.0, 280.0), ANY),
    T_cond=st.one_of(st.floats(290.0, 330.0), ANY),
    phi=st.one_of(st.floats(0.3, 1.0), ANY),
)
def test_refrigeration_fuzz(duty, T_evap, T_cond, phi):
    cop = call(carnot_cop, T_evap, T_cond, names=("T_evap", "T_cond"))
    W = call(refrigeration_power, duty, T_evap, T_cond, phi,
             names=("duty", "T_evap", "T_cond", "fraction_of_carnot"))
    if cop is not None and W is not None and all(isinstance(v, float) for v in (duty, phi)):
        # a refrigerator takes W = Q / COP, COP = phi x Carnot COP (Cengel & Boles ch. 6)
        assert W == pytest.approx(duty / (phi * cop), rel=1e-12)


@given(
    volume=st.one_of(pos(1e-3, 500.0), ANY),
    density=st.one_of(st.floats(300.0, 3000.0), ANY),
    D=st.one_of(st.none(), st.floats(0.1, 10.0), ANY),
    LD=st.one_of(st.none(), st.floats(0.2, 10.0), ANY),
    flow=st.one_of(pos(0.0, 1e4), ANY),
    ghsv=st.one_of(st.floats(100.0, 50000.0), ANY),
)
def test_catalyst_fuzz(volume, density, D, LD, flow, ghsv):
    call(catalyst_mass, volume, density, names=("volume", "bulk_density"))
    dims = call(catalyst_bed_dimensions, volume, D, LD, names=("volume", "diameter", "L_over_D"))
    nf = call(normal_volumetric_flow, flow, names=("molar_flow",))
    call(gas_hourly_space_velocity, flow, volume, names=("normal_flow", "volume"))
    V = call(catalyst_volume_from_space_velocity, flow, ghsv, names=("normal_flow", "ghsv"))
    if dims is not None and isinstance(volume, float) and isinstance(dims.diameter, float) \
            and 1e-100 < dims.diameter < 1e100 \
            and 1e-100 < dims.height < 1e100:  # where D^2 H neither over- nor underflows
        # a cylinder of diameter D and height H holds pi D^2 H / 4 (geometry)
        assert math.pi * dims.diameter**2 * dims.height / 4 == pytest.approx(volume, rel=1e-12)
    if V is not None and nf is not None and isinstance(flow, float) and isinstance(ghsv, float) \
            and V > 1e-290:  # round trip in normal floats (subnormals keep only a few digits)
        assert gas_hourly_space_velocity(flow, V) == pytest.approx(ghsv, rel=1e-12)


# ---------------------------------------------------------------------------------------------
# equipment costs

KINDS = list(equipment_kinds().index)
TABLE = equipment_kinds()


@st.composite
def cost_inputs(draw):
    kind = draw(st.one_of(st.sampled_from(KINDS), ANY_CHOICE))
    lo, hi = (TABLE.loc[kind, ["capacity_min_SI", "capacity_max_SI"]] if kind in KINDS
              else (1.0, 10.0))
    mats = materials(kind) if kind in KINDS else ["CS"]
    plausible = {
        "kind": st.just(kind),
        "capacity": st.one_of(st.floats(lo / 20, hi * 20), pos(lo, hi)),
        "P_barg": st.one_of(st.floats(-1.0, 400.0), st.just(0.0)),
        "material": st.one_of(st.sampled_from(mats), st.sampled_from(mats).map(str.lower)),
        "D": st.one_of(st.none(), st.floats(0.3, 8.0)),
        "cepci_target": st.one_of(st.none(), st.sampled_from(cepci_years()),
                                  st.floats(100.0, 1500.0)),
    }
    bad = {"kind": ANY_CHOICE, "material": ANY_CHOICE}
    kw, names = draw(mutated(plausible, bad))
    kw["parallel"] = draw(st.booleans())
    kw["pressure_on"] = draw(st.one_of(st.sampled_from(["both", "tube"]), ANY_CHOICE))
    kw["details"] = draw(st.booleans())
    return kw, names + ("pressure_on",)


@given(inputs=cost_inputs())
def test_bare_module_cost_fuzz(inputs):
    kw, bad = inputs
    out = call(bare_module_cost, bad=bad, names=tuple(kw), **kw)
    k = {n: kw[n] for n in ("kind", "capacity")}
    call(purchased_cost, **k, parallel=kw["parallel"], names=tuple(k))
    call(base_bare_module_cost, **k, cepci_target=kw["cepci_target"], parallel=kw["parallel"],
         names=("kind", "capacity", "cepci_target"))
    call(parallel_units, **k, names=tuple(k))
    call(pressure_factor, kw["kind"], kw["P_barg"], kw["D"], kw["pressure_on"],
         names=("kind", "P_barg", "D", "pressure_on"))
    for fn in (material_factor, bare_module_factor):
        call(fn, kw["kind"], kw["material"], names=("kind", "material"))
    if out is None or kw["details"] or kw["cepci_target"] is None:
        return
    # escalation by the index ratio I / 397 (Turton 4th ed. Ch. 7; Appendix A is at CEPCI 397)
    base = bare_module_cost(**{**kw, "cepci_target": None})
    ct = kw["cepci_target"]
    index = cepci(ct) if ct in cepci_years() else ct
    np.testing.assert_allclose(out, np.asarray(base) * index / 397.0, rtol=1e-12)


@given(kind=st.sampled_from(KINDS), u=st.floats(0.0, 1.0))
def test_parallel_units_cover_the_capacity(kind, u):
    lo, hi = TABLE.loc[kind, ["capacity_min_SI", "capacity_max_SI"]]
    A = lo + u * (10 * hi - lo)
    d = bare_module_cost(kind, A, D=1.0 if kind.startswith(("vessel", "tower")) else None,
                         material=materials(kind)[0], details=True)
    # n equal units of A / n each, n = ceil(A / A_max) (the module's docstring)
    assert d["n_units"] * d["unit_capacity"] == pytest.approx(A, rel=1e-12)
    assert d["n_units"] == max(1, math.ceil(A / hi * (1 - 1e-12)))
    assert d["unit_capacity"] <= hi * (1 + 1e-12)


@given(
    volume=st.one_of(pos(0.01, 1e3), ANY),
    L_over_D=st.one_of(st.floats(1.0, 20.0), ANY),
    mass=st.one_of(pos(1.0, 1e6), ANY),
    cost_per_kg=st.one_of(st.floats(1.0, 50.0), ANY),
    installation=st.one_of(st.floats(1.0, 10.0), ANY),
)
def test_vessel_costs_fuzz(volume, L_over_D, mass, cost_per_kg, installation):
    call(vessel_diameter, volume, L_over_D, names=("volume", "L_over_D"))
    call(vessel_cost_from_mass, mass, cost_per_kg, installation,
         names=("mass_kg", "cost_per_kg", "installation_factor"))


YEARS = cepci_years()


@given(
    cost=st.one_of(pos(0.0, 1e9), ANY),
    a=st.one_of(st.sampled_from(YEARS), st.floats(100.0, 1500.0), ANY),
    b=st.one_of(st.sampled_from(YEARS), st.floats(100.0, 1500.0), ANY),
)
def test_escalate_fuzz_and_round_trip(cost, a, b):
    out = call(escalate, cost, a, b, names=("cost", "from_index_or_year", "to_index_or_year"))
    if out is None:
        return
    back = call(escalate, out, b, a, names=("cost", "from_index_or_year", "to_index_or_year"))
    # C2 = C1 I2 / I1 and back (Turton 4th ed. Ch. 7)
    if back is not None:
        np.testing.assert_allclose(back, np.broadcast_to(cost, np.shape(back)), rtol=1e-12)


@given(
    cost_ref=st.one_of(st.floats(0.0, 1e9), ANY),
    capacity_ref=st.one_of(st.floats(1e-3, 1e6), ANY),
    ratio=st.one_of(st.floats(0.005, 200.0), ANY),
    n=st.one_of(st.floats(0.1, 1.5), ANY),
)
def test_capacity_scale_fuzz(cost_ref, capacity_ref, ratio, n):
    if isinstance(capacity_ref, float) and isinstance(ratio, float):
        capacity = capacity_ref * ratio
    else:
        capacity = ratio
    out = call(capacity_scale, cost_ref, capacity_ref, capacity, n,
               names=("cost_ref", "capacity_ref", "capacity", "exponent"))
    if out is not None and all(isinstance(v, float) for v in (cost_ref, capacity_ref, ratio, n)):
        # C = C_ref (A / A_ref)^n (Turton 4th ed. Ch. 7)
        assert out == pytest.approx(cost_ref * (capacity / capacity_ref) ** n, rel=1e-12)


MONEY = st.one_of(hnp.arrays(np.float64, st.integers(1, 5), elements=st.floats(0.0, 1e9)),
                  st.floats(0.0, 1e9))


@given(
    C_BM=st.one_of(MONEY, ANY),
    C_BM_base=st.one_of(MONEY, ANY, st.none()),
    contingency=st.one_of(st.just(0.15), ANY),
    fee=st.one_of(st.just(0.03), ANY),
    auxiliary=st.one_of(st.just(0.5), ANY),
    wc=st.one_of(st.just(0.15), ANY),
    grassroots=st.booleans(),
    axis=st.one_of(st.just(-1), st.integers(-3, 3), ANY_CHOICE),
    k=st.floats(0.0, 10.0),
)
def test_capital_fuzz(C_BM, C_BM_base, contingency, fee, auxiliary, wc, grassroots, axis, k):
    names = ("C_BM", "C_BM_base", "contingency", "fee", "auxiliary", "working_capital_fraction",
             "axis", "fraction", "FCI", "delivered_equipment_cost")
    tm = call(total_module_cost, C_BM, contingency, fee, axis, names=names)
    call(grassroots_cost, C_BM, C_BM_base, contingency, fee, auxiliary, axis, names=names)
    call(fixed_capital_investment, C_BM, C_BM_base, contingency, fee, auxiliary, grassroots, axis,
         names=names)
    call(capital_breakdown, C_BM, C_BM_base, contingency, fee, auxiliary, wc, grassroots, axis,
         names=names)
    call(working_capital, C_BM, wc, names=names)
    call(lang_estimate, C_BM, "fluid", None, axis, names=names)
    if tm is not None and isinstance(contingency, float) and isinstance(fee, float):
        # the total module cost is linear in the bare-module costs (Turton 4th ed. Ch. 7)
        np.testing.assert_allclose(total_module_cost(np.asarray(C_BM, float) * k, contingency, fee, axis),
                                   np.asarray(tm) * k, rtol=1e-12, atol=1e-300)


@given(
    amount=st.one_of(MONEY, ANY),
    price=st.one_of(st.floats(0.0, 100.0), ANY),
    hours=st.one_of(st.just(8000.0), st.floats(1.0, 8760.0), ANY),
    factor=st.one_of(st.floats(0.1, 20.0), ANY),
    life=st.one_of(st.floats(0.5, 20.0), ANY),
)
def test_operating_costs_fuzz(amount, price, hours, factor, life):
    names = ("power_W", "price_USD_per_kWh", "hours", "duty_W", "price_USD_per_GJ", "efficiency",
             "cop", "volume_m3", "bulk_density_kg_m3", "price_USD_per_kg", "life_yr",
             "flow_kg_s", "mass_kg_per_yr", "price_USD_per_t", "availability")
    e = call(electricity_cost, amount, price, hours, names=names)
    call(heat_cost, amount, price, factor, hours, names=names)
    call(cooling_water_cost, amount, price, hours, names=names)
    call(refrigeration_cost, amount, factor, price, hours, names=names)
    call(catalyst_cost, amount, factor, price, life, names=names)
    call(raw_material_cost, amount, price, hours, names=names)
    call(emissions_cost, amount, price, names=names)
    call(operating_hours, factor, names=names)
    if e is not None and all(isinstance(v, float) for v in (price, hours)):
        # an electricity bill is linear in the price (definition of the cost)
        np.testing.assert_allclose(electricity_cost(amount, price / 2, hours), np.asarray(e) / 2,
                                   rtol=1e-12, atol=1e-290)  # subnormal prices keep few digits


@given(
    FCI=st.one_of(MONEY, ANY),
    C_OL=st.one_of(st.floats(0.0, 1e7), ANY),
    C_UT=st.one_of(st.floats(0.0, 1e8), ANY),
    steps=st.one_of(st.integers(0, 30), ANY),
    salary=st.one_of(st.floats(1e3, 2e5), ANY),
    items=st.one_of(st.none(), st.dictionaries(st.text(max_size=3), st.one_of(MONEY, ANY),
                                               max_size=3), ANY),
    round_up=st.booleans(),
)
def test_operating_breakdowns_fuzz(FCI, C_OL, C_UT, steps, salary, items, round_up):
    names = ("FCI", "C_OL", "C_UT", "C_WT", "C_RM", "n_nonparticulate", "salary_USD_per_yr",
             "n_particulate", "utilities", "raw_materials", "revenues", "breakdown")
    call(cost_of_manufacture, FCI, C_OL, C_UT, 0.0, C_UT, names=names)
    call(com_breakdown, FCI, C_OL, C_UT, C_UT, 0.0, names=names)
    call(operating_labour_cost, steps, salary, round_up=round_up, names=names)
    bd = call(operating_breakdown, FCI, C_OL, utilities=items, revenues=items, names=names)
    if bd is not None:
        call(cost_frame, bd, names=names)
    call(cost_frame, items, names=names)


# ---------------------------------------------------------------------------------------------
# finance

def root_tolerance(c, r):
    """How close to zero the NPV of ``c`` at a float root ``r`` can be: rounding of the
    discounted flows plus the NPV's slope times the spacing of floats at r (near r = -1 the rate
    1 + r itself keeps only a few digits)."""
    t = np.arange(c.size)
    disc = (1 + r) ** -t.astype(float)
    slope = np.abs(t * c * disc / (1 + r)).sum()
    return 1e-8 * np.abs(c * disc).sum() + 8 * np.spacing(abs(r) + 1.0) * slope


FLOWS = hnp.arrays(np.float64, st.integers(1, 25), elements=st.floats(-1e9, 1e9))
RATES = st.floats(-0.9, 5.0)


@given(rate=st.one_of(RATES, ANY, hnp.arrays(np.float64, st.integers(1, 3), elements=RATES)),
       cashflows=st.one_of(FLOWS, ANY, hnp.arrays(np.float64, (2, 4), elements=ANY_FLOAT)))
def test_npv_and_payback_fuzz(rate, cashflows):
    v = call(F.npv, rate, cashflows, names=("rate", "cashflows"))
    p = call(F.discounted_payback, rate, cashflows, names=("rate", "cashflows"),
             check=lambda out: None)
    if p is not None:
        # documented: 0 if never negative, inf if not recovered, else a time within the flows
        p = np.asarray(p, dtype=float)
        n = np.shape(cashflows)[-1]
        assert not np.any(np.isnan(p)), p
        assert np.all((p == np.inf) | ((p >= 0) & (p <= n - 1))), p
    if v is not None and isinstance(rate, float) and isinstance(cashflows, np.ndarray) \
            and cashflows.ndim == 1:
        # reference: numpy_financial.npv, same convention (first flow undiscounted)
        assert v == pytest.approx(npf.npv(rate, cashflows), rel=1e-9,
                                  abs=1e-9 * np.abs(cashflows).sum() * max(1, (1 + rate) ** -25))


@given(cashflows=FLOWS)
def test_npv_at_rate_zero_is_the_sum_of_the_flows(cashflows):
    # at rate 0 no flow is discounted: NPV = sum of the flows (definition)
    assert F.npv(0.0, cashflows) == pytest.approx(math.fsum(cashflows),
                                                  abs=1e-13 * np.abs(cashflows).sum())


@given(cashflows=st.one_of(FLOWS, ANY),
       if_none=st.one_of(st.sampled_from(["raise", "nan"]), ANY_CHOICE),
       if_multiple=st.one_of(st.sampled_from(["raise", "nearest_zero", "nan"]), ANY_CHOICE))
def test_irr_fuzz(cashflows, if_none, if_multiple):
    def documented(out):  # NaN only on the explicit "nan" request
        if "nan" not in (if_none, if_multiple):
            assert_finite(out)

    call(F.irr, cashflows, if_none=if_none, if_multiple=if_multiple, check=documented,
         names=("cashflows", "if_none", "if_multiple"))
    res = call(F.irr_all, cashflows, names=("cashflows",), check=lambda r: None)
    if res is None:
        return
    roots, count = np.asarray(res.roots), np.asarray(res.count)
    # the NaN padding fills exactly the places after the ``count`` roots (documented filler)
    k = roots.shape[-1]
    filled = np.arange(k) < count[..., None]
    assert np.all(np.isfinite(roots[filled])) and np.all(np.isnan(roots[~filled]))
    c = np.asarray(cashflows, dtype=float)
    if c.ndim == 1:
        for r in roots[filled]:
            # every root reported makes the NPV zero, to rounding (a root where the NPV only
            # touches zero is located to about sqrt(eps): the finance module's docstring)
            assert abs(F.npv(r, c)) <= 1e3 * root_tolerance(c, r)


@given(
    invest=st.floats(1e3, 1e9),
    # zeros or at least 1 USD: numpy's companion-matrix roots lose precision on coefficients
    # spread over hundreds of decades (the NPV check below covers those for teakit)
    inflows=hnp.arrays(np.float64, st.integers(0, 29),
                       elements=st.one_of(st.just(0.0), st.floats(1.0, 1e9))),
    last=st.floats(1.0, 1e9),
)
def test_irr_of_a_conventional_investment_matches_numpy_financial(invest, inflows, last):
    c = np.concatenate([[-invest], inflows, [last]])
    r = F.irr(c)  # one sign change: unique by Descartes' rule of signs
    assert abs(F.npv(r, c)) <= root_tolerance(c, r)
    ref = npf.irr(c)  # reference: numpy_financial.irr (eigenvalues of the companion matrix)
    if np.isfinite(ref) and -0.9 < ref < 10.0 and r > -0.9:
        assert r == pytest.approx(ref, rel=1e-6, abs=1e-9)


@st.composite
def cash_flow_inputs(draw):
    plausible = {
        "fixed_capital": pos(0.0, 1e9),
        "revenue": pos(0.0, 1e9),
        "operating_cost": pos(0.0, 5e8),
        "discount_rate": st.floats(-0.5, 1.0),
        "tax_rate": st.floats(0.0, 0.6),
        "plant_life": st.integers(1, 40),
        "construction_schedule": st.sampled_from([(1.0,), (0.3, 0.5, 0.2), (0.5, 0.5)]),
        "working_capital": st.floats(0.0, 1e8),
        "fixed_operating_cost": st.floats(0.0, 1e8),
        "ramp_up": st.sampled_from([(), (0.5,), (0.7, 0.9)]),
        "salvage_value": st.floats(-1e8, 1e8),
        "depreciation": st.sampled_from(["straight_line", "macrs"]),
        "depreciation_life": st.sampled_from([None, 3, 5, 7, 10, 15, 20]),
        "tax_losses": st.sampled_from(["credit", "forfeit"]),
        "inflation": st.floats(-0.05, 0.2),
    }
    bad = {
        "plant_life": st.one_of(ANY, st.integers(-3, 10**7)),
        "depreciation_life": st.one_of(ANY, st.floats(1e3, 1e300)),
        "construction_schedule": st.one_of(ANY, st.lists(st.floats(0, 1), max_size=4)),
        "ramp_up": st.one_of(ANY, st.lists(st.floats(-1, 2), max_size=50)),
        "depreciation": ANY_CHOICE,
        "tax_losses": ANY_CHOICE,
    }
    return draw(mutated(plausible, bad))


@given(inputs=cash_flow_inputs(), quantity=st.one_of(st.none(), pos(1.0, 1e9), ANY))
def test_cash_flows_and_metrics_fuzz(inputs, quantity):
    kw, bad = inputs
    cf = fuzz(F.cash_flows, inputs)
    if cf is None:
        return
    # net cash flow is the sum of its parts (the CashFlows docstring)
    parts = (cf.capex + cf.working_capital + cf.revenue + cf.operating_cost
             + cf.fixed_operating_cost + cf.salvage + cf.tax)
    np.testing.assert_allclose(cf.net, parts, rtol=1e-12, atol=1e-6)
    if cf.batch_shape == ():
        # reference: numpy_financial.npv of the nominal flows at the nominal rate
        ref = npf.npv(cf.nominal_rate, cf.net)
        assert cf.npv == pytest.approx(ref, rel=1e-9, abs=1e-9 * np.abs(cf.net).sum() + 1e-6)

    def documented(m):  # NaN IRR only where irr_count says there is none or several
        count = np.asarray(m.irr_count)
        assert np.all(np.isfinite(np.asarray(m.irr)[count == 1]))
        assert np.all(np.isnan(np.asarray(m.irr)[count != 1]))
        assert_finite(m.npv)
        assert not np.any(np.isnan(np.asarray(m.discounted_payback)))
        assert_finite(m.lcop)

    m = call(F.metrics, cf, quantity, check=documented, names=("product_quantity", "cf"))
    if m is None or m.lcop is None or bad or cf.batch_shape != ():
        return
    # the levelised cost is the price that makes NPV zero (the metrics docstring): price the
    # product at it and the NPV vanishes, to rounding of the flows
    kw2 = {**kw, "revenue": m.lcop * np.asarray(quantity, dtype=float)}
    if np.all(np.asarray(kw2["revenue"]) >= 0):
        npv0 = F.cash_flows(**kw2).npv
        assert abs(npv0) <= 1e-7 * (np.abs(cf.net).sum() + np.abs(kw2["revenue"]).sum() * 50 + 1)


@given(method=st.one_of(st.sampled_from(["straight_line", "macrs"]), ANY_CHOICE),
       life=st.one_of(st.sampled_from([3, 5, 7, 10, 15, 20]), st.floats(0.1, 60.0), ANY,
                      st.floats(1e3, 1e300)),
       n_years=st.one_of(st.none(), st.integers(1, 60), ANY, st.integers(10**6, 10**12)))
def test_depreciation_schedule_fuzz(method, life, n_years):
    d = call(F.depreciation_schedule, method, life, n_years,
             names=("method", "life_years", "n_years"))
    if d is not None:
        # the fractions always sum to 1 (the depreciation_schedule docstring)
        np.testing.assert_allclose(np.sum(d, axis=-1), 1.0, rtol=1e-12)
        assert np.all(d >= 0)


@given(rate=st.one_of(st.floats(-0.5, 2.0), ANY), years=st.one_of(st.integers(1, 60), ANY),
       capital=st.one_of(st.floats(0.0, 1e9), ANY), inflation=st.one_of(st.floats(-0.5, 1), ANY))
def test_rates_and_recovery_fuzz(rate, years, capital, inflation):
    names = ("rate", "years", "capital", "inflation")
    crf = call(F.capital_recovery_factor, rate, years, names=names)
    call(F.annualised_capital, capital, rate, years, names=names)
    call(F.nominal_from_real, rate, inflation, names=names)
    call(F.real_from_nominal, rate, inflation, names=names)
    if crf is not None and isinstance(rate, float) and isinstance(years, int) \
            and 1e-9 < abs(rate) < 1e3:  # where the reference itself neither underflows nor overflows
        # reference: numpy_financial.pmt, the payment that repays a present sum of 1
        assert crf == pytest.approx(npf.pmt(rate, years, -1.0), rel=1e-9)
