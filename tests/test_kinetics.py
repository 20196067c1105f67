"""Rate laws against their published expressions, evaluated by hand in this file.

Sources (each check names its own):

- Dyson & Simon, Ind. Eng. Chem. Fundam. 7, 605 (1968): the Temkin-Pyzhev rate in the fugacity
  form, r_NH3 = 2 k2 [Ka^2 a_N2 (a_H2^3/a_NH3^2)^0.5 - (a_NH3^2/a_H2^3)^0.5] kmol/(m3 h),
  k2 = 8.849e14 exp(-40765/(1.987 T)) (constants from memory, confirm against Dyson & Simon,
  1968), with their fugacity-coefficient fits (as written in teakit.thermo.fugacity, retyped here).
- Gillespie & Beattie, Phys. Rev. 36, 743 (1930): log10 Ka [1/atm] for 1/2 N2 + 3/2 H2 = NH3.
- Collina, Corbetta & Cappelli (1971) as reproduced by Froment & Bischoff, Chemical Reactor
  Analysis and Design, 2nd ed. (1990): r = k1 pO2 pSO2 (1 - pSO3/(Kp pSO2 pO2^0.5)) /
  (22.414 (1 + K2 pSO2 + K3 pSO3)^2) kmol/(kg h), k1 = exp(12.160 - 5473/T),
  K2 = exp(-9.953 + 8619/T), K3 = exp(-71.745 + 52596/T) (from memory, confirm against Froment &
  Bischoff, 1990).
- Arrhenius form k = A exp(-Ea/(R T)) for the generic law.
- Equilibria: teakit's Reaction.equilibrium (dyson-simon for NH3, ideal for SO2); every law must
  vanish there, which also checks the 1 bar -> 1 atm conversion of K (the wrong direction would
  leave a residual of about 5 % of the forward term for NH3).

Unit conversions used throughout: kmol/h -> mol/s is x 1000/3600; 1 atm = 101325 Pa; the extent
of N2 + 3 H2 = 2 NH3 is r_NH3 / 2; that of SO2 + 1/2 O2 = SO3 is r_SO2.
"""

import math
import warnings

import numpy as np
import pytest

from teakit import Reaction
from teakit.chemistry.kinetics import (
    AmmoniaTemkinPyzhev,
    ReversibleRate,
    SO2Collina,
    gillespie_beattie_Ka,
)
from teakit.errors import InputError, OutOfRangeError, RangeWarning

ATM = 101325.0
NH3_SPECIES = ("N2", "H2", "NH3", "Ar", "CH4")
SO2_SPECIES = ("SO2", "O2", "SO3", "N2")
# 450 degC, 200 atm, N2 0.21, H2 0.63, NH3 0.04, Ar + CH4 0.12
Y_A = np.array([0.21, 0.63, 0.04, 0.06, 0.06])
T_A, P_A = 723.15, 200 * ATM


# -- hand evaluation of the published expressions ---------------------------------------------


def dyson_simon_by_hand(T, p, yN2, yH2, yNH3, Ka):
    """Dyson & Simon (1968) rate of NH3 formation [kmol/(m3 h)] and its parts; p in atm."""
    phiN2 = 0.93431737 + 0.3101804e-3 * T + 0.295896e-3 * p - 0.2707279e-6 * T**2 + 0.4775207e-6 * p**2
    phiH2 = math.exp(
        math.exp(-3.8402 * T**0.125 + 0.541) * p
        - math.exp(-0.1263 * T**0.5 - 15.980) * p**2
        + 300 * math.exp(-0.011901 * T - 5.941) * (math.exp(-p / 300) - 1)
    )
    phiNH3 = 0.1438996 + 0.2028538e-2 * T - 0.4487672e-3 * p - 0.1142945e-5 * T**2 + 0.2761216e-6 * p**2
    aN2, aH2, aNH3 = yN2 * phiN2 * p, yH2 * phiH2 * p, yNH3 * phiNH3 * p
    k2 = 8.849e14 * math.exp(-40765 / (1.987 * T))
    fwd = Ka**2 * aN2 * (aH2**3 / aNH3**2) ** 0.5
    rev = (aNH3**2 / aH2**3) ** 0.5
    return {"phi": (phiN2, phiH2, phiNH3), "a": (aN2, aH2, aNH3), "k2": k2,
            "fwd": fwd, "rev": rev, "r": 2 * k2 * (fwd - rev)}


def gb_Ka_by_hand(T):
    # Gillespie & Beattie (1930), Ka in 1/atm.
    return 10 ** (-2.691122 * math.log10(T) - 5.519265e-5 * T + 1.848863e-7 * T**2 + 2001.6 / T + 2.6899)


