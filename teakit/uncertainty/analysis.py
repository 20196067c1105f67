"""Statistics of uncertainty studies: Monte Carlo summaries, Sobol and Morris indices, value of information.

All functions work on plain arrays, independent of any study:

- :func:`summary_statistics` and :func:`convergence_table`: mean, standard deviation, P10, P50,
  P90 and the probability of falling below a threshold (NPV < 0), each with a confidence
  interval, for all samples or for the first n of them.
- :func:`sobol_design` / :func:`sobol_indices`: Saltelli's cross-sampled Sobol sequence and the
  first-, total- (and second-) order Sobol indices with bootstrap intervals, through
  ``SALib.sample.sobol`` and ``SALib.analyze.sobol`` (Saltelli 2002; Saltelli et al. 2010).
- :func:`morris_design` / :func:`morris_indices`: elementary-effects screening (Morris 1991;
  Campolongo et al. 2007's mu*) through ``SALib.sample.morris`` and ``SALib.analyze.morris``.
- :func:`tornado_frame`: one-at-a-time swings, largest first.
- :func:`evpi`, :func:`evppi`, :func:`expected_regret`: expected value of (partial) perfect
  information from a matrix of objective values over samples x candidate decisions.

Designs are in the unit cube: map them to parameter values with each marginal's inverse CDF
(:meth:`teakit.uncertainty.distributions.Marginal.ppf`). Sobol indices are invariant under that
monotone map of independent inputs, so the analysis needs only the model outputs.

Confidence intervals (``conf`` two-sided) are those for independent draws; for Latin hypercube
and scrambled Sobol designs they are conservative for the mean of well-behaved outputs (McKay
et al. 1979; Owen 1997):

- mean: Student t interval :math:`\\bar y \\pm t_{n-1} s/\\sqrt n` (central limit theorem);
- standard deviation: bootstrap percentile interval (Efron & Tibshirani 1993, ch. 13), seeded;
- percentiles: distribution-free order-statistic interval from the binomial law of the number
  of samples below the quantile (Hahn & Meeker 1991, sec. 5.2; Conover 1999, sec. 3.2);
- probability below a threshold: Wilson score interval (Wilson 1927).

References
----------
Saltelli, A. (2002). Making best use of model evaluations to compute sensitivity indices.
Comput. Phys. Commun. 145, 280-297.

Saltelli, A., Annoni, P., Azzini, I., Campolongo, F., Ratto, M. & Tarantola, S. (2010). Variance
based sensitivity analysis of model output. Comput. Phys. Commun. 181, 259-270.

Saltelli, A. et al. (2008). Global Sensitivity Analysis: The Primer. Wiley.

Morris, M. D. (1991). Factorial sampling plans for preliminary computational experiments.
Technometrics 33(2), 161-174.

Campolongo, F., Cariboni, J. & Saltelli, A. (2007). An effective screening design for
sensitivity analysis of large models. Environ. Model. Softw. 22, 1509-1518.

Raiffa, H. & Schlaifer, R. (1961). Applied Statistical Decision Theory. Harvard (EVPI).

Strong, M. & Oakley, J. E. (2013). An efficient method for computing single-parameter partial
expected value of perfect information. Med. Decis. Making 33(6), 755-766 (from memory).

Wilson, E. B. (1927). Probable inference, the law of succession, and statistical inference.
J. Am. Stat. Assoc. 22, 209-212.

Hahn, G. J. & Meeker, W. Q. (1991). Statistical Intervals. Wiley.

Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman & Hall.

Examples
--------
Two equally likely states and two decisions: perfect information is worth 3.

>>> evpi([[10.0, 0.0], [0.0, 6.0]])     # E[max] = 8, max E = 5
3.0
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from teakit.errors import InputError

__all__ = [
    "STATISTICS",
    "convergence_table",
    "evpi",
    "evppi",
    "expected_regret",
    "morris_design",
    "morris_indices",
    "sobol_design",
    "sobol_indices",
    "sobol_problem",
    "summary_statistics",
    "tornado_frame",
]


def _finite_1d(name, y, minimum=2):
    a = np.asarray(y, dtype=float)
    if a.ndim != 1:
        raise InputError(f"{name} must be a 1-d array of samples, got shape {a.shape}")
    if a.size < minimum:
        raise InputError(f"{name} needs at least {minimum} samples, got {a.size}")
    bad = ~np.isfinite(a)
    if bad.any():
        raise InputError(f"{name} must be finite; {int(bad.sum())} of {a.size} samples are not (first at {int(np.flatnonzero(bad)[0])})")
    return a


def _check_conf(conf):
    if not (isinstance(conf, float | int) and not isinstance(conf, bool) and 0.5 <= conf < 1.0):
        raise InputError(f"conf must be a confidence level in [0.5, 1), got {conf!r}")
    return float(conf)


# -- Monte Carlo summaries ---------------------------------------------------------------------
def _percentile_names(percentiles):
    return [f"P{q:g}" for q in percentiles]


#: The statistics of :func:`summary_statistics` (with the default percentiles and threshold 0).
STATISTICS = ("mean", "sd", "P10", "P50", "P90", "P(<0)")


def _stats(y, conf, percentiles, threshold, n_boot, rng):
    from scipy import stats

    n = y.size
    alpha = 1.0 - conf
    out = {}
    m = float(y.mean())
    s = float(y.std(ddof=1))
    h = float(stats.t.ppf(1 - alpha / 2, n - 1)) * s / math.sqrt(n)
    out["mean"] = (m, m - h, m + h, "t interval")
    boots = np.empty(n_boot)
    block = max(1, min(n_boot, 2_000_000 // n))
    for a in range(0, n_boot, block):
        k = min(block, n_boot - a)
        boots[a : a + k] = y[rng.integers(0, n, size=(k, n))].std(axis=1, ddof=1)
    lo_s, hi_s = np.quantile(boots, [alpha / 2, 1 - alpha / 2])
    out["sd"] = (s, float(lo_s), float(hi_s), "bootstrap percentile")
    ys = np.sort(y)
    for q, name in zip(percentiles, _percentile_names(percentiles), strict=True):
        p = q / 100.0
        est = float(np.quantile(ys, p))
        lo_k = int(stats.binom.ppf(alpha / 2, n, p))  # 1-based rank of the lower order statistic
        hi_k = int(stats.binom.ppf(1 - alpha / 2, n, p)) + 1
        lo_k, hi_k = min(max(lo_k, 1), n), min(max(hi_k, 1), n)
        out[name] = (est, float(min(ys[lo_k - 1], est)), float(max(ys[hi_k - 1], est)), "order statistics")
    k = int(np.count_nonzero(y < threshold))
    z = float(stats.norm.ppf(1 - alpha / 2))
    ph = k / n
    centre = (ph + z * z / (2 * n)) / (1 + z * z / n)
    half = z / (1 + z * z / n) * math.sqrt(ph * (1 - ph) / n + z * z / (4 * n * n))
    out[f"P(<{threshold:g})"] = (ph, max(0.0, centre - half), min(1.0, centre + half), "Wilson score")
    return out


def summary_statistics(y, *, conf: float = 0.95, percentiles=(10, 50, 90), threshold: float = 0.0,
                       n_boot: int = 1000, seed: int = 0):
    """Mean, sd, percentiles and P(y < threshold) of Monte Carlo samples, with intervals.

    Parameters
    ----------
    y : array_like
        Samples of one output, shape (n,), finite [output unit].
    conf : float
        Two-sided confidence level of the intervals [-].
    percentiles : sequence of float
        Percentiles to report; P10 is the value with 10 % of the samples below it (so for NPV,
        P90 is the optimistic end; reserves reporting uses the opposite convention) [-].
    threshold : float
        Threshold of the probability row, ``P(<threshold)`` [output unit].
    n_boot : int
        Bootstrap resamples for the sd interval [-].
    seed : int
        Seed of the bootstrap [-].

    Returns
    -------
    pandas.DataFrame
        Index: ``mean``, ``sd``, the percentiles (``P10``, ...), ``P(<0)``; columns
        ``estimate``, ``low``, ``high`` [output unit; probability -] and ``interval`` (method).
    """
    import pandas as pd

    y = _finite_1d("y", y)
    conf = _check_conf(conf)
    if isinstance(n_boot, bool) or not isinstance(n_boot, int) or n_boot < 100:
        raise InputError(f"n_boot must be a whole number >= 100, got {n_boot!r}")
    pc = [float(q) for q in percentiles]
    if not pc or any(not (0 < q < 100) for q in pc):
        raise InputError(f"percentiles must lie strictly between 0 and 100, got {percentiles!r}")
    st = _stats(y, conf, pc, float(threshold), n_boot, np.random.default_rng(seed))
    return pd.DataFrame.from_dict(st, orient="index", columns=["estimate", "low", "high", "interval"])


def convergence_table(y, ns=None, *, conf: float = 0.95, percentiles=(10, 50, 90),
                      threshold: float = 0.0, n_boot: int = 200, seed: int = 0):
    """The summary statistics of the first ``n`` samples, for growing ``n``.

    Parameters
    ----------
    y : array_like
        Samples in the order drawn, shape (N,) [output unit].
    ns : sequence of int, optional
        Sample counts; default powers of 2 from 16 up to N, and N.
    conf, percentiles, threshold, n_boot, seed
        As for :func:`summary_statistics`.

    Returns
    -------
    pandas.DataFrame
        Index ``n``; columns a MultiIndex (statistic, ``estimate``/``low``/``high``), so
        ``table["P50"]["high"] - table["P50"]["low"]`` is the width of the P50 interval by n.
        The statistics settle, and the intervals shrink roughly as :math:`1/\\sqrt n`.
    """
    import pandas as pd

    y = _finite_1d("y", y)
    N = y.size
    if ns is None:
        ns = [2**k for k in range(4, int(math.log2(N)) + 1) if 2**k < N] + [N]
    ns = sorted({int(v) for v in ns})
    if not ns or ns[0] < 2 or ns[-1] > N:
        raise InputError(f"ns must be sample counts from 2 to {N}, got {ns!r}")
    rows = {}
    for k in ns:
        t = summary_statistics(y[:k], conf=conf, percentiles=percentiles, threshold=threshold, n_boot=n_boot, seed=seed)
        rows[k] = {(s, c): t.loc[s, c] for s in t.index for c in ("estimate", "low", "high")}
    out = pd.DataFrame.from_dict(rows, orient="index")
    out.columns = pd.MultiIndex.from_tuples(out.columns, names=["statistic", "part"])
    out.index.name = "n"
    return out


# -- Sobol indices -----------------------------------------------------------------------------
def _names(names):
    names = [str(k) for k in names]
    if not names or len(set(names)) != len(names):
        raise InputError(f"names must be distinct parameter names, got {names!r}")
    return names


def sobol_problem(names) -> dict:
    """The SALib problem of ``names`` on the unit cube (values are mapped by the inverse CDF)."""
    names = _names(names)
    return {"num_vars": len(names), "names": names, "bounds": [[0.0, 1.0]] * len(names)}


def sobol_design(names, n: int, seed: int, *, calc_second_order: bool = False) -> np.ndarray:
    """Saltelli's cross-sampled scrambled Sobol design in the unit cube.

    Parameters
    ----------
    names : sequence of str
        The D uncertain parameters.
    n : int
        Base sample size N, a power of 2 (>= 4) [-].
    seed : int
        Seed of the scrambling [-].
    calc_second_order : bool
        Also the rows needed for second-order indices.

    Returns
    -------
    numpy.ndarray
        Shape (N (D + 2), D), or (N (2D + 2), D) with second order; values in [0, 1) [-]
        (``SALib.sample.sobol.sample``; Saltelli 2002).
    """
    from SALib.sample import sobol as salib_sobol

    if isinstance(n, bool) or not isinstance(n, int | np.integer) or n < 4 or (int(n) & (int(n) - 1)):
        raise InputError(f"n (Sobol base sample size) must be a power of 2 >= 4, got {n!r}")
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        raise InputError(f"seed must be a whole number >= 0, got {seed!r}")
    return salib_sobol.sample(sobol_problem(names), int(n), calc_second_order=bool(calc_second_order),
                              scramble=True, seed=int(seed))


def sobol_indices(names, Y, *, calc_second_order: bool = False, num_resamples: int = 100,
                  conf_level: float = 0.95, seed: int = 0):
    """First- and total-order (and second-order) Sobol indices of one output.

    Parameters
    ----------
    names : sequence of str
        The D uncertain parameters, in design-column order.
    Y : array_like
        Model output at the rows of :func:`sobol_design`, shape (N (D+2),) or (N (2D+2),) [any].
    calc_second_order : bool
        As used for the design.
    num_resamples : int
        Bootstrap resamples of the intervals [-].
    conf_level : float
        Confidence level of the intervals [-].
    seed : int
        Seed of the bootstrap [-].

    Returns
    -------
    first_total : pandas.DataFrame
        Index: parameter; columns ``S1``, ``S1_conf``, ``ST``, ``ST_conf`` [-] (``_conf`` is the
        half-width of the bootstrap interval).
    second : pandas.DataFrame or None
        With second order: index (parameter i, parameter j), i before j; columns ``S2``,
        ``S2_conf`` [-].

    Notes
    -----
    Estimators of Saltelli et al. (2010): :math:`S_i = E[f_B (f_{A_B^i} - f_A)]/V`,
    :math:`S_{Ti} = E[(f_A - f_{A_B^i})^2]/(2V)`; second order per Saltelli (2002).
    """
    import pandas as pd
    from SALib.analyze import sobol as salib_sobol

    names = _names(names)
    D = len(names)
    Y = np.asarray(Y, dtype=float)
    rows = (2 * D + 2) if calc_second_order else (D + 2)
    if Y.ndim != 1 or Y.size == 0 or Y.size % rows:
        raise InputError(f"Y must have N x {rows} values for {D} parameters (second order {calc_second_order}), got shape {Y.shape}")
    bad = ~np.isfinite(Y)
    if bad.any():
        raise InputError(f"Y must be finite for Sobol indices; {int(bad.sum())} of {Y.size} values are not (first at row {int(np.flatnonzero(bad)[0])})")
    if isinstance(num_resamples, bool) or not isinstance(num_resamples, int) or num_resamples < 10:
        raise InputError(f"num_resamples must be a whole number >= 10, got {num_resamples!r}")
    if not (isinstance(conf_level, float) and 0.5 <= conf_level < 1.0):
        raise InputError(f"conf_level must lie in [0.5, 1), got {conf_level!r}")
    if np.ptp(Y) == 0.0:  # a constant output has zero indices (SALib would divide by zero)
        ft = pd.DataFrame(0.0, index=pd.Index(names, name="parameter"), columns=["S1", "S1_conf", "ST", "ST_conf"])
        sec = None
        if calc_second_order:
            idx = pd.MultiIndex.from_tuples([(a, b) for i, a in enumerate(names) for b in names[i + 1 :]], names=["parameter_i", "parameter_j"])
            sec = pd.DataFrame(0.0, index=idx, columns=["S2", "S2_conf"])
        return ft, sec
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        # SALib takes a falsy seed as "unseeded": shift by one so seed 0 is reproducible too.
        S = salib_sobol.analyze(sobol_problem(names), Y, calc_second_order=bool(calc_second_order),
                                num_resamples=num_resamples, conf_level=conf_level, seed=int(seed) + 1)
    ft = pd.DataFrame({k: np.asarray(S[k], dtype=float) for k in ("S1", "S1_conf", "ST", "ST_conf")},
                      index=pd.Index(names, name="parameter"))
    sec = None
    if calc_second_order:
        pairs = [(i, j) for i in range(D) for j in range(i + 1, D)]
        idx = pd.MultiIndex.from_tuples([(names[i], names[j]) for i, j in pairs], names=["parameter_i", "parameter_j"])
        sec = pd.DataFrame({"S2": [float(S["S2"][i, j]) for i, j in pairs],
                            "S2_conf": [float(S["S2_conf"][i, j]) for i, j in pairs]}, index=idx)
    return ft, sec


# -- Morris screening --------------------------------------------------------------------------
def morris_design(names, trajectories: int, seed: int, *, num_levels: int = 4) -> np.ndarray:
    """Morris trajectories in the unit cube (``SALib.sample.morris.sample``; Morris 1991).

    Parameters
    ----------
    names : sequence of str
        The D uncertain parameters.
    trajectories : int
        Number of trajectories r (>= 2) [-].
    seed : int
        Seed [-].
    num_levels : int
        Grid levels p per axis (even, >= 4) [-].

    Returns
    -------
    numpy.ndarray
        Shape (r (D + 1), D), values on the grid {0, 1/(p-1), ..., 1} [-].
    """
    from SALib.sample import morris as salib_morris

    if isinstance(trajectories, bool) or not isinstance(trajectories, int) or trajectories < 2:
        raise InputError(f"trajectories must be a whole number >= 2, got {trajectories!r}")
    if isinstance(num_levels, bool) or not isinstance(num_levels, int) or num_levels < 4 or num_levels % 2:
        raise InputError(f"num_levels must be an even whole number >= 4, got {num_levels!r}")
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        raise InputError(f"seed must be a whole number >= 0, got {seed!r}")
    return salib_morris.sample(sobol_problem(names), trajectories, num_levels=num_levels, seed=int(seed))


def morris_indices(names, X, Y, *, num_levels: int = 4, num_resamples: int = 100,
                   conf_level: float = 0.95, seed: int = 0):
    """Morris elementary-effect statistics of one output.

    Parameters
    ----------
    names : sequence of str
        The D uncertain parameters.
    X : array_like
        The unit-cube design of :func:`morris_design`, shape (r (D+1), D) [-].
    Y : array_like
        Model output at its rows, shape (r (D+1),) [any].
    num_levels, num_resamples, conf_level, seed
        Grid levels of the design; bootstrap of the mu* interval.

    Returns
    -------
    pandas.DataFrame
        Index parameter; columns ``mu``, ``mu_star`` (mean absolute elementary effect,
        Campolongo et al. 2007), ``sigma``, ``mu_star_conf`` [output unit per unit of the design
        axis].
    """
    import pandas as pd
    from SALib.analyze import morris as salib_morris

    names = _names(names)
    X = np.asarray(X, dtype=float)
    Y = np.asarray(Y, dtype=float)
    D = len(names)
    if X.ndim != 2 or X.shape[1] != D or Y.shape != (X.shape[0],) or X.shape[0] % (D + 1):
        raise InputError(f"X must be (r x {D + 1}, {D}) and Y (r x {D + 1},), got {X.shape} and {Y.shape}")
    bad = ~np.isfinite(Y)
    if bad.any():
        raise InputError(f"Y must be finite for Morris screening; {int(bad.sum())} values are not")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        S = salib_morris.analyze(sobol_problem(names), X, Y, num_resamples=num_resamples, conf_level=conf_level,
                                 num_levels=num_levels, seed=int(seed) + 1)
    return pd.DataFrame({k: np.asarray(S[k], dtype=float) for k in ("mu", "mu_star", "sigma", "mu_star_conf")},
                        index=pd.Index(names, name="parameter"))


# -- tornado -----------------------------------------------------------------------------------
def tornado_frame(names, low, high, y_low, y_high, y_base):
    """One-at-a-time swings, largest first.

    Parameters
    ----------
    names : sequence of str
        Parameters.
    low, high : array_like
        Parameter values of each swing [parameter units].
    y_low, y_high : array_like
        Output with the parameter at ``low`` / ``high`` and every other at its base [output unit].
    y_base : float
        Output with every parameter at its base [output unit].

    Returns
    -------
    pandas.DataFrame
        Index parameter; columns ``low``, ``high``, ``output_low``, ``output_high``, ``swing``
        (:math:`|y_{high} - y_{low}|`) and ``base``; sorted by swing, largest first.
    """
    import pandas as pd

    names = _names(names)
    cols = {"low": low, "high": high, "output_low": y_low, "output_high": y_high}
    arr = {k: np.asarray(v, dtype=float).reshape(-1) for k, v in cols.items()}
    if any(a.size != len(names) for a in arr.values()):
        raise InputError("low, high, y_low and y_high need one value per name")
    df = pd.DataFrame(arr, index=pd.Index(names, name="parameter"))
    df["swing"] = np.abs(df["output_high"] - df["output_low"])
    df["base"] = float(y_base)
    return df.sort_values("swing", ascending=False, kind="stable")


# -- value of information ----------------------------------------------------------------------
def _value_matrix(values):
    V = np.asarray(values, dtype=float)
    if V.ndim != 2 or V.shape[0] < 1 or V.shape[1] < 1:
        raise InputError(f"values must be a 2-d array (samples x candidate decisions), got shape {V.shape}")
    bad = ~np.isfinite(V)
    if bad.any():
        s, d = np.unravel_index(np.flatnonzero(bad)[0], V.shape)
        raise InputError(f"values must be finite; {int(bad.sum())} entries are not (first at sample {s}, decision {d})")
    return V


def evpi(values) -> float:
    """Expected value of perfect information from objective values (to maximise).

    Parameters
    ----------
    values : array_like
        Shape (S, D): objective of candidate decision d in equally likely sample s [objective
        unit]. For an objective to minimise pass its negative.

    Returns
    -------
    float
        :math:`EVPI = E_s[\\max_d V_{sd}] - \\max_d E_s[V_{sd}] \\ge 0` (Raiffa & Schlaifer 1961)
        [objective unit]; zero when every sample is the same.
    """
    V = _value_matrix(values)
    return float(max(V.max(axis=1).mean() - V.mean(axis=0).max(), 0.0))


def expected_regret(values, choice: int) -> float:
    """Expected regret of always taking decision ``choice``: :math:`E_s[\\max_d V_{sd} - V_{s,choice}]`.

    Parameters
    ----------
    values : array_like
        Shape (S, D) as for :func:`evpi` [objective unit].
    choice : int
        Column of the decision held fixed (e.g. the deterministic optimum) [-].

    Returns
    -------
    float
        Expected regret, >= EVPI, equal to it when ``choice`` is the best decision in expectation
        [objective unit].
    """
    V = _value_matrix(values)
    if isinstance(choice, bool) or not isinstance(choice, int | np.integer) or not 0 <= choice < V.shape[1]:
        raise InputError(f"choice must be a column index from 0 to {V.shape[1] - 1}, got {choice!r}")
    return float(max((V.max(axis=1) - V[:, int(choice)]).mean(), 0.0))


def evppi(values, x, bins: int | None = None) -> float:
    """Expected value of partial perfect information on one parameter, by binning.

    Parameters
    ----------
    values : array_like
        Shape (S, D) as for :func:`evpi` [objective unit].
    x : array_like
        The parameter's value in each sample, shape (S,) [parameter unit].
    bins : int, optional
        Number of equal-count bins of ``x`` (default :math:`\\lfloor\\sqrt S\\rfloor`, at least 1).

    Returns
    -------
    float
        :math:`EVPPI = E_x[\\max_d E[V_d | x]] - \\max_d E[V_d]`, with :math:`E[V_d|x]` the mean
        over the samples in x's bin (Strong & Oakley 2013's one-parameter idea, with bins). The
        estimate satisfies :math:`0 \\le EVPPI \\le EVPI` exactly; with few samples per bin it
        is biased upward (noise in the bin means) [objective unit].
    """
    V = _value_matrix(values)
    S = V.shape[0]
    x = np.asarray(x, dtype=float)
    if x.shape != (S,) or not np.all(np.isfinite(x)):
        raise InputError(f"x must be {S} finite values, one per sample, got shape {x.shape}")
    if bins is None:
        bins = max(1, math.isqrt(S))
    if isinstance(bins, bool) or not isinstance(bins, int | np.integer) or not 1 <= bins <= S:
        raise InputError(f"bins must be a whole number from 1 to {S}, got {bins!r}")
    # Equal-count bins of the sorted x; ties stay together so a bin is a set of x values.
    order = np.argsort(x, kind="stable")
    xs = x[order]
    edges = np.unique(np.searchsorted(xs, xs[np.linspace(0, S, int(bins) + 1).astype(int)[1:-1]], side="left"))
    groups = np.split(order, edges[(edges > 0) & (edges < S)])
    conditional = sum(len(g) * V[g].mean(axis=0).max() for g in groups) / S
    return float(min(max(conditional - V.mean(axis=0).max(), 0.0), evpi(V)))
