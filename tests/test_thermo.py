"""Ideal-gas properties and Peng-Robinson against outside references.

Sources:
- NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), via the test-only ``janaf`` package:
  cp, h - h(298.15), s at 298.15 K and 1000 K.
- Reference equations of state via CoolProp (test-only): Z of N2 (Span et al. 2000), H2
  (Leachman et al. 2009) and CH4 (Setzmann & Wagner 1991) at 200 bar.

Peng-Robinson Z against the reference equations of state at 200 bar (deviation PR/ref - 1, %,
quantum-corrected H2 constants; recorded when this test was written):

====  ======  ======  ======  ======  ======
      300 K   400 K   500 K   600 K   700 K
====  ======  ======  ======  ======  ======
N2    -2.75   -2.22   -1.90   -1.70   -1.56
H2    -1.53   -1.22   -1.04   -0.91   -0.82
CH4   -2.05   -2.17   -1.83   -1.57   -1.40
====  ======  ======  ======  ======  ======

Peng-Robinson is known to under-predict Z of supercritical gases at high pressure and reduced
temperatures of 1.5-2.5 (its critical compressibility is 0.307 against about 0.29 real): N2 and CH4
at 300-400 K fall outside 2 % and are checked at 3 %. With the classical H2 constants the H2
deviation at 300 K is -3.7 %; the quantum correction halves it.
"""

import numpy as np
import pytest

from teakit.errors import InputError
from teakit.thermo import (
    compressibility,
    cp,
    enthalpy,
    entropy,
    fugacity_coefficients,
    gibbs,
    mixture_cp,
    mixture_entropy,
    residual_enthalpy,
    species_set,
)
from teakit.thermo.peng_robinson import kij_matrix, pr_state

JANAF = {"N2": "N-023", "H2": "H-050", "NH3": "H-083", "SO2": "O-034", "SO3": "O-058", "O2": "O-029"}


def janaf_row(name, T):
    janaf = pytest.importorskip("janaf")
    import polars as pl

    df = janaf.Table(JANAF[name]).df
    r = df.filter(pl.col("T(K)") == T)
    return r["Cp"][0], r["H-H(Tr)"][0] * 1e3, r["S"][0]


@pytest.mark.parametrize("name", sorted(JANAF))
@pytest.mark.parametrize("T", [298.15, 1000.0])
def test_ideal_gas_vs_janaf(name, T):
    # NIST-JANAF (Chase 1998): NASA polynomials reproduce the tables within 0.5 % in cp,
    # 0.15 kJ/mol in h - h298 and 0.1 J/(mol K) in s (NH3 s at 1000 K: 246.37 vs 246.49).
    cp_ref, dh_ref, s_ref = janaf_row(name, T)
    assert cp(T, name) == pytest.approx(cp_ref, rel=5e-3)
    assert enthalpy(T, name) - enthalpy(298.15, name) == pytest.approx(dh_ref, abs=150.0)
    assert entropy(T, name) == pytest.approx(s_ref, abs=0.15)


def test_formation_basis_and_gibbs():
    # h(298.15) equals the tabulated enthalpy of formation; g = h - T s.
    s = species_set(["SO2", "NH3"])
    np.testing.assert_allclose(enthalpy(298.15, s), s.Hf298, atol=1e-6)
    T = np.array([400.0, 900.0])
    np.testing.assert_allclose(gibbs(T, s), enthalpy(T, s) - T[:, None] * entropy(T, s), rtol=1e-12)


def test_h_and_s_continuous_at_range_boundary():
    s = species_set(["N2", "H2", "NH3", "SO2", "SO3", "CH3OH"])
    lo, hi = 1000.0 - 1e-9, 1000.0 + 1e-9
    np.testing.assert_allclose(enthalpy(lo, s), enthalpy(hi, s), atol=1e-3)
    np.testing.assert_allclose(entropy(lo, s), entropy(hi, s), atol=1e-6)