def collina_by_hand(T, pSO2, pO2, pSO3, Kp):
    """Collina et al. (1971) via Froment & Bischoff (1990) [kmol SO2/(kg h)]; p in atm."""
    k1 = math.exp(12.160 - 5473 / T)
    K2 = math.exp(-9.953 + 8619 / T)
    K3 = math.exp(-71.745 + 52596 / T)
    den = 22.414 * (1 + K2 * pSO2 + K3 * pSO3) ** 2
    return {"k1": k1, "K2": K2, "K3": K3, "den": den,
            "r": k1 * pO2 * pSO2 * (1 - pSO3 / (Kp * pSO2 * pO2**0.5)) / den}


def to_si(r_kmol_h):
    return r_kmol_h * 1000 / 3600


# -- ammonia: Temkin-Pyzhev, Dyson & Simon ------------------------------------------------------


def test_nh3_rate_by_hand_450C_200atm():
    # Dyson & Simon (1968) with Gillespie & Beattie's Ka, T = 723.15 K, p = 200 atm:
    #   phi_N2  = 0.93431737 + 0.224307 + 0.059179 - 0.141576 + 0.019101 = 1.09533
    #   phi_H2  = exp(0.0547141 - 0.0001538 - 0.0000702) = exp(0.0544901) = 1.05600
    #   phi_NH3 = 0.1438996 + 1.466937 - 0.089753 - 0.597698 + 0.011045 = 0.93443
    #   a_N2 = 0.21 x 1.09533 x 200 = 46.0038, a_H2 = 0.63 x 1.05600 x 200 = 133.056,
    #   a_NH3 = 0.04 x 0.93443 x 200 = 7.47544 atm
    #   log10 Ka = -7.694532 - 0.039913 + 0.096686 + 2.767890 + 2.6899 = -2.179970,
    #   Ka = 6.60741e-3 1/atm
    #   k2 = 8.849e14 exp(-40765 / (1.987 x 723.15)) = 8.849e14 exp(-28.37012) = 422.578
    #   forward = Ka^2 a_N2 (a_H2^3 / a_NH3^2)^0.5 = 4.36579e-5 x 46.0038 x (2.355623e6 / 55.882)^0.5
    #           = 0.412356;  reverse = (55.882 / 2.355623e6)^0.5 = 4.87061e-3
    #   r_NH3 = 2 x 422.578 x (0.412356 - 0.004871) = 344.389 kmol/(m3 h)
    #   = 344.389 x 1000/3600 = 95.663 mol NH3/(s m3); extent rate 47.832 mol/(s m3)
    h = dyson_simon_by_hand(723.15, 200.0, 0.21, 0.63, 0.04, gb_Ka_by_hand(723.15))
    assert h["phi"] == pytest.approx((1.09533, 1.05600, 0.93443), rel=1e-5)
    assert h["k2"] == pytest.approx(422.578, rel=1e-5)
    assert h["r"] == pytest.approx(344.389, rel=1e-5)
    law = AmmoniaTemkinPyzhev(NH3_SPECIES, Ka="gillespie-beattie")
    assert law.nh3_rate(T_A, P_A, Y_A) == pytest.approx(to_si(h["r"]), rel=1e-10)
    assert law(T_A, P_A, Y_A) == pytest.approx(to_si(h["r"]) / 2, rel=1e-10)


def test_nh3_rate_by_hand_400C_150atm():
    # Dyson & Simon (1968), Gillespie & Beattie's Ka, T = 673.15 K, p = 150 atm,
    # y N2 0.22, H2 0.66, NH3 0.02, inerts 0.10:
    #   phi = 1.07557, 1.04515, 0.930404; a = 35.4938, 103.470, 2.79121 atm
    #   log10 Ka = -7.610794 - 0.037153 + 0.083778 + 2.973483 + 2.6899 = -1.900787, Ka = 0.0125665
    #   k2 = 8.849e14 exp(-30.47739) = 51.3728
    #   forward = 0.0125665^2 x 35.4938 x (1.107757e6 / 7.79085)^0.5 = 2.11353, reverse = 2.65198e-3
    #   r_NH3 = 2 x 51.3728 x 2.11088 = 216.884 kmol/(m3 h) -> extent 216.884/7.2 = 30.1228 mol/(s m3)
    h = dyson_simon_by_hand(673.15, 150.0, 0.22, 0.66, 0.02, gb_Ka_by_hand(673.15))
    assert h["r"] == pytest.approx(216.884, rel=1e-5)
    law = AmmoniaTemkinPyzhev(NH3_SPECIES, Ka="gillespie-beattie")
    y = {"N2": 0.22, "H2": 0.66, "NH3": 0.02, "Ar": 0.05, "CH4": 0.05}
    assert law(673.15, 150 * ATM, y) == pytest.approx(to_si(h["r"]) / 2, rel=1e-10)


