"""Study-level uncertainty studies: Monte Carlo, Sobol, Morris, tornado, value of information.

Most checks use ``QuadraticStudy``, a Study whose optimum is known in closed form, so every
expected number is an independent analytic calculation written in the test:

    g(theta)   = 50e6 + sum_k C_k theta_k                           [USD]
    p*(theta)  = A0 + B * product_price                             [Pa]
    NPV(p, theta) = g(theta) - K (p - p*(theta))^2                  [USD]

so the re-optimised NPV is g(theta) (linear: Sobol indices a_k^2 var_k / sum, Saltelli et al.
2008, ch. 4), the optimal pressure depends on product_price alone (its S1 = 1), and the value of
perfect information is EVPI = K Var(p*) = K B^2 Var(product_price) (Raiffa & Schlaifer 1961
applied to a quadratic loss; derivation in test_value_of_information_is_k_var_pstar). The
moments of the triangular, uniform and PERT inputs are those of scipy.stats (reference library).

The demo study file (invented Port Aldren scenario) is used where the real process model is
cheap enough: its distributions, and a fixed-optimum Monte Carlo compared with direct
Study.evaluate calls. The kill-and-resume check runs a Monte Carlo in a subprocess, kills it
with SIGKILL part-way and compares the resumed result with an uninterrupted run, exactly.
"""

import os
import signal
import subprocess
import sys
import time
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from teakit import Study
from teakit.errors import InputError
from teakit.study import study_from_text
from teakit.study import uncertainty as U
from teakit.study.study import Optimum

TEXT = """
[study]
name = "analytic test study (invented)"
case = "ammonia_loop"

[decisions.pressure]
low = "100 bar"
high = "300 bar"
default = "200 bar"

[parameters]
hydrogen_price = "2.0 USD/kg"
product_price = "0.75 USD/kg"
electricity_price = "0.045 USD/kWh"

[uncertainty.hydrogen_price]
distribution = "triangular"
low = "1.5 USD/kg"
mode = "2.0 USD/kg"
high = "3.2 USD/kg"

[uncertainty.product_price]
distribution = "uniform"
low = "0.55 USD/kg"
high = "0.95 USD/kg"

[uncertainty.electricity_price]
distribution = "pert"
low = "0.030 USD/kWh"
mode = "0.045 USD/kWh"
high = "0.080 USD/kWh"
"""
C = {"hydrogen_price": -40e6, "product_price": 120e6, "electricity_price": -500e6}  # USD per unit
A0, B, K = 100e5, 200e5, 1e-6  # Pa, Pa per USD/kg, USD/Pa^2
# Reference marginals (scipy.stats): triangular, uniform, and PERT as a beta (Malcolm et al. 1959).
REF = {
    "hydrogen_price": stats.triang(c=0.5 / 1.7, loc=1.5, scale=1.7),
    "product_price": stats.uniform(loc=0.55, scale=0.40),
    "electricity_price": stats.beta(1 + 4 * 0.015 / 0.05, 1 + 4 * 0.035 / 0.05, loc=0.03, scale=0.05),
}


class QuadraticStudy(Study):
    """A study whose process is replaced by the closed form of the module docstring."""

    delay = 0.0  # seconds per optimize_batch call (to make a run long enough to interrupt)

    def _pstar(self, par):
        return A0 + B * par["product_price"]

    def evaluate(self, decisions=None, parameters=None):
        dec, par, n = self._arrays(decisions, parameters)
        g = 50e6 + sum(c * par[k] for k, c in C.items())
        cols = {f"{k} [{d.unit}]": np.asarray(dec[k], float) for k, d in self._decisions.items()}
        cols["npv [USD]"] = g - K * (dec["pressure"] - self._pstar(par)) ** 2
        cols["feasible"] = np.ones(n, bool)
        cols["status"] = np.full(n, "ok")
        return pd.DataFrame(cols)

    def optimize_batch(self, parameters, *, start=None, **options):
        # Signature of Study.optimize_batch: one row per parameter set, decisions and figures.
        time.sleep(self.delay)
        _, par, _ = self._arrays({}, parameters)
        return self.evaluate({"pressure": self._pstar(par)}, parameters)

    def optimize(self, parameters=None, **options):
        row = self.optimize_batch(parameters or {}).iloc[0]
        dec = {k: float(row[f"{k} [{d.unit}]"]) for k, d in self._decisions.items()}
        return Optimum(dec, float(row["npv [USD]"]), row.to_dict(), [], True)


