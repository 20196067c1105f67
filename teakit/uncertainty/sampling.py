"""Seeded samples of uncertain parameters: Latin hypercube or scrambled Sobol, with correlation.

:func:`sample` draws ``n`` parameter sets from independent marginals
(:mod:`teakit.uncertainty.distributions`) and, given a target rank-correlation matrix, induces
it either by the Iman-Conover rearrangement (default) or through a Gaussian copula:

- **Iman-Conover** (Iman & Conover 1982) keeps every marginal sample exactly (each column is
  only reordered, so a Latin hypercube stays a Latin hypercube) and reorders the columns so their
  ranks follow van der Waerden scores with the target correlation.
- **Gaussian copula** (Nelsen 2006, sec. 2.3; Cario & Nelson 1997 "NORTA") maps the uniforms to
  standard normals, correlates them by the Cholesky factor and maps them back through the normal
  CDF and each marginal's inverse CDF. Marginals are exact in distribution but a Latin
  hypercube's stratification is lost on correlated columns.

The target is a **Spearman rank** correlation in both methods. For normal variates Spearman's
rho and Pearson's r are related by :math:`\\rho_S = (6/\\pi)\\arcsin(r/2)` (Pearson 1907; Kruskal
1958), so the Pearson matrix used on the normal scores is :math:`r = 2\\sin(\\pi\\rho_S/6)`.

Reproducibility: ``seed`` seeds a :class:`numpy.random.SeedSequence` whose children drive the
design and the rearrangement, so the same arguments give the same samples on every machine
with the same numpy/scipy.

References
----------
McKay, M. D., Beckman, R. J. & Conover, W. J. (1979). A comparison of three methods for
selecting values of input variables in the analysis of output from a computer code.
Technometrics 21(2), 239-245.

Owen, A. B. (1998). Scrambling Sobol' and Niederreiter-Xing points. J. Complexity 14, 466-489.

Iman, R. L. & Conover, W. J. (1982). A distribution-free approach to inducing rank correlation
among input variables. Commun. Statist. - Simul. Comput. 11(3), 311-334.

Nelsen, R. B. (2006). An Introduction to Copulas, 2nd ed. Springer.

Kruskal, W. H. (1958). Ordinal measures of association. J. Am. Stat. Assoc. 53, 814-861.

Examples
--------
>>> dists = {"a": {"distribution": "uniform", "low": 0.0, "high": 1.0},
...          "b": {"distribution": "normal", "mean": 5.0, "sd": 1.0}}
>>> df = sample(dists, 200, seed=1, correlation={("a", "b"): 0.6})
>>> list(df.columns), len(df)
(['a', 'b'], 200)
>>> round(float(df.corr(method="spearman").loc["a", "b"]), 1)
0.6
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from teakit.errors import InputError
from teakit.uncertainty.distributions import Marginal, marginal

__all__ = [
    "METHODS",
    "check_correlation",
    "gaussian_copula",
    "iman_conover",
    "sample",
    "uniform_design",
]

#: Designs of :func:`uniform_design`.
METHODS = ("lhs", "sobol", "random")

#: Ways of inducing correlation in :func:`sample`.
COPULAS = ("iman-conover", "gaussian")


def _check_seed(seed):
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        raise InputError(f"seed must be a whole number >= 0, got {seed!r}")
    return int(seed)


def _check_n(n, minimum=1):
    if isinstance(n, bool) or not isinstance(n, int | np.integer) or n < minimum:
        raise InputError(f"n must be a whole number >= {minimum}, got {n!r}")
    return int(n)


def uniform_design(n: int, d: int, seed: int, method: str = "lhs") -> np.ndarray:
    """``n`` points in the unit cube [0, 1)^d, seeded.

    Parameters
    ----------
    n : int
        Number of points [-].
    d : int
        Dimension (number of uncertain parameters) [-].
    seed : int
        Seed (>= 0) [-].
    method : {"lhs", "sobol", "random"}
        ``"lhs"``: Latin hypercube, one point in each of ``n`` equal strata per axis at a random
        place within it (McKay et al. 1979; scipy.stats.qmc.LatinHypercube). ``"sobol"``:
        scrambled Sobol sequence (Sobol 1967; Owen 1998 scrambling; scipy.stats.qmc.Sobol); its
        balance properties hold when ``n`` is a power of 2. ``"random"``: plain pseudo-random.

    Returns
    -------
    numpy.ndarray
        Shape (n, d), values in [0, 1) [-].
    """
    import warnings

    from scipy.stats import qmc

    n = _check_n(n)
    d = _check_n(d)
    seed = _check_seed(seed)
    rng = np.random.default_rng(seed)
    if method == "lhs":
        return qmc.LatinHypercube(d, rng=rng).random(n)
    if method == "sobol":
        with warnings.catch_warnings():
            # scipy warns when n is not a power of 2; the docstring says so instead.
            warnings.simplefilter("ignore", UserWarning)
            return qmc.Sobol(d, scramble=True, rng=rng).random(n)
    if method == "random":
        return rng.random((n, d))
    raise InputError(f"method must be one of {', '.join(METHODS)}, got {method!r}")


def check_correlation(correlation, names) -> np.ndarray:
    """A validated rank-correlation matrix in the order of ``names``.

    Parameters
    ----------
    correlation : array_like, pandas.DataFrame or mapping
        A (d, d) matrix in the order of ``names``; a DataFrame labelled by (some of) the names;
        or a mapping ``{(a, b): rho}`` of pairs. Names not mentioned are uncorrelated [-].
    names : sequence of str
        The uncertain parameters, in sample-column order.

    Returns
    -------
    numpy.ndarray
        Shape (d, d): symmetric, unit diagonal, entries in [-1, 1], positive definite [-].

    Raises
    ------
    InputError
        Unknown names, wrong shape, non-finite entries, asymmetry, a diagonal not 1, entries
        outside [-1, 1], or a matrix that is not positive definite (its smallest eigenvalue is
        given).
    """
    import pandas as pd

    names = list(names)
    d = len(names)
    idx = {k: i for i, k in enumerate(names)}
    if isinstance(correlation, pd.DataFrame):
        bad = [k for k in (*correlation.index, *correlation.columns) if k not in idx]
        if bad:
            raise InputError(f"correlation names unknown parameter {bad[0]!r}; uncertain parameters: {', '.join(names)}")
        if set(correlation.index) != set(correlation.columns):
            raise InputError("correlation DataFrame must have the same names as index and columns")
        C = np.eye(d)
        for a in correlation.index:
            for b in correlation.columns:
                C[idx[a], idx[b]] = correlation.loc[a, b]
    elif isinstance(correlation, Mapping):
        C = np.eye(d)
        for pair, r in correlation.items():
            if not (isinstance(pair, tuple) and len(pair) == 2):
                raise InputError(f"correlation keys must be pairs of parameter names, got {pair!r}")
            for k in pair:
                if k not in idx:
                    raise InputError(f"correlation names unknown parameter {k!r}; uncertain parameters: {', '.join(names)}")
            a, b = idx[pair[0]], idx[pair[1]]
            if a == b:
                raise InputError(f"correlation of {pair[0]!r} with itself is 1 by definition; give pairs of different names")
            if isinstance(r, bool) or not isinstance(r, int | float | np.integer | np.floating):
                raise InputError(f"correlation {pair!r} must be a number, got {r!r}")
            C[a, b] = C[b, a] = float(r)
    else:
        try:
            C = np.array(correlation, dtype=float)
        except (TypeError, ValueError) as exc:
            raise InputError(f"correlation must be a matrix, a DataFrame or a mapping of pairs, got {correlation!r}") from exc
        if C.shape != (d, d):
            raise InputError(f"correlation must have shape ({d}, {d}) for parameters {', '.join(names)}, got {C.shape}")
    if not np.all(np.isfinite(C)):
        raise InputError("correlation entries must be finite numbers")
    if not np.allclose(C, C.T, rtol=0.0, atol=1e-12):
        i, j = np.unravel_index(np.argmax(np.abs(C - C.T)), C.shape)
        raise InputError(f"correlation must be symmetric: [{names[i]}, {names[j]}] = {C[i, j]:g} but [{names[j]}, {names[i]}] = {C[j, i]:g}")
    if not np.allclose(np.diag(C), 1.0, rtol=0.0, atol=1e-12):
        i = int(np.argmax(np.abs(np.diag(C) - 1.0)))
        raise InputError(f"correlation diagonal must be 1, got {C[i, i]:g} for {names[i]!r}")
    if np.any(np.abs(C) > 1.0):
        i, j = np.unravel_index(np.argmax(np.abs(C)), C.shape)
        raise InputError(f"correlation entries must lie in [-1, 1], got {C[i, j]:g} for ({names[i]!r}, {names[j]!r})")
    lam = float(np.linalg.eigvalsh(C).min())
    if lam <= 1e-10:
        raise InputError(
            f"correlation must be positive definite; its smallest eigenvalue is {lam:.3g} "
            "(the pairs given contradict each other, or |rho| = 1 for distinct parameters)"
        )
    return C


def _pearson_of_normals(C):
    """Pearson matrix of normal variates whose Spearman matrix is ``C`` (Kruskal 1958)."""
    R = 2.0 * np.sin(np.pi * C / 6.0)
    np.fill_diagonal(R, 1.0)
    if np.linalg.eigvalsh(R).min() <= 1e-10:
        raise InputError(
            "the rank-correlation matrix is positive definite but its normal-score equivalent "
            "2 sin(pi rho / 6) is not; soften the strongest correlations slightly"
        )
    return R


def iman_conover(X, correlation, seed: int) -> np.ndarray:
    """Reorder the columns of ``X`` so their rank correlation approaches ``correlation``.

    Parameters
    ----------
    X : array_like
        Shape (n, d): independent samples of each marginal, n > d [any unit].
    correlation : array_like
        Target Spearman matrix (d, d), as returned by :func:`check_correlation` [-].
    seed : int
        Seed of the random score permutations [-].

    Returns
    -------
    numpy.ndarray
        Shape (n, d). Every column holds exactly the values of the same column of ``X``
        (sorted columns are identical), reordered.

    Notes
    -----
    Iman & Conover (1982): build a score matrix :math:`R` whose columns are independent random
    permutations of the van der Waerden scores :math:`\\Phi^{-1}(i/(n+1))`; with the Cholesky
    factors :math:`T = QQ^T` of the sample correlation of :math:`R` and :math:`C^* = PP^T` of the
    target, :math:`R^* = R (P Q^{-1})^T` has sample correlation exactly :math:`C^*`; each column
    of ``X`` is then rearranged to have the ranks of the corresponding column of :math:`R^*`.
    Here :math:`C^* = 2\\sin(\\pi C/6)` so that the *rank* correlation approaches ``C``.
    """
    from scipy import linalg, special

    X = np.asarray(X, dtype=float)
    if X.ndim != 2:
        raise InputError(f"X must be a 2-d array (samples x parameters), got shape {X.shape}")
    n, d = X.shape
    if n <= d + 1:
        raise InputError(f"Iman-Conover needs more samples than parameters + 1: n = {n}, d = {d}")
    C = np.asarray(correlation, dtype=float)
    rng = np.random.default_rng(_check_seed(seed))
    scores = special.ndtri(np.arange(1, n + 1) / (n + 1.0))
    R = rng.permuted(np.tile(scores[:, None], (1, d)), axis=0)
    T = np.corrcoef(R, rowvar=False)
    Q = linalg.cholesky(T, lower=True)
    P = linalg.cholesky(_pearson_of_normals(C), lower=True)
    # R* = R Q^{-T} P^T, with Q^{-T} applied by a triangular solve.
    Rs = linalg.solve_triangular(Q, R.T, lower=True).T @ P.T
    out = np.empty_like(X)
    for j in range(d):
        ranks = np.argsort(np.argsort(Rs[:, j], kind="stable"), kind="stable")
        out[:, j] = np.sort(X[:, j], kind="stable")[ranks]
    return out


def gaussian_copula(U, correlation) -> np.ndarray:
    """Correlated uniforms from independent ones through a Gaussian copula.

    Parameters
    ----------
    U : array_like
        Shape (n, d): independent uniforms in [0, 1] [-].
    correlation : array_like
        Target Spearman matrix (d, d) [-].

    Returns
    -------
    numpy.ndarray
        Shape (n, d): uniforms whose normal scores have Pearson matrix
        :math:`2\\sin(\\pi C/6)`, hence Spearman matrix ``C`` in distribution (Nelsen 2006) [-].
    """
    from scipy import linalg, special

    U = np.clip(np.asarray(U, dtype=float), 1e-15, 1.0 - 1e-15)
    L = linalg.cholesky(_pearson_of_normals(np.asarray(correlation, dtype=float)), lower=True)
    return special.ndtr(special.ndtri(U) @ L.T)


def sample(distributions: Mapping, n: int, seed: int, *, method: str = "lhs", correlation=None,
           copula: str = "iman-conover"):
    """``n`` seeded parameter sets drawn from the given marginals, optionally rank-correlated.

    Parameters
    ----------
    distributions : mapping
        Parameter name -> distribution mapping (see :mod:`teakit.uncertainty.distributions`) or
        :class:`~teakit.uncertainty.distributions.Marginal` [parameter unit].
    n : int
        Number of parameter sets [-].
    seed : int
        Seed (>= 0); the same arguments give the same samples [-].
    method : {"lhs", "sobol", "random"}
        Design of the uniforms (:func:`uniform_design`).
    correlation : array_like, DataFrame or mapping, optional
        Target Spearman rank correlation (:func:`check_correlation`) [-].
    copula : {"iman-conover", "gaussian"}
        How the correlation is induced (module docstring).

    Returns
    -------
    pandas.DataFrame
        ``n`` rows, one column per parameter in the order given, values in each parameter's SI
        unit.
    """
    import pandas as pd

    if not isinstance(distributions, Mapping) or not distributions:
        raise InputError("distributions must be a non-empty mapping of parameter name -> distribution")
    margs: dict[str, Marginal] = {k: marginal(k, v) for k, v in distributions.items()}
    names = list(margs)
    n = _check_n(n)
    seed = _check_seed(seed)
    if copula not in COPULAS:
        raise InputError(f"copula must be one of {', '.join(COPULAS)}, got {copula!r}")
    design_seed, ic_seed = (int(s.generate_state(1)[0]) for s in np.random.SeedSequence(seed).spawn(2))
    U = uniform_design(n, len(names), design_seed, method)
    C = None if correlation is None else check_correlation(correlation, names)
    if C is not None and np.allclose(C, np.eye(len(names))):
        C = None
    if C is not None and copula == "gaussian":
        U = gaussian_copula(U, C)
    X = np.column_stack([margs[k].ppf(U[:, j]) for j, k in enumerate(names)])
    if C is not None and copula == "iman-conover":
        X = iman_conover(X, C, ic_seed)
    return pd.DataFrame(X, columns=names)