def test_enthalpy_is_integral_of_cp():
    # Independent check: trapezoidal integral of cp from 300 to 900 K.
    T = np.linspace(300.0, 900.0, 20001)
    c = cp(T, "SO3")
    integral = np.sum(0.5 * (c[1:] + c[:-1]) * np.diff(T))
    assert enthalpy(900.0, "SO3") - enthalpy(300.0, "SO3") == pytest.approx(integral, rel=1e-7)
    integral_s = np.sum(0.5 * ((c / T)[1:] + (c / T)[:-1]) * np.diff(T))
    assert entropy(900.0, "SO3") - entropy(300.0, "SO3") == pytest.approx(integral_s, rel=1e-7)


def test_io_contract_scalar_array_and_errors():
    assert isinstance(cp(500.0, "N2"), float)
    out = cp(np.array([[300.0, 400.0]]), ["N2", "H2"])
    assert out.shape == (1, 2, 2)
    assert mixture_cp(np.array([300.0, 400.0]), [0.25, 0.75], ["N2", "H2"]).shape == (2,)
    # Ideal mixing entropy of an equimolar binary at 1 bar: R ln 2 above the pure average.
    s_mix = mixture_entropy(500.0, 1e5, [0.5, 0.5], ["N2", "H2"])
    assert s_mix - entropy(500.0, ["N2", "H2"]).mean() == pytest.approx(8.314462618 * np.log(2))
    with pytest.raises(InputError, match="T must be > 0"):
        cp(-5.0, "N2")
    with pytest.raises(InputError, match="T must be finite"):
        cp(np.nan, "N2")
    with pytest.raises(InputError, match="outside the heat-capacity data range.*200 to 3000 K"):
        cp(150.0, ["N2", "SO3"])
    with pytest.raises(InputError, match="unknown species"):
        cp(300.0, "Kr")
    with pytest.raises(InputError, match="last axis of length 2"):
        mixture_cp(300.0, [1.0, 0.0, 0.0], ["N2", "H2"])


@pytest.mark.parametrize("name,coolprop", [("N2", "Nitrogen"), ("H2", "Hydrogen"), ("CH4", "Methane")])
@pytest.mark.parametrize("T", [300.0, 400.0, 500.0, 600.0, 700.0])
def test_pr_compressibility_vs_reference_eos(name, coolprop, T):
    CP = pytest.importorskip("CoolProp.CoolProp")
    z_ref = CP.PropsSI("Z", "T", T, "P", 200e5, coolprop)
    z = compressibility(T, 200e5, [1.0], [name])
    # 2 % where PR holds it; 3 % for N2 and CH4 at 300-400 K (table in the module docstring).
    tol = 0.03 if (name in ("N2", "CH4") and T <= 400.0) else 0.02
    assert z == pytest.approx(z_ref, rel=tol)


def test_pr_hand_calculation_nitrogen():
    # Peng & Robinson (1976) applied by hand to N2 at 300 K, 200 bar (Tc 126.192 K,
    # Pc 3.3958 MPa, omega 0.0372): kappa = 0.37464 + 1.54226 w - 0.26992 w^2 = 0.431638;
    # alpha = (1 + kappa (1 - sqrt(300/126.192)))^2 = 0.586888; A = 0.279666, B = 0.192752;
    # the cubic Z^3 - (1-B) Z^2 + (A - 3B^2 - 2B) Z - (AB - B^2 - B^3) = 0 has one real root.
    R = 8.314462618
    Tc, Pc, w, T, P = 126.192, 3.3958e6, 0.0372, 300.0, 200e5
    kappa = 0.37464 + 1.54226 * w - 0.26992 * w**2
    alpha = (1 + kappa * (1 - np.sqrt(T / Tc))) ** 2
    A = 0.45724 * (R * Tc) ** 2 / Pc * alpha * P / (R * T) ** 2
    B = 0.07780 * R * Tc / Pc * P / (R * T)
    roots = np.roots([1, -(1 - B), A - 3 * B**2 - 2 * B, -(A * B - B**2 - B**3)])
    z_hand = max(r.real for r in roots if abs(r.imag) < 1e-12)
    assert compressibility(T, P, [1.0], ["N2"]) == pytest.approx(z_hand, rel=1e-12)


