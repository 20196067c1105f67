"""Checks of exchanger, refrigeration and catalyst sizing against independent calculations.

Sources: the LMTD definition (Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass
Transfer, chapter 11, from memory) checked both by hand and as the area-average of the local
temperature difference integrated numerically; the Carnot refrigerator (second law: Q_H/Q_L =
T_H/T_L for a reversible cycle, first law W = Q_H - Q_L); the CODATA molar volume of an ideal
gas at 273.15 K and 101.325 kPa as carried by scipy.constants.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad

from teakit.equipment import (
    BedDimensions,
    carnot_cop,
    catalyst_bed_dimensions,
    catalyst_mass,
    catalyst_volume_from_space_velocity,
    cooling_water_flow,
    exchanger_area,
    fired_heater_fuel,
    gas_hourly_space_velocity,
    lmtd,
    normal_volumetric_flow,
    refrigeration_power,
)
from teakit.equipment.refrigeration import DEFAULT_FRACTION_OF_CARNOT
from teakit.errors import InputError, RangeWarning


# ------------------------------------------------------------------------------------------
# LMTD and exchangers
# ------------------------------------------------------------------------------------------
def test_lmtd_counter_current_by_hand():
    # Hot 150 -> 90 degC, cold 30 -> 70 degC, counter-current:
    #   dT1 = 150 - 70 = 80 K, dT2 = 90 - 30 = 60 K
    #   LMTD = (80 - 60)/ln(80/60) = 20/0.2876821 = 69.52119 K
    v = lmtd(80.0, 60.0)
    assert isinstance(v, float)
    assert v == pytest.approx(20 / math.log(80 / 60), rel=1e-14)
    assert v == pytest.approx(69.52119, abs=1e-5)
    assert lmtd(60.0, 80.0) == pytest.approx(v, rel=1e-14)  # symmetric


def test_lmtd_equal_and_nearly_equal_differences():
    # the limit dT2 -> dT1 is dT1 (l'Hopital on the definition)
    assert lmtd(50.0, 50.0) == 50.0
    for eps in (1e-12, 1e-8, 1e-5):
        b = 50.0 * (1 + eps)
        # second-order expansion of (b - a)/ln(b/a) about b = a: (a + b)/2 - (b - a)^2/(12 a);
        # the next term, a x^3/24 with x = b/a - 1, is below 1e-13 a here
        expansion = 0.5 * (50.0 + b) - (b - 50.0) ** 2 / (12 * 50.0)
        assert lmtd(50.0, b) == pytest.approx(expansion, rel=1e-12)
    # further away the definition itself is well conditioned
    assert lmtd(50.0, 50.05) == pytest.approx(0.05 / math.log(50.05 / 50.0), rel=1e-10)
    # continuous across the switch between series and logarithm
    a = lmtd(10.0, 10.0 * np.array([1 + 0.99e-4, 1 + 1.01e-4]))
    assert a[1] - a[0] == pytest.approx(10.0 * 0.02e-4 / 2, rel=1e-3)


def test_lmtd_is_area_mean_temperature_difference():
    # For constant U and heat capacity rates the local difference falls exponentially along the
    # area, dT(x) = dT1 (dT2/dT1)^x for x = A'/A in [0, 1]; its mean over the area is the LMTD.
    dT1, dT2 = 120.0, 15.0
    mean = quad(lambda x: dT1 * (dT2 / dT1) ** x, 0, 1)[0]
    assert lmtd(dT1, dT2) == pytest.approx(mean, rel=1e-10)


def test_lmtd_temperature_cross_and_bad_input():
    with pytest.raises(InputError, match=r"^dT1 must be > 0 K .*temperature cross"):
        lmtd(-5.0, 10.0)
    with pytest.raises(InputError, match=r"^dT2 must be > 0 K"):
        lmtd(10.0, 0.0)
    with pytest.raises(InputError, match=r"^dT2 must be finite"):
        lmtd(10.0, np.nan)
    with pytest.raises(InputError, match="broadcast"):
        lmtd(np.ones(2), np.ones(3))


def test_lmtd_broadcasts():
    v = lmtd(np.array([[80.0], [40.0]]), np.array([60.0, 40.0, 20.0]))
    assert v.shape == (2, 3)
    assert v[1, 1] == 40.0
    assert v[0, 2] == pytest.approx(60 / math.log(4), rel=1e-14)


def test_exchanger_area_by_hand():
    # Q = 2 MW, U = 500 W/(m2 K), dT 80/60 K, F = 0.9:
    #   A = 2e6/(500 * 0.9 * 69.52119) = 2e6/31284.54 = 63.930 m2
    A = exchanger_area(2e6, 500.0, 80.0, 60.0, F=0.9)
    assert A == pytest.approx(2e6 / (500 * 0.9 * (20 / math.log(4 / 3))), rel=1e-12)
    assert A == pytest.approx(63.930, abs=1e-3)
    A = exchanger_area(np.array([1e6, 2e6]), 500.0, 80.0, 60.0)
    assert isinstance(A, np.ndarray) and A[1] == pytest.approx(2 * A[0])
    assert isinstance(exchanger_area(1e6, 500.0, 30.0, 30.0), float)
    assert exchanger_area(1e6, 500.0, 30.0, 30.0) == pytest.approx(1e6 / (500 * 30))


def test_exchanger_area_warns_for_low_F_and_rejects_bad_input():
    with pytest.warns(RangeWarning, match="F = 0.7"):
        exchanger_area(1e6, 500.0, 80.0, 60.0, F=0.7)
    with pytest.raises(InputError, match=r"^F must lie in \(0, 1\]"):
        exchanger_area(1e6, 500.0, 80.0, 60.0, F=1.1)
    with pytest.raises(InputError, match=r"^U must be > 0"):
        exchanger_area(1e6, 0.0, 80.0, 60.0)
    with pytest.raises(InputError, match=r"^duty must be >= 0"):
        exchanger_area(-1e6, 500.0, 80.0, 60.0)
    with pytest.raises(InputError, match="^dT2 must"):
        exchanger_area(1e6, 500.0, 80.0, -60.0)


def test_fired_heater_fuel():
    # 10 MW absorbed at 90 % efficiency: 10/0.9 = 11.111 MW fired
    assert fired_heater_fuel(10e6, 0.9) == pytest.approx(10e6 / 0.9, rel=1e-14)
    v = fired_heater_fuel(10e6, np.array([0.8, 0.9]))
    assert isinstance(v, np.ndarray) and v.shape == (2,)
    with pytest.raises(InputError, match=r"^efficiency must lie in \(0, 1\]"):
        fired_heater_fuel(10e6, 0.0)
    with pytest.raises(InputError, match=r"^efficiency must"):
        fired_heater_fuel(10e6, 1.2)


def test_cooling_water_flow():
    # 5 MW removed, 10 K rise, cp 4184 J/(kg K): 5e6/(4184 * 10) = 119.50 kg/s
    m = cooling_water_flow(5e6, 10.0)
    assert isinstance(m, float)
    assert m == pytest.approx(5e6 / 41840, rel=1e-14)
    assert m == pytest.approx(119.50, abs=0.01)
    assert cooling_water_flow(5e6, 10.0, cp=4000.0) == pytest.approx(125.0)
    assert cooling_water_flow(5e6, np.array([5.0, 10.0])).shape == (2,)
    with pytest.raises(InputError, match=r"^dT_water must be > 0"):
        cooling_water_flow(5e6, 0.0)
    with pytest.raises(InputError, match=r"^cp must be > 0"):
        cooling_water_flow(5e6, 10.0, cp=-1.0)


# ------------------------------------------------------------------------------------------
# refrigeration
# ------------------------------------------------------------------------------------------
def test_carnot_cop_by_hand():
    # T_evap = 240 K, T_cond = 310 K: 240/70 = 3.428571
    cop = carnot_cop(240.0, 310.0)
    assert isinstance(cop, float)
    assert cop == pytest.approx(240 / 70, rel=1e-14)
    assert cop == pytest.approx(3.428571, abs=1e-6)


def test_refrigeration_power_from_first_and_second_law():
    # Reversible cycle: Q_H/Q_L = T_H/T_L (second law), W = Q_H - Q_L (first law), so
    # W_rev = Q_L (T_H/T_L - 1) = 1e6 * (310/240 - 1) = 291 666.7 W; real W = W_rev/phi.
    Q, Te, Tc = 1e6, 240.0, 310.0
    W_rev = Q * (Tc / Te - 1)
    assert refrigeration_power(Q, Te, Tc, fraction_of_carnot=1.0) == pytest.approx(W_rev, rel=1e-12)
    assert refrigeration_power(Q, Te, Tc, fraction_of_carnot=0.6) == pytest.approx(
        W_rev / 0.6, rel=1e-12
    )
    # default: 0.55, the middle of the 0.5-0.6 of common practice
    assert DEFAULT_FRACTION_OF_CARNOT == 0.55
    assert refrigeration_power(Q, Te, Tc) == pytest.approx(W_rev / 0.55, rel=1e-12)
    W = refrigeration_power(np.array([1e6, 2e6]), Te, np.array([[300.0], [310.0]]))
    assert W.shape == (2, 2)
    assert W[1, 1] == pytest.approx(2 * W_rev / 0.55, rel=1e-12)


def test_refrigeration_bad_input():
    with pytest.raises(InputError, match=r"^T_cond must be > T_evap"):
        carnot_cop(300.0, 300.0)
    with pytest.raises(InputError, match=r"^T_cond must be > T_evap"):
        refrigeration_power(1e6, 310.0, 240.0)
    with pytest.raises(InputError, match=r"^T_evap must be > 0"):
        carnot_cop(0.0, 300.0)
    with pytest.raises(InputError, match=r"^fraction_of_carnot must lie in \(0, 1\]"):
        refrigeration_power(1e6, 240.0, 310.0, fraction_of_carnot=1.5)
    with pytest.raises(InputError, match=r"^duty must be >= 0"):
        refrigeration_power(-1.0, 240.0, 310.0)


# ------------------------------------------------------------------------------------------
# catalyst
# ------------------------------------------------------------------------------------------
def test_catalyst_mass():
    # 25 m3 of catalyst at a bulk density of 2700 kg/m3: 67 500 kg
    assert catalyst_mass(25.0, 2700.0) == pytest.approx(67500.0)
    assert catalyst_mass(np.array([1.0, 2.0]), 1000.0).tolist() == [1000.0, 2000.0]
    with pytest.raises(InputError, match=r"^bulk_density must be > 0"):
        catalyst_mass(1.0, 0.0)
    with pytest.raises(InputError, match=r"^volume must be >= 0"):
        catalyst_mass(-1.0, 1000.0)


def test_bed_dimensions_by_hand():
    # V = 10 m3, D = 2 m: H = 4 * 10/(pi * 4) = 10/pi = 3.18310 m
    bed = catalyst_bed_dimensions(10.0, diameter=2.0)
    assert isinstance(bed, BedDimensions)
    assert bed.height == pytest.approx(10 / math.pi, rel=1e-14)
    assert isinstance(bed.diameter, float)
    # L/D = 3: D = (4 V/(3 pi))^(1/3); check by rebuilding the volume pi D^2 H/4 and the ratio
    bed = catalyst_bed_dimensions(10.0, L_over_D=3.0)
    assert math.pi * bed.diameter**2 * bed.height / 4 == pytest.approx(10.0, rel=1e-12)
    assert bed.height / bed.diameter == pytest.approx(3.0, rel=1e-12)
    beds = catalyst_bed_dimensions(np.array([1.0, 8.0]), L_over_D=1.0)
    assert beds.diameter[1] == pytest.approx(2 * beds.diameter[0], rel=1e-12)  # V scales as D^3


def test_bed_dimensions_bad_input():
    with pytest.raises(InputError, match="exactly one of diameter"):
        catalyst_bed_dimensions(10.0)
    with pytest.raises(InputError, match="exactly one of diameter"):
        catalyst_bed_dimensions(10.0, diameter=2.0, L_over_D=3.0)
    with pytest.raises(InputError, match=r"^L_over_D must be > 0"):
        catalyst_bed_dimensions(10.0, L_over_D=0.0)
    with pytest.raises(InputError, match=r"^volume must be > 0"):
        catalyst_bed_dimensions(0.0, diameter=1.0)


def test_normal_molar_volume_against_codata():
    # CODATA: molar volume of an ideal gas at 273.15 K, 101.325 kPa = 22.41396954 L/mol
    Vm = sc.physical_constants["molar volume of ideal gas (273.15 K, 101.325 kPa)"][0]
    assert normal_volumetric_flow(1.0) == pytest.approx(Vm, rel=1e-9)
    assert normal_volumetric_flow(np.array([1.0, 2.0])).shape == (2,)
    with pytest.raises(InputError, match=r"^molar_flow must be >= 0"):
        normal_volumetric_flow(-1.0)


def test_space_velocity_by_hand():
    # 36 000 Nm3/h = 10 Nm3/s through 3 m3 of catalyst: GHSV = 3600 * 10/3 = 12 000 1/h
    assert gas_hourly_space_velocity(10.0, 3.0) == pytest.approx(12000.0, rel=1e-14)
    assert catalyst_volume_from_space_velocity(10.0, 12000.0) == pytest.approx(3.0, rel=1e-14)
    # 1000 mol/s of synthesis gas: 22.414 Nm3/s; at 10 000 1/h it needs 3600 * 22.414/1e4 = 8.07 m3
    V = catalyst_volume_from_space_velocity(normal_volumetric_flow(1000.0), 1e4)
    assert V == pytest.approx(
        3600
        * 1000
        * sc.physical_constants["molar volume of ideal gas (273.15 K, 101.325 kPa)"][0]
        / 1e4,
        rel=1e-9,
    )
    g = gas_hourly_space_velocity(np.array([1.0, 2.0]), np.array([[1.0], [2.0]]))
    assert g.shape == (2, 2)
    with pytest.raises(InputError, match=r"^volume must be > 0"):
        gas_hourly_space_velocity(1.0, 0.0)
    with pytest.raises(InputError, match=r"^ghsv must be > 0"):
        catalyst_volume_from_space_velocity(1.0, 0.0)