def test_default_Ka_is_teakit_K_on_an_atm_basis():
    # K_bar = Ka_atm x 1.01325^(delta nu), delta nu = -1, so Ka_atm = 1.01325 K_bar; against
    # Gillespie & Beattie (1930) within 3 % at 300-550 degC.
    T = np.array([573.15, 673.15, 723.15, 823.15])
    law = AmmoniaTemkinPyzhev()
    K_bar = Reaction("0.5 N2 + 1.5 H2 = NH3").equilibrium_constant(T)
    np.testing.assert_allclose(law.equilibrium_constant(T), 1.01325 * K_bar, rtol=1e-12)
    np.testing.assert_allclose(law.equilibrium_constant(T), [gb_Ka_by_hand(t) for t in T], rtol=0.03)
    np.testing.assert_allclose(gillespie_beattie_Ka(T), [gb_Ka_by_hand(t) for t in T], rtol=1e-12)
    # The rate with teakit's Ka is Dyson & Simon's expression with that Ka.
    h = dyson_simon_by_hand(723.15, 200.0, 0.21, 0.63, 0.04, 1.01325 * K_bar[2])
    assert AmmoniaTemkinPyzhev(NH3_SPECIES)(T_A, P_A, Y_A) == pytest.approx(to_si(h["r"]) / 2, rel=1e-10)


@pytest.mark.parametrize("T_c,P_atm", [(400, 150), (450, 200), (500, 300)])
def test_nh3_rate_vanishes_at_teakit_equilibrium(T_c, P_atm):
    T, P = T_c + 273.15, P_atm * ATM
    feed = dict(zip(NH3_SPECIES, Y_A, strict=True))
    eq = Reaction("N2 + 3 H2 = 2 NH3").equilibrium(T, P, feed, eos="dyson-simon")
    y = np.array([eq[s] for s in NH3_SPECIES])
    law = AmmoniaTemkinPyzhev(NH3_SPECIES)
    h = dyson_simon_by_hand(T, P_atm, *y[:3], law.equilibrium_constant(T))
    forward = to_si(2 * h["k2"] * h["fwd"]) / 2  # forward term as an extent rate [mol/(s m3)]
    assert abs(law(T, P, y)) < 1e-6 * forward
    # Just before and beyond equilibrium (same mixture, NH3 shifted by 0.5 % of itself).
    shift = np.array([0.0, 0.0, 0.005 * y[2], 0.0, 0.0])
    assert law(T, P, y - shift) > 0 > law(T, P, (y + shift) / (1 + shift.sum()))


def test_nh3_sign_reverses_beyond_equilibrium():
    # Equilibrium gas at 450 degC is beyond equilibrium at 500 degC (exothermic: K falls) and
    # short of it at 400 degC.
    feed = dict(zip(NH3_SPECIES, Y_A, strict=True))
    eq = Reaction("N2 + 3 H2 = 2 NH3").equilibrium(T_A, P_A, feed, eos="dyson-simon")
    y = eq.y
    law = AmmoniaTemkinPyzhev(NH3_SPECIES)
    assert law(773.15, P_A, y) < 0 < law(673.15, P_A, y)
    # A 30 % NH3 gas at 450 degC, 200 atm decomposes (equilibrium about 21.7 % from this feed).
    assert law(T_A, P_A, [0.15, 0.45, 0.30, 0.05, 0.05]) < 0


def test_nh3_activity_and_effectiveness_scale_linearly_and_broadcast():
    law = AmmoniaTemkinPyzhev(NH3_SPECIES)
    r1 = law(T_A, P_A, Y_A)
    act = np.array([0.0, 0.5, 1.0, 1.7])
    np.testing.assert_allclose(law(T_A, P_A, Y_A, activity=act), act * r1, rtol=1e-13)
    np.testing.assert_allclose(law(T_A, P_A, Y_A, effectiveness=0.4), 0.4 * r1, rtol=1e-13)
    assert AmmoniaTemkinPyzhev(NH3_SPECIES, activity=0.8)(T_A, P_A, Y_A) == pytest.approx(0.8 * r1, rel=1e-13)
    # Per-member activity with a batch of temperatures: shape (2, 4).
    T = np.array([[673.15], [723.15]])
    out = law(T, P_A, Y_A, activity=act)
    assert out.shape == (2, 4)
    np.testing.assert_allclose(out[1], act * r1, rtol=1e-13)


def test_nh3_rate_increases_with_T_far_from_equilibrium():
    # y_NH3 = 2 %, far below equilibrium (about 18-50 % at 200 atm over 350-500 degC): the
    # forward term dominates; its apparent activation energy is about 40.8 - 2 x 12.5 kcal/mol > 0
    # (Arrhenius k2 against the falling Ka^2).
    T = np.arange(350.0, 501.0, 25.0) + 273.15
    r = AmmoniaTemkinPyzhev()(T, P_A, [0.22, 0.66, 0.02])
    assert np.all(np.diff(r) > 0)


