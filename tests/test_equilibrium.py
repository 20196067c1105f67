"""Reaction equilibrium against published data and an independent Gibbs minimiser.

Ammonia equilibrium, 3:1 H2:N2 feed, mole % NH3: the measurements of Larson & Dodge,
J. Am. Chem. Soc. 45, 2918 (1923) (10-100 atm) and Larson, J. Am. Chem. Soc. 46, 367 (1924)
(300-1000 atm), as commonly reproduced in handbooks (values typed from memory of that table).
Deviations model - data in mol % points, recorded when this test was written:

=====  =====  ======  =====  =====  =============  =====  =====  ===========  =====
                      ideal                peng-robinson              dyson-simon
-----  -----  -------------------  ---------------------------  ------------------------
P atm  data   400 C   450 C  500 C  400 C  450 C  500 C          400 C  450 C  500 C
=====  =====  ======  =====  =====  =====  =====  =====  ===========  =====  =====
10            -0.03   +0.04  -0.00  -0.02  +0.04  +0.00          +0.07  +0.05  -0.02
30            -0.06   -0.03  -0.05  +0.06  +0.02  -0.02          +0.35  +0.10  -0.03
50            -0.33   -0.20  -0.10  -0.02  -0.05  -0.02          +0.46  +0.14  +0.03
100           -1.21   -0.96  -0.66  -0.15  -0.41  -0.37          +0.62  +0.14  -0.05
300           -5.14   -4.86  -4.19  +0.20  -1.55  -2.20          +0.48  +0.02  -0.28
600          -11.68  -10.92  -9.13  -0.51  -2.81  -3.62          -2.23  -1.31  -0.07
1000         -18.39  -18.38 -15.77  -2.95  -5.35  -5.81          -6.34  -5.07  -2.05
=====  =====  ======  =====  =====  =====  =====  =====  ===========  =====  =====

The default model for ammonia synthesis (Dyson & Simon's fugacity-coefficient fits) stays within
0.7 points up to 300 atm; beyond its fitted range (600 and 1000 atm) it falls 1-6 points low and the
test reports, not hides, that. Peng-Robinson with zero k_ij is 1.5-2.2 points low at 300 atm.
"""

import numpy as np
import pytest
from reference import cantera_phase_from_kit

from teakit import Reaction, ReactionSystem
from teakit.errors import InputError
from teakit.thermo import species_set

ATM = 101325.0
LARSON_DODGE = {  # P [atm]: {T [degC]: mol % NH3}
    10: {400: 3.85, 450: 2.04, 500: 1.20},
    30: {400: 10.09, 450: 5.80, 500: 3.48},
    50: {400: 15.27, 450: 9.17, 500: 5.58},
    100: {400: 25.12, 450: 16.43, 500: 10.61},
    300: {400: 47.00, 450: 35.82, 500: 26.44},
    600: {400: 65.2, 450: 53.6, 500: 42.15},
    1000: {400: 79.82, 450: 69.69, 500: 57.47},
}
POINTS = [(p, t, v) for p, row in LARSON_DODGE.items() for t, v in row.items()]
NH3 = Reaction("N2 + 3 H2 = 2 NH3")


def nh3_mol_percent(eos, P_atm, T_c):
    return 100 * NH3.equilibrium(T=T_c + 273.15, P=P_atm * ATM, feed={"N2": 1, "H2": 3}, eos=eos)["NH3"]


@pytest.mark.parametrize("P_atm,T_c,measured", [p for p in POINTS if p[0] <= 300])
def test_default_model_within_1p5_points_of_larson_dodge(P_atm, T_c, measured):
    assert NH3.default_eos() == "dyson-simon"
    assert nh3_mol_percent("default", P_atm, T_c) == pytest.approx(measured, abs=1.5)


