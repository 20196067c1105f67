"""Discounted cash flow: NPV, IRR, payback, capital recovery, depreciation, cash-flow tables, LCOP.

Conventions used throughout
---------------------------
- **Time.** Annual periods with discrete end-of-year cash flows. The first element of a
  cash-flow vector is at t = 0 and is not discounted (the convention of ``numpy_financial.npv``);
  element ``t`` is discounted by ``(1 + rate)**-t``.
- **Signs.** Inflows are positive, outflows negative.
- **Batches.** Cash flows have the years on the last axis, shape ``(..., n_years)``; rates and
  money inputs broadcast over the leading batch axes. A call with scalars and a single cash-flow
  vector returns Python floats.
- **Money.** Inputs to :func:`cash_flows` are in *real* (constant) money: USD of the study's cost
  year, taken to be the money of t = 0. Discount rates given to :func:`cash_flows` are real rates.
  General inflation ``f`` turns real flows into nominal ones, ``nominal_t = real_t (1 + f)**t``,
  and real rates into nominal ones by the Fisher relation ``(1 + i_nom) = (1 + i_real)(1 + f)``
  (I. Fisher, *The Theory of Interest*, Macmillan, 1930). The cash-flow table itself is in nominal
  money (money of each year) because taxes are levied on nominal income and depreciation is
  allowed on the historical (nominal) cost; discounting nominal flows at the nominal rate gives
  the same present value as discounting real flows at the real rate, so NPV is in USD of the
  cost year either way. Without taxes inflation has no effect on NPV; with taxes it lowers NPV
  because depreciation does not keep pace with prices.

Models and references
---------------------
- NPV, IRR, capital recovery factor, discounted payback, depreciation in a cash-flow table and
  the levelised cost of product: standard engineering-economics practice, e.g. M. S. Peters,
  K. D. Timmerhaus & R. E. West, *Plant Design and Economics for Chemical Engineers*, 5th ed.,
  McGraw-Hill (2003), chapters 7 and 8 (from memory); levelised cost as in W. Short, D. J. Packey
  & T. Holt, *A Manual for the Economic Evaluation of Energy Efficiency and Renewable Energy
  Technologies*, NREL/TP-462-5173 (1995) (from memory).
- MACRS: U.S. Internal Revenue Service, Publication 946 *How To Depreciate Property*, Appendix A,
  Table A-1 (GDS, half-year convention), stored in ``data/macrs.csv``.
- IRR root location: Descartes' rule of signs; the root bounds of Cauchy (A.-L. Cauchy, *Exercices
  de mathematiques* 4, 1829) and M. Fujiwara (Tohoku Math. J. 10, 167, 1916) (both from memory);
  bisection; golden-section search (J. Kiefer, Proc. AMS 4, 502, 1953) (from memory).

IRR policy
----------
The IRR is a real rate ``r > -1`` with ``npv(r, cashflows) == 0``. With ``x = 1/(1 + r)`` this is
a positive root of the polynomial ``sum_t c_t x**t``, which may have none, one or several.

- :func:`irr_all` returns *every* root found (ascending, padded with NaN to a common length) with
  a ``count`` per batch member: 0 means there is no IRR, 1 a unique IRR, 2 or more that the IRR
  is ambiguous. The NaN padding is the documented filler of a ragged array, never a result.
- :func:`irr` returns a single rate. Where the root is unique it is returned. Where there is none,
  ``if_none="raise"`` (default) raises :class:`NoUniqueIRRError` and ``if_none="nan"`` returns
  NaN on request. Where there are several, ``if_multiple="raise"`` (default) raises,
  ``"nearest_zero"`` returns the root of smallest magnitude (the choice ``numpy_financial.irr``
  makes; ties go to the lower rate) and ``"nan"`` returns NaN on request.

Method: the number of sign changes V of the cash flows (zeros skipped) bounds the number of roots
and has its parity (Descartes). V = 0: no root. V = 1: exactly one root, found by bisection in
``log x`` between the Cauchy/Fujiwara bounds. V >= 2: ``log x`` is scanned on 256 points between
the bounds; every sign change is bisected, and at every local minimum of ``|NPV|`` on the grid a
golden-section search looks for a pair of roots closer together than the grid step (or a root
where the NPV only touches zero, reported once). All loops have a fixed number of iterations and
run vectorised over the batch. The search covers ``-1 + 1e-13 < r < 1e13``; roots outside that are
not reported. Roots closer together than the grid step that are not separated by a local
minimum of ``|NPV|`` on the grid (three or more inside one grid cell) can be missed. Simple roots
are located to float rounding; a root where the NPV only touches zero is flat, so it is located
only to about the square root of the rounding error (1e-8 in r).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from teakit.data import load_table
from teakit.errors import InputError, TeakitError
from teakit.validation import (
    as_float_array,
    check_finite,
    check_fraction,
    check_positive,
    check_range,
    finite_result,
)

__all__ = [
    "DEPRECIATION_METHODS",
    "MACRS_PERIODS",
    "TAX_LOSS_POLICIES",
    "CashFlows",
    "IRRRoots",
    "Metrics",
    "NoUniqueIRRError",
    "annualised_capital",
    "capital_recovery_factor",
    "cash_flow_table",
    "cash_flows",
    "depreciation_schedule",
    "discounted_payback",
    "irr",
    "irr_all",
    "metrics",
    "nominal_from_real",
    "npv",
    "real_from_nominal",
]

MACRS_PERIODS = (3, 5, 7, 10, 15, 20)
"""GDS recovery periods of IRS Publication 946 Table A-1 [yr]."""

DEPRECIATION_METHODS = ("macrs", "straight_line")
"""Depreciation methods known to :func:`depreciation_schedule`."""

TAX_LOSS_POLICIES = ("credit", "forfeit")
"""What happens to a negative taxable income: see :func:`cash_flows`."""

_IRR_POLICIES_NONE = ("raise", "nan")
_IRR_POLICIES_MULTIPLE = ("raise", "nearest_zero", "nan")

_S_CAP = 30.0  # |log x| searched, x = 1/(1 + r): -1 + 9.4e-14 < r < 1.07e13
_N_SCAN = 256  # grid points in log x for cash flows with two or more sign changes
_N_BISECT = 64  # halvings: a bracket of width <= 2 * _S_CAP + 2 ln 2 shrinks below 4e-18
_N_GOLDEN = 60  # golden-section steps: a grid cell pair shrinks by 0.618**60 = 3e-13
_CHUNK = 16384  # batch members per pass of the IRR search
_LOG2 = float(np.log(2.0))
#: Longest plant life, depreciation life or schedule accepted [yr] (bounds the table's memory).
MAX_YEARS = 1000
_SUM_TOL = 1e-9  # tolerance on schedules that must sum to 1


# --------------------------------------------------------------------------------------------
# argument helpers


def _out(a):
    """Python float (or int) for a 0-d result, the array otherwise."""
    a = np.asarray(a)
    if a.ndim == 0:
        return a.item()
    return a


def _rate(name: str, value) -> np.ndarray:
    return check_range(name, value, -1.0, np.inf, unit="1/yr", inclusive=(False, False))


def _cashflow_array(value, name: str = "cashflows") -> np.ndarray:
    c = check_finite(name, value)
    if c.ndim == 0 or c.shape[-1] == 0:
        raise InputError(
            f"{name} must be an array with the years on its last axis (at least one year), got "
            f"shape {c.shape}"
        )
    return c


def _batch_shape(**shapes) -> tuple[int, ...]:
    try:
        return tuple(np.broadcast_shapes(*shapes.values()))
    except ValueError:
        desc = ", ".join(f"{k} {v}" for k, v in shapes.items())
        raise InputError(f"batch shapes do not broadcast together: {desc}") from None


def _choice(name: str, value, choices) -> str:
    if not isinstance(value, str) or value not in choices:
        raise InputError(f"{name} must be one of {', '.join(map(repr, choices))}, got {value!r}")
    return value


def _whole_years(name: str, value, minimum: int = 1) -> int:
    a = check_finite(name, value)
    if a.ndim != 0 or a != np.round(a) or a < minimum or a > MAX_YEARS:
        raise InputError(
            f"{name} must be a whole number of years >= {minimum} (at most {MAX_YEARS}) [yr], "
            f"got {value!r}"
        )
    return int(a)


def _fraction_vector(name: str, value, must_sum_to_one: bool) -> np.ndarray:
    a = check_fraction(name, value)
    if a.ndim != 1 or (must_sum_to_one and a.size == 0):
        raise InputError(f"{name} must be a non-empty 1-D sequence of fractions, got {value!r}")
    if must_sum_to_one and abs(a.sum() - 1.0) > _SUM_TOL:
        raise InputError(f"{name} must sum to 1 (within {_SUM_TOL:g}), got sum {a.sum():.12g}")
    return a


# --------------------------------------------------------------------------------------------
# NPV, payback, CRF, Fisher


def _discount(rate: np.ndarray, n: int) -> np.ndarray:
    """(1 + rate)**-t for t = 0..n-1, shape rate.shape + (n,); InputError on overflow."""
    t = np.arange(n, dtype=float)
    with np.errstate(over="ignore"):
        v = np.power(1.0 + rate[..., None], -t)
    if not np.all(np.isfinite(v)):
        raise InputError(
            f"rate is so close to -1 that the discount factor over {n} years overflows; "
            "rates must be > -1 [1/yr] and, for long cash flows, not within rounding of -1"
        )
    return v


def npv(rate, cashflows):
    """Net present value of annual cash flows, the first at t = 0.

    Parameters
    ----------
    rate : float or array_like
        Discount rate per year, a fraction, > -1; broadcasts against the batch axes of
        ``cashflows`` (e.g. shape ``(B,)``) [1/yr]
    cashflows : array_like
        Cash flows of years 0, 1, ..., n-1 on the last axis, shape ``(..., n)`` [USD]

    Returns
    -------
    float or numpy.ndarray
        ``sum_t c_t (1 + rate)**-t``, shape ``broadcast(rate.shape, cashflows.shape[:-1])``;
        a float when that shape is ``()`` [USD]

    Raises
    ------
    InputError
        If ``rate <= -1``, anything is NaN or infinite, or the shapes do not broadcast.

    Notes
    -----
    Same convention as ``numpy_financial.npv``: the first cash flow is not discounted.
    """
    r = _rate("rate", rate)
    c = _cashflow_array(cashflows)
    _batch_shape(rate=r.shape, cashflows_batch=c.shape[:-1])
    v = _discount(r, c.shape[-1])
    out = np.sum(c * v, axis=-1)
    if not np.all(np.isfinite(out)):
        raise InputError("cashflows discounted at rate overflow float range; check magnitudes")
    return _out(out)


def discounted_payback(rate, cashflows):
    """Discounted payback time: when the cumulative discounted cash flow turns non-negative for good.

    Parameters
    ----------
    rate : float or array_like
        Discount rate per year, a fraction, > -1; broadcasts over the batch axes [1/yr]
    cashflows : array_like
        Cash flows of years 0..n-1 on the last axis, shape ``(..., n)`` [USD]

    Returns
    -------
    float or numpy.ndarray
        Time from t = 0 after which the cumulative discounted cash flow stays >= 0 up to the last
        year, linearly interpolated inside the year in which it crosses zero. ``0.0`` if the
        cumulative discounted cash flow is never negative; ``numpy.inf`` if it is still negative
        in the last year (the investment is not recovered within the cash flows given). Shape
        ``broadcast(rate.shape, cashflows.shape[:-1])`` [yr]

    Raises
    ------
    InputError
        If ``rate <= -1`` or anything is NaN or infinite.

    Notes
    -----
    "For good" matters when late outflows (decommissioning) push the cumulative back below zero:
    the payback is then the last upward crossing, or ``inf`` if the end is negative. Linear
    interpolation within a year is common practice.
    """
    r = _rate("rate", rate)
    c = _cashflow_array(cashflows)
    shape = _batch_shape(rate=r.shape, cashflows_batch=c.shape[:-1])
    n = c.shape[-1]
    with np.errstate(over="ignore", invalid="ignore"):
        cum = np.cumsum(np.broadcast_to(c, (*shape, n)) * _discount(r, n), axis=-1)
    finite_result("cumulative discounted cash flow", cum, rate=r, cashflows=c)
    neg = cum < 0.0
    ever = neg.any(axis=-1)
    last = n - 1 - np.argmax(neg[..., ::-1], axis=-1)  # last year with a negative cumulative
    k = np.minimum(last, n - 2)[..., None] if n > 1 else np.zeros((*shape, 1), dtype=int)
    c0 = np.take_along_axis(cum, k, axis=-1)[..., 0]
    c1 = np.take_along_axis(cum, np.minimum(k + 1, n - 1), axis=-1)[..., 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        crossing = k[..., 0] + (-c0) / (c1 - c0)
    out = np.where(~ever, 0.0, np.where(neg[..., -1], np.inf, crossing))
    return _out(out)


def capital_recovery_factor(rate, years):
    """Capital recovery factor ``i (1 + i)**n / ((1 + i)**n - 1)``; ``1/n`` at ``i = 0``.

    Parameters
    ----------
    rate : float or array_like
        Interest (discount) rate per year, a fraction, > -1 [1/yr]
    years : float or array_like
        Recovery period, > 0; need not be whole [yr]

    Returns
    -------
    float or numpy.ndarray
        Uniform end-of-year payment that repays a present sum of 1 over ``years``, shape
        ``broadcast(rate, years)`` [1/yr]

    Raises
    ------
    InputError
        If ``rate <= -1``, ``years <= 0`` or anything is NaN.

    Notes
    -----
    Evaluated as ``i / (1 - exp(-n log1p(i)))`` so that it stays accurate as ``i -> 0``; at
    ``i == 0`` exactly the limit ``1/n`` is returned. Engineering-economics textbook closed form
    (e.g. Peters, Timmerhaus & West 2003, ch. 7, from memory).
    """
    i = _rate("rate", rate)
    n = check_positive("years", years, unit="yr")
    _batch_shape(rate=i.shape, years=n.shape)
    i, n = np.broadcast_arrays(i, n)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        denom = -np.expm1(-n * np.log1p(i))
        crf = np.where(i == 0.0, 1.0 / n, i / denom)
    return _out(finite_result("capital recovery factor", crf, rate=i, years=n))


def annualised_capital(capital, rate, years):
    """Capital charge per year: ``capital * capital_recovery_factor(rate, years)``.

    Parameters
    ----------
    capital : float or array_like
        Capital spent at t = 0, >= 0 [USD]
    rate : float or array_like
        Interest (discount) rate per year, a fraction, > -1 [1/yr]
    years : float or array_like
        Recovery period, > 0 [yr]

    Returns
    -------
    float or numpy.ndarray
        Equivalent uniform end-of-year charge, shape ``broadcast(capital, rate, years)``
        [USD/yr]

    Raises
    ------
    InputError
        If ``capital < 0``, ``rate <= -1``, ``years <= 0`` or anything is NaN.
    """
    cap = check_positive("capital", capital, unit="USD", allow_zero=True)
    crf = np.asarray(capital_recovery_factor(rate, years))
    _batch_shape(capital=cap.shape, rate_years=crf.shape)
    with np.errstate(over="ignore", invalid="ignore"):
        out = cap * crf
    return _out(finite_result("annualised capital", out, capital=cap, rate=rate, years=years))


def nominal_from_real(rate, inflation):
    """Nominal rate from a real rate by the Fisher relation ``(1 + i_n) = (1 + i_r)(1 + f)``.

    Parameters
    ----------
    rate : float or array_like
        Real rate per year, > -1 [1/yr]
    inflation : float or array_like
        General inflation per year, > -1 [1/yr]

    Returns
    -------
    float or numpy.ndarray
        Nominal rate per year [1/yr]
    """
    r = _rate("rate", rate)
    f = _rate("inflation", inflation)
    _batch_shape(rate=r.shape, inflation=f.shape)
    with np.errstate(over="ignore", invalid="ignore"):
        out = (1.0 + r) * (1.0 + f) - 1.0
    return _out(finite_result("nominal rate", out, rate=r, inflation=f))


def real_from_nominal(rate, inflation):
    """Real rate from a nominal rate by the Fisher relation ``(1 + i_r) = (1 + i_n)/(1 + f)``.

    Parameters
    ----------
    rate : float or array_like
        Nominal rate per year, > -1 [1/yr]
    inflation : float or array_like
        General inflation per year, > -1 [1/yr]

    Returns
    -------
    float or numpy.ndarray
        Real rate per year [1/yr]
    """
    r = _rate("rate", rate)
    f = _rate("inflation", inflation)
    _batch_shape(rate=r.shape, inflation=f.shape)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        out = (1.0 + r) / (1.0 + f) - 1.0
    return _out(finite_result("real rate", out, rate=r, inflation=f))


# --------------------------------------------------------------------------------------------
# IRR


class NoUniqueIRRError(InputError):
    """Cash flows whose IRR does not exist or is not unique, where the caller asked to raise.

    Attributes
    ----------
    members : numpy.ndarray of int
        Flat indices of the offending batch members (``[0]`` for a single vector) [-]
    counts : numpy.ndarray of int
        Number of IRRs found for each of them (0: none, >= 2: several) [-]
    """

    def __init__(self, message, members, counts):
        self.members = np.asarray(members, dtype=int)
        self.counts = np.asarray(counts, dtype=int)
        super().__init__(message)


@dataclass(frozen=True, eq=False)
class IRRRoots:
    """Every IRR of each batch member (see the module docstring, "IRR policy").

    Attributes
    ----------
    roots : numpy.ndarray
        Shape ``(..., k)``: the roots of each member in ascending order, padded with NaN after the
        first ``count`` entries; ``k = max(1, count.max())`` [1/yr]
    count : int or numpy.ndarray of int
        Shape ``(...)``: number of IRRs found; 0 = none, 1 = unique, >= 2 = several [-]
    sign_changes : int or numpy.ndarray of int
        Shape ``(...)``: sign changes of the cash flows, zeros skipped (Descartes' upper bound on
        ``count``, with the same parity when roots are counted with multiplicity) [-]
    """

    roots: np.ndarray
    count: int | np.ndarray
    sign_changes: int | np.ndarray

    @property
    def status(self):
        """``"none"``, ``"unique"`` or ``"multiple"`` per member (str or array of str)."""
        c = np.asarray(self.count)
        s = np.where(c == 0, "none", np.where(c == 1, "unique", "multiple"))
        return _out(s)


def _scaled_poly(At, Rt, s, with_scale=False):
    """P(x)/max(1, x)**d (and, on request, the same with |coefficients|: a rounding scale).

    ``At`` (n, K) holds the coefficients of P(x) = sum_k A_k x**k by row k (zero above the degree
    d of each column), ``Rt`` those of the reversed polynomial x**d P(1/x). With x = exp(s) and
    z = exp(-|s|) <= 1, P(x)/max(1, x)**d is P(z) where s <= 0 and x**-d P(x) = R(z) where s > 0,
    so no power above 1 is formed and nothing overflows. ``s`` has shape (K,) or (K, M).
    """
    n = At.shape[0]
    z = np.exp(-np.abs(s))
    cols = (slice(None), None) if s.ndim == 2 else (slice(None),)
    pa = np.zeros_like(s)
    pr = np.zeros_like(s)
    for k in range(n - 1, -1, -1):
        pa *= z
        pa += At[k][cols]
        pr *= z
        pr += Rt[k][cols]
    val = np.where(s <= 0.0, pa, pr)
    if not with_scale:
        return val
    sa = np.zeros_like(s)
    sr = np.zeros_like(s)
    for k in range(n - 1, -1, -1):
        sa *= z
        sa += np.abs(At[k][cols])
        sr *= z
        sr += np.abs(Rt[k][cols])
    return val, np.where(s <= 0.0, sa, sr)


def _log_root_bound(A, d):
    """log of an upper bound on |roots| of sum_k A_k x**k (A_0, A_d nonzero): min(Cauchy, Fujiwara)."""
    n = A.shape[-1]
    with np.errstate(divide="ignore"):
        la = np.log(np.abs(A))
    lead = np.take_along_axis(la, d[:, None], axis=1)
    k = np.arange(n)
    ratio = np.where(k[None, :] < d[:, None], la - lead, -np.inf).max(axis=1)
    cauchy = np.logaddexp(0.0, ratio)
    j = np.arange(1, n)
    src = d[:, None] - j[None, :]
    lj = np.take_along_axis(la, np.maximum(src, 0), axis=1)
    lj = np.where(src == 0, lj - _LOG2, lj)
    terms = np.where(src >= 0, (lj - lead) / j[None, :], -np.inf)
    fujiwara = _LOG2 + terms.max(axis=1)
    return np.minimum(cauchy, fujiwara)


def _bisect(At, Rt, a, b):
    fa = _scaled_poly(At, Rt, a)
    for _ in range(_N_BISECT):
        m = 0.5 * (a + b)
        fm = _scaled_poly(At, Rt, m)
        left = (fm == 0.0) | (np.sign(fm) != np.sign(fa))
        b = np.where(left, m, b)
        a = np.where(left, a, m)
        fa = np.where(left, fa, fm)
    return 0.5 * (a + b)


def _golden_min(At, Rt, sigma, a, b):
    g = (np.sqrt(5.0) - 1.0) / 2.0
    for _ in range(_N_GOLDEN):
        c = b - g * (b - a)
        e = a + g * (b - a)
        fc = sigma * _scaled_poly(At, Rt, c)
        fe = sigma * _scaled_poly(At, Rt, e)
        left = fc < fe
        b = np.where(left, e, b)
        a = np.where(left, a, c)
    return 0.5 * (a + b)


def _irr_core(c):
    """All IRRs of the rows of c (K, n): (roots (K, k) NaN-padded, count (K,), sign changes (K,))."""
    K, n = c.shape
    nz = c != 0.0
    has = nz.any(axis=1)
    first = np.argmax(nz, axis=1)
    last = n - 1 - np.argmax(nz[:, ::-1], axis=1)
    d = np.where(has, last - first, 0)
    # sign changes with zeros skipped: carry the last nonzero sign forward
    pos = np.maximum.accumulate(np.where(nz, np.arange(n), -1), axis=1)
    carried = np.where(pos >= 0, np.take_along_axis(np.sign(c), np.maximum(pos, 0), axis=1), 0.0)
    changes = np.sum(carried[:, 1:] * carried[:, :-1] < 0.0, axis=1)

    # coefficients of the trimmed polynomial (lowest nonzero first) and of its reverse
    k = np.arange(n)
    inside = k[None, :] <= d[:, None]
    A = np.where(inside, np.take_along_axis(c, np.minimum(first[:, None] + k, n - 1), axis=1), 0.0)
    R = np.where(inside, np.take_along_axis(A, np.maximum(d[:, None] - k, 0), axis=1), 0.0)
    At, Rt = np.ascontiguousarray(A.T), np.ascontiguousarray(R.T)  # (n, K): rows by power

    members, s_roots = [], []
    br_m, br_a, br_b = [], [], []
    live = np.flatnonzero(changes >= 1)
    if live.size:
        s_hi = np.clip(_log_root_bound(A[live], d[live]) + _LOG2, -_S_CAP, _S_CAP)
        s_lo = np.clip(-_log_root_bound(R[live], d[live]) - _LOG2, -_S_CAP, _S_CAP)
        one = changes[live] == 1
        # one sign change: a unique root between the bounds (if the clipping kept it)
        m1 = live[one]
        if m1.size:
            f_lo = _scaled_poly(At[:, m1], Rt[:, m1], s_lo[one])
            f_hi = _scaled_poly(At[:, m1], Rt[:, m1], s_hi[one])
            ok = np.sign(f_lo) * np.sign(f_hi) < 0.0
            br_m.append(m1[ok])
            br_a.append(s_lo[one][ok])
            br_b.append(s_hi[one][ok])
        # two or more: scan
        many = ~one
        m2 = live[many]
        if m2.size:
            grid = s_lo[many, None] + (s_hi - s_lo)[many, None] * np.linspace(0.0, 1.0, _N_SCAN)
            F = _scaled_poly(At[:, m2], Rt[:, m2], grid)
            sg = np.sign(F)
            zr, zc = np.nonzero(sg == 0.0)
            members.append(m2[zr])
            s_roots.append(grid[zr, zc])
            cr, cc = np.nonzero(sg[:, :-1] * sg[:, 1:] < 0.0)
            br_m.append(m2[cr])
            br_a.append(grid[cr, cc])
            br_b.append(grid[cr, cc + 1])
            aF = np.abs(F)
            dip = (
                (sg[:, 1:-1] != 0.0)
                & (sg[:, :-2] == sg[:, 1:-1])
                & (sg[:, 2:] == sg[:, 1:-1])
                & (aF[:, 1:-1] < aF[:, :-2])
                & (aF[:, 1:-1] <= aF[:, 2:])
            )
            er, ec = np.nonzero(dip)
            if er.size:
                ec = ec + 1
                Ae, Re = At[:, m2[er]], Rt[:, m2[er]]
                sigma = sg[er, ec]
                lo, hi = grid[er, ec - 1], grid[er, ec + 1]
                s_star = _golden_min(Ae, Re, sigma, lo, hi)
                f_star, scale = _scaled_poly(Ae, Re, s_star, with_scale=True)
                g_star = sigma * f_star
                tol = 64.0 * np.finfo(float).eps * scale
                touch = np.abs(g_star) <= tol
                members.append(m2[er[touch]])
                s_roots.append(s_star[touch])
                pair = g_star < -tol
                for a_, b_ in ((lo, s_star), (s_star, hi)):
                    br_m.append(m2[er[pair]])
                    br_a.append(a_[pair])
                    br_b.append(b_[pair])
    if br_m:
        bm = np.concatenate(br_m)
        if bm.size:
            members.append(bm)
            ends = (np.concatenate(br_a), np.concatenate(br_b))
            s_roots.append(_bisect(At[:, bm], Rt[:, bm], *ends))

    mem = np.concatenate(members) if members else np.zeros(0, dtype=int)
    rts = np.expm1(-np.concatenate(s_roots)) if s_roots else np.zeros(0)
    order = np.lexsort((rts, mem))
    mem, rts = mem[order], rts[order]
    count = np.bincount(mem, minlength=K)
    kmax = max(1, int(count.max()) if K else 1)
    start = np.concatenate(([0], np.cumsum(count)[:-1]))
    roots = np.full((K, kmax), np.nan)
    roots[mem, np.arange(mem.size) - start[mem]] = rts
    return roots, count, changes


def irr_all(cashflows) -> IRRRoots:
    """Every internal rate of return of annual cash flows (first at t = 0), vectorised.

    Parameters
    ----------
    cashflows : array_like
        Cash flows of years 0..n-1 on the last axis, shape ``(..., n)`` [USD]

    Returns
    -------
    IRRRoots
        ``roots`` shape ``(..., k)`` ascending and NaN-padded [1/yr]; ``count`` and
        ``sign_changes`` shape ``(...)`` (ints for a single vector) [-]

    Raises
    ------
    InputError
        If anything is NaN or infinite or there is no year axis.

    Notes
    -----
    See the module docstring ("IRR policy") for the method and its limits. All-zero cash flows
    and cash flows of one sign have no IRR (count 0).
    """
    c = _cashflow_array(cashflows)
    batch, n = c.shape[:-1], c.shape[-1]
    flat = c.reshape(-1, n)
    # chunks bound the memory of the (members x grid) scan; a loop over chunks, not members
    parts = [_irr_core(flat[i : i + _CHUNK]) for i in range(0, max(flat.shape[0], 1), _CHUNK)]
    kmax = max(p[0].shape[1] for p in parts)
    roots = np.concatenate(
        [np.pad(p[0], ((0, 0), (0, kmax - p[0].shape[1])), constant_values=np.nan) for p in parts]
    )
    count = np.concatenate([p[1] for p in parts])
    changes = np.concatenate([p[2] for p in parts])
    roots = roots.reshape((*batch, kmax))
    return IRRRoots(roots, _out(count.reshape(batch)), _out(changes.reshape(batch)))


def _select_irr(res: IRRRoots, if_none: str, if_multiple: str, what: str = "cashflows"):
    _choice("if_none", if_none, _IRR_POLICIES_NONE)
    _choice("if_multiple", if_multiple, _IRR_POLICIES_MULTIPLE)
    roots = np.asarray(res.roots)
    count = np.asarray(res.count)
    k = roots.shape[-1]
    flat_r = roots.reshape(-1, k)
    flat_c = count.reshape(-1)
    flat_v = np.asarray(res.sign_changes).reshape(-1)
    single = count.ndim == 0

    def where(idx):
        if single:
            return ""
        shown = ", ".join(str(int(i)) for i in idx[:10])
        more = f" and {idx.size - 10} more" if idx.size > 10 else ""
        return f" for batch members (flat index) {shown}{more}"

    none = np.flatnonzero(flat_c == 0)
    if none.size and if_none == "raise":
        v0 = np.flatnonzero(flat_v[none] == 0)
        why = (
            "the cash flows do not change sign"
            if v0.size == none.size
            else "no rate in (-1, 1e13) makes the NPV zero"
        )
        raise NoUniqueIRRError(
            f"{what} have no IRR{where(none)}: {why}; pass if_none='nan' to get NaN there, or "
            "use irr_all() to see every root",
            none,
            flat_c[none],
        )
    multi = np.flatnonzero(flat_c >= 2)
    if multi.size and if_multiple == "raise":
        eg = flat_r[multi[0], : flat_c[multi[0]]]
        raise NoUniqueIRRError(
            f"{what} have several IRRs{where(multi)} (e.g. {', '.join(f'{x:.6g}' for x in eg)}); "
            "pass if_multiple='nearest_zero' or 'nan', or use irr_all() to see every root",
            multi,
            flat_c[multi],
        )
    out = np.where(flat_c == 1, flat_r[:, 0], np.nan)
    if multi.size and if_multiple == "nearest_zero":
        mag = np.where(np.isnan(flat_r), np.inf, np.abs(flat_r))
        nearest = np.take_along_axis(flat_r, np.argmin(mag, axis=1)[:, None], axis=1)[:, 0]
        out = np.where(flat_c >= 2, nearest, out)
    return out.reshape(count.shape)


def irr(cashflows, *, if_none: str = "raise", if_multiple: str = "raise"):
    """Internal rate of return of annual cash flows (first at t = 0), vectorised over a batch.

    Parameters
    ----------
    cashflows : array_like
        Cash flows of years 0..n-1 on the last axis, shape ``(..., n)`` [USD]
    if_none : {"raise", "nan"}
        What to do where no IRR exists: raise :class:`NoUniqueIRRError`, or return NaN there
        (only on this explicit request) [-]
    if_multiple : {"raise", "nearest_zero", "nan"}
        What to do where several IRRs exist: raise, return the root nearest zero (as
        ``numpy_financial.irr`` does; ties go to the lower rate), or return NaN there [-]

    Returns
    -------
    float or numpy.ndarray
        The rate ``r > -1`` with ``npv(r, cashflows) == 0``, shape ``cashflows.shape[:-1]``
        [1/yr]

    Raises
    ------
    NoUniqueIRRError
        (an :class:`~teakit.errors.InputError`) where the IRR is missing or ambiguous and the
        policy is ``"raise"``; it carries the offending member indices and root counts.
    InputError
        If anything is NaN or infinite, or a policy is unknown.

    Notes
    -----
    See the module docstring ("IRR policy") and :func:`irr_all`.
    """
    _choice("if_none", if_none, _IRR_POLICIES_NONE)
    _choice("if_multiple", if_multiple, _IRR_POLICIES_MULTIPLE)
    return _out(_select_irr(irr_all(cashflows), if_none, if_multiple))


# --------------------------------------------------------------------------------------------
# depreciation


@functools.cache
def _macrs_matrix() -> np.ndarray:
    tab = load_table("macrs")
    mat = np.zeros((len(MACRS_PERIODS), max(MACRS_PERIODS) + 1))
    for i, life in enumerate(MACRS_PERIODS):
        rows = tab[tab["recovery_period_years"] == life].sort_values("year")
        if rows["year"].tolist() != list(range(1, life + 2)):
            raise TeakitError(
                f"data/macrs.csv: the {life}-year class must list years 1..{life + 1}"
            )
        mat[i, : life + 1] = rows["percent"].to_numpy(dtype=float) / 100.0
    mat.setflags(write=False)
    return mat


def _depreciation(method, life, n_years, method_name, life_name):
    method = _choice(method_name, method, DEPRECIATION_METHODS)
    life = check_positive(life_name, life, unit="yr")
    if life.size == 0 or (life > MAX_YEARS).any():
        raise InputError(f"{life_name} must be one or more numbers in (0, {MAX_YEARS}] [yr], got {life!r}")
    if method == "macrs":
        bad = ~np.isin(life, MACRS_PERIODS)
        if bad.any():
            raise InputError(
                f"{life_name} for MACRS must be one of {', '.join(map(str, MACRS_PERIODS))} [yr] "
                f"(IRS Publication 946 Table A-1), got {life.ravel()[np.argmax(bad.ravel())]:g}"
            )
        natural = int(life.max()) + 1
    else:
        natural = int(np.ceil(life.max()))
    n = natural if n_years is None else _whole_years("n_years", n_years)
    width = max(n, natural)
    if method == "macrs":
        idx = np.searchsorted(MACRS_PERIODS, life.astype(int))
        full = np.zeros((*life.shape, width))
        full[..., : _macrs_matrix().shape[1]] = _macrs_matrix()[idx][..., :width]
    else:
        k = np.arange(1, width + 1)
        full = np.clip(life[..., None] - (k - 1), 0.0, 1.0) / life[..., None]
    out = full[..., :n].copy()
    out[..., -1] = full[..., n - 1 :].sum(axis=-1)
    return out


def depreciation_schedule(method: str, life_years, n_years=None):
    """Fraction of the depreciable basis deducted in each year of service.

    Parameters
    ----------
    method : {"macrs", "straight_line"}
        ``"macrs"``: IRS Publication 946 Table A-1 (GDS, half-year convention; 200 % declining
        balance for 3, 5, 7 and 10 years, 150 % for 15 and 20 years, each switching to straight
        line), read from ``data/macrs.csv``. ``"straight_line"``: ``1/life`` per full year, no
        convention, the basis not reduced by salvage [-]
    life_years : float or array_like
        Recovery period; for MACRS one of 3, 5, 7, 10, 15, 20; for straight line any value > 0
        (a fractional last year gets the remainder) [yr]
    n_years : int, optional
        Length of the schedule. Default: the whole schedule (``life + 1`` for MACRS, ``ceil(life)``
        for straight line). A longer schedule is padded with zeros; a shorter one puts everything
        not yet deducted into its last year (the book value is written off when the asset leaves
        service), so the fractions always sum to 1 [yr]

    Returns
    -------
    numpy.ndarray
        Shape ``life_years.shape + (n_years,)``; entry ``j`` is service year ``j + 1`` [-]

    Raises
    ------
    InputError
        Unknown method, a MACRS life not in the table, ``life_years <= 0``, a bad ``n_years``.
    """
    return _depreciation(method, life_years, n_years, "method", "life_years")


# --------------------------------------------------------------------------------------------
# cash-flow table

_COLUMNS = (
    ("capacity utilisation [-]", "utilisation"),
    ("inflation index [-]", "inflation_index"),
    ("capex [USD]", "capex"),
    ("working capital [USD]", "working_capital"),
    ("revenue [USD]", "revenue"),
    ("operating cost [USD]", "operating_cost"),
    ("fixed operating cost [USD]", "fixed_operating_cost"),
    ("salvage [USD]", "salvage"),
    ("depreciation [USD]", "depreciation"),
    ("taxable income [USD]", "taxable_income"),
    ("tax [USD]", "tax"),
    ("net cash flow [USD]", "net"),
    ("discount factor [-]", "discount_factor"),
    ("discounted cash flow [USD]", "discounted"),
    ("cumulative discounted [USD]", "cumulative_discounted"),
)


@dataclass(frozen=True, eq=False)
class CashFlows:
    """Annual cash-flow table of a batch of cases, every array of shape ``batch + (n_years,)``.

    Money columns are nominal (money of each year) and signed (inflows > 0, outflows < 0), except
    ``depreciation`` and ``taxable_income``, which are not cash. ``net`` is the sum of ``capex``,
    ``working_capital``, ``revenue``, ``operating_cost``, ``fixed_operating_cost``, ``salvage`` and
    ``tax``. Built by :func:`cash_flows`; see there for the timeline.

    Attributes
    ----------
    year : numpy.ndarray of int
        0..n_years-1 [yr]
    n_construction : int
        Number of construction years (years 0..n_construction-1) [yr]
    plant_life : int
        Number of operating years [yr]
    utilisation : numpy.ndarray
        Capacity utilisation of each year, shape ``(n_years,)`` (0 during construction) [-]
    inflation_index, discount_factor : numpy.ndarray
        ``(1 + f)**t`` and ``(1 + i_nominal)**-t`` [-]
    capex, working_capital, revenue, operating_cost, fixed_operating_cost, salvage, tax, net :
    numpy.ndarray
        Signed nominal cash flows [USD]
    depreciation, taxable_income : numpy.ndarray
        Tax deduction for depreciation (>= 0) and taxable income [USD]
    discounted, cumulative_discounted : numpy.ndarray
        ``net * discount_factor`` and its running sum; the last entry is the NPV [USD]
    discount_rate, nominal_rate, inflation, tax_rate : float or numpy.ndarray
        Real and nominal discount rates, inflation [1/yr]; tax rate [-]; batch-shaped
    tax_losses : str
        Policy for negative taxable income [-]
    """

    year: np.ndarray
    n_construction: int
    plant_life: int
    utilisation: np.ndarray
    inflation_index: np.ndarray
    capex: np.ndarray
    working_capital: np.ndarray
    revenue: np.ndarray
    operating_cost: np.ndarray
    fixed_operating_cost: np.ndarray
    salvage: np.ndarray
    depreciation: np.ndarray
    taxable_income: np.ndarray
    tax: np.ndarray
    net: np.ndarray
    discount_factor: np.ndarray
    discounted: np.ndarray
    cumulative_discounted: np.ndarray
    discount_rate: float | np.ndarray
    nominal_rate: float | np.ndarray
    inflation: float | np.ndarray
    tax_rate: float | np.ndarray
    tax_losses: str

    @property
    def batch_shape(self) -> tuple[int, ...]:
        """Shape of the batch (``()`` for a single case)."""
        return self.net.shape[:-1]

    @property
    def npv(self):
        """Net present value at the real discount rate, USD of the cost year [USD]."""
        return _out(self.cumulative_discounted[..., -1])

    def to_frame(self, member=None):
        """The table of one case as a pandas DataFrame indexed by year.

        Parameters
        ----------
        member : int or tuple of int, optional
            Which batch member; required unless the batch shape is ``()`` [-]

        Returns
        -------
        pandas.DataFrame
            Index ``year``; a ``phase`` column ("construction"/"operation") and the columns
            ``"capex [USD]"``, ``"revenue [USD]"``, ..., ``"cumulative discounted [USD]"``
        """
        import pandas as pd

        if member is None:
            if self.batch_shape != ():
                raise InputError(
                    f"member is required for a batch of shape {self.batch_shape}: pass the index "
                    "of the case to tabulate"
                )
            sel = ()
        else:
            sel = member if isinstance(member, tuple) else (member,)
            try:
                one = np.empty(self.batch_shape)[sel].shape == ()
            except (IndexError, TypeError):
                one = False
            if not one:
                raise InputError(
                    f"member {member!r} does not pick one case of the batch of shape "
                    f"{self.batch_shape}: give one integer per batch axis"
                )
        n = self.year.size
        data = {
            "phase": np.where(self.year < self.n_construction, "construction", "operation"),
        }
        for col, attr in _COLUMNS:
            a = np.broadcast_to(getattr(self, attr), (*self.batch_shape, n))
            data[col] = np.asarray(a[sel], dtype=float)
        return pd.DataFrame(data, index=pd.Index(self.year, name="year"))


def cash_flows(
    fixed_capital,
    revenue,
    operating_cost,
    *,
    discount_rate,
    tax_rate,
    plant_life,
    construction_schedule=(1.0,),
    working_capital=0.0,
    fixed_operating_cost=0.0,
    ramp_up=(),
    salvage_value=0.0,
    depreciation: str = "straight_line",
    depreciation_life=None,
    tax_losses: str = "credit",
    inflation=0.0,
) -> CashFlows:
    """Annual discounted cash-flow table of a plant, vectorised over a batch of cases.

    Timeline (n_c = len(construction_schedule), L = plant_life, n_years = n_c + L): the fixed
    capital is spent at years 0..n_c-1 by ``construction_schedule``; the working capital goes in at
    the end of construction (year n_c-1) and comes back, with the salvage value, at the end of the
    last operating year (n_years-1); operating years are n_c..n_years-1, the first
    ``len(ramp_up)`` of them at the utilisation given there, the rest at 1. Depreciation starts
    in the first operating year on the nominal fixed capital; whatever is not yet deducted by the
    last operating year is deducted then. The salvage value is taxed as a gain (the book value is
    then zero). Taxes are paid in the year the income is earned.

    Parameters
    ----------
    fixed_capital : float or array_like
        Fixed capital investment, >= 0 (real, cost-year money) [USD]
    revenue : float or array_like
        Sales revenue per year at full utilisation, >= 0 (real) [USD/yr]
    operating_cost : float or array_like
        Operating cost per year at full utilisation that scales with utilisation (raw materials,
        utilities), >= 0 (real) [USD/yr]
    discount_rate : float or array_like
        Real discount rate, > -1; the nominal rate follows from the Fisher relation [1/yr]
    tax_rate : float or array_like
        Income tax rate, in [0, 1) [-]
    plant_life : int
        Operating years, a whole number >= 1 [yr]
    construction_schedule : sequence of float
        Fraction of the fixed capital spent in each construction year, each in [0, 1], summing
        to 1; default ``(1.0,)`` (all at t = 0) [-]
    working_capital : float or array_like
        Working capital, >= 0 (real); constant in real terms [USD]
    fixed_operating_cost : float or array_like
        Operating cost per year that does not scale with utilisation (labour, maintenance,
        insurance), >= 0 (real), paid in every operating year [USD/yr]
    ramp_up : sequence of float
        Capacity utilisation of the first operating years, each in [0, 1], at most
        ``plant_life`` entries; default none (full utilisation from the start) [-]
    salvage_value : float or array_like
        Value recovered at the end of the last operating year (real); negative for a net
        decommissioning cost [USD]
    depreciation : {"straight_line", "macrs"}
        Depreciation method (see :func:`depreciation_schedule`) [-]
    depreciation_life : float, optional
        Recovery period; default ``plant_life`` for straight line, required for MACRS [yr]
    tax_losses : {"credit", "forfeit"}
        Negative taxable income: ``"credit"`` (default) gives a negative tax, i.e. the loss
        offsets the owner's other taxable income in the same year (common practice in project
        screening; keeps NPV linear in the product price); ``"forfeit"`` sets the tax to zero
        and the loss is lost (conservative). Loss carry-forward is not modelled [-]
    inflation : float or array_like
        General inflation, > -1, applied to every money input from t = 0 [1/yr]

    Returns
    -------
    CashFlows
        Arrays of shape ``batch + (n_years,)`` where ``batch`` is the broadcast shape of the
        array inputs; ``.net`` is the plain (B, n_years) form for optimisers, ``.npv`` the NPV,
        ``.to_frame()`` the pandas table of one case

    Raises
    ------
    InputError
        For NaN anywhere, negative money where a cost or capital is expected, ``tax_rate``
        outside [0, 1), rates <= -1, a non-whole or non-positive ``plant_life``, a
        ``construction_schedule`` that does not sum to 1, a ``ramp_up`` longer than the plant
        life, unknown method or policy names, or shapes that do not broadcast.
    """
    fci = check_positive("fixed_capital", fixed_capital, unit="USD", allow_zero=True)
    rev = check_positive("revenue", revenue, unit="USD/yr", allow_zero=True)
    opx = check_positive("operating_cost", operating_cost, unit="USD/yr", allow_zero=True)
    fix = check_positive(
        "fixed_operating_cost", fixed_operating_cost, unit="USD/yr", allow_zero=True
    )
    wc = check_positive("working_capital", working_capital, unit="USD", allow_zero=True)
    sal = check_finite("salvage_value", salvage_value)
    i_r = _rate("discount_rate", discount_rate)
    f = _rate("inflation", inflation)
    tau = check_range("tax_rate", tax_rate, 0.0, 1.0, inclusive=(True, False))
    life = _whole_years("plant_life", plant_life)
    sched = _fraction_vector("construction_schedule", construction_schedule, must_sum_to_one=True)
    ramp = _fraction_vector("ramp_up", ramp_up, must_sum_to_one=False)
    if ramp.size > life:
        raise InputError(
            f"ramp_up has {ramp.size} years but plant_life is {life} [yr]; give at most {life}"
        )
    _choice("tax_losses", tax_losses, TAX_LOSS_POLICIES)
    _choice("depreciation", depreciation, DEPRECIATION_METHODS)
    if depreciation_life is None:
        if depreciation == "macrs":
            raise InputError(
                "depreciation_life is required for depreciation='macrs'; choose one of "
                f"{', '.join(map(str, MACRS_PERIODS))} [yr]"
            )
        depreciation_life = life
    if as_float_array("depreciation_life", depreciation_life).ndim != 0:
        raise InputError(
            f"depreciation_life must be a single number [yr], got {depreciation_life!r}"
        )
    dep_frac = _depreciation(
        depreciation, depreciation_life, life, "depreciation", "depreciation_life"
    )

    batch = _batch_shape(
        fixed_capital=fci.shape,
        revenue=rev.shape,
        operating_cost=opx.shape,
        fixed_operating_cost=fix.shape,
        working_capital=wc.shape,
        salvage_value=sal.shape,
        discount_rate=i_r.shape,
        inflation=f.shape,
        tax_rate=tau.shape,
    )

    def col(a):  # batch-shaped input as batch + (1,)
        return np.broadcast_to(a, batch)[..., None]

    n_c = sched.size
    n = n_c + life
    t = np.arange(n)
    operating = t >= n_c
    util = operating.astype(float)
    util[n_c : n_c + ramp.size] = ramp
    spend = np.zeros(n)
    spend[:n_c] = sched
    dep_year = np.zeros(n)
    dep_year[n_c:] = dep_frac
    wc_in = (t == n_c - 1).astype(float)
    end = (t == n - 1).astype(float)

    with np.errstate(over="ignore", invalid="ignore"):
        index = np.power(1.0 + col(f), t)  # batch + (n,)
        disc = np.power((1.0 + col(i_r)) * (1.0 + col(f)), -t.astype(float))
    if not (np.all(np.isfinite(index)) and np.all(np.isfinite(disc))):
        raise InputError(
            f"discount_rate and inflation must be > -1 [1/yr] and not so close to -1 that "
            f"(1 + rate)**{n} overflows"
        )

    capex = -col(fci) * spend * index
    basis = -capex.sum(axis=-1, keepdims=True)
    dep = basis * dep_year
    wc_flow = col(wc) * index * (end - wc_in)
    revenue_t = col(rev) * util * index
    opex_t = -col(opx) * util * index
    fixed_t = -col(fix) * operating * index
    salvage_t = col(sal) * end * index
    taxable = revenue_t + opex_t + fixed_t - dep + salvage_t
    if tax_losses == "credit":
        tax = -col(tau) * taxable
    else:
        tax = -col(tau) * np.maximum(taxable, 0.0)
    # + 0.0 turns the -0.0 of sign flips into 0.0 (tidier tables)
    capex, opex_t, fixed_t, tax = capex + 0.0, opex_t + 0.0, fixed_t + 0.0, tax + 0.0
    net = capex + wc_flow + revenue_t + opex_t + fixed_t + salvage_t + tax
    discounted = net * disc
    cumulative = np.cumsum(discounted, axis=-1)
    if not np.all(np.isfinite(cumulative)):
        finite_result("the cash-flow table", cumulative, fixed_capital=fci, revenue=rev,
                      operating_cost=opx, fixed_operating_cost=fix, working_capital=wc,
                      salvage_value=sal, discount_rate=i_r, inflation=f)

    full = (*batch, n)
    with np.errstate(over="ignore", invalid="ignore"):
        i_n = (1.0 + np.broadcast_to(i_r, batch)) * (1.0 + np.broadcast_to(f, batch)) - 1.0
    finite_result("nominal discount rate", i_n, discount_rate=i_r, inflation=f)
    return CashFlows(
        year=t,
        n_construction=n_c,
        plant_life=life,
        utilisation=util,
        inflation_index=np.broadcast_to(index, full).copy(),
        capex=np.broadcast_to(capex, full).copy(),
        working_capital=np.broadcast_to(wc_flow, full).copy(),
        revenue=np.broadcast_to(revenue_t, full).copy(),
        operating_cost=np.broadcast_to(opex_t, full).copy(),
        fixed_operating_cost=np.broadcast_to(fixed_t, full).copy(),
        salvage=np.broadcast_to(salvage_t, full).copy(),
        depreciation=np.broadcast_to(dep, full).copy(),
        taxable_income=np.broadcast_to(taxable, full).copy(),
        tax=np.broadcast_to(tax, full).copy(),
        net=np.broadcast_to(net, full).copy(),
        discount_factor=np.broadcast_to(disc, full).copy(),
        discounted=np.broadcast_to(discounted, full).copy(),
        cumulative_discounted=cumulative,
        discount_rate=_out(np.broadcast_to(i_r, batch)),
        nominal_rate=_out(i_n),
        inflation=_out(np.broadcast_to(f, batch)),
        tax_rate=_out(np.broadcast_to(tau, batch)),
        tax_losses=tax_losses,
    )


def cash_flow_table(*args, **kwargs):
    """The cash-flow table of a single case as a pandas DataFrame.

    Takes exactly the arguments of :func:`cash_flows`, all scalar, and returns
    ``cash_flows(...).to_frame()``: index ``year``, columns ``phase``,
    ``"capacity utilisation [-]"``, ``"inflation index [-]"``, ``"capex [USD]"``,
    ``"working capital [USD]"``, ``"revenue [USD]"``, ``"operating cost [USD]"``,
    ``"fixed operating cost [USD]"``, ``"salvage [USD]"``, ``"depreciation [USD]"``,
    ``"taxable income [USD]"``, ``"tax [USD]"``, ``"net cash flow [USD]"``,
    ``"discount factor [-]"``, ``"discounted cash flow [USD]"``, ``"cumulative discounted [USD]"``
    (nominal, signed money; see :class:`CashFlows`).

    Returns
    -------
    pandas.DataFrame
        One row per year [USD]

    Raises
    ------
    InputError
        As :func:`cash_flows`, and if the inputs describe a batch (use :func:`cash_flows`).
    """
    cf = cash_flows(*args, **kwargs)
    if cf.batch_shape != ():
        raise InputError(
            f"cash_flow_table is for a single case but the inputs form a batch of shape "
            f"{cf.batch_shape}; use cash_flows(...) and .to_frame(member)"
        )
    return cf.to_frame()


# --------------------------------------------------------------------------------------------
# metrics and levelised cost


@dataclass(frozen=True, eq=False)
class Metrics:
    """Profitability measures of a batch of cash-flow tables (each batch-shaped).

    Attributes
    ----------
    npv : float or numpy.ndarray
        Net present value at the real discount rate, USD of the cost year at t = 0 [USD]
    irr : float or numpy.ndarray
        Real IRR, ``(1 + irr_nominal)/(1 + inflation) - 1``, per the IRR policy given to
        :func:`metrics`; NaN only where ``irr_count != 1`` and the policy asked for NaN [1/yr]
    irr_nominal : float or numpy.ndarray
        IRR of the nominal net cash flows [1/yr]
    irr_count : int or numpy.ndarray
        Number of IRRs of each case: 0 none, 1 unique, >= 2 several [-]
    discounted_payback : float or numpy.ndarray
        Years from t = 0 (the first construction payment) until the cumulative discounted cash
        flow stays >= 0; ``inf`` if never within the plant life (see
        :func:`discounted_payback`) [yr]
    lcop : float or numpy.ndarray or None
        Levelised cost of product: the constant real product price that makes NPV zero, or None
        if no product quantity was given [USD per unit of product]
    """

    npv: float | np.ndarray
    irr: float | np.ndarray
    irr_nominal: float | np.ndarray
    irr_count: int | np.ndarray
    discounted_payback: float | np.ndarray
    lcop: float | np.ndarray | None

    def as_dict(self) -> dict:
        """The fields as a plain dict."""
        return {k: getattr(self, k) for k in self.__dataclass_fields__}


def _npv_at_price(p, a, b, k, v, tau, forfeit):
    """NPV at price p (batch) from a, b, k, v (batch + (n,)) and tax rate tau (batch)."""
    taxable = p[..., None] * a + b
    if forfeit:
        taxable = np.maximum(taxable, 0.0)
    return np.sum(v * (p[..., None] * a + k - tau[..., None] * taxable), axis=-1)


def _lcop(cf: CashFlows, quantity: np.ndarray) -> np.ndarray:
    batch = cf.batch_shape
    q = np.broadcast_to(quantity, batch)[..., None]
    a = q * cf.utilisation * cf.inflation_index  # nominal revenue per unit price
    b = cf.taxable_income - cf.revenue  # taxable income without revenue
    k = cf.net - cf.revenue - cf.tax  # pre-tax cash flow without revenue
    v = cf.discount_factor
    tau = np.broadcast_to(np.asarray(cf.tax_rate, dtype=float), batch)
    pv_units = np.sum(v * a, axis=-1)
    if np.any(pv_units <= 0.0):
        raise InputError(
            "no product is ever sold: product_quantity must be > 0 and ramp_up must not be 0 for "
            "the whole plant_life, or no levelised cost exists"
        )
    if cf.tax_losses == "credit":
        # NPV(p) = sum v (k - tau b) + p (1 - tau) sum v a: linear
        return -np.sum(v * (k - tau[..., None] * b), axis=-1) / ((1.0 - tau) * pv_units)
    # "forfeit": NPV(p) is continuous, piecewise linear and strictly increasing in p, with slope
    # between (1 - tau) S and S (S = pv_units) and breaks where a year's taxable income crosses
    # zero. Bracket the root with two linear bounds, then solve exactly on the right piece.
    forfeit_off_sales = np.sum(v * np.where(a > 0.0, 0.0, np.maximum(b, 0.0)), axis=-1)
    p_a = -(np.sum(v * k, axis=-1) - tau * forfeit_off_sales) / pv_units  # NPV(p_a) <= 0
    n_a = _npv_at_price(p_a, a, b, k, v, tau, True)
    lo = p_a - n_a / pv_units  # NPV(lo) <= 0 because the slope is at most S
    hi = p_a - n_a / ((1.0 - tau) * pv_units)  # NPV(hi) >= 0 because it is at least (1 - tau) S
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        breaks = np.where(a > 0.0, -b / a, lo[..., None])
    cand = np.concatenate(
        [lo[..., None], np.clip(breaks, lo[..., None], hi[..., None]), hi[..., None]], axis=-1
    )
    vals = np.stack(
        [_npv_at_price(cand[..., j], a, b, k, v, tau, True) for j in range(cand.shape[-1])],
        axis=-1,
    )
    below = vals <= 0.0
    above = vals >= 0.0
    j_lo = np.argmax(np.where(below, cand, -np.inf), axis=-1)[..., None]
    j_hi = np.argmin(np.where(above, cand, np.inf), axis=-1)[..., None]
    p_lo = np.take_along_axis(cand, j_lo, -1)[..., 0]
    p_hi = np.take_along_axis(cand, j_hi, -1)[..., 0]
    n_lo = np.take_along_axis(vals, j_lo, -1)[..., 0]
    n_hi = np.take_along_axis(vals, j_hi, -1)[..., 0]
    # rounding can leave lo a hair above zero or hi a hair below: extrapolate from the end then
    has_lo, has_hi = below.any(axis=-1), above.any(axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        inner = np.where(p_hi > p_lo, p_lo - n_lo * (p_hi - p_lo) / (n_hi - n_lo), p_lo)
        out = np.where(
            ~has_lo,
            p_hi - n_hi / pv_units,
            np.where(~has_hi, p_lo - n_lo / ((1.0 - tau) * pv_units), inner),
        )
    return out


def metrics(
    cf: CashFlows,
    product_quantity=None,
    *,
    if_none: str = "nan",
    if_multiple: str = "nan",
) -> Metrics:
    """NPV, IRR, discounted payback and levelised cost of product of a cash-flow table.

    Parameters
    ----------
    cf : CashFlows
        From :func:`cash_flows` (a single case or a batch) [-]
    product_quantity : float or array_like, optional
        Product sold per year at full utilisation (after ramp-up), > 0, in any unit of quantity
        (kg, t, mol); needed for ``lcop`` [unit/yr]
    if_none, if_multiple : str
        IRR policies as in :func:`irr`; the defaults here return NaN where the IRR is missing or
        ambiguous, which ``irr_count`` then states (0 or >= 2), so a batch is never stopped by one
        odd case [-]

    Returns
    -------
    Metrics
        Batch-shaped fields (floats for a single case); ``lcop`` in USD of the cost year per unit
        of ``product_quantity`` [USD/unit]

    Raises
    ------
    InputError
        ``product_quantity`` not > 0 or NaN; a policy unknown; NoUniqueIRRError if a policy is
        ``"raise"`` and the IRR is missing or ambiguous.

    Notes
    -----
    The levelised cost of product is the constant real price ``p`` at which NPV = 0 when the
    revenue is ``p x product_quantity x utilisation`` (the ``revenue`` given to
    :func:`cash_flows` is ignored for it, so by-product sales included there do not lower it). With
    ``tax_losses="credit"`` NPV is linear in ``p`` and ``p = -NPV(0) / dNPV/dp`` exactly. With
    ``"forfeit"`` NPV is continuous, piecewise linear and strictly increasing in ``p`` (slope
    between ``(1 - tax_rate)`` and 1 times the present value of the units sold), with breaks
    where a year's taxable income crosses zero; the breaks are evaluated and the root is solved
    exactly on its piece, again without iteration.
    """
    if not isinstance(cf, CashFlows):
        raise InputError(f"cf must be a CashFlows from cash_flows(), got {type(cf).__name__}")
    res = irr_all(cf.net)
    irr_n = _select_irr(res, if_none, if_multiple, what="the net cash flows")
    infl = np.broadcast_to(np.asarray(cf.inflation, dtype=float), cf.batch_shape)
    irr_r = (1.0 + irr_n) / (1.0 + infl) - 1.0
    pay = discounted_payback(cf.nominal_rate, cf.net)
    lcop = None
    if product_quantity is not None:
        q = check_positive("product_quantity", product_quantity, unit="unit/yr")
        try:
            q = np.broadcast_to(q, cf.batch_shape)
        except ValueError:
            raise InputError(
                f"product_quantity of shape {q.shape} does not fit the batch {cf.batch_shape}"
            ) from None
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            lc = _lcop(cf, q)
        lcop = _out(finite_result("levelised cost of product", lc, product_quantity=q,
                                  cash_flows=cf.net))
    return Metrics(
        npv=cf.npv,
        irr=_out(irr_r),
        irr_nominal=_out(irr_n),
        irr_count=res.count,
        discounted_payback=pay,
        lcop=lcop,
    )
