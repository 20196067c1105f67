"""Marginal distributions, designs and rank-correlation induction.

Sources named beside each check:
- scipy.stats distributions (uniform, triang, beta, norm, lognorm) as the reference library for
  inverse CDFs and moments; the PERT beta's shape from Malcolm et al. (1959), Oper. Res. 7, 646,
  and its mean (a + 4m + b)/6 from the same paper.
- McKay, Beckman & Conover (1979), Technometrics 21, 239: the defining property of a Latin
  hypercube (one point in each of the n equal strata of every axis).
- Iman & Conover (1982), Commun. Stat. B 11(3), 311: the rearrangement only permutes each column.
- Bonett & Wright (2000), Psychometrika 65, 23: var(atanh r_s) ~ (1 + r_s^2 / 2)/(n - 3), the
  sampling error of Spearman's rho used for the tolerance.
- scipy.stats.spearmanr as the reference rank correlation.
"""

import numpy as np
import pytest
from scipy import stats

from teakit.errors import InputError
from teakit.uncertainty import check_correlation, iman_conover, marginal, sample, uniform_design

U = np.linspace(0.0, 1.0, 201)[1:-1]  # interior probabilities


@pytest.mark.parametrize(
    "spec,ref",
    [
        ({"distribution": "uniform", "low": 2.0, "high": 5.0}, stats.uniform(loc=2.0, scale=3.0)),
        ({"distribution": "triangular", "low": 1.0, "mode": 1.5, "high": 4.0}, stats.triang(c=0.5 / 3.0, loc=1.0, scale=3.0)),
        ({"distribution": "triangular", "low": 1.0, "mode": 1.0, "high": 4.0}, stats.triang(c=0.0, loc=1.0, scale=3.0)),
        # PERT = beta(1 + 4 (m-a)/(b-a), 1 + 4 (b-m)/(b-a)) on [a, b] (Malcolm et al. 1959)
        ({"distribution": "pert", "low": 0.03, "mode": 0.045, "high": 0.08},
         stats.beta(1 + 4 * 0.015 / 0.05, 1 + 4 * 0.035 / 0.05, loc=0.03, scale=0.05)),
        ({"distribution": "normal", "mean": -3.0, "sd": 0.7}, stats.norm(loc=-3.0, scale=0.7)),
        ({"distribution": "lognormal", "median": 2.0, "sigma": 0.4}, stats.lognorm(s=0.4, scale=2.0)),
    ],
)
def test_ppf_mean_sd_match_scipy(spec, ref):
    m = marginal("x", spec)
    np.testing.assert_allclose(m.ppf(U), ref.ppf(U), rtol=1e-10, atol=1e-12)  # scipy.stats reference
    assert m.mean() == pytest.approx(ref.mean(), rel=1e-12)
    assert m.sd() == pytest.approx(ref.std(), rel=1e-10)
    assert m.percentile([10, 90]) == pytest.approx(ref.ppf([0.1, 0.9]), rel=1e-10)


def test_pert_mean_is_the_classical_formula():
    # Malcolm et al. (1959): the PERT mean is (a + 4 m + b)/6; the inverse CDF integrated over
    # u in (0, 1) (midpoint rule on 2e5 points) is the mean of the distribution.
    a, mo, b = 1.5, 2.0, 3.2
    m = marginal("hydrogen_price", {"distribution": "pert", "low": a, "mode": mo, "high": b})
    u = (np.arange(200_000) + 0.5) / 200_000
    assert m.ppf(u).mean() == pytest.approx((a + 4 * mo + b) / 6, rel=1e-6)
    assert m.ppf([0.0, 1.0]).tolist() == [a, b]  # bounded: reaches its ends