def test_deviation_table_is_what_the_docstring_says():
    # Batch evaluation of every data point for all three models; the worst deviations are the
    # ones recorded in the module docstring (to 0.05 points).
    P = np.array([p for p, _, _ in POINTS]) * ATM
    T = np.array([t for _, t, _ in POINTS]) + 273.15
    data = np.array([v for _, _, v in POINTS])
    dev = {}
    for eos in ("ideal", "peng-robinson", "dyson-simon"):
        y = NH3.equilibrium(T=T, P=P, feed={"N2": 1, "H2": 3}, eos=eos)["NH3"] * 100
        dev[eos] = y - data
    upto300 = np.array([p <= 300 for p, _, _ in POINTS])
    assert np.abs(dev["dyson-simon"][upto300]).max() == pytest.approx(0.62, abs=0.05)
    assert dev["peng-robinson"][upto300].min() == pytest.approx(-2.20, abs=0.05)
    assert dev["ideal"][upto300].min() == pytest.approx(-5.14, abs=0.05)
    # Beyond 300 atm: reported, not hidden.
    assert dev["dyson-simon"][~upto300].min() == pytest.approx(-6.34, abs=0.05)
    # The default beats the ideal gas at every point from 100 atm (at 30-50 atm the fits, made
    # for 150-300 atm, are slightly worse than the ideal gas: +0.46 against -0.33 at 50 atm).
    hi = np.array([p >= 100 for p, _, _ in POINTS])
    assert np.all(np.abs(dev["dyson-simon"][hi]) < np.abs(dev["ideal"][hi]))


@pytest.mark.parametrize("T", [600.0, 650.0, 700.0, 750.0, 800.0])
def test_K_vs_gillespie_beattie(T):
    # Gillespie & Beattie, Phys. Rev. 36, 743 (1930), Ka for 1/2 N2 + 3/2 H2 = NH3 in atm^-1:
    # log10 Ka = -2.691122 log10 T - 5.519265e-5 T + 1.848863e-7 T^2 + 2001.6/T + 2.6899.
    # Fugacities in atm are those in bar divided by 1.01325, so K_atm = K_bar x 1.01325^(-dnu)
    # and, with dnu = -1, K_bar = Ka / 1.01325. With the ATcT enthalpy of formation of NH3
    # (data/species.csv) teakit lies 0.7-2.1 % above the correlation over 600-800 K; with
    # NIST-JANAF's it would be 6-8 % off.
    log10Ka = -2.691122 * np.log10(T) - 5.519265e-5 * T + 1.848863e-7 * T**2 + 2001.6 / T + 2.6899
    K_gb = 10**log10Ka / 1.01325
    assert Reaction("0.5 N2 + 1.5 H2 = NH3").equilibrium_constant(T) == pytest.approx(K_gb, rel=0.03)


def test_K_is_consistent_between_scalings():
    # K of 2x the reaction is K squared.
    T = np.array([650.0, 750.0])
    np.testing.assert_allclose(NH3.equilibrium_constant(T), Reaction("0.5 N2 + 1.5 H2 = NH3").equilibrium_constant(T) ** 2, rtol=1e-12)


# -- Cantera (test-only) ------------------------------------------------------------------------


@pytest.mark.parametrize(
    "equations,feed,T,P",
    [
        (["N2 + 3 H2 = 2 NH3"], {"N2": 1.0, "H2": 3.0}, 723.15, 200e5),
        (["N2 + 3 H2 = 2 NH3"], {"N2": 1.0, "H2": 3.0, "Ar": 0.1, "CH4": 0.2}, 780.0, 150e5),
        (["SO2 + 0.5 O2 = SO3"], {"SO2": 0.10, "O2": 0.11, "N2": 0.79}, 700.0, 1.2e5),
        (["SO2 + 0.5 O2 = SO3"], {"SO2": 0.10, "O2": 0.11, "N2": 0.79}, 900.0, 1.0e5),
        (["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"], {"CO2": 1.0, "H2": 3.0}, 523.15, 50e5),
        (["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"], {"CO2": 1.0, "H2": 3.0, "CO": 0.3, "N2": 0.1}, 560.0, 80e5),
    ],
)
def test_ideal_equilibrium_vs_cantera_same_data(equations, feed, T, P):
    # Cantera's Gibbs minimisation (equilibrate('TP')) on a phase built from teakit's own species
    # coefficients: the two solvers must agree to 1e-4 relative in every mole fraction above 1e-6.
    sys_ = ReactionSystem(equations)
    res = sys_.equilibrium(T=T, P=P, feed=feed, eos="ideal")
    gas = cantera_phase_from_kit(list(res.species))
    gas.TPX = T, P, {k: v for k, v in feed.items()}
    gas.equilibrate("TP")
    for k, name in enumerate(res.species):
        ref = gas.X[gas.species_index(name)]
        if ref > 1e-6:
            assert res.y[k] == pytest.approx(ref, rel=1e-4), name