def test_nh3_rate_at_zero_ammonia_is_the_documented_floor_value():
    # At y_NH3 = 0 the forward term is taken at 1e-3 of the equilibrium NH3 activity
    # a_eq = Ka a_N2^0.5 a_H2^1.5, so with alpha = 0.5:
    #   r_NH3 = 2 k2 Ka^2 a_N2 a_H2^1.5 / (1e-3 a_eq) = 2 k2 Ka a_N2^0.5 / 1e-3.
    # Gillespie & Beattie's Ka, 450 degC, 200 atm, a_N2 = 46.0038 (test above):
    #   2 x 422.578 x 6.60741e-3 x 46.0038^0.5 / 1e-3 = 2 x 422.578 x 6.60741e-3 x 6.78261 / 1e-3
    #   = 37876.1 kmol/(m3 h)
    h = dyson_simon_by_hand(723.15, 200.0, 0.21, 0.63, 0.04, gb_Ka_by_hand(723.15))
    by_hand = 2 * h["k2"] * gb_Ka_by_hand(723.15) * h["a"][0] ** 0.5 / 1e-3
    assert by_hand == pytest.approx(37876.1, rel=1e-5)
    law = AmmoniaTemkinPyzhev(NH3_SPECIES, Ka="gillespie-beattie")
    y0 = np.array([0.21, 0.63, 0.0, 0.08, 0.08])
    r0 = law.nh3_rate(T_A, P_A, y0)
    assert np.isfinite(r0) and r0 > 0
    assert r0 == pytest.approx(to_si(by_hand), rel=1e-10)
    # Continuous as y_NH3 -> 0, above the rate at 4 % NH3, and never below zero near zero NH3.
    y_small = np.array([0.21, 0.63, 1e-12, 0.08, 0.08])
    assert law.nh3_rate(T_A, P_A, y_small) == pytest.approx(r0, rel=1e-6)
    assert r0 > law.nh3_rate(T_A, P_A, Y_A)
    # No N2 and no NH3: nothing reacts either way.
    assert law(T_A, P_A, [0.0, 0.9, 0.0, 0.05, 0.05]) == 0.0


def test_nh3_scalar_and_array_contract():
    law = AmmoniaTemkinPyzhev(NH3_SPECIES)
    r = law(T_A, P_A, Y_A)
    assert isinstance(r, float)
    assert isinstance(law(T_A, "200 atm", Y_A), float)
    T = np.array([673.15, 698.15, 723.15])
    out = law(T, P_A, Y_A)
    assert out.shape == (3,)
    assert out[2] == pytest.approx(r, rel=1e-14)
    yb = np.broadcast_to(Y_A, (2, 1, 5))
    assert law(T, P_A, yb).shape == (2, 3)
    # Mapping and permuted columns give the same number.
    perm = ("CH4", "NH3", "Ar", "H2", "N2")
    y_perm = [dict(zip(NH3_SPECIES, Y_A, strict=True))[s] for s in perm]
    assert AmmoniaTemkinPyzhev(perm)(T_A, P_A, y_perm) == pytest.approx(r, rel=1e-14)
    y_map = {"N2": 0.21, "H2": 0.63, "NH3": 0.04, "Ar": 0.06, "CH4": 0.06}
    assert AmmoniaTemkinPyzhev()(T_A, P_A, y_map) == pytest.approx(r, rel=1e-14)
    # Formation rates by stoichiometry.
    assert law.formation_rate(T_A, P_A, Y_A, "NH3") == pytest.approx(2 * r, rel=1e-14)
    assert law.formation_rate(T_A, P_A, Y_A, "H2") == pytest.approx(-3 * r, rel=1e-14)