def test_discrete_scenarios_take_their_weights():
    m = marginal("s", {"distribution": "discrete", "values": [5.0, 1.0, 2.0], "weights": [3, 2, 5]})
    u = (np.arange(10_000) + 0.5) / 10_000
    x = m.ppf(u)
    # Weights normalised 0.2 (1.0), 0.5 (2.0), 0.3 (5.0): frequencies on a uniform grid are exact.
    assert [np.mean(x == v) for v in (1.0, 2.0, 5.0)] == [0.2, 0.5, 0.3]
    assert m.mean() == pytest.approx(0.2 * 1 + 0.5 * 2 + 0.3 * 5)  # weighted mean by hand
    eq = marginal("s", {"distribution": "discrete", "values": [1.0, 3.0]})
    assert eq.mean() == 2.0  # equal weights when omitted


@pytest.mark.parametrize(
    "spec,match",
    [
        ({"distribution": "weibull", "k": 1}, "distribution must be one of uniform, triangular, pert"),
        ({"distribution": "uniform", "low": 3.0, "high": 2.0}, "'price'.*needs low < high"),
        ({"distribution": "triangular", "low": 1.0, "mode": 5.0, "high": 4.0}, "'price'.*low <= mode <= high"),
        ({"distribution": "pert", "low": 1.0, "mode": 2.0}, "'price'.*takes low, mode, high"),
        ({"distribution": "normal", "mean": 1.0, "sd": 0.0}, "'price'.*sd must be > 0"),
        ({"distribution": "normal", "mean": float("nan"), "sd": 1.0}, "'price'.*mean must be finite"),
        ({"distribution": "lognormal", "median": -1.0, "sigma": 0.3}, "'price'.*median must be > 0"),
        ({"distribution": "discrete", "values": [1.0, 2.0], "weights": [1.0]}, "'price'.*one per value"),
        ({"distribution": "discrete", "values": [1.0], "weights": [-1.0]}, "'price'.*weights must be >= 0"),
        ({"distribution": "uniform", "low": "1", "high": 2.0}, "'price'.*low must be a number"),
        ("uniform", "'price' must be a mapping"),
    ],
)
def test_bad_distributions_name_the_parameter(spec, match):
    with pytest.raises(InputError, match=match):
        marginal("price", spec)


def test_ppf_rejects_probabilities_outside_unit_interval():
    m = marginal("x", {"distribution": "uniform", "low": 0.0, "high": 1.0})
    with pytest.raises(InputError, match="'x' must lie in \\[0, 1\\]"):
        m.ppf([0.5, 1.2])
    with pytest.raises(InputError, match="percentile q must lie in \\[0, 100\\]"):
        m.percentile(120)


@pytest.mark.parametrize("method", ["lhs", "sobol", "random"])
def test_designs_are_seeded_and_reproducible(method):
    a = uniform_design(64, 3, seed=7, method=method)
    b = uniform_design(64, 3, seed=7, method=method)
    c = uniform_design(64, 3, seed=8, method=method)
    assert a.shape == (64, 3) and np.array_equal(a, b) and not np.array_equal(a, c)
    assert a.min() >= 0.0 and a.max() < 1.0


def test_latin_hypercube_has_one_point_per_stratum():
    # McKay et al. (1979): each axis of an n-point LHS has exactly one point in each [k/n, (k+1)/n).
    n = 50
    X = uniform_design(n, 4, seed=3, method="lhs")
    for j in range(4):
        assert sorted(np.floor(X[:, j] * n).astype(int)) == list(range(n))


def test_sobol_design_balance_at_power_of_two():
    # Scrambled Sobol points (a (t, m, s)-net in base 2): 2^m points put exactly 2^m / 2^k in each
    # of the 2^k dyadic intervals of one axis (Owen 1998), here k = 4.
    X = uniform_design(256, 2, seed=1, method="sobol")
    for j in range(2):
        assert np.bincount(np.floor(X[:, j] * 16).astype(int), minlength=16).tolist() == [16] * 16


DISTS = {
    "electricity_price": {"distribution": "pert", "low": 0.03, "mode": 0.045, "high": 0.08},
    "hydrogen_price": {"distribution": "triangular", "low": 1.5, "mode": 2.0, "high": 3.2},
    "catalyst_activity": {"distribution": "lognormal", "median": 0.6, "sigma": 0.2},
}
TARGET = np.array([[1.0, 0.7, -0.3], [0.7, 1.0, 0.2], [-0.3, 0.2, 1.0]])