def test_so2_oxidation_vs_cantera_shipped_data():
    # Cantera's own nasa_gas.yaml data (NASA Glenn records J 6/61 SO2, J 9/65 SO3) against the
    # kit's data (JANAF-fitted): SO2 conversion within 1 % at 650-900 K, 1 atm.
    ct = pytest.importorskip("cantera")
    gas = ct.Solution(thermo="ideal-gas", species=[s for s in ct.Species.list_from_file("nasa_gas.yaml") if s.name in ("SO2", "SO3", "O2", "N2")])
    r = Reaction("SO2 + 0.5 O2 = SO3")
    for T in (650.0, 750.0, 850.0, 900.0):
        gas.TPX = T, ATM, {"SO2": 0.10, "O2": 0.11, "N2": 0.79}
        gas.equilibrate("TP")
        x_ct = gas.X[gas.species_index("SO3")] / (gas.X[gas.species_index("SO3")] + gas.X[gas.species_index("SO2")])
        res = r.equilibrium(T=T, P=ATM, feed={"SO2": 0.10, "O2": 0.11, "N2": 0.79}, eos="ideal")
        x_kit = res["SO3"] / (res["SO3"] + res["SO2"])
        assert x_kit == pytest.approx(x_ct, rel=0.01), T


def test_nh3_vs_cantera_shipped_data_difference_is_the_formation_enthalpy():
    # Cantera's nasa_gas.yaml NH3 record (TPIS89, the kit's cp polynomial too) carries
    # Hf = -45.94 kJ/mol (CODATA); the kit uses ATcT (-45.556). K of N2 + 3 H2 = 2 NH3 then
    # differs by exp(-2 dHf/RT), about 11-13 %: after removing that factor the two agree within
    # 0.5 %. (Cantera labels these 1-bar data with a 1-atm reference pressure; K computed from
    # g0 = h - T s is unaffected.)
    ct = pytest.importorskip("cantera")
    sp = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml") if s.name in ("N2", "H2", "NH3")}
    R = 8.314462618
    hf_ct = sp["NH3"].thermo.h(298.15) / 1000.0
    kit = species_set(["NH3"]).Hf298[0]
    for T in (650.0, 750.0):
        g = {n: (sp[n].thermo.h(T) - T * sp[n].thermo.s(T)) / 1000.0 for n in sp}
        lnK_ct = -(2 * g["NH3"] - g["N2"] - 3 * g["H2"]) / (R * T)
        lnK_kit = np.log(NH3.equilibrium_constant(T))
        assert abs(lnK_kit - lnK_ct) > 0.05  # a real, visible difference (about 11 %)
        assert lnK_kit - lnK_ct == pytest.approx(-2 * (kit - hf_ct) / (R * T), abs=0.005)


# -- behaviour -----------------------------------------------------------------------------------


def test_real_gas_raises_ammonia_yield_and_pressure_raises_yield():
    T = 723.15
    P = np.array([50.0, 100.0, 200.0, 300.0]) * 1e5
    y_ideal = NH3.equilibrium(T=T, P=P, feed={"N2": 1, "H2": 3}, eos="ideal")["NH3"]
    y_real = NH3.equilibrium(T=T, P=P, feed={"N2": 1, "H2": 3})["NH3"]
    assert np.all(np.diff(y_ideal) > 0) and np.all(np.diff(y_real) > 0)
    assert np.all(y_real > y_ideal)


def test_ideal_gas_closed_form_single_reaction():
    # Independent closed form: for N2 + 3 H2 = 2 NH3 from a 1:3 feed, with extent x per mol N2,
    # K (P/P0)^2 = (2x)^2 (4 - 2x)^2 / ((1 - x) (3 - 3x)^3); solved by bisection here.
    T, P = 700.0, 100e5
    K = NH3.equilibrium_constant(T)

    def f(x):
        return (2 * x) ** 2 * (4 - 2 * x) ** 2 / ((1 - x) * (3 - 3 * x) ** 3) - K * (P / 1e5) ** 2

    lo, hi = 1e-12, 1 - 1e-12
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if f(mid) < 0 else (lo, mid)
    y_hand = 2 * lo / (4 - 2 * lo)
    assert NH3.equilibrium(T=T, P=P, feed={"N2": 1, "H2": 3}, eos="ideal")["NH3"] == pytest.approx(y_hand, rel=1e-9)