def test_nh3_bad_input():
    law = AmmoniaTemkinPyzhev(NH3_SPECIES)
    with pytest.raises(InputError, match="T must be > 0"):
        law(0.0, P_A, Y_A)
    with pytest.raises(InputError, match="P must be > 0"):
        law(T_A, -1.0, Y_A)
    with pytest.raises(InputError, match="T must be finite"):
        law(np.nan, P_A, Y_A)
    with pytest.raises(InputError, match=r"shape \(\.\.\., 5\)"):
        law(T_A, P_A, Y_A[:3])
    with pytest.raises(InputError, match="sum to at most 1"):
        law(T_A, P_A, [0.3, 0.7, 0.1, 0.0, 0.0])
    with pytest.raises(InputError, match=r"y_NH3\) must lie in \[0, 1\]"):
        law(T_A, P_A, [0.3, 0.7, -0.01, 0.0, 0.0])
    with pytest.raises(InputError, match="y_H2 must be > 0"):
        law(T_A, P_A, [0.9, 0.0, 0.1, 0.0, 0.0])
    with pytest.raises(InputError, match="missing 'NH3'"):
        AmmoniaTemkinPyzhev()(T_A, P_A, {"N2": 0.25, "H2": 0.75})
    with pytest.raises(InputError, match="must include N2, H2, NH3"):
        AmmoniaTemkinPyzhev(("N2", "H2"))
    with pytest.raises(InputError, match="Ka must be one of teakit, gillespie-beattie"):
        AmmoniaTemkinPyzhev(Ka="nielsen")
    with pytest.raises(InputError, match=r"alpha must lie in \(0, 1\)"):
        AmmoniaTemkinPyzhev(alpha=1.0)
    with pytest.raises(InputError, match=r"nh3_floor must lie in \(0, 1\)"):
        AmmoniaTemkinPyzhev(nh3_floor=0.0)
    with pytest.raises(InputError, match=r"effectiveness must lie in \(0, 1\]"):
        law(T_A, P_A, Y_A, effectiveness=0.0)
    with pytest.raises(InputError, match="activity must be >= 0"):
        law(T_A, P_A, Y_A, activity=[1.0, -0.1])
    with pytest.raises(InputError, match="do not broadcast"):
        law([700.0, 710.0, 720.0], P_A, Y_A, activity=[1.0, 0.9])
    # Far outside the fits (phi_NH3 < 0 above about 1800 K): a typed error, not a NaN.
    with pytest.warns(RangeWarning), pytest.raises(OutOfRangeError, match="Dyson-Simon"):
        law(2500.0, P_A, Y_A)


def test_nh3_range_warning_policy():
    law = AmmoniaTemkinPyzhev(NH3_SPECIES)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        law(np.array([573.15, 823.15]), np.array([50.0, 400.0]) * ATM, Y_A)  # window corners
    with pytest.warns(RangeWarning, match=r"T = 523.15 K \(250 degC\)"):
        law(523.15, P_A, Y_A)
    with pytest.warns(RangeWarning, match=r"P = .* \(30 atm\)"):
        law(T_A, 30 * ATM, Y_A)


# -- SO2: Collina et al. via Froment & Bischoff -------------------------------------------------


def so2_Kp_atm(T):
    # teakit's K of SO2 + 1/2 O2 = SO3 (1 bar), on an atm basis: x 1.01325^0.5 (delta nu = -1/2).
    return Reaction("SO2 + 0.5 O2 = SO3").equilibrium_constant(T) * 1.01325**0.5


@pytest.mark.parametrize(
    "ySO3,r_by_hand",
    [
        # T = 773.15 K, P = 1 atm, SO2 10 %, O2 11 %:
        #   k1 = exp(12.160 - 5473/773.15) = exp(5.08117) = 160.962
        #   K2 = exp(-9.953 + 8619/773.15) = exp(1.19490) = 3.30323
        #   K3 = exp(-71.745 + 52596/773.15) = exp(-3.71680) = 0.0243116
        # SO3 0: r = 160.962 x 0.11 x 0.10 / (22.414 x (1 + 0.330323)^2) = 1.770582 / 39.6674
        #        = 0.0446356 kmol/(kg h)
        (0.0, 0.0446356),
        # SO3 5 %: Kp = 58.0218 atm^-1/2 (teakit), driving 1 - 0.05/(58.0218 x 0.10 x 0.331662)
        #        = 0.974017; den 22.414 x (1 + 0.330323 + 0.0012156)^2 = 39.7399
        #        r = 1.770582 x 0.974017 / 39.7399 = 0.0433965 kmol/(kg h)
        (0.05, 0.0433965),
    ],
)
def test_so2_rate_by_hand_500C_1atm(ySO3, r_by_hand):
    h = collina_by_hand(773.15, 0.10, 0.11, ySO3, so2_Kp_atm(773.15))
    assert (h["k1"], h["K2"], h["K3"]) == pytest.approx((160.962, 3.30323, 0.0243116), rel=1e-5)
    assert h["r"] == pytest.approx(r_by_hand, rel=1e-5)
    law = SO2Collina(SO2_SPECIES)
    y = [0.10, 0.11, ySO3, 0.79 - ySO3]
    # per kg: 0.0446356 x 1000/3600 = 0.0123988 mol/(s kg); per m3 at 550 kg/m3: 6.81933
    assert law.rate_per_mass(773.15, ATM, y) == pytest.approx(to_si(h["r"]), rel=1e-10)
    assert law(773.15, ATM, y) == pytest.approx(550 * to_si(h["r"]), rel=1e-10)
    assert law(773.15, ATM, y, bulk_density=600.0) == pytest.approx(600 * to_si(h["r"]), rel=1e-10)


