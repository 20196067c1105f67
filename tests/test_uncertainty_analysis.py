"""Monte Carlo statistics, Sobol and Morris indices, tornado tables and value of information.

Sources named beside each check:
- Linear model y = sum a_i x_i with independent inputs: S_i = ST_i = a_i^2 var_i / sum_j a_j^2 var_j
  (analytic; Saltelli et al. 2008, Global Sensitivity Analysis: The Primer, ch. 4).
- Ishigami function (Ishigami & Homma 1990, Proc. ISUMA '90, 398), a = 7, b = 0.1, x ~ U(-pi, pi):
  V1 = (1 + b pi^4/5)^2 / 2, V2 = a^2/8, V3 = 0, V13 = 8 b^2 pi^8 / 225 (Saltelli et al. 2008,
  the Ishigami example; the moments E x^4 = pi^4/5, E x^8 = pi^8/9 are written out below).
- Sums of independent normals are normal; products of independent lognormals are lognormal
  (textbook closed forms); their percentiles from scipy.stats.norm.ppf.
- scipy.stats as the reference for each interval: ttest_1samp(...).confidence_interval (t
  interval of the mean), quantile_test(...).confidence_interval (distribution-free order
  statistic interval of a quantile), binomtest(...).proportion_ci(method="wilson").
- Morris elementary effects of a linear function are its coefficients exactly (Morris 1991).
- EVPI = E[max_d V] - max_d E[V] (Raiffa & Schlaifer 1961), worked by hand in a comment.
"""

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays
from scipy import stats

from teakit.errors import InputError
from teakit.uncertainty import analysis as A
from teakit.uncertainty import marginal, run_batches, sample


# -- models (module level, picklable) -----------------------------------------------------------
def linear_model(df):
    return pd.DataFrame({"y": 1.0 * df["x1"] + 2.0 * df["x2"] + 0.5 * df["x3"]})


def ishigami_model(df, a=7.0, b=0.1):
    x1, x2, x3 = (df[k].to_numpy() for k in ("x1", "x2", "x3"))
    return pd.DataFrame({"y": np.sin(x1) + a * np.sin(x2) ** 2 + b * x3**4 * np.sin(x1)})


def sum_and_product(df):
    return pd.DataFrame({"sum": df["n1"] + df["n2"], "product": df["l1"] * df["l2"]})


def _sobol_via_pipeline(model, dists, n, seed, second=False):
    """The kit's pipeline: Saltelli design -> inverse CDFs -> chunked run -> SALib analysis."""
    names = list(dists)
    U = A.sobol_design(names, n, seed, calc_second_order=second)
    X = pd.DataFrame({k: marginal(k, dists[k]).ppf(U[:, j]) for j, k in enumerate(names)})
    Y = run_batches(model, X, chunk_size=1024, progress=False)["y"].to_numpy()
    return A.sobol_indices(names, Y, calc_second_order=second, seed=seed)


def test_sobol_indices_of_a_linear_model():
    dists = {
        "x1": {"distribution": "normal", "mean": 0.0, "sd": 2.0},  # var 4
        "x2": {"distribution": "uniform", "low": 0.0, "high": 3.0},  # var 9/12
        "x3": {"distribution": "triangular", "low": 0.0, "mode": 1.0, "high": 4.0},  # var (0+16+1-0-0-4)/18
    }
    var = np.array([4.0, 9.0 / 12.0, 13.0 / 18.0])
    a = np.array([1.0, 2.0, 0.5])
    exact = a**2 * var / np.sum(a**2 * var)  # analytic, additive model: S_i = ST_i
    ft, _ = _sobol_via_pipeline(linear_model, dists, 1024, seed=3)
    for col in ("S1", "ST"):
        err = np.abs(ft[col].to_numpy() - exact)
        assert np.all(err <= 2.0 * ft[f"{col}_conf"].to_numpy()), (col, ft, exact)


def noisy_model(df):
    # y = x1 + e, with e independent of the inputs (a draw seeded by the chunk's first row, so
    # the run is reproducible): like an optimal decision resolved only to an optimiser's tolerance.
    e = np.random.default_rng([7, int(df.index[0])]).normal(0.0, 0.5, len(df))
    return pd.DataFrame({"y": df["x1"] + e})