class SlowQuadraticStudy(QuadraticStudy):
    delay = 0.25


def make(cls=QuadraticStudy):
    s = study_from_text(TEXT)
    return cls(s.case, s.decisions, s.parameters, s.objective, s.constraints, s.name, s.description, s.source)


@pytest.fixture(scope="module")
def study():
    return make()


def test_monte_carlo_frame_and_summary(study):
    mc = U.monte_carlo(study, n=2000, seed=1, progress=False)
    df = mc.to_frame()
    # Re-optimised and fixed-optimum NPV side by side, with the parameters and the regret.
    for col in ("hydrogen_price [USD/kg]", "product_price [USD/kg]", "pressure [Pa]", "npv [USD]",
                "fixed_npv [USD]", "regret [USD]", "feasible", "fixed_feasible"):
        assert col in df.columns
    assert mc.nominal_decisions["pressure"] == pytest.approx(A0 + B * 0.75)  # nominal optimum p*(0.75)
    # Per sample, by the closed form: regret = K (p0 - p*)^2 >= 0.
    pstar = A0 + B * df["product_price [USD/kg]"]
    np.testing.assert_allclose(df["pressure [Pa]"], pstar, rtol=1e-12)
    np.testing.assert_allclose(df["regret [USD]"], K * (mc.nominal_decisions["pressure"] - pstar) ** 2, rtol=1e-9, atol=1e-3)
    # Mean of the re-optimised NPV: 50e6 + sum C_k E[theta_k], with scipy.stats means.
    exact_mean = 50e6 + sum(c * REF[k].mean() for k, c in C.items())
    s = mc.summary()
    assert s.loc[("npv [USD]", "mean"), "low"] <= exact_mean <= s.loc[("npv [USD]", "mean"), "high"]
    assert list(s.index.get_level_values(1)[:6]) == ["mean", "sd", "P10", "P50", "P90", "P(<0)"]
    assert 0.0 <= s.loc[("npv [USD]", "P(<0)"), "estimate"] <= 1.0
    conv = mc.convergence()
    assert list(conv.index) == [16, 32, 64, 128, 256, 512, 1024, 2000]
    assert conv.loc[2000, ("P50", "estimate")] == s.loc[("npv [USD]", "P50"), "estimate"]


def test_monte_carlo_is_reproducible_and_seeded(study):
    a = U.monte_carlo(study, n=64, seed=3, progress=False, chunk_size=16).to_frame()
    b = U.monte_carlo(study, n=64, seed=3, progress=False).to_frame()  # other chunking, same result
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    c = U.monte_carlo(study, n=64, seed=4, progress=False).to_frame()
    assert not np.array_equal(a["npv [USD]"], c["npv [USD]"])


def test_monte_carlo_on_a_process_pool_is_identical(study):
    ref = U.monte_carlo(study, n=48, seed=2, progress=False, chunk_size=12).to_frame()
    with ProcessPoolExecutor(max_workers=2) as ex:
        out = U.monte_carlo(study, n=48, seed=2, executor=ex, progress=False, chunk_size=12).to_frame()
    pd.testing.assert_frame_equal(out, ref, check_exact=True)


def test_correlated_monte_carlo(study):
    mc = U.monte_carlo(study, n=1000, seed=5, progress=False,
                       correlation={("hydrogen_price", "electricity_price"): 0.8})
    rho = stats.spearmanr(mc.samples["hydrogen_price"], mc.samples["electricity_price"]).statistic
    assert abs(np.arctanh(rho) - np.arctanh(0.8)) < 3 * np.sqrt((1 + 0.32) / 997)  # Bonett & Wright (2000)