def test_so2_rate_by_hand_450C_1p5atm():
    # T = 723.15 K, P = 1.5 atm, SO2 8 %, O2 12 %, SO3 2 %: p = 0.12, 0.18, 0.03 atm
    #   k1 = exp(4.59172) = 98.6642, K2 = exp(1.96569) = 7.13983, K3 = exp(0.986798) = 2.68263
    #   Kp = 167.510 atm^-1/2 (teakit), driving 1 - 0.03/(167.51 x 0.12 x 0.424264) = 0.996482
    #   den = 22.414 x (1 + 0.856780 + 0.080479)^2 = 84.1191
    #   r = 98.6642 x 0.18 x 0.12 x 0.996482 / 84.1191 = 0.0252458 kmol/(kg h)
    h = collina_by_hand(723.15, 0.12, 0.18, 0.03, so2_Kp_atm(723.15))
    assert h["r"] == pytest.approx(0.0252458, rel=1e-5)
    y = {"SO2": 0.08, "O2": 0.12, "SO3": 0.02, "N2": 0.78}
    assert SO2Collina()(723.15, 1.5 * ATM, y) == pytest.approx(550 * to_si(h["r"]), rel=1e-10)


@pytest.mark.parametrize("T_c", [420.0, 500.0, 580.0])
def test_so2_rate_vanishes_at_teakit_equilibrium_and_reverses_beyond(T_c):
    T = T_c + 273.15
    eq = Reaction("SO2 + 0.5 O2 = SO3").equilibrium(T, ATM, {"SO2": 0.10, "O2": 0.11, "N2": 0.79}, eos="ideal")
    y = np.array([eq[s] for s in SO2_SPECIES])
    law = SO2Collina(SO2_SPECIES)
    h = collina_by_hand(T, y[0], y[1], y[2], so2_Kp_atm(T))
    forward = 550 * to_si(h["k1"] * y[1] * y[0] / h["den"])
    assert abs(law(T, ATM, y)) < 1e-6 * forward
    # Beyond equilibrium: more SO3 (taken from the N2) reverses the sign.
    assert law(T, ATM, y + [0, 0, 0.01, -0.01]) < 0 < law(T, ATM, y + [0, 0, -0.5 * y[2], 0.5 * y[2]])


def test_so2_activity_increase_with_T_and_contract():
    law = SO2Collina(SO2_SPECIES)
    y = np.array([0.10, 0.11, 0.0, 0.79])
    r1 = law(773.15, ATM, y)
    assert isinstance(r1, float)
    act = np.array([0.25, 1.0, 2.0])
    np.testing.assert_allclose(law(773.15, ATM, y, activity=act), act * r1, rtol=1e-13)
    assert SO2Collina(SO2_SPECIES, activity=0.5).rate_per_mass(773.15, ATM, y) == pytest.approx(
        0.5 * law.rate_per_mass(773.15, ATM, y), rel=1e-13)
    # No SO3: k1 rises (5473 K) and the SO2 adsorption term K2 falls (8619 K) with T.
    T = np.arange(400.0, 601.0, 25.0) + 273.15
    r = law(T, ATM, y)
    assert r.shape == T.shape and np.all(np.diff(r) > 0)
    assert law.formation_rate(773.15, ATM, y, "SO2") == pytest.approx(-r1, rel=1e-14)
    assert law.formation_rate(773.15, ATM, y, "O2") == pytest.approx(-0.5 * r1, rel=1e-14)
    # No SO2 or no O2, with SO3 present: the expression is finite (zero forward term).
    assert law(773.15, ATM, [0.0, 0.1, 0.1, 0.8]) < 0
    assert law(773.15, ATM, [0.1, 0.0, 0.1, 0.8]) == 0.0


def test_so2_bad_input_and_warnings():
    law = SO2Collina(SO2_SPECIES)
    y = [0.10, 0.11, 0.0, 0.79]
    with pytest.raises(InputError, match="T must be > 0"):
        law(-5.0, ATM, y)
    with pytest.raises(InputError, match="bulk_density must be > 0"):
        law(773.15, ATM, y, bulk_density=0.0)
    with pytest.raises(InputError, match="must include SO2, O2, SO3"):
        SO2Collina(("SO2", "O2"))
    with pytest.raises(InputError, match="name must be a species of"):
        law.formation_rate(773.15, ATM, y, "N2")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        law(np.array([653.15, 923.15]), np.array([0.5, 20.0]) * ATM, y)  # window corners
    with pytest.warns(RangeWarning, match=r"T = .* \(700 degC\)"):
        law(973.15, ATM, y)
    with pytest.warns(RangeWarning, match=r"\(30 atm\)"):
        law(773.15, 30 * ATM, y)


# -- generic reversible rate --------------------------------------------------------------------