def test_sobol_summary_bounds_the_noise_share():
    # x1 ~ U(0, 1) (variance 1/12) plus noise of variance 1/4: the noise share of the output
    # variance is 0.25 / (0.25 + 1/12) = 0.75 (analytic). Jansen's total index of a parameter
    # with no effect (x2, x3) estimates E[(e - e')^2] / 2 V = that share, so the smallest total
    # index of the summary is close to it, while a noise-free linear output has a small floor
    # (its smallest true index, 0.5^2 (13/18) / 5.54 = 0.033, analytic as above).
    from teakit.study.uncertainty import SobolResult

    dists = {k: {"distribution": "uniform", "low": 0.0, "high": 1.0} for k in ("x1", "x2", "x3")}
    ft, _ = _sobol_via_pipeline(noisy_model, dists, 1024, seed=4)
    res = SobolResult(pd.concat({"y [-]": ft}, names=["output"]), None, None, None)
    row = res.summary().loc["y [-]"]
    assert row["top_parameter"] == "x1"
    assert abs(row["ST_floor"] - 0.75) <= 2.0 * ft["ST_conf"].max()
    lin = {"x1": {"distribution": "normal", "mean": 0.0, "sd": 2.0},
           "x2": {"distribution": "uniform", "low": 0.0, "high": 3.0},
           "x3": {"distribution": "triangular", "low": 0.0, "mode": 1.0, "high": 4.0}}
    ft, _ = _sobol_via_pipeline(linear_model, lin, 1024, seed=3)
    floor = SobolResult(pd.concat({"y [-]": ft}, names=["output"]), None, None, None).summary().loc["y [-]", "ST_floor"]
    assert abs(floor - 0.5**2 * (13 / 18) / (4.0 + 4 * 9 / 12 + 0.25 * 13 / 18)) <= 2.0 * ft["ST_conf"].max()


def test_sobol_indices_of_the_ishigami_function():
    a, b, pi = 7.0, 0.1, np.pi
    # Moments of x ~ U(-pi, pi): E x^4 = pi^4/5, E x^8 = pi^8/9; E sin^2 = 1/2, E sin^4 = 3/8.
    V1 = 0.5 * (1 + b * pi**4 / 5) ** 2
    V2 = a**2 * (3 / 8 - 1 / 4)
    V13 = 0.5 * b**2 * (pi**8 / 9 - pi**8 / 25)  # = 8 b^2 pi^8 / 225
    V = V1 + V2 + V13
    S1 = np.array([V1, V2, 0.0]) / V  # 0.3139, 0.4424, 0 (Saltelli et al. 2008)
    ST = np.array([V1 + V13, V2, V13]) / V  # 0.5576, 0.4424, 0.2437
    u = {"distribution": "uniform", "low": -pi, "high": pi}
    ft, sec = _sobol_via_pipeline(ishigami_model, {"x1": u, "x2": u, "x3": u}, 1024, seed=1, second=True)
    assert np.all(np.abs(ft["S1"].to_numpy() - S1) <= 2.0 * ft["S1_conf"].to_numpy()), ft
    assert np.all(np.abs(ft["ST"].to_numpy() - ST) <= 2.0 * ft["ST_conf"].to_numpy()), ft
    # The only interaction is x1-x3: S13 = V13 / V = 0.2437; S12 = S23 = 0.
    exact2 = pd.Series([0.0, V13 / V, 0.0], index=sec.index)
    assert np.all(np.abs(sec["S2"] - exact2) <= 2.0 * sec["S2_conf"]), sec


def test_sobol_design_and_argument_errors():
    with pytest.raises(InputError, match="power of 2"):
        A.sobol_design(["a", "b"], 100, seed=1)
    with pytest.raises(InputError, match="Y must have N x 4 values"):
        A.sobol_indices(["a", "b"], np.ones(10))
    with pytest.raises(InputError, match="Y must be finite.*1 of 8"):
        A.sobol_indices(["a", "b"], np.r_[np.ones(7), np.nan])
    ft, _ = A.sobol_indices(["a", "b"], np.full(16, 3.0))  # a constant output has zero indices
    assert (ft.to_numpy() == 0).all()


