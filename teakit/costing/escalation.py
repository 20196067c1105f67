"""Cost indices and scaling: CEPCI look-up, escalation between cost years, the six-tenths rule.

Money in teakit is in US dollars of a stated cost year, identified by its Chemical Engineering
Plant Cost Index (CEPCI). The annual index values are in ``data/cepci.csv`` (each row says whether
it was read from the published annual values or recalled from memory). Turton's Appendix A prices
are at CEPCI :data:`TURTON_CEPCI_BASIS` = 397, the May-September 2001 average (Turton, Bailie,
Whiting, Shaeiwitz & Bhattacharyya, *Analysis, Synthesis, and Design of Chemical Processes*, 4th
ed., 2012, Appendix A); that is close to, but not the same as, the 2001 annual average.

Escalation between cost years follows the cost-index ratio

.. math:: C_2 = C_1 \\, \\frac{I_2}{I_1}

(Turton 4th ed., Ch. 7, cost indices). Scaling with capacity uses the power law (the "six-tenths
rule" for an exponent of 0.6, common practice; Turton 4th ed., Ch. 7, effect of capacity)

.. math:: C = C_\\mathrm{ref} \\left(\\frac{A}{A_\\mathrm{ref}}\\right)^{n}

Its range follows teakit's out-of-range policy (:mod:`teakit.costing._range`): a capacity ratio in
[0.1, 10] is used silently, [0.01, 0.1) or (10, 100] warns, further out raises.
"""

from __future__ import annotations

import functools

import numpy as np

from teakit.costing._range import apply_range_policy
from teakit.data import load_table
from teakit.errors import InputError
from teakit.validation import (
    broadcast_arrays,
    check_finite,
    check_positive,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "TURTON_CEPCI_BASIS",
    "capacity_scale",
    "cepci",
    "cepci_years",
    "escalate",
]

#: CEPCI basis of Turton 4th ed. Appendix A purchased costs (May-Sept 2001 average) [-].
TURTON_CEPCI_BASIS = 397.0

# A number in this closed interval with no fractional part is read as a year, anything else as
# an index value. The CEPCI (1957-59 = 100) has stayed below 1000 throughout its history.
_YEAR_MIN, _YEAR_MAX = 1900, 2100



@functools.cache
def _cepci_table():
    t = load_table("cepci").sort_values("year")
    return t["year"].to_numpy(dtype=int), t["cepci"].to_numpy(dtype=float)


def cepci_years() -> list[int]:
    """Years with an annual CEPCI value in ``data/cepci.csv``.

    Returns
    -------
    list of int
        Available years, ascending [year].
    """
    return [int(y) for y in _cepci_table()[0]]


def cepci(year):
    """Annual CEPCI of a year, exactly as tabulated (no interpolation).

    Parameters
    ----------
    year : int or array_like of int
        Calendar year(s); each must be a year of ``data/cepci.csv`` [year].

    Returns
    -------
    float or numpy.ndarray
        The annual CEPCI (1957-1959 = 100) [-].

    Raises
    ------
    InputError
        If a year is not a whole number or is not in the table; the message lists the
        available years.
    """
    y = check_finite("year", year)
    years, values = _cepci_table()
    whole = y == np.round(y)
    yi = np.where(whole, np.round(y), -1).astype(int)
    pos = np.clip(np.searchsorted(years, yi), 0, years.size - 1)
    found = whole & (years[pos] == yi)
    if not found.all():
        bad = y.ravel()[np.flatnonzero(~found)[0]]
        raise InputError(
            f"year = {bad:g} has no annual CEPCI in data/cepci.csv; available years: "
            + ", ".join(str(v) for v in years)
        )
    return scalar_or_array(values[pos])


def _as_index(name: str, value) -> np.ndarray:
    """An index value, or the CEPCI of a year (whole numbers in [1900, 2100] are years)."""
    v = check_positive(name, value)
    is_year = (v >= _YEAR_MIN) & (v <= _YEAR_MAX) & (v == np.round(v))
    if not is_year.any():
        return v
    idx = v.copy()
    idx[is_year] = np.asarray(cepci(v[is_year]), dtype=float)
    return idx