def test_mass_and_element_balance_and_broadcast():
    T = np.linspace(600, 800, 7)[:, None]
    P = np.array([1e6, 1e7, 3e7])
    feed = {"N2": 1.0, "H2": 3.0, "Ar": 0.05, "NH3": np.array([0.0, 0.02, 0.1])}
    res = NH3.equilibrium(T=T, P=P, feed=feed)
    assert res.y.shape == (7, 3, 4) and res["NH3"].shape == (7, 3)
    s = species_set(res.species)
    n0 = np.stack([np.broadcast_to(feed.get(k, 0.0), (7, 3)) for k in res.species], axis=-1)
    np.testing.assert_allclose(res.moles @ s.element_matrix.T, n0 @ s.element_matrix.T, rtol=1e-12)
    np.testing.assert_allclose(res.y.sum(axis=-1), 1.0, rtol=1e-14)
    assert res.to_frame().shape == (21, 6)


def test_decomposition_and_extreme_conversion():
    # Pure NH3 at high T decomposes almost fully; SO2 at low T converts almost fully. Both
    # converge and are consistent with K.
    res = NH3.equilibrium(T=1200.0, P=1e5, feed={"NH3": 1.0}, eos="ideal")
    assert res["NH3"] < 1e-3
    r = Reaction("SO2 + 0.5 O2 = SO3")
    res = r.equilibrium(T=500.0, P=1e5, feed={"SO2": 0.1, "O2": 0.11, "N2": 0.79}, eos="ideal")
    Q = res["SO3"] / (res["SO2"] * res["O2"] ** 0.5)
    assert Q == pytest.approx(r.equilibrium_constant(500.0), rel=1e-8)
    assert res["SO2"] < 1e-5


def test_units_at_the_edge():
    a = NH3.equilibrium(T="450 degC", P="300 atm", feed={"N2": 1, "H2": 3})["NH3"]
    b = NH3.equilibrium(T=723.15, P=300 * ATM, feed={"N2": 1, "H2": 3})["NH3"]
    assert a == pytest.approx(b, rel=1e-12)
    with pytest.raises(InputError, match="does not convert to K"):
        NH3.equilibrium(T="300 bar", P=1e7, feed={"N2": 1, "H2": 3})


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"T": 0.0}, "T must be > 0"),
        ({"T": -10.0}, "T must be > 0"),
        ({"T": np.nan}, "T must be finite"),
        ({"T": 100.0}, "outside the heat-capacity data range"),
        ({"P": -1.0}, "P must be > 0"),
        ({"P": np.inf}, "P must be finite"),
        ({"feed": {"N2": 1.0}}, "neither forward nor backward"),
        ({"feed": {"Ar": 1.0}}, "neither forward nor backward"),
        ({"feed": {"N2": -1.0, "H2": 3.0}}, r"feed\['N2'\] must be >= 0"),
        ({"feed": {"N2": 1.0, "Xe": 1.0}}, "unknown feed species"),
        ({"feed": {}}, "non-empty mapping"),
        ({"eos": "vdw"}, "eos must be one of default, ideal, peng-robinson, dyson-simon"),
    ],
)
def test_bad_input(kwargs, match):
    args = {"T": 700.0, "P": 1e7, "feed": {"N2": 1.0, "H2": 3.0}} | kwargs
    with pytest.raises(InputError, match=match):
        NH3.equilibrium(**args)


@pytest.mark.parametrize(
    "equation,match",
    [
        ("N2 + H2 = NH3", "does not balance.*H: \\+1.*N: -1"),
        ("N2 + 3 H2", "no '='"),
        ("N2 + 3 Hx = 2 NH3", "unknown species 'Hx'"),
        ("N2 + 3 H2 = 2 NH3 = x", "exactly one left and one right"),
        ("NH3 + N2 = NH3 + N2", "both sides"),
        ("3 = NH3", "cannot read the term"),
    ],
)
def test_bad_equations(equation, match):
    with pytest.raises(InputError, match=match):
        Reaction(equation)


def test_reaction_parsing_forms_and_dependence():
    a = Reaction("SO2 + 1/2 O2 <=> SO3")
    b = Reaction("SO2 + 0.5 O2 = SO3")
    assert a.stoichiometry == b.stoichiometry == {"SO2": -1.0, "O2": -0.5, "SO3": 1.0}
    assert a.reactants == ("SO2", "O2") and a.products == ("SO3",)
    with pytest.raises(InputError, match="not independent"):
        ReactionSystem(["N2 + 3 H2 = 2 NH3", "0.5 N2 + 1.5 H2 = NH3"])


def test_heat_of_reaction_at_298():
    # NIST-JANAF (Chase 1998): dH(298) of SO2 + 1/2 O2 = SO3 is -395.765 + 296.842 = -98.923 kJ/mol.
    assert Reaction("SO2 + 0.5 O2 = SO3").enthalpy_of_reaction(298.15) == pytest.approx(-98923.0, abs=1.0)