def test_reversible_rate_by_hand():
    # SO2 + 1/2 O2 = SO3, r = A exp(-Ea/(R T)) (pSO2/p0) (pO2/p0)^0.5 (1 - Q/K), p0 = 1 bar.
    # T = 773.15 K, P = 2 bar, y SO2 0.08, O2 0.10, SO3 0.04: p/p0 = 0.16, 0.20, 0.08.
    #   k = 1e6 exp(-90000 / (8.314462618 x 773.15)) = 1e6 exp(-14.00048) = 0.831
    #   Q = 0.08 / (0.16 x 0.20^0.5) = 1.11803, K = 57.6412 (teakit, 1 bar)
    #   r = 0.831 x 0.16 x 0.447214 x (1 - 1.11803/57.6412) = 0.05831 mol/(s m3)
    T, P = 773.15, 2e5
    k = 1e6 * math.exp(-90000 / (8.314462618 * T))
    K = Reaction("SO2 + 0.5 O2 = SO3").equilibrium_constant(T)
    Q = 0.08 / (0.16 * 0.20**0.5)
    by_hand = k * 0.16 * 0.20**0.5 * (1 - Q / K)
    assert by_hand == pytest.approx(0.05831, rel=1e-3)
    law = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1e6, Ea=9e4, orders={"SO2": 1, "O2": 0.5},
                         species=SO2_SPECIES)
    assert law(T, P, [0.08, 0.10, 0.04, 0.78]) == pytest.approx(by_hand, rel=1e-12)
    # Default orders are mass action: (pSO2/p0) (pO2/p0)^0.5 here as well.
    mass_action = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1e6, Ea=9e4, species=SO2_SPECIES)
    assert mass_action(T, P, [0.08, 0.10, 0.04, 0.78]) == pytest.approx(by_hand, rel=1e-12)


def test_reversible_rate_vanishes_at_equilibrium_ideal_and_real_gas():
    so2 = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1e6, Ea=9e4, species=SO2_SPECIES)
    eq = Reaction("SO2 + 0.5 O2 = SO3").equilibrium(773.15, 2e5, {"SO2": 0.1, "O2": 0.11, "N2": 0.79}, eos="ideal")
    y = np.array([eq[s] for s in SO2_SPECIES])
    k = 1e6 * math.exp(-9e4 / (8.314462618 * 773.15))
    forward = k * (y[0] * 2) * (y[1] * 2) ** 0.5  # p/p0 = 2 y at 2 bar
    assert abs(so2(773.15, 2e5, y)) < 1e-6 * forward
    assert so2(773.15, 2e5, y + [0, 0, 0.005, -0.005]) < 0 < so2(773.15, 2e5, y + [0, 0, -0.005, 0.005])
    # Real gas: Peng-Robinson fugacities in Q, equilibrium from the same model.
    nh3 = ReversibleRate(Reaction("N2 + 3 H2 = 2 NH3"), A=1e3, Ea=1e5, species=NH3_SPECIES, eos="peng-robinson")
    feed = dict(zip(NH3_SPECIES, Y_A, strict=True))
    eq = Reaction("N2 + 3 H2 = 2 NH3").equilibrium(T_A, P_A, feed, eos="peng-robinson")
    y = np.array([eq[s] for s in NH3_SPECIES])
    k = 1e3 * math.exp(-1e5 / (8.314462618 * T_A))
    forward = k * (y[0] * P_A / 1e5) * (y[1] * P_A / 1e5) ** 3
    assert abs(nh3(T_A, P_A, y)) < 1e-6 * forward
    assert nh3(773.15, P_A, y) < 0 < nh3(673.15, P_A, y)


def test_reversible_rate_zero_mole_fractions():
    law = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1e6, Ea=9e4, species=SO2_SPECIES)
    T, P = 773.15, 1e5
    k = 1e6 * math.exp(-9e4 / (8.314462618 * T))
    K = Reaction("SO2 + 0.5 O2 = SO3").equilibrium_constant(T)
    # No product: the forward term only, k x 0.1 x 0.1^0.5.
    assert law(T, P, [0.1, 0.1, 0.0, 0.8]) == pytest.approx(k * 0.1 * 0.1**0.5, rel=1e-12)
    # No SO2, SO3 present: mass action leaves pSO2^(1-1) in the reverse term, so
    # r = -k pO2^(0.5-0.5) pSO3 / K = -k x 0.1 / K.
    assert law(T, P, [0.0, 0.1, 0.1, 0.8]) == pytest.approx(-k * 0.1 / K, rel=1e-12)
    # Nothing to react with on either side.
    assert law(T, P, [0.0, 0.1, 0.0, 0.9]) == 0.0
    # Zero order in SO2 with SO2 absent: no forward reaction (SO2 is needed), reverse singular
    # (pSO2^(0-1)) while SO3 is present -> a typed error, not an infinity.
    zero_order = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1.0, Ea=0.0, orders={"O2": 0.5}, species=SO2_SPECIES)
    assert zero_order(T, P, [0.0, 0.1, 0.0, 0.9]) == 0.0
    with pytest.raises(InputError, match="reverse term .* singular at y = 0 of SO2"):
        zero_order(T, P, [0.0, 0.1, 0.1, 0.8])
    inhibited = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1.0, Ea=0.0,
                               orders={"SO2": 1, "O2": 0.5, "SO3": -0.5}, species=SO2_SPECIES)
    with pytest.raises(InputError, match="forward term .* singular at y = 0 of SO3"):
        inhibited(T, P, [0.1, 0.1, 0.0, 0.8])


