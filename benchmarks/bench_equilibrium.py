"""Peng-Robinson ammonia equilibrium for 10^5 (T, P) states in one call, against a per-state loop.

Target (issue: thermodynamic core): >= 1e5 states/s on one core, and >= 50x a straightforward loop
that solves each state alone with scipy's brentq on the extent, using the same Peng-Robinson code.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from _common import one_core, result, timed

one_core()

import numpy as np  # noqa: E402
from scipy.optimize import brentq  # noqa: E402

from teakit import Reaction  # noqa: E402
from teakit.thermo import species_set  # noqa: E402
from teakit.thermo.peng_robinson import kij_matrix, pr_state  # noqa: E402
from teakit.thermo.species import P_REF  # noqa: E402


def per_state(r, sset, kij, T, P):
    """Baseline: one state at a time, brentq on the extent per mol N2 fed."""
    lnK = float(np.log(r.equilibrium_constant(T)))
    nu = np.array([-1.0, -3.0, 2.0])
    n0 = np.array([1.0, 3.0, 0.0])

    def f(x):
        n = n0 + nu * x
        y = n / n.sum()
        _, lnphi = pr_state(np.array(T), np.array(P), y, sset, kij, "vapour", True)
        return lnK - float(np.sum(nu * (np.log(y) + lnphi))) + 2.0 * np.log(P / P_REF)

    x = brentq(f, 1e-12, 1 - 1e-12, xtol=1e-14)
    return 2 * x / (4 - 2 * x)


def main(n=100_000, n_loop=300):
    rng = np.random.default_rng(0)
    T = rng.uniform(600.0, 800.0, n)
    P = rng.uniform(50e5, 300e5, n)
    r = Reaction("N2 + 3 H2 = 2 NH3")
    feed = {"N2": 1.0, "H2": 3.0}
    r.equilibrium(T=T[:10], P=P[:10], feed=feed, eos="peng-robinson")  # warm caches
    t_batch, res = timed(r.equilibrium, T=T, P=P, feed=feed, eos="peng-robinson")
    sset = species_set(("N2", "H2", "NH3"))
    kij = kij_matrix(sset)
    t_loop, ys = timed(lambda: [per_state(r, sset, kij, T[i], P[i]) for i in range(n_loop)], repeat=1)
    agree = np.max(np.abs(np.array(ys) - res["NH3"][:n_loop]))
    rate_batch = n / t_batch
    rate_loop = n_loop / t_loop
    print(f"batch: {n} states in {t_batch:.3f} s; loop: {n_loop} states in {t_loop:.3f} s; "
          f"max |y_NH3 batch - loop| = {agree:.1e}")
    result("pr_equilibrium_states_per_s", rate_batch, "1/s", ">=", 1e5)
    result("pr_equilibrium_speedup_vs_loop", rate_batch / rate_loop, "x", ">=", 50)


if __name__ == "__main__":
    main()