def test_sobol_indices_through_the_study(study):
    si = U.sobol(study, n=512, seed=1, progress=False)
    f = si.to_frame()
    assert list(f.columns) == ["S1", "S1_conf", "ST", "ST_conf"]
    assert si.info["evaluations"] == 512 * (3 + 2)  # N (D + 2), Saltelli (2002)
    var = {k: REF[k].var() for k in C}
    tot = sum(C[k] ** 2 * var[k] for k in C)
    for k in C:  # NPV* = g(theta) is linear: S_k = ST_k = C_k^2 var_k / sum
        exact = C[k] ** 2 * var[k] / tot
        row = f.loc[("npv [USD]", k)]
        assert abs(row["S1"] - exact) <= 2 * row["S1_conf"] and abs(row["ST"] - exact) <= 2 * row["ST_conf"]
    # The optimal pressure depends on product_price only: S1 = ST = 1 there, 0 for the others.
    p = f.loc["pressure [Pa]"]
    assert p.loc["product_price", "S1"] == pytest.approx(1.0, abs=2 * p.loc["product_price", "S1_conf"])
    assert (p.loc[["hydrogen_price", "electricity_price"], ["S1", "ST"]].abs() < 1e-12).all().all()
    assert si.summary().loc["pressure [Pa]", "top_parameter"] == "product_price"


def test_sobol_second_order_and_fixed_outputs(study):
    si = U.sobol(study, n=64, seed=2, progress=False, calc_second_order=True, outputs=["npv", "fixed_npv"])
    assert set(si.to_frame().index.get_level_values(0)) == {"npv [USD]", "fixed_npv [USD]"}
    s2 = si.second_order()
    assert len(s2) == 2 * 3  # two outputs x three pairs
    assert si.info["evaluations"] == 64 * (2 * 3 + 2)  # N (2D + 2)
    with pytest.raises(InputError, match="unknown output 'irr'"):
        U.sobol(study, n=8, seed=2, progress=False, outputs=["irr"])


def test_morris_ranks_the_parameters(study):
    mo = U.morris(study, trajectories=8, seed=1, progress=False, quantile_range=(0.0, 1.0))
    f = mo.to_frame().loc["npv [USD]"]
    # NPV* = g(theta) is linear in theta. On the 4-level grid a step moves u by 2/3, from 0 or
    # from 1/3 (Morris 1991), so each elementary effect of parameter k is one of
    # C_k (ppf(2/3) - ppf(0)) / (2/3) or C_k (ppf(1) - ppf(1/3)) / (2/3), inverse CDFs from scipy.stats:
    # mu lies between the two; for the uniform product_price both equal C_k (high - low).
    for k in C:
        q = REF[k].ppf([0.0, 1 / 3, 2 / 3, 1.0])
        ee = sorted(C[k] * np.array([q[2] - q[0], q[3] - q[1]]) * 1.5)
        assert ee[0] - 1e-9 * abs(ee[0]) <= f.loc[k, "mu"] <= ee[1] + 1e-9 * abs(ee[1])
    assert f.loc["product_price", "mu"] == pytest.approx(C["product_price"] * 0.40, rel=1e-9)
    assert mo.summary().loc["npv [USD]", "ranking"] == ["hydrogen_price", "product_price", "electricity_price"]


def test_tornado_swings(study):
    t = U.tornado(study).to_frame()
    # Re-optimised swing of parameter k: |C_k| (P90 - P10), percentiles from scipy.stats.
    for k in C:
        p10, p90 = REF[k].ppf([0.1, 0.9])
        assert t.loc[k, "low"] == pytest.approx(p10) and t.loc[k, "high"] == pytest.approx(p90)
        assert t.loc[k, "swing"] == pytest.approx(abs(C[k]) * (p90 - p10), rel=1e-9)
    # At the fixed optimum (p0 = p*(0.75)), a product price of x also costs K B^2 (x - 0.75)^2.
    x0, x1 = REF["product_price"].ppf([0.1, 0.9])
    fixed = [50e6 + sum(C[k] * (x if k == "product_price" else study._parameters[k].nominal) for k in C)
             - K * (B * (x - 0.75)) ** 2 for x in (x0, x1)]
    assert t.loc["product_price", "fixed_objective_low"] == pytest.approx(fixed[0], rel=1e-12)
    assert t.loc["product_price", "fixed_objective_high"] == pytest.approx(fixed[1], rel=1e-12)
    assert t.index[0] in ("product_price", "hydrogen_price") and t["swing"].is_monotonic_decreasing
    given = U.tornado(study, parameters=["electricity_price"], low={"electricity_price": 0.02},
                      high={"electricity_price": 0.10}).to_frame()
    assert given.loc["electricity_price", "swing"] == pytest.approx(500e6 * 0.08)