def test_monte_carlo_percentiles_of_known_distributions():
    n = 4000
    dists = {
        "n1": {"distribution": "normal", "mean": 1.0, "sd": 2.0},
        "n2": {"distribution": "normal", "mean": 3.0, "sd": 1.0},
        "l1": {"distribution": "lognormal", "median": 2.0, "sigma": 0.3},
        "l2": {"distribution": "lognormal", "median": 3.0, "sigma": 0.4},
    }
    X = sample(dists, n, seed=4)
    out = run_batches(sum_and_product, X, chunk_size=500, progress=False)
    # Sum of independent normals: N(4, sqrt(5)). Product of lognormals: median 6, sigma 0.5.
    refs = {"sum": stats.norm(4.0, np.sqrt(5.0)), "product": stats.lognorm(s=0.5, scale=6.0)}
    for col, ref in refs.items():
        t = A.summary_statistics(out[col].to_numpy(), threshold=0.0 if col == "sum" else 4.0)
        for name, q in (("P10", 0.1), ("P50", 0.5), ("P90", 0.9)):
            assert t.loc[name, "low"] <= ref.ppf(q) <= t.loc[name, "high"], (col, name, t)
        assert t.loc["mean", "low"] <= ref.mean() <= t.loc["mean", "high"]
        assert t.loc["sd", "low"] <= ref.std() <= t.loc["sd", "high"]
        prob = t.index[-1]
        assert t.loc[prob, "low"] <= ref.cdf(0.0 if col == "sum" else 4.0) <= t.loc[prob, "high"]


def test_intervals_match_scipy_references():
    y = np.random.default_rng(3).normal(0.2, 1.5, 700)
    t = A.summary_statistics(y, conf=0.9)
    ci = stats.ttest_1samp(y, 0.0).confidence_interval(0.9)
    assert (t.loc["mean", "low"], t.loc["mean", "high"]) == pytest.approx((ci.low, ci.high), rel=1e-12)
    for name, p in (("P10", 0.1), ("P50", 0.5), ("P90", 0.9)):
        ci = stats.quantile_test(y, q=0.0, p=p).confidence_interval(0.9)
        assert (t.loc[name, "low"], t.loc[name, "high"]) == pytest.approx((ci.low, ci.high), rel=1e-12)
    k = int(np.sum(y < 0))
    ci = stats.binomtest(k, y.size).proportion_ci(0.9, method="wilson")
    assert (t.loc["P(<0)", "low"], t.loc["P(<0)", "high"]) == pytest.approx((ci.low, ci.high), rel=1e-10)
    assert t.loc["P(<0)", "estimate"] == k / y.size


def test_convergence_table_by_sample_count():
    y = np.random.default_rng(8).lognormal(0.0, 0.5, 1000)
    tab = A.convergence_table(y)
    assert list(tab.index) == [16, 32, 64, 128, 256, 512, 1000]
    # The last row is the summary of every sample; each row of the first n samples alone.
    full = A.summary_statistics(y, n_boot=200)
    assert tab.loc[1000, ("P50", "estimate")] == full.loc["P50", "estimate"]
    assert tab.loc[64, ("mean", "estimate")] == pytest.approx(y[:64].mean())
    # t-interval half-width t_{n-1} s / sqrt(n), recomputed for n = 256 (central limit theorem).
    hw = stats.t.ppf(0.975, 255) * y[:256].std(ddof=1) / 16.0
    assert (tab.loc[256, ("mean", "high")] - tab.loc[256, ("mean", "low")]) / 2 == pytest.approx(hw)
    with pytest.raises(InputError, match="ns must be sample counts from 2 to 1000"):
        A.convergence_table(y, ns=[10, 2000])
    with pytest.raises(InputError, match="y must be finite; 1 of 3"):
        A.summary_statistics([1.0, np.inf, 2.0])