def test_reversible_rate_activity_arrhenius_contract_and_errors():
    law = ReversibleRate("SO2 + 0.5 O2 = SO3", A=1e6, Ea=9e4, species=SO2_SPECIES,
                         valid_T=(650.0, 900.0))
    y = np.array([0.10, 0.11, 0.0, 0.79])
    r1 = law(773.15, 1e5, y)
    assert isinstance(r1, float)
    act = np.array([[0.5], [2.0]])
    assert law(773.15, 1e5, y, activity=act).shape == (2, 1)
    np.testing.assert_allclose(law(773.15, 1e5, y, activity=act), act * r1, rtol=1e-13)
    # Arrhenius, no product: r(T2)/r(T1) = exp(-Ea/R (1/T2 - 1/T1)).
    T = np.array([700.0, 750.0, 800.0])
    r = law(T, 1e5, y)
    np.testing.assert_allclose(r[1:] / r[0], np.exp(-9e4 / 8.314462618 * (1 / T[1:] - 1 / T[0])), rtol=1e-12)
    with pytest.warns(RangeWarning, match="T = 950 K"):
        law(950.0, 1e5, y)
    with pytest.raises(InputError, match="A must be >= 0"):
        ReversibleRate("SO2 + 0.5 O2 = SO3", A=-1.0, Ea=9e4)
    with pytest.raises(InputError, match="orders name species not in"):
        ReversibleRate("SO2 + 0.5 O2 = SO3", A=1.0, Ea=9e4, orders={"NH3": 1})
    with pytest.raises(InputError, match="eos must be one of"):
        ReversibleRate("SO2 + 0.5 O2 = SO3", A=1.0, Ea=9e4, eos="virial")
    with pytest.raises(InputError, match="Ea must be a single number"):
        ReversibleRate("SO2 + 0.5 O2 = SO3", A=1.0, Ea=[1.0, 2.0])


def test_common_call_shape():
    laws = [AmmoniaTemkinPyzhev(NH3_SPECIES), SO2Collina(SO2_SPECIES),
            ReversibleRate("SO2 + 0.5 O2 = SO3", A=1.0, Ea=5e4, species=SO2_SPECIES)]
    states = [(T_A, P_A, Y_A), (773.15, ATM, [0.1, 0.11, 0.0, 0.79]), (773.15, ATM, [0.1, 0.11, 0.0, 0.79])]
    for law, (T, P, y) in zip(laws, states, strict=True):
        assert isinstance(law.reaction, Reaction)
        assert isinstance(law.species, tuple) and set(law.reaction.species) <= set(law.species)
        assert law.activity == 1.0
        r = law(np.full(3, T), np.full(3, P), np.broadcast_to(y, (3, len(y))), activity=np.array([0.0, 1.0, 2.0]))
        assert r.shape == (3,) and r[0] == 0.0 and r[2] == pytest.approx(2 * r[1], rel=1e-13)


def test_fast_kernels_equal_the_checked_calls():
    # The reactor's unchecked hot path must give the same number as the checked call.
    from teakit.chemistry import AmmoniaTemkinPyzhev, SO2Collina

    rng = np.random.default_rng(0)
    T = rng.uniform(650.0, 800.0, 50)
    P = rng.uniform(100e5, 300e5, 50)
    y = rng.dirichlet([3, 9, 1, 0.5], 50)
    law = AmmoniaTemkinPyzhev(species=("N2", "H2", "NH3", "Ar"))
    np.testing.assert_allclose(law.kernel(T, P, y, activity=0.7), law(T, P, y, activity=0.7), rtol=1e-12)
    so2 = SO2Collina(species=("SO2", "O2", "SO3", "N2"))
    T2 = rng.uniform(680.0, 880.0, 50)
    P2 = rng.uniform(1e5, 3e5, 50)
    y2 = rng.dirichlet([1, 1, 0.5, 8], 50)
    np.testing.assert_allclose(so2.kernel(T2, P2, y2), so2(T2, P2, y2), rtol=1e-12)