@pytest.mark.parametrize("copula", ["iman-conover", "gaussian"])
def test_induced_rank_correlation_matches_target(copula):
    n = 2000
    df = sample(DISTS, n, seed=11, correlation=TARGET, copula=copula)
    rho = stats.spearmanr(df.to_numpy()).statistic  # scipy reference rank correlation
    for i, j in [(0, 1), (0, 2), (1, 2)]:
        r = TARGET[i, j]
        se = np.sqrt((1 + r * r / 2) / (n - 3))  # Bonett & Wright (2000), Fisher-z scale
        assert abs(np.arctanh(rho[i, j]) - np.arctanh(r)) < 3 * se, (copula, i, j, rho[i, j])


def test_iman_conover_keeps_every_marginal_sample():
    # Iman & Conover (1982): the method only reorders each column, so a Latin hypercube stays one
    # and the sorted values are identical to those of the independent sample of the same seed.
    n = 500
    corr = sample(DISTS, n, seed=5, correlation=TARGET)
    indep = sample(DISTS, n, seed=5)
    for k in DISTS:
        assert np.array_equal(np.sort(corr[k].to_numpy()), np.sort(indep[k].to_numpy()))
    assert abs(stats.spearmanr(indep["electricity_price"], indep["hydrogen_price"]).statistic) < 3 / np.sqrt(n)
    X = np.random.default_rng(0).random((40, 3))
    out = iman_conover(X, TARGET, seed=1)
    assert np.array_equal(np.sort(out, axis=0), np.sort(X, axis=0))


def test_sample_frame_is_reproducible_and_in_si():
    a = sample(DISTS, 100, seed=2, correlation={("electricity_price", "hydrogen_price"): 0.5})
    b = sample(DISTS, 100, seed=2, correlation={("electricity_price", "hydrogen_price"): 0.5})
    assert list(a.columns) == list(DISTS) and a.equals(b)
    assert a["hydrogen_price"].between(1.5, 3.2).all()  # triangular support (its low/high)


@pytest.mark.parametrize(
    "corr,match",
    [
        (np.array([[1.0, 0.5, 0.0], [0.4, 1.0, 0.0], [0.0, 0.0, 1.0]]), "must be symmetric"),
        (np.array([[1.0, 0.5, 0.0], [0.5, 0.9, 0.0], [0.0, 0.0, 1.0]]), "diagonal must be 1"),
        (np.array([[1.0, 1.5, 0.0], [1.5, 1.0, 0.0], [0.0, 0.0, 1.0]]), "must lie in \\[-1, 1\\]"),
        ({("electricity_price", "hydrogen_price"): 0.9, ("hydrogen_price", "catalyst_activity"): 0.9,
          ("electricity_price", "catalyst_activity"): -0.9}, "positive definite; its smallest eigenvalue"),
        ({("electricity_price", "hydrogen_price"): 1.0}, "positive definite"),
        ({("electricity_price", "nitrogen_price"): 0.3}, "unknown parameter 'nitrogen_price'"),
        (np.eye(2), "shape \\(3, 3\\)"),
    ],
)
def test_bad_correlation_is_an_input_error(corr, match):
    with pytest.raises(InputError, match=match):
        check_correlation(corr, list(DISTS))


def test_sampling_argument_errors():
    with pytest.raises(InputError, match="seed must be a whole number >= 0"):
        sample(DISTS, 10, seed=-1)
    with pytest.raises(InputError, match="n must be a whole number >= 1"):
        sample(DISTS, 0, seed=1)
    with pytest.raises(InputError, match="method must be one of lhs, sobol, random"):
        sample(DISTS, 10, seed=1, method="halton")
    with pytest.raises(InputError, match="copula must be one of"):
        sample(DISTS, 10, seed=1, copula="t")
    with pytest.raises(InputError, match="more samples than parameters"):
        sample(DISTS, 4, seed=1, correlation=TARGET)