def escalate(cost, from_index_or_year, to_index_or_year):
    """Escalate a cost between cost years by the CEPCI ratio.

    .. math:: C_\\mathrm{to} = C_\\mathrm{from} \\, I_\\mathrm{to} / I_\\mathrm{from}

    Turton 4th ed. (2012), Ch. 7 (cost indices).

    Parameters
    ----------
    cost : float or array_like
        Cost in money of the ``from`` basis [USD of the from basis].
    from_index_or_year : float, int or array_like
        CEPCI of the cost's basis, or its year: a whole number in [1900, 2100] is a year looked up
        with :func:`cepci`, any other positive number is an index value (e.g.
        :data:`TURTON_CEPCI_BASIS`) [-] or [year].
    to_index_or_year : float, int or array_like
        CEPCI or year of the target basis, same rule [-] or [year].

    Returns
    -------
    float or numpy.ndarray
        The cost in money of the target basis; broadcasts over the three arguments
        [USD of the to basis].

    Raises
    ------
    InputError
        If the cost is not finite, an index is not positive or a year is not tabulated.
    """
    c = check_finite("cost", cost)
    i_from = _as_index("from_index_or_year", from_index_or_year)
    i_to = _as_index("to_index_or_year", to_index_or_year)
    c, i_from, i_to = broadcast_arrays(cost=c, from_index_or_year=i_from, to_index_or_year=i_to)
    with np.errstate(over="ignore", invalid="ignore"):
        out = c * i_to / i_from
    return scalar_or_array(finite_result("escalated cost", out, cost=c,
                                         from_index_or_year=i_from, to_index_or_year=i_to))


def capacity_scale(cost_ref, capacity_ref, capacity, exponent=0.6):
    """Scale a reference cost to another capacity with a power law (six-tenths rule).

    .. math:: C = C_\\mathrm{ref} \\, (A / A_\\mathrm{ref})^{n}

    Turton 4th ed. (2012), Ch. 7 (effect of capacity); n = 0.6 is the common-practice default. The ratio
    ``A / A_ref`` is held to [0.1, 10] by the policy of :mod:`teakit.costing._range`
    (RangeWarning in [0.01, 0.1) and (10, 100], OutOfRangeError beyond).

    Parameters
    ----------
    cost_ref : float or array_like
        Cost at the reference capacity [USD of its cost year].
    capacity_ref : float or array_like
        Reference capacity, any unit [same unit as ``capacity``].
    capacity : float or array_like
        Capacity to cost, same unit as ``capacity_ref`` [same unit as ``capacity_ref``].
    exponent : float or array_like, optional
        Cost-capacity exponent n, in (0, 1.5]; default 0.6 (common practice) [-].

    Returns
    -------
    float or numpy.ndarray
        Cost at ``capacity``, in money of the reference's cost year [USD of that year].

    Raises
    ------
    InputError
        If a capacity is not positive or the exponent is outside (0, 1.5].
    OutOfRangeError
        If the capacity ratio is outside [0.01, 100].
    """
    c = check_finite("cost_ref", cost_ref)
    a_ref = check_positive("capacity_ref", capacity_ref)
    a = check_positive("capacity", capacity)
    n = check_positive("exponent", exponent)
    c, a_ref, a, n = broadcast_arrays(cost_ref=c, capacity_ref=a_ref, capacity=a, exponent=n)
    if (n > 1.5).any():
        raise InputError(f"exponent must lie in (0, 1.5], got {float(np.max(n)):g}")
    ratio = a / a_ref
    apply_range_policy(
        "capacity ratio capacity/capacity_ref",
        ratio,
        0.1,
        10.0,
        "(-)",
        "the six-tenths rule (common practice, about a factor of 10 either way)",
    )
    with np.errstate(over="ignore", invalid="ignore"):
        out = c * ratio**n
    return scalar_or_array(finite_result("scaled cost", out, cost_ref=c, capacity_ref=a_ref,
                                         capacity=a, exponent=n))
