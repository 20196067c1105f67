"""Marginal distributions of uncertain parameters: validation, inverse CDF, mean and spread.

A distribution is described by a mapping as read from a study file's ``[uncertainty.<name>]``
section (:func:`teakit.study.files._distribution`), with every number in the parameter's SI unit:

============  =====================  ==========================================================
kind          keys                   meaning
============  =====================  ==========================================================
uniform       low, high              constant density on [low, high]
triangular    low, mode, high        triangle on [low, high] peaking at mode
pert          low, mode, high        beta on [low, high], alpha = 1 + 4 (m - a)/(b - a),
                                     beta = 1 + 4 (b - m)/(b - a) (Malcolm et al. 1959)
normal        mean, sd               Gaussian
lognormal     median, sigma          ln X is normal with mean ln(median) and sd sigma [-]
discrete      values, weights        scenarios with relative weights (equal if omitted)
============  =====================  ==========================================================

Sampling goes through the inverse CDF (:meth:`Marginal.ppf`) of uniforms from a Latin
hypercube or a Sobol sequence (:mod:`teakit.uncertainty.sampling`), so every kind takes the
same path. For the unbounded kinds (normal, lognormal) probabilities are clipped to
``[U_EPS, 1 - U_EPS]`` first so they give finite values (about 7 standard deviations at most);
bounded kinds reach their bounds at 0 and 1.

References
----------
Malcolm, D. G., Roseboom, J. H., Clark, C. E. & Fazar, W. (1959). Application of a technique
for research and development program evaluation. Operations Research 7(5), 646-669.

Vose, D. (2008). Risk Analysis: A Quantitative Guide, 3rd ed. Wiley, ch. III (PERT, triangular).

Johnson, N. L., Kotz, S. & Balakrishnan, N. (1994, 1995). Continuous Univariate Distributions,
vols. 1-2, 2nd ed. Wiley (moments of the triangular, beta and lognormal laws).

Examples
--------
>>> m = marginal("hydrogen_price", {"distribution": "pert", "low": 1.5, "mode": 2.0, "high": 3.2})
>>> round(m.mean(), 4)     # (a + 4 m + b) / 6
2.1167
>>> m.ppf([0.0, 1.0]).round(6).tolist()
[1.5, 3.2]
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from teakit.errors import InputError

__all__ = ["KINDS", "U_EPS", "Marginal", "marginal"]

#: Distribution kinds and the keys each takes (``weights`` is optional for ``discrete``).
KINDS: dict[str, tuple[str, ...]] = {
    "uniform": ("low", "high"),
    "triangular": ("low", "mode", "high"),
    "pert": ("low", "mode", "high"),
    "normal": ("mean", "sd"),
    "lognormal": ("median", "sigma"),
    "discrete": ("values", "weights"),
}

#: Probabilities are clipped to [U_EPS, 1 - U_EPS] before an unbounded inverse CDF [-].
U_EPS = 1e-12


def _number(name, key, value):
    if isinstance(value, bool) or not isinstance(value, int | float | np.integer | np.floating):
        raise InputError(f"uncertainty of {name!r}: {key} must be a number, got {value!r}")
    v = float(value)
    if not math.isfinite(v):
        raise InputError(f"uncertainty of {name!r}: {key} must be finite, got {v!r}")
    return v


@dataclass(frozen=True)
class Marginal:
    """A validated marginal distribution of one parameter (build it with :func:`marginal`).

    Attributes
    ----------
    name : str
        Parameter name, used in error messages.
    kind : str
        One of :data:`KINDS`.
    params : dict
        The distribution's numbers [parameter unit]; ``sigma`` [-]; discrete ``values`` sorted
        ascending with their normalised ``weights`` [-].
    """

    name: str
    kind: str
    params: dict = field(compare=False)

    # -- inverse CDF -----------------------------------------------------------------------
    def ppf(self, u) -> np.ndarray:
        """Inverse cumulative distribution function (quantile function), vectorised.

        Parameters
        ----------
        u : array_like
            Probabilities in [0, 1] [-]; clipped to ``[U_EPS, 1 - U_EPS]`` for the unbounded
            kinds (normal, lognormal).

        Returns
        -------
        numpy.ndarray
            Values with the shape of ``u`` [parameter unit].

        Notes
        -----
        Triangular: :math:`x = a + \\sqrt{u (b-a)(c-a)}` for :math:`u < (c-a)/(b-a)`, else
        :math:`x = b - \\sqrt{(1-u)(b-a)(b-c)}` (mode c). PERT: :math:`x = a + (b-a)
        I^{-1}_u(\\alpha, \\beta)` with the inverse regularised incomplete beta function.
        Normal: :math:`\\mu + s \\Phi^{-1}(u)`; lognormal: :math:`m e^{\\sigma \\Phi^{-1}(u)}`.
        Discrete: the smallest value whose cumulative weight exceeds ``u``.
        """
        from scipy import special

        u = np.asarray(u, dtype=float)
        if not np.all(np.isfinite(u)) or np.any((u < 0) | (u > 1)):
            raise InputError(f"probabilities for {self.name!r} must lie in [0, 1]")
        p = self.params
        k = self.kind
        if k in ("normal", "lognormal"):
            u = np.clip(u, U_EPS, 1.0 - U_EPS)
        if k == "uniform":
            return p["low"] + u * (p["high"] - p["low"])
        if k == "triangular":
            a, c, b = p["low"], p["mode"], p["high"]
            if b == a:
                return np.full(u.shape, a)
            fc = (c - a) / (b - a)
            left = a + np.sqrt(u * (b - a) * (c - a))
            right = b - np.sqrt((1.0 - u) * (b - a) * (b - c))
            return np.where(u < fc, left, right)
        if k == "pert":
            a, b = p["low"], p["high"]
            if b == a:
                return np.full(u.shape, a)
            al, be = self._pert_shape()
            return a + (b - a) * special.betaincinv(al, be, u)
        if k == "normal":
            return p["mean"] + p["sd"] * special.ndtri(u)
        if k == "lognormal":
            return p["median"] * np.exp(p["sigma"] * special.ndtri(u))
        # discrete
        values = np.asarray(p["values"])
        cum = np.cumsum(p["weights"])
        idx = np.searchsorted(cum / cum[-1], u, side="right")
        return values[np.minimum(idx, values.size - 1)]

    def percentile(self, q) -> np.ndarray | float:
        """Percentile(s) of the distribution, e.g. ``percentile(10)`` is P10.

        Parameters
        ----------
        q : float or array_like
            Percent(s) in [0, 100] [-]. P10 is the value with 10 % of outcomes below it.

        Returns
        -------
        float or numpy.ndarray
            The percentile(s) [parameter unit].
        """
        qa = np.asarray(q, dtype=float)
        if not np.all(np.isfinite(qa)) or np.any((qa < 0) | (qa > 100)):
            raise InputError(f"percentile q must lie in [0, 100], got {q!r}")
        out = self.ppf(qa / 100.0)
        return float(out) if out.ndim == 0 else out

    # -- moments ----------------------------------------------------------------------------
    def _pert_shape(self):
        a, m, b = self.params["low"], self.params["mode"], self.params["high"]
        return 1.0 + 4.0 * (m - a) / (b - a), 1.0 + 4.0 * (b - m) / (b - a)

    def mean(self) -> float:
        """Mean of the distribution [parameter unit].

        Uniform (a+b)/2, triangular (a+c+b)/3, PERT (a+4m+b)/6, lognormal
        :math:`m e^{\\sigma^2/2}`, discrete the weighted mean (Johnson et al. 1994-95).
        """
        p, k = self.params, self.kind
        if k == "uniform":
            return 0.5 * (p["low"] + p["high"])
        if k == "triangular":
            return (p["low"] + p["mode"] + p["high"]) / 3.0
        if k == "pert":
            return (p["low"] + 4.0 * p["mode"] + p["high"]) / 6.0
        if k == "normal":
            return p["mean"]
        if k == "lognormal":
            return p["median"] * math.exp(0.5 * p["sigma"] ** 2)
        return float(np.dot(p["weights"], p["values"]))

    def sd(self) -> float:
        """Standard deviation of the distribution [parameter unit].

        Uniform :math:`(b-a)/\\sqrt{12}`; triangular
        :math:`\\sqrt{(a^2+b^2+c^2-ab-ac-bc)/18}`; PERT :math:`(b-a)\\sqrt{\\alpha\\beta/252}`
        (a beta with :math:`\\alpha+\\beta = 6`); lognormal
        :math:`m e^{\\sigma^2/2}\\sqrt{e^{\\sigma^2}-1}` (Johnson et al. 1994-95).
        """
        p, k = self.params, self.kind
        if k == "uniform":
            return (p["high"] - p["low"]) / math.sqrt(12.0)
        if k == "triangular":
            a, c, b = p["low"], p["mode"], p["high"]
            return math.sqrt(max(a * a + b * b + c * c - a * b - a * c - b * c, 0.0) / 18.0)
        if k == "pert":
            a, b = p["low"], p["high"]
            if b == a:
                return 0.0
            al, be = self._pert_shape()
            return (b - a) * math.sqrt(al * be / 252.0)
        if k == "normal":
            return p["sd"]
        if k == "lognormal":
            s2 = p["sigma"] ** 2
            return p["median"] * math.exp(0.5 * s2) * math.sqrt(math.expm1(s2))
        v, w = np.asarray(p["values"]), np.asarray(p["weights"])
        return float(np.sqrt(np.dot(w, (v - np.dot(w, v)) ** 2)))

    def support(self) -> tuple[float, float]:
        """Smallest and largest value :meth:`ppf` can return [parameter unit]."""
        lo, hi = self.ppf(np.array([0.0, 1.0]))
        return float(lo), float(hi)

    def __repr__(self):
        inner = ", ".join(f"{k}={v!r}" if not isinstance(v, float) else f"{k}={v:g}" for k, v in self.params.items())
        return f"Marginal({self.name!r}, {self.kind}: {inner})"


def marginal(name: str, spec: Mapping | Marginal) -> Marginal:
    """Validate a distribution description and return a :class:`Marginal`.

    Parameters
    ----------
    name : str
        The parameter it belongs to (named in every error message).
    spec : mapping or Marginal
        ``{"distribution": kind, ...}`` with the keys of :data:`KINDS` [parameter unit]; a
        Marginal is returned unchanged.

    Returns
    -------
    Marginal

    Raises
    ------
    InputError
        Unknown kind, missing or extra keys, non-finite numbers, or inconsistent values
        (``low < high``, ``low <= mode <= high``, ``sd > 0``, ``median > 0``, ``sigma > 0``,
        weights >= 0 with a positive sum, one per value).
    """
    if isinstance(spec, Marginal):
        return spec
    if not isinstance(spec, Mapping) or "distribution" not in spec:
        raise InputError(
            f"uncertainty of {name!r} must be a mapping with distribution = one of {', '.join(KINDS)}, got {spec!r}"
        )
    kind = spec["distribution"]
    if kind not in KINDS:
        raise InputError(f"uncertainty of {name!r}: distribution must be one of {', '.join(KINDS)}, got {kind!r}")
    need = set(KINDS[kind])
    got = set(spec) - {"distribution"}
    optional = {"weights"} if kind == "discrete" else set()
    if not (need - optional) <= got or got - need:
        raise InputError(
            f"uncertainty of {name!r}: a {kind} distribution takes {', '.join(KINDS[kind])}"
            f"{' (weights optional)' if optional else ''}, got {', '.join(sorted(got)) or 'nothing'}"
        )
    if kind == "discrete":
        values = spec["values"]
        if isinstance(values, str) or not hasattr(values, "__len__") or len(values) == 0:
            raise InputError(f"uncertainty of {name!r}: values must be a non-empty list of numbers, got {values!r}")
        v = np.array([_number(name, "values", x) for x in values])
        raw_w = spec.get("weights")
        if raw_w is None:
            w = np.ones(v.size)
        else:
            if isinstance(raw_w, str) or not hasattr(raw_w, "__len__") or len(raw_w) != v.size:
                raise InputError(f"uncertainty of {name!r}: weights must be a list of {v.size} numbers, one per value, got {raw_w!r}")
            w = np.array([_number(name, "weights", x) for x in raw_w])
        if np.any(w < 0) or not w.sum() > 0:
            raise InputError(f"uncertainty of {name!r}: weights must be >= 0 with a positive sum, got {w.tolist()}")
        order = np.argsort(v, kind="stable")
        return Marginal(name, kind, {"values": v[order].tolist(), "weights": (w[order] / w.sum()).tolist()})
    p = {k: _number(name, k, spec[k]) for k in KINDS[kind]}
    if kind == "uniform" and not p["low"] < p["high"]:
        raise InputError(f"uncertainty of {name!r}: a uniform distribution needs low < high, got low={p['low']:g}, high={p['high']:g}")
    if kind in ("triangular", "pert"):
        a, m, b = p["low"], p["mode"], p["high"]
        if not a <= m <= b:
            raise InputError(
                f"uncertainty of {name!r}: a {kind} distribution needs low <= mode <= high, got low={a:g}, mode={m:g}, high={b:g}"
            )
    if kind == "normal" and not p["sd"] > 0:
        raise InputError(f"uncertainty of {name!r}: sd must be > 0, got {p['sd']:g}")
    if kind == "lognormal":
        if not p["median"] > 0:
            raise InputError(f"uncertainty of {name!r}: a lognormal median must be > 0, got {p['median']:g}")
        if not p["sigma"] > 0:
            raise InputError(f"uncertainty of {name!r}: sigma (sd of ln X) must be > 0, got {p['sigma']:g}")
    return Marginal(name, kind, p)