def test_value_of_information_is_k_var_pstar(study):
    # V(p, theta) = g(theta) - K (p - p*)^2: E[max_p V] = E[g]; max_p E[V] = E[g] - K Var(p*),
    # reached at p = E[p*]. So EVPI = K Var(p*) = K B^2 Var(product_price) = 1e-6 * (2e7)^2 * 0.4^2/12.
    exact = K * B**2 * REF["product_price"].var()
    voi = U.value_of_information(study, n=400, seed=2, progress=False)
    v = voi.to_frame()["value"]
    evpi = v["EVPI"]
    rel_se = np.sqrt(2.0 / 399)  # relative sd of a sample variance, sqrt(2/(n-1)) for normal data (a uniform's is smaller)
    assert abs(evpi - exact) <= 3 * rel_se * exact
    # The nominal optimum p0 = p*(0.75) = E[p*] is the best fixed choice: its regret is the EVPI.
    assert v["expected_regret_nominal"] == pytest.approx(evpi, rel=1e-9)
    # Only product_price moves the optimum. Binned on it (m = 20 equal-count bins of 20 samples),
    # a bin of a uniform input keeps 1/m^2 of its variance, so EVPPI >= (1 - 3/m^2) of the
    # candidates' EVPI. Binned on an input that does not matter, the best candidate per bin
    # still fits that bin's sample mean of p*, worth K Var(p*)/m = EVPI/m in expectation (the
    # upward bias of binning, Strong & Oakley 2013): at most 3/m of EVPI here.
    m = 20
    assert v["EVPPI[product_price]"] >= (1 - 3 / m**2) * v["EVPI_candidates"]
    assert v["EVPPI[hydrogen_price]"] <= 3 / m * evpi and v["EVPPI[electricity_price]"] <= 3 / m * evpi
    assert voi.candidates["source"].iloc[0] == "nominal optimum" and (voi.candidates["feasible_fraction"] == 1).all()


def test_value_of_information_zero_without_uncertainty(study):
    # A point-mass (triangular low = mode = high) on every parameter: nothing to learn.
    point = {k: {"distribution": "triangular", "low": v, "mode": v, "high": v}
             for k, v in {"hydrogen_price": 2.0, "product_price": 0.75, "electricity_price": 0.045}.items()}
    voi = U.value_of_information(study, n=32, seed=1, progress=False, distributions=point)
    assert (voi.to_frame()["value"] == 0.0).all()


def test_save_load_and_overwrite_protection(study, tmp_path):
    mc = U.monte_carlo(study, n=32, seed=1, progress=False)
    path = mc.save(tmp_path / "mc.parquet")
    assert path.read_bytes()[:4] == b"PAR1"
    with pytest.raises(InputError, match="exists; pass overwrite=True"):
        mc.save(path)
    back = U.MonteCarloResult.load(path)
    pd.testing.assert_frame_equal(back.to_frame(), mc.to_frame(), check_exact=True)
    mc2 = U.monte_carlo(study, n=32, seed=2, progress=False)
    mc2.save(path, overwrite=True)
    assert U.MonteCarloResult.load(path).info["seed"] == 2
    # A checkpoint of one seed is not mixed into a run of another.
    U.monte_carlo(study, n=32, seed=1, progress=False, checkpoint=tmp_path / "ck")
    with pytest.raises(InputError, match="holds results of other inputs"):
        U.monte_carlo(study, n=32, seed=2, progress=False, checkpoint=tmp_path / "ck")


def test_uncertain_parameter_errors(study):
    with pytest.raises(InputError, match="parameter 'nitrogen_price' has no distribution"):
        U.monte_carlo(study, n=8, parameters=["nitrogen_price"], progress=False)
    with pytest.raises(InputError, match="unknown parameter 'hydrogen_prize'"):
        U.monte_carlo(study, n=8, distributions={"hydrogen_prize": {"distribution": "uniform", "low": 1, "high": 2}})
    with pytest.raises(InputError, match="outside its valid range \\[0, 50\\] USD/kg"):
        U.monte_carlo(study, n=200, progress=False, distributions={"hydrogen_price": {"distribution": "normal", "mean": 0.5, "sd": 1.0}})
    with pytest.raises(InputError, match="no uncertain parameters"):
        U.monte_carlo(Study("ammonia_loop"), n=8, progress=False)
    with pytest.raises(InputError, match="give both low\\['capacity'\\] and high\\['capacity'\\]"):
        U.tornado(study, parameters=["capacity"])


