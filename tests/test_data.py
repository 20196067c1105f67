"""The species tables: shape, sources, and values pinned against outside references.

Sources: NIST-JANAF Thermochemical Tables (Chase 1998, via the test-only ``janaf`` package);
reference equations of state as implemented in CoolProp (test-only); IUPAC 2021 atomic weights.
"""

import numpy as np
import pytest

from teakit.data import data_dir, load_table
from teakit.errors import InputError
from teakit.thermo import known_species, species_set

REQUIRED = ["N2", "H2", "NH3", "Ar", "CH4", "O2", "SO2", "SO3", "H2O", "CO", "CO2", "CH3OH"]


def test_species_table_shape_and_sources():
    tab = load_table("species")
    assert set(REQUIRED) <= set(tab["species"])
    for col in ("source_cp", "source_formation", "source_critical"):
        assert tab[col].notna().all() and (tab[col].str.len() > 10).all(), col
    # Heat-capacity data must cover 200-1500 K for every species (the refrigerated separator
    # runs near -25 degC).
    assert (tab["T_low_K"] <= 200.0).all() and (tab["T_high_K"] >= 1500.0).all()
    assert tab["species"].is_unique


def test_every_data_table_has_a_source_column():
    for path in sorted(data_dir().glob("*.csv")):
        tab = load_table(path.stem)
        assert any(c == "source" or c.startswith("source_") for c in tab.columns), path.name


def test_load_table_is_a_copy():
    a = load_table("species")
    a.loc[0, "Tc_K"] = -1.0
    assert load_table("species").loc[0, "Tc_K"] > 0


def test_unknown_table_lists_available():
    with pytest.raises(InputError, match="available: .*species"):
        load_table("no_such_table")


def test_molar_masses_iupac():
    # IUPAC 2021 abridged atomic weights: NH3 = 14.007 + 3 x 1.008 = 17.031 g/mol;
    # SO3 = 32.06 + 3 x 15.999 = 80.057 g/mol; CH3OH = 12.011 + 4 x 1.008 + 15.999 = 32.042.
    s = species_set(["NH3", "SO3", "CH3OH"])
    np.testing.assert_allclose(s.molar_mass, [17.031e-3, 80.057e-3, 32.042e-3], rtol=1e-12)


@pytest.mark.parametrize(
    "name,coolprop",
    [
        ("N2", "Nitrogen"),
        ("H2", "Hydrogen"),
        ("NH3", "Ammonia"),
        ("Ar", "Argon"),
        ("CH4", "Methane"),
        ("O2", "Oxygen"),
        ("SO2", "SulfurDioxide"),
        ("H2O", "Water"),
        ("CO", "CarbonMonoxide"),
        ("CO2", "CarbonDioxide"),
        ("CH3OH", "Methanol"),
    ],
)
def test_critical_constants_vs_reference_eos(name, coolprop):
    # The reference equations of state as implemented in CoolProp (test-only reference).
    # Tolerances: Tc 0.2 %, Pc 2 %, omega 0.01 absolute; the table's older sources (O2, CH3OH)
    # differ from CoolProp's newest fits by up to that much.
    CP = pytest.importorskip("CoolProp.CoolProp")
    s = species_set([name])
    assert s.Tc[0] == pytest.approx(CP.PropsSI("Tcrit", coolprop), rel=2e-3)
    assert s.Pc[0] == pytest.approx(CP.PropsSI("pcrit", coolprop), rel=2e-2)
    assert s.omega[0] == pytest.approx(CP.PropsSI("acentric", coolprop), abs=1e-2)


def test_nh3_formation_enthalpy_choice():
    # Active Thermochemical Tables (Ruscic et al., v1.156): -45.556 kJ/mol, chosen deliberately.
    s = species_set(["NH3"])
    assert s.Hf298[0] == pytest.approx(-45556.0, abs=1.0)
    assert "Active Thermochemical Tables" in load_table("species").set_index("species").loc["NH3", "source_formation"]


def test_known_species_and_unknown():
    assert set(REQUIRED) <= set(known_species())
    with pytest.raises(InputError, match="unknown species 'Xe'.*known species"):
        species_set(["N2", "Xe"])
    with pytest.raises(InputError, match="twice"):
        species_set(["N2", "N2"])