def test_morris_effects_of_a_linear_function_are_its_coefficients():
    names = ["a", "b", "c"]
    coef = np.array([3.0, -1.0, 0.25])
    X = A.morris_design(names, 12, seed=2)
    m = A.morris_indices(names, X, X @ coef, seed=2)
    np.testing.assert_allclose(m["mu"], coef, atol=1e-12)  # Morris (1991): EE_i = a_i exactly
    np.testing.assert_allclose(m["mu_star"], np.abs(coef), atol=1e-12)
    np.testing.assert_allclose(m["sigma"], 0.0, atol=1e-12)


def test_tornado_frame_sorts_by_swing():
    t = A.tornado_frame(["p", "q", "r"], [1, 2, 3], [2, 4, 6], [10.0, 5.0, 9.0], [11.0, 15.0, 6.0], 10.0)
    assert list(t.index) == ["q", "r", "p"]  # swings |15-5| = 10, |6-9| = 3, |11-10| = 1
    assert t["swing"].tolist() == [10.0, 3.0, 1.0]


# -- value of information ----------------------------------------------------------------------
# Three states with probabilities 0.5, 0.3, 0.2 (rows repeated 5, 3, 2 times) and three decisions:
#   state 1: [100, 60, 20]; state 2: [-50, 10, 30]; state 3: [-100, -20, 40]
# E[V_d]: d0 = 50 - 15 - 20 = 15; d1 = 30 + 3 - 4 = 29; d2 = 10 + 9 + 8 = 27 -> max 29 (d1).
# E[max_d V] = 0.5*100 + 0.3*30 + 0.2*40 = 67.  EVPI = 67 - 29 = 38.
# Regret of always d0 = 67 - 15 = 52; of d1 (the best in expectation) = 38 = EVPI.
STATES = np.array([[100.0, 60.0, 20.0], [-50.0, 10.0, 30.0], [-100.0, -20.0, 40.0]])
ROWS = np.repeat(np.arange(3), [5, 3, 2])
V_HAND = STATES[ROWS]


def test_evpi_of_the_hand_worked_example():
    assert A.evpi(V_HAND) == pytest.approx(38.0)
    assert A.expected_regret(V_HAND, 0) == pytest.approx(52.0)
    assert A.expected_regret(V_HAND, 1) == pytest.approx(38.0)
    # A parameter that identifies the state carries all of it (each value its own bin); one bin
    # (no information) none.
    x = ROWS.astype(float) + 1.0
    assert A.evppi(V_HAND, x, bins=10) == pytest.approx(38.0)
    assert A.evppi(V_HAND, x, bins=1) == 0.0


def test_evpi_is_zero_without_uncertainty():
    V = np.tile([[3.0, 7.0, -1.0]], (50, 1))  # every sample the same: nothing to learn
    assert A.evpi(V) == 0.0
    assert A.evppi(V, np.linspace(0, 1, 50)) == 0.0
    assert A.expected_regret(V, 1) == 0.0


@settings(max_examples=150, deadline=None)
@given(arrays(float, st.tuples(st.integers(1, 30), st.integers(1, 5)), elements=st.floats(-1e6, 1e6)),
       st.integers(1, 8), st.integers(0, 2**16))
def test_value_of_information_bounds(V, bins, seed):
    # Jensen's inequality: 0 <= EVPPI <= EVPI <= regret of any fixed decision.
    x = np.random.default_rng(seed).integers(0, 4, V.shape[0]).astype(float)
    e = A.evpi(V)
    assert e >= 0.0
    assert 0.0 <= A.evppi(V, x, bins=min(bins, V.shape[0])) <= e + 1e-9 * (1 + abs(V).max())
    assert all(A.expected_regret(V, d) >= e - 1e-9 * (1 + abs(V).max()) for d in range(V.shape[1]))


def test_value_of_information_argument_errors():
    with pytest.raises(InputError, match="samples x candidate decisions"):
        A.evpi([1.0, 2.0])
    with pytest.raises(InputError, match="finite; 1 entries are not \\(first at sample 1, decision 0\\)"):
        A.evpi([[1.0, 2.0], [np.nan, 1.0]])
    with pytest.raises(InputError, match="choice must be a column index from 0 to 2"):
        A.expected_regret(V_HAND, 3)
    with pytest.raises(InputError, match="x must be 10 finite values"):
        A.evppi(V_HAND, np.ones(9))