def test_pr_fugacity_is_derivative_of_residual_gibbs():
    # Thermodynamic consistency: ln phi_i = d(n g_res/RT)/dn_i at T, P (central differences),
    # with g_res/RT = Z - 1 - ln(Z - B) - A/(2 sqrt2 B) ln[(Z + (1+sqrt2)B)/(Z + (1-sqrt2)B)].
    s = species_set(["N2", "H2", "NH3", "CH4"])
    k = kij_matrix(s)
    T, P = 700.0, 250e5
    n = np.array([0.22, 0.61, 0.12, 0.05])

    def n_gres(nv):
        y = nv / nv.sum()
        _, lnphi = pr_state(np.array(T), np.array(P), y, s, k)
        return nv.sum() * float(np.dot(y, lnphi))  # sum y ln phi = g_res/RT

    _, lnphi = pr_state(np.array(T), np.array(P), n / n.sum(), s, k)
    h = 1e-6
    for i in range(4):
        e = np.zeros(4)
        e[i] = h
        d = (n_gres(n + e) - n_gres(n - e)) / (2 * h)
        assert lnphi[i] == pytest.approx(d, abs=1e-7)


def test_pr_residual_enthalpy_vs_reference_eos():
    # Residual enthalpy of N2 at 300 K, 200 bar: CoolProp (Span et al. 2000) h(T,P) - h(T,~0)
    # = -905 J/mol; PR gives -1017 J/mol. PR departure enthalpies are good to ~15 % here, a
    # small term against the 8.6 kJ/mol of sensible heat from 300 to 600 K.
    CP = pytest.importorskip("CoolProp.CoolProp")
    ref = CP.PropsSI("Hmolar", "T", 300.0, "P", 200e5, "Nitrogen") - CP.PropsSI("Hmolar", "T", 300.0, "P", 100.0, "Nitrogen")
    assert residual_enthalpy(300.0, 200e5, [1.0], ["N2"]) == pytest.approx(ref, rel=0.15)


def test_pr_liquid_and_vapour_roots_of_ammonia():
    # Saturated NH3 at 273.15 K, 4.294 bar (NIST WebBook, Antoine form of Stull 1947:
    # log10 P/bar = 4.86886 - 1113.928/(T - 10.409)): the liquid root is dense (Z ~ 0.006),
    # the vapour root near 0.95.
    P = 10 ** (4.86886 - 1113.928 / (273.15 - 10.409)) * 1e5
    zl = compressibility(273.15, P, [1.0], ["NH3"], phase="liquid")
    zv = compressibility(273.15, P, [1.0], ["NH3"], phase="vapour")
    assert zl < 0.01 and 0.9 < zv < 0.98
    with pytest.raises(InputError, match="phase must be one of vapour, liquid, stable"):
        compressibility(273.15, P, [1.0], ["NH3"], phase="gas")


def test_pr_broadcast_and_bad_input():
    z = compressibility(np.array([500.0, 600.0])[:, None], np.array([1e5, 1e7, 3e7]), [0.25, 0.75], ["N2", "H2"])
    assert z.shape == (2, 3)
    phi = fugacity_coefficients(700.0, np.array([1e5, 3e7]), [0.2, 0.6, 0.2], ["N2", "H2", "NH3"])
    assert phi.shape == (2, 3) and np.all(np.isfinite(phi))
    # Low pressure: the ideal-gas limit.
    np.testing.assert_allclose(phi[0], 1.0, atol=2e-3)
    with pytest.raises(InputError, match="P must be > 0"):
        compressibility(300.0, 0.0, [1.0], ["N2"])
    with pytest.raises(InputError, match="do not broadcast"):
        compressibility(np.ones(3) * 300, np.ones(2) * 1e5, [1.0], ["N2"])
    with pytest.raises(InputError, match=r"kij\[NH3,H2\] must lie in \(-1, 1\)"):
        kij_matrix(["N2", "H2", "NH3"], {("NH3", "H2"): 2.0})
