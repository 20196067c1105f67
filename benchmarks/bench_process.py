"""Process cases evaluated for a batch of 10^4 decision points in one call, against one by one.

Target (issue: process layer): the ammonia loop batch of 10^4 in under 10 s on one core, and at
least 20x looping a sample of the same cases one by one through the same code. The SO2
converter is measured the same way where it exists.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from _common import one_core, result

one_core()

import numpy as np  # noqa: E402

from teakit.process.cases.ammonia import ammonia_loop  # noqa: E402


def ammonia_decisions(n, seed=0):
    rng = np.random.default_rng(seed)
    return dict(
        pressure=rng.uniform(120e5, 300e5, n),
        inlet_temperature=rng.uniform(633.0, 713.0, n),
        interbed_temperature=rng.uniform(653.0, 713.0, n),
        separator_temperature=rng.uniform(253.0, 283.0, n),
        purge_fraction=rng.uniform(0.01, 0.1, n),
        catalyst_volume=rng.uniform(15.0, 120.0, n),
    )


def bench(name, fn, decisions, n, n_loop):
    t0 = time.perf_counter()
    res = fn(decisions)
    t_batch = time.perf_counter() - t0
    t0 = time.perf_counter()
    singles = [fn({k: v[i : i + 1] for k, v in decisions.items()}) for i in range(n_loop)]
    t_loop = time.perf_counter() - t0
    statuses = {s: int((res.status == s).sum()) for s in np.unique(res.status)}
    same = all(s.status[0] == res.status[i] for i, s in enumerate(singles))
    print(f"{name}: {n} cases in {t_batch:.2f} s; one by one: {n_loop} in {t_loop:.2f} s; "
          f"statuses {statuses}; single == batch status: {same}")
    result(f"{name}_batch_time", t_batch, "s", "<=", 10.0)
    result(f"{name}_speedup_vs_loop", (n / t_batch) / (n_loop / t_loop), "x", ">=", 20.0)


def main(n=10_000, n_loop=20):
    bench("ammonia_loop", ammonia_loop, ammonia_decisions(n), n, n_loop)
    try:
        from teakit.process.cases.so2 import so2_converter
    except ImportError:
        return
    rng = np.random.default_rng(1)
    dec = dict(so2_strength=rng.uniform(0.08, 0.12, n))
    bench("so2_converter", so2_converter, dec, n, n_loop)


if __name__ == "__main__":
    main()
