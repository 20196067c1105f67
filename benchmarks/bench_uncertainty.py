"""Uncertainty studies on the ammonia demo: Monte Carlo and Sobol wall times, Dask speed-up.

Targets (issue 6, section 6), on 2 cores:

- (a) a 10^4-sample Monte Carlo of the invented Port Aldren demo with its economic parameters
  only (hydrogen, electricity and product prices), re-optimised per sample: under 30 s;
- (b) Sobol indices with 10 uncertain parameters (4 physics, 6 economic) and N = 1024 with
  second order, N (2D + 2) = 22,528 re-optimised evaluations, on a 2-worker Dask
  LocalCluster: under 5 minutes;
- (c) the speed-up of the same Sobol run from one to two Dask workers: at least 1.6x.

Default run (quick, about a minute): (a) at its full size (10^4 samples: price-only sets share
their physics, so the cost grows far slower than the sample count), (b) with N = 8 and first
order only in 4 chunks, (c) on that run; the target of (b) is scaled linearly with the number of
evaluations from the full target and says so.
``--full`` runs the issue's sizes (16 chunks; the speed-up on a 128 x 12-evaluation run) from the
deterministic optimum of Study.optimize; the quick run starts from a coarse optimum (16 Sobol
points, one start, 10 iterations). Both need ``Study.optimize_batch``; without it the script
says so and stops. On a machine shared with other jobs the speed-up (c) measures the cores that
were free, not the code.

The six extra distributions below (beside the four of the study file) are invented for the
benchmark, like the demo itself.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from _common import one_core, result

one_core()

from teakit import Study  # noqa: E402
from teakit.study import uncertainty as U  # noqa: E402

DEMO = "ammonia_port_aldren.toml"
ECONOMIC = ["hydrogen_price", "electricity_price", "product_price"]
# Invented for the benchmark (the demo file gives the other four: catalyst activity and three prices).
EXTRA = {
    "makeup_argon": {"distribution": "triangular", "low": 0.0002, "mode": 0.0005, "high": 0.002},
    "compressor_efficiency": {"distribution": "triangular", "low": 0.72, "mode": 0.78, "high": 0.82},
    "cooling_water_temperature": {"distribution": "triangular", "low": 298.15, "mode": 308.15, "high": 318.15},
    "nitrogen_price": {"distribution": "triangular", "low": 0.03, "mode": 0.05, "high": 0.08},
    "steam_credit": {"distribution": "pert", "low": 2.0, "mode": 4.0, "high": 8.0},
    "catalyst_price": {"distribution": "triangular", "low": 10.0, "mode": 15.0, "high": 25.0},
}


def _warm(_=None):
    """Import and exercise the stack once in a worker, so timings exclude start-up."""
    s = Study.from_toml(DEMO)
    s.evaluate()
    return True




def sobol_run(study, n, second, executor, nominal, chunk_size):
    t0 = time.perf_counter()
    si = U.sobol(study, n=n, seed=1, executor=executor, calc_second_order=second, distributions=EXTRA,
                 nominal=nominal, chunk_size=chunk_size, progress=False)
    return time.perf_counter() - t0, si


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--full", action="store_true", help="the issue's sizes (1e4 samples, Sobol N = 1024 with second order)")
    args = ap.parse_args(argv)
    full = args.full
    study = Study.from_toml(DEMO)
    if not hasattr(study, "optimize_batch"):
        print("Study.optimize_batch is not available in this teakit: the uncertainty benchmark needs it "
              "(re-optimisation per sample). Nothing was timed.")
        return 0
    import warnings

    from teakit.errors import RangeWarning

    warnings.simplefilter("ignore", RangeWarning)
    t0 = time.perf_counter()
    if full:
        nominal = study.optimize(max_yield=False)
        print(f"deterministic optimum (setup, not timed in the targets): {time.perf_counter() - t0:.1f} s; {nominal}")
    else:
        nominal = study.optimize(max_yield=False, n_start=16, starts=1, max_iter=10)
        print(f"coarse deterministic optimum (setup, not timed in the targets): {time.perf_counter() - t0:.1f} s; {nominal}")
    _warm()

    # (a) economics-only Monte Carlo, in-process, one vectorised batch (physics shared).
    n_mc = 10_000
    t0 = time.perf_counter()
    mc = U.monte_carlo(study, n=n_mc, seed=1, parameters=ECONOMIC, nominal=nominal, chunk_size=n_mc, progress=False)
    t_mc = time.perf_counter() - t0
    s = mc.summary()
    print(f"Monte Carlo, {n_mc} samples, economic parameters: {t_mc:.1f} s; feasible re-optima "
          f"{mc.outputs['feasible'].mean():.1%}; NPV P10/P50/P90 "
          + "/".join(f"{s.loc[('npv [USD]', q), 'estimate'] / 1e6:.1f}" for q in ("P10", "P50", "P90"))
          + f" MUSD; P(NPV<0) {s.loc[('npv [USD]', 'P(<0)'), 'estimate']:.3f}")
    target_mc = 30.0 * n_mc / 10_000
    result(f"mc_econ_{n_mc}_time", t_mc, "s", "<=", target_mc)

    # (b) Sobol, 10 parameters, on two Dask workers; (c) the same with one worker.
    D = len(U.uncertain_parameters(study, EXTRA))
    n_sobol, second = (1024, True) if full else (8, False)
    rows = n_sobol * (2 * D + 2 if second else D + 2)
    chunks = 16 if full else 4
    t2, si2 = on_cluster(2, study, n_sobol, second, nominal, rows // chunks)
    print(f"Sobol N = {n_sobol}, D = {D}, {rows} re-optimised evaluations on 2 workers: {t2:.1f} s")
    print(si2.summary().to_string())
    target_sobol = 300.0 * rows / 22_528
    result(f"sobol_{rows}_2workers_time{'' if full else '_quick_scaled_target'}", t2, "s", "<=", target_sobol)

    if full:  # a smaller run for the speed-up: the one-worker run of the full size alone is long
        n_sp = 128
        rows_sp = n_sp * (D + 2)
        t2, si2 = on_cluster(2, study, n_sp, False, nominal, rows_sp // chunks)
    else:
        n_sp, rows_sp = n_sobol, rows
    t1, si1 = on_cluster(1, study, n_sp, second and not full, nominal, rows_sp // chunks)
    print(f"speed-up run, {rows_sp} evaluations: one worker {t1:.1f} s, two workers {t2:.1f} s; "
          f"outputs identical: {si1.outputs.equals(si2.outputs)}")
    result("dask_speedup_1_to_2_workers", t1 / t2, "x", ">=", 1.6)
    return 0


def on_cluster(n_workers, study, n, second, nominal, chunk_size):
    """Sobol on a fresh, warmed-up local Dask cluster of ``n_workers`` (teakit's
    ``local_cluster``), in chunks of ``chunk_size`` rows."""
    from teakit.uncertainty import local_cluster

    with local_cluster(n_workers) as client:
        client.run(_warm)
        return sobol_run(study, n, second, client.get_executor(), nominal, max(1, chunk_size))


if __name__ == "__main__":
    sys.exit(main())