def test_demo_study_distributions_and_fixed_optimum_monte_carlo():
    s = Study.from_toml("ammonia_port_aldren.toml")
    margs = U.uncertain_parameters(s)
    # In the order of the case physics table, then the economics table (teakit.study.economics).
    assert list(margs) == ["catalyst_activity", "product_price", "electricity_price", "hydrogen_price"]
    # The demo file's PERT electricity price (0.030, 0.045, 0.080 USD/kWh): mean (a + 4m + b)/6.
    assert margs["electricity_price"].mean() == pytest.approx((0.030 + 4 * 0.045 + 0.080) / 6)
    dec = {k: d.default for k, d in s._decisions.items()}
    mc = U.monte_carlo(s, n=6, seed=1, reoptimize=False, nominal=dec, progress=False)
    # Independent path: Study.evaluate called directly on the same parameter sets.
    direct = s.evaluate(dec, {k: mc.samples[k].to_numpy() for k in margs})
    np.testing.assert_array_equal(mc.outputs["fixed_npv [USD]"].to_numpy(), direct["npv [USD]"].to_numpy())
    np.testing.assert_array_equal(mc.outputs["fixed_feasible"].to_numpy(), direct["feasible"].to_numpy())


# -- kill and resume ---------------------------------------------------------------------------
CHILD = """
import sys
from test_study_uncertainty import SlowQuadraticStudy, make
from teakit.study import uncertainty as U
U.monte_carlo(make(SlowQuadraticStudy), n=64, seed=9, chunk_size=4, checkpoint=sys.argv[1], progress=False)
print("finished")
"""


def test_monte_carlo_killed_with_sigkill_resumes_exactly(tmp_path):
    ck = tmp_path / "ck"
    here = Path(__file__).resolve().parent
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(here.parent), str(here), os.environ.get("PYTHONPATH", "")]))
    proc = subprocess.Popen([sys.executable, "-c", CHILD, str(ck)], env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 60
        while len(list(ck.glob("chunk-*.parquet"))) < 3:
            assert proc.poll() is None, proc.communicate()
            assert time.monotonic() < deadline, "the child made no progress"
            time.sleep(0.05)
        os.kill(proc.pid, signal.SIGKILL)
    finally:
        proc.wait(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    done_before = len(list(ck.glob("chunk-*.parquet")))
    assert 3 <= done_before < 16
    resumed = U.monte_carlo(make(SlowQuadraticStudy), n=64, seed=9, chunk_size=4, checkpoint=ck, progress=False)
    assert resumed.info["resumed_chunks"] == done_before
    assert resumed.info["computed_chunks"] == 16 - done_before
    uninterrupted = U.monte_carlo(make(), n=64, seed=9, chunk_size=4, progress=False)
    pd.testing.assert_frame_equal(resumed.to_frame(), uninterrupted.to_frame(), check_exact=True)


def test_real_study_monte_carlo_is_identical_in_process_and_on_a_process_pool():
    # The demo acid study, re-optimised per sample, in two chunks: each chunk starts from an
    # empty memo of process evaluations, so the worker that runs it cannot change its result.
    import warnings
    from concurrent.futures import ProcessPoolExecutor

    from teakit import Study

    s = Study.from_toml("acid_redmesa.toml")
    names = list(s.parameter_table().query("kind == 'economics' and distribution.notna()").index)[:2]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        best = s.optimize(max_yield=False, n_start=16, starts=1, max_iter=8)
        a = s.monte_carlo(6, 3, parameters=names, nominal=best, chunk_size=3, progress=False)
        with ProcessPoolExecutor(2) as pool:
            b = s.monte_carlo(6, 3, executor=pool, parameters=names, nominal=best, chunk_size=3, progress=False)
    pd.testing.assert_frame_equal(a.to_frame(), b.to_frame())
