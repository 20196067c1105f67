"""Discounted cash flow, IRR, depreciation, cash-flow tables and LCOP, checked against outside sources.

Sources used here (named again beside each check):
- numpy-financial 1.0 (``npf.npv``, ``npf.irr``, ``npf.pmt``), a test-only reference library; and
  ``numpy.roots``, the root finder ``npf.irr`` is built on.
- Textbook closed forms: the present worth of an ordinary annuity ``(1 - (1 + i)**-n) / i`` (sum
  of a geometric series) and the capital recovery factor ``i (1 + i)**n / ((1 + i)**n - 1)``.
- U.S. IRS Publication 946, Appendix A, Table A-1 (MACRS, GDS, half-year convention).
- Independent recomputations written out in this file (MACRS switch rule, a year-by-year
  cash-flow table, the quadratic formula, levelised-cost closed forms derived by hand).
"""

import math

import numpy as np
import numpy_financial as npf
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from teakit import finance as F
from teakit.data import load_table
from teakit.errors import InputError

# --------------------------------------------------------------------------------------------
# NPV

NPV_CASES = [
    [-100.0, 39.0, 59.0, 55.0, 20.0],
    [-40_000.0, 5_000.0, 8_000.0, 12_000.0, 30_000.0],
    [-100.0, 100.0, 0.0, -7.0],
    [0.0, 0.0, -250.0, 80.0, 80.0, 80.0, 80.0, -30.0],
    [12.5],
]


@pytest.mark.parametrize("cash", NPV_CASES)
@pytest.mark.parametrize("rate", [-0.5, -0.05, 0.0, 0.08, 0.3, 2.0])
def test_npv_matches_numpy_financial(cash, rate):
    # Reference: numpy_financial.npv (first cash flow at t = 0, the same convention).
    assert F.npv(rate, cash) == pytest.approx(npf.npv(rate, cash), rel=1e-12, abs=1e-9)


def test_npv_batch_and_rate_broadcasting_match_numpy_financial():
    # Reference: numpy_financial.npv, called one case at a time.
    rng = np.random.default_rng(1)
    cash = rng.normal(10.0, 30.0, size=(6, 12))
    rates = rng.uniform(-0.3, 0.5, size=6)
    got = F.npv(rates, cash)
    assert isinstance(got, np.ndarray) and got.shape == (6,)
    want = [npf.npv(r, c) for r, c in zip(rates, cash, strict=True)]
    np.testing.assert_allclose(got, want, rtol=1e-12)
    # one cash-flow vector, many rates: an NPV profile
    prof = F.npv(rates, cash[0])
    np.testing.assert_allclose(prof, [npf.npv(r, cash[0]) for r in rates], rtol=1e-12)


@pytest.mark.parametrize("i,n", [(0.08, 20), (0.15, 5), (-0.02, 30), (0.4, 3)])
def test_npv_of_annuity_matches_closed_form(i, n):
    # Textbook closed form: present worth of an ordinary annuity A over n years,
    # A (1 - (1 + i)**-n) / i, minus the investment P at t = 0.
    P, A = 1000.0, 137.0
    closed = -P + A * (1.0 - (1.0 + i) ** -n) / i
    assert F.npv(i, [-P] + [A] * n) == pytest.approx(closed, rel=1e-12)


def test_scalar_in_scalar_out_array_in_array_out():
    assert isinstance(F.npv(0.1, [-1.0, 2.0]), float)
    assert isinstance(F.irr([-1.0, 2.0]), float)
    assert isinstance(F.discounted_payback(0.1, [-1.0, 2.0]), float)
    assert isinstance(F.capital_recovery_factor(0.1, 10), float)
    assert isinstance(F.annualised_capital(1e6, 0.1, 10), float)
    assert F.npv(0.1, [[-1.0, 2.0]]).shape == (1,)
    assert F.irr(np.ones((2, 3, 4)) * [-3.0, 1.0, 1.0, 2.0]).shape == (2, 3)
    assert F.capital_recovery_factor([0.1, 0.2], 10).shape == (2,)
    assert F.discounted_payback([0.1, 0.2], [-1.0, 2.0]).shape == (2,)


# --------------------------------------------------------------------------------------------
# IRR

# One sign change: a unique IRR (Descartes' rule of signs). The first five are the examples of
# the numpy-financial documentation.
UNIQUE_IRR = [
    [-100.0, 39.0, 59.0, 55.0, 20.0],
    [-100.0, 0.0, 0.0, 74.0],
    [-100.0, 100.0, 0.0, 7.0],
    [0.0, 0.0, -100.0, 50.0, 60.0, 0.0, 0.0],
    [-1e6, 1.0, 1.0],
    [-50.0, -50.0, -10.0, 30.0, 40.0, 50.0, 60.0, 60.0, 60.0, 60.0, 60.0, 60.0, 60.0],
    [100.0, -30.0, -30.0, -30.0, -30.0],  # a loan: one sign change the other way
]
# Several sign changes and several roots.
MULTIPLE_IRR = [
    [-100.0, 100.0, 0.0, -7.0],  # numpy-financial documentation example
    [-5.0, 10.5, 1.0, -8.0, 1.0],  # numpy-financial documentation example
    [-100.0, 230.0, -132.0],
    [-100.0] + [30.0] * 20 + [-50.0],  # a plant with a decommissioning cost
]
# No IRR: no sign change, or sign changes but no real root > -1.
NO_IRR = [
    [100.0, 50.0, 20.0],
    [-100.0, -1.0, 0.0],
    [0.0, 0.0, 0.0],
    [1.0, -1.0, 1.0],  # 1 - x + x**2 > 0: discriminant 1 - 4 < 0
    [5.0],
]


def _roots_reference(cash):
    """All real IRRs > -1 from numpy.roots (the method of numpy_financial.irr), ascending."""
    r = np.roots(np.asarray(cash, dtype=float)[::-1])
    real = r[(np.abs(r.imag) <= 1e-9 * np.abs(r)) & (r.real > 0)].real
    return np.sort(1.0 / real - 1.0)


@pytest.mark.parametrize("cash", UNIQUE_IRR)
def test_unique_irr_matches_numpy_financial(cash):
    # Reference: numpy_financial.irr; and the IRR must make npv zero.
    res = F.irr_all(cash)
    assert res.count == 1 and res.status == "unique"
    r = F.irr(cash)
    assert r == pytest.approx(npf.irr(cash), rel=1e-9, abs=1e-12)
    scale = np.sum(np.abs(cash) * (1.0 + r) ** -np.arange(len(cash)))
    assert abs(npf.npv(r, cash)) <= 1e-10 * scale


@pytest.mark.parametrize("cash", MULTIPLE_IRR)
def test_multiple_irr_roots_and_policies(cash):
    # Reference: the real positive roots of numpy.roots (as numpy_financial.irr computes them);
    # numpy_financial.irr returns the one nearest zero.
    res = F.irr_all(cash)
    ref = _roots_reference(cash)
    assert ref.size >= 2
    assert res.count == ref.size and res.status == "multiple"
    np.testing.assert_allclose(res.roots[: res.count], ref, rtol=1e-8, atol=1e-10)
    assert F.irr(cash, if_multiple="nearest_zero") == pytest.approx(npf.irr(cash), rel=1e-8)
    assert math.isnan(F.irr(cash, if_multiple="nan"))
    with pytest.raises(F.NoUniqueIRRError, match="several IRRs") as err:
        F.irr(cash)
    assert list(err.value.counts) == [ref.size]


def test_two_roots_of_a_quadratic_are_exact():
    # Quadratic formula: -100 y**2 + 230 y - 132 = 0 with y = 1 + r has y = (230 +- 10)/200,
    # i.e. r = 0.1 and r = 0.2.
    y = (230.0 + np.array([-10.0, 10.0])) / 200.0
    np.testing.assert_allclose(F.irr_all([-100.0, 230.0, -132.0]).roots, y - 1.0, rtol=1e-12)


def test_close_roots_are_not_missed():
    # -100 y**2 + 200.0001 y - 100.0001 = 0: y = 1 and y = 1.000001 (quadratic formula), two roots
    # far closer together than the scanning grid step.
    y = np.array([1.0, 1.000001])
    cash = [-100.0, 100.0 * (y[0] + y[1]), -100.0 * y[0] * y[1]]
    res = F.irr_all(cash)
    assert res.count == 2
    np.testing.assert_allclose(res.roots, y - 1.0, atol=1e-9)


def test_touching_root_is_reported_once():
    # -1 + 2x - x**2 = -(1 - x)**2: the NPV touches zero at r = 0 only (a double root).
    res = F.irr_all([-1.0, 2.0, -1.0])
    assert res.count == 1 and abs(res.roots[0]) < 1e-6


@pytest.mark.parametrize("cash", NO_IRR)
def test_no_irr(cash):
    # Reference: numpy_financial.irr returns NaN (no real positive root of numpy.roots).
    assert math.isnan(npf.irr(np.asarray(cash, dtype=float)))
    res = F.irr_all(cash)
    assert res.count == 0 and res.status == "none" and np.isnan(res.roots).all()
    assert math.isnan(F.irr(cash, if_none="nan"))
    with pytest.raises(F.NoUniqueIRRError, match="no IRR"):
        F.irr(cash)


def test_irr_batch_equals_one_by_one_and_flags_members():
    cases = UNIQUE_IRR[:3] + [NO_IRR[0][:3] + [0.0], MULTIPLE_IRR[0]]
    width = max(len(c) for c in cases)
    batch = np.array([c + [0.0] * (width - len(c)) for c in cases])  # trailing zeros: same IRR
    res = F.irr_all(batch)
    for k, c in enumerate(cases):
        one = F.irr_all(c)
        assert res.count[k] == one.count
        np.testing.assert_allclose(res.roots[k, : one.count], one.roots[: one.count], rtol=1e-12)
    got = F.irr(batch, if_none="nan", if_multiple="nearest_zero")
    np.testing.assert_allclose(got[:3], [npf.irr(c) for c in cases[:3]], rtol=1e-9)
    assert np.isnan(got[3]) and got[4] == pytest.approx(npf.irr(cases[4]), rel=1e-8)
    with pytest.raises(F.NoUniqueIRRError, match="batch members") as err:
        F.irr(batch)
    assert list(err.value.members) == [3]


def test_irr_large_batch_vectorised_against_numpy_roots():
    # Reference: numpy.roots one member at a time; 300 random plants with a decommissioning cost.
    rng = np.random.default_rng(7)
    cash = rng.uniform(5.0, 30.0, size=(300, 25))
    cash[:, 0] = -rng.uniform(50.0, 300.0, 300)
    cash[:, -1] = -rng.uniform(10.0, 200.0, 300)
    res = F.irr_all(cash)
    for k in range(300):
        ref = _roots_reference(cash[k])
        assert res.count[k] == ref.size
        np.testing.assert_allclose(res.roots[k, : ref.size], ref, rtol=1e-8, atol=1e-10)


# Later flows are 0 or in [1, 1e5]: numpy_financial.irr (via numpy.roots) loses the root when the
# coefficients span ~80 orders of magnitude (e.g. [-1, 0, 1, 1e-85]), which teakit does not.
_conventional = st.tuples(
    st.floats(1.0, 1e6),
    st.lists(st.one_of(st.just(0.0), st.floats(1.0, 1e5)), min_size=1, max_size=30),
).filter(lambda t: max(t[1]) >= 1.0)


@settings(max_examples=60, deadline=None)
@given(_conventional, st.floats(-0.5, 2.0), st.floats(0.01, 1.0))
def test_npv_decreases_with_rate_for_a_conventional_investment(inv, r1, dr):
    # dNPV/dr = -sum t c_t (1 + r)**(-t - 1) < 0 when c_0 < 0 and c_t >= 0 (not all zero).
    cash = [-inv[0], *inv[1]]
    assert F.npv(r1, cash) > F.npv(r1 + dr, cash)


@settings(max_examples=60, deadline=None)
@given(_conventional)
def test_irr_zeroes_npv_and_matches_numpy_financial(inv):
    cash = [-inv[0], *inv[1]]
    r = F.irr(cash)  # one sign change: unique by Descartes' rule, never raises
    scale = np.sum(np.abs(cash) * (1.0 + r) ** -np.arange(len(cash)))
    assert abs(F.npv(r, cash)) <= 1e-9 * scale
    ref = npf.irr(cash)  # reference library
    assert r == pytest.approx(ref, rel=1e-7, abs=1e-9)


# --------------------------------------------------------------------------------------------
# discounted payback


def _payback_by_hand(rate, cash):
    """Year loop: last upward zero crossing of the cumulative discounted cash flow."""
    cum, out, prev = 0.0, 0.0, None
    for t, c in enumerate(cash):
        new = cum + c / (1.0 + rate) ** t
        if new < 0.0:
            out = math.inf
        elif out == math.inf:
            out = (t - 1) + (-prev) / (new - prev)
        prev = cum = new
    return out


@pytest.mark.parametrize(
    "rate,cash",
    [
        (0.0, [-100.0, 60.0, 60.0]),
        (0.1, [-100.0, 30.0, 40.0, 50.0, 60.0]),
        (0.1, [-100.0, 10.0, 10.0]),
        (0.05, [20.0, 10.0]),
        (0.0, [0.0, -100.0, 150.0]),
        (0.08, [-100.0, 80.0, 80.0, -90.0, 60.0]),
        (0.08, [-100.0, 80.0, 80.0, -300.0]),
    ],
)
def test_discounted_payback_matches_year_by_year_calculation(rate, cash):
    # Independent calculation: the loop above. By hand for the first case: cumulative -100,
    # -40, +20 -> 1 + 40/60 years.
    assert F.discounted_payback(rate, cash) == pytest.approx(
        _payback_by_hand(rate, cash), rel=1e-12
    )
    if cash == [-100.0, 60.0, 60.0]:
        assert F.discounted_payback(rate, cash) == pytest.approx(1.0 + 40.0 / 60.0)


def test_discounted_payback_never_and_at_once():
    # By hand: 10/1.1 + 10/1.21 < 100 never recovers (inf); nothing negative (0); at rate 0.5
    # -100 + 40 + 26.7 < 0 at the end (inf).
    assert F.discounted_payback(0.1, [-100.0, 10.0, 10.0]) == math.inf
    assert F.discounted_payback(0.1, [0.0, 5.0]) == 0.0
    got = F.discounted_payback([0.0, 0.5], [-100.0, 60.0, 60.0])
    assert got[0] == pytest.approx(1.0 + 40.0 / 60.0) and got[1] == math.inf


# --------------------------------------------------------------------------------------------
# capital recovery factor


@pytest.mark.parametrize("i,n", [(0.08, 10), (0.12, 25), (-0.03, 15), (1.5, 4), (0.07, 12.5)])
def test_crf_matches_closed_form_and_numpy_financial(i, n):
    # Closed form i (1 + i)**n / ((1 + i)**n - 1) typed from its definition; reference npf.pmt:
    # the payment on a loan of 1 is -pmt(i, n, 1) = CRF.
    closed = i * (1 + i) ** n / ((1 + i) ** n - 1)
    assert F.capital_recovery_factor(i, n) == pytest.approx(closed, rel=1e-12)
    assert F.capital_recovery_factor(i, n) == pytest.approx(-npf.pmt(i, n, 1.0), rel=1e-12)
    assert F.annualised_capital(2.5e7, i, n) == pytest.approx(2.5e7 * closed, rel=1e-12)


def test_crf_limit_at_zero_rate():
    # Limit i -> 0 of the closed form is 1/n (l'Hopital); also npf.pmt(0, n, 1) = -1/n.
    for n in (1, 7, 30):
        assert F.capital_recovery_factor(0.0, n) == 1.0 / n
        assert F.capital_recovery_factor(0.0, n) == pytest.approx(-npf.pmt(0.0, n, 1.0))
        # near zero: series 1/n + i (n + 1)/(2n) + O(i**2) (Taylor expansion of the closed form)
        for i in (1e-12, -1e-9, 1e-6):
            series = 1.0 / n + i * (n + 1) / (2 * n)
            assert F.capital_recovery_factor(i, n) == pytest.approx(series, rel=1e-9)
    # and 1/CRF is the annuity present-worth factor (npv of 1 per year for n years)
    assert 1.0 / F.capital_recovery_factor(0.09, 20) == pytest.approx(
        npf.npv(0.09, [0.0] + [1.0] * 20), rel=1e-12
    )


def test_fisher_relation():
    # Fisher (1930): (1 + i_nominal) = (1 + i_real)(1 + f); by hand 1.05 x 1.02 - 1 = 0.071.
    assert F.nominal_from_real(0.05, 0.02) == pytest.approx(0.071, rel=1e-14)
    assert F.real_from_nominal(0.071, 0.02) == pytest.approx(0.05, rel=1e-13)
    with pytest.raises(InputError, match="inflation must lie in"):
        F.nominal_from_real(0.05, -1.0)


# --------------------------------------------------------------------------------------------
# depreciation

# IRS Publication 946, Appendix A, Table A-1 (GDS, half-year convention), percent. The 5- and
# 7-year rows were read from the publication; the 3-, 10-, 15- and 20-year rows are from
# memory, to be confirmed against IRS Pub. 946 Table A-1.
PUB946_TABLE_A1 = {
    3: [33.33, 44.45, 14.81, 7.41],
    5: [20.00, 32.00, 19.20, 11.52, 11.52, 5.76],
    7: [14.29, 24.49, 17.49, 12.49, 8.93, 8.92, 8.93, 4.46],
    10: [10.00, 18.00, 14.40, 11.52, 9.22, 7.37, 6.55, 6.55, 6.56, 6.55, 3.28],
    15: [5.00, 9.50, 8.55, 7.70, 6.93, 6.23, 5.90, 5.90, 5.91, 5.90, 5.91, 5.90, 5.91, 5.90,
         5.91, 2.95],
    20: [3.750, 7.219, 6.677, 6.177, 5.713, 5.285, 4.888, 4.522, 4.462, 4.461, 4.462, 4.461,
         4.462, 4.461, 4.462, 4.461, 4.462, 4.461, 4.462, 4.461, 2.231],
}  # fmt: skip


def _macrs_by_rule(life):
    """Declining balance (200 % below 15 years, 150 % at 15 and 20) switching to straight line
    when that is larger, half-year convention; percent of the basis, unrounded."""
    factor = 1.5 if life >= 15 else 2.0
    book, out = 100.0, []
    for year in range(1, life + 2):
        if year == 1:
            dep = book * factor / life / 2.0  # half a year
        elif year == life + 1:
            dep = book  # the last half year takes the rest
        else:
            remaining = life - (year - 1.5)  # years of recovery left at the start of the year
            dep = max(book * factor / life, book / remaining)
        book -= dep
        out.append(dep)
    return np.array(out)


@pytest.mark.parametrize("life", F.MACRS_PERIODS)
def test_macrs_matches_irs_publication_946_table_a1(life):
    # Source: IRS Publication 946 Table A-1 (typed above); the module reads data/macrs.csv.
    got = F.depreciation_schedule("macrs", life)
    np.testing.assert_allclose(100.0 * got, PUB946_TABLE_A1[life], rtol=0, atol=1e-9)
    assert got.sum() == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("life", F.MACRS_PERIODS)
def test_macrs_table_matches_independent_recomputation(life):
    # Independent calculation: the declining-balance/straight-line switch rule with the
    # half-year convention, compared within the publication's rounding (0.01 percentage
    # points; 0.001 for the 20-year class).
    tol = 0.001 if life == 20 else 0.01
    np.testing.assert_allclose(PUB946_TABLE_A1[life], _macrs_by_rule(life), rtol=0, atol=tol)


def test_macrs_data_file_sources():
    tab = load_table("macrs")
    assert list(tab.columns) == ["recovery_period_years", "year", "percent", "source"]
    assert tab["source"].str.contains("Publication 946").all()
    memory = tab["source"].str.contains("from memory")
    assert not memory[tab["recovery_period_years"].isin([5, 7])].any()
    assert memory[~tab["recovery_period_years"].isin([5, 7])].all()


def test_straight_line_and_truncated_schedules():
    # By hand: 1/L per year; a fractional life leaves a partial last year.
    np.testing.assert_allclose(F.depreciation_schedule("straight_line", 4), [0.25] * 4)
    np.testing.assert_allclose(F.depreciation_schedule("straight_line", 2.5), [0.4, 0.4, 0.2])
    np.testing.assert_allclose(F.depreciation_schedule("straight_line", 2, 4), [0.5, 0.5, 0, 0])
    # Shorter than the schedule: the rest is written off in the last year (IRS Table A-1 values).
    got = F.depreciation_schedule("macrs", 7, 5)
    np.testing.assert_allclose(100 * got[:4], PUB946_TABLE_A1[7][:4], atol=1e-9)
    assert 100 * got[4] == pytest.approx(sum(PUB946_TABLE_A1[7][4:]), abs=1e-9)
    # vectorised over lives
    both = F.depreciation_schedule("macrs", [5, 7])
    assert both.shape == (2, 8)
    np.testing.assert_allclose(100 * both[0, :6], PUB946_TABLE_A1[5], atol=1e-9)


# --------------------------------------------------------------------------------------------
# cash-flow table

BASE = dict(
    fixed_capital=1.2e8,
    revenue=6.0e7,
    operating_cost=2.2e7,
    discount_rate=0.09,
    tax_rate=0.27,
    plant_life=15,
    construction_schedule=(0.25, 0.45, 0.30),
    working_capital=1.5e7,
    fixed_operating_cost=4.0e6,
    ramp_up=(0.4, 0.75),
    salvage_value=6.0e6,
    depreciation="macrs",
    depreciation_life=7,
    inflation=0.025,
)


def _table_by_hand(p, price=None, quantity=None):
    """Year-by-year nominal cash flows written out from the documented conventions."""
    sched = list(p["construction_schedule"])
    nc, life, f = len(sched), p["plant_life"], p["inflation"]
    tau = p["tax_rate"]
    if p["depreciation"] == "macrs":
        dep_frac = [x / 100.0 for x in PUB946_TABLE_A1[p["depreciation_life"]]]
    else:
        dep_frac = [1.0 / p.get("depreciation_life", life)] * int(p.get("depreciation_life", life))
    dep_frac = dep_frac[: life - 1] + [sum(dep_frac[life - 1 :])] + [0.0] * life
    basis = sum(p["fixed_capital"] * s * (1 + f) ** t for t, s in enumerate(sched))
    revenue = p["revenue"] if price is None else price * quantity
    net = []
    for t in range(nc + life):
        idx = (1 + f) ** t
        cash = 0.0
        if t < nc:
            cash -= p["fixed_capital"] * sched[t] * idx
        if t == nc - 1:
            cash -= p["working_capital"] * idx
        taxable = 0.0
        if t >= nc:
            j = t - nc  # 0-based operating year
            u = p["ramp_up"][j] if j < len(p["ramp_up"]) else 1.0
            gross = (revenue - p["operating_cost"]) * u * idx - p["fixed_operating_cost"] * idx
            cash += gross
            taxable = gross - basis * dep_frac[j]
        if t == nc + life - 1:
            cash += (p["working_capital"] + p["salvage_value"]) * idx
            taxable += p["salvage_value"] * idx
        if p.get("tax_losses", "credit") == "forfeit":
            taxable = max(taxable, 0.0)
        net.append(cash - tau * taxable)
    nominal = (1 + p["discount_rate"]) * (1 + f) - 1
    return np.array(net), nominal


@pytest.mark.parametrize("losses", ["credit", "forfeit"])
def test_cash_flows_match_year_by_year_calculation(losses):
    p = dict(BASE, tax_losses=losses)
    cf = F.cash_flows(**p)
    net, nominal = _table_by_hand(p)
    np.testing.assert_allclose(cf.net, net, rtol=1e-12, atol=1e-4)
    assert cf.nominal_rate == pytest.approx(nominal, rel=1e-15)
    # NPV by numpy_financial (reference) on the independently built cash flows
    assert cf.npv == pytest.approx(npf.npv(nominal, net), rel=1e-10)


def test_cash_flow_table_frame_and_identities():
    df = F.cash_flow_table(**dict(BASE, inflation=0.0))
    for col in ("revenue [USD]", "capex [USD]", "depreciation [USD]", "tax [USD]",
                "net cash flow [USD]", "discounted cash flow [USD]",
                "cumulative discounted [USD]"):  # fmt: skip
        assert col in df.columns
    assert isinstance(df, pd.DataFrame) and df.index.name == "year"
    assert len(df) == len(BASE["construction_schedule"]) + BASE["plant_life"]
    cash_cols = ["capex [USD]", "working capital [USD]", "revenue [USD]", "operating cost [USD]",
                 "fixed operating cost [USD]", "salvage [USD]", "tax [USD]"]  # fmt: skip
    np.testing.assert_allclose(df[cash_cols].sum(axis=1), df["net cash flow [USD]"], rtol=1e-12)
    # Without inflation: all capital is spent, depreciated in full, and the working capital
    # comes back (sums of the table columns).
    assert df["capex [USD]"].sum() == pytest.approx(-BASE["fixed_capital"], rel=1e-12)
    assert df["depreciation [USD]"].sum() == pytest.approx(BASE["fixed_capital"], rel=1e-12)
    assert df["working capital [USD]"].sum() == pytest.approx(0.0, abs=1e-6)
    assert (df.loc[df["phase"] == "construction", "revenue [USD]"] == 0.0).all()
    assert df["cumulative discounted [USD]"].iloc[-1] == pytest.approx(
        npf.npv(BASE["discount_rate"], df["net cash flow [USD]"].to_numpy()), rel=1e-10
    )


def test_without_tax_inflation_does_not_change_npv():
    # Fisher relation: nominal flows at the nominal rate = real flows at the real rate. Real
    # flows built by hand (no tax) and discounted by numpy_financial (reference).
    p = dict(BASE, tax_rate=0.0)
    real_net, _ = _table_by_hand(dict(p, inflation=0.0))
    want = npf.npv(p["discount_rate"], real_net)
    for f in (0.0, 0.03, 0.1):
        assert F.cash_flows(**dict(p, inflation=f)).npv == pytest.approx(want, rel=1e-10)


def test_with_tax_inflation_lowers_npv():
    # Depreciation is allowed on historical cost, so its real tax shield shrinks as inflation
    # rises while every other real after-tax flow is unchanged (common practice).
    npvs = [F.cash_flows(**dict(BASE, inflation=f)).npv for f in (0.0, 0.02, 0.05)]
    assert npvs[0] > npvs[1] > npvs[2]


def test_forfeited_losses_never_pay_negative_tax():
    # Definition of the two policies: a forfeited loss earns no tax credit, so the tax column is
    # never an inflow and the NPV is lower whenever some year makes a loss.
    credit = F.cash_flows(**BASE)
    forfeit = F.cash_flows(**dict(BASE, tax_losses="forfeit"))
    assert (credit.tax > 0).any()  # the ramp-up years make losses in this case
    assert (forfeit.tax <= 0).all()
    assert forfeit.npv < credit.npv


def test_batch_equals_one_by_one():
    rng = np.random.default_rng(3)
    B = 5
    arrays = dict(
        fixed_capital=rng.uniform(5e7, 2e8, B),
        revenue=rng.uniform(3e7, 9e7, B),
        operating_cost=rng.uniform(1e7, 3e7, B),
        tax_rate=rng.uniform(0.0, 0.4, B),
        discount_rate=rng.uniform(0.03, 0.15, B),
        inflation=rng.uniform(0.0, 0.05, B),
        salvage_value=rng.uniform(-1e7, 1e7, B),
    )
    common = {k: v for k, v in BASE.items() if k not in arrays}
    for losses in F.TAX_LOSS_POLICIES:
        cf = F.cash_flows(**arrays, **common, tax_losses=losses)
        assert cf.net.shape == (B, len(common["construction_schedule"]) + common["plant_life"])
        q = rng.uniform(1e5, 3e5, B)
        m = F.metrics(cf, product_quantity=q)
        for k in range(B):
            one = F.cash_flows(**{a: v[k] for a, v in arrays.items()}, **common, tax_losses=losses)
            np.testing.assert_allclose(cf.net[k], one.net, rtol=1e-13)
            pd.testing.assert_frame_equal(cf.to_frame(k), one.to_frame())
            mk = F.metrics(one, product_quantity=q[k])
            assert m.npv[k] == pytest.approx(mk.npv, rel=1e-13)
            assert m.lcop[k] == pytest.approx(mk.lcop, rel=1e-12)
            assert m.irr_count[k] == mk.irr_count
            np.testing.assert_allclose(m.irr[k], mk.irr, rtol=1e-12)
            np.testing.assert_allclose(m.discounted_payback[k], mk.discounted_payback, rtol=1e-13)


# --------------------------------------------------------------------------------------------
# metrics and LCOP


def test_metrics_agree_with_reference_functions():
    cf = F.cash_flows(**BASE)
    m = F.metrics(cf)
    nominal = cf.nominal_rate
    # references: numpy_financial.npv / irr on the table's net cash flow; Fisher for real IRR
    assert m.npv == pytest.approx(npf.npv(nominal, cf.net), rel=1e-10)
    assert m.irr_count == 1
    assert m.irr_nominal == pytest.approx(npf.irr(cf.net), rel=1e-9)
    assert m.irr == pytest.approx((1 + npf.irr(cf.net)) / (1 + BASE["inflation"]) - 1, rel=1e-9)
    assert m.discounted_payback == pytest.approx(_payback_by_hand(nominal, cf.net), rel=1e-12)
    assert m.lcop is None


@pytest.mark.parametrize("losses", ["credit", "forfeit"])
def test_npv_at_lcop_is_zero(losses):
    p = dict(BASE, tax_losses=losses)
    q = 2.0e5  # units of product per year
    lcop = F.metrics(F.cash_flows(**p), product_quantity=q).lcop
    # Independent check: rebuild the cash flows by hand at that price, NPV by numpy_financial.
    net, nominal = _table_by_hand(p, price=lcop, quantity=q)
    assert abs(npf.npv(nominal, net)) <= 1e-9 * p["fixed_capital"]
    # and through the module's own table + npv
    cf = F.cash_flows(**dict(p, revenue=lcop * q))
    assert abs(F.npv(cf.nominal_rate, cf.net)) <= 1e-9 * p["fixed_capital"]


def test_lcop_forfeit_is_not_below_credit():
    q = 2.0e5
    credit = F.metrics(F.cash_flows(**BASE), product_quantity=q).lcop
    forfeit = F.metrics(F.cash_flows(**dict(BASE, tax_losses="forfeit")), product_quantity=q).lcop
    assert forfeit > credit


def test_lcop_closed_form_without_tax():
    # Textbook levelised cost: (FCI x CRF(i, L) + C + F) / q with everything at t = 0 and no
    # tax, CRF typed from its closed form.
    fci, C, Fx, q, i, L = 8.0e7, 1.1e7, 2.0e6, 1.5e5, 0.1, 20
    crf = i * (1 + i) ** L / ((1 + i) ** L - 1)
    cf = F.cash_flows(fci, 0.0, C, fixed_operating_cost=Fx, discount_rate=i, tax_rate=0.0,
                      plant_life=L)  # fmt: skip
    assert F.metrics(cf, product_quantity=q).lcop == pytest.approx(
        (fci * crf + C + Fx) / q, rel=1e-12
    )


def test_lcop_closed_form_with_tax_and_straight_line():
    # By hand: -FCI + [(1 - tau)(p q - C) + tau FCI/L] / CRF = 0 gives
    # p = C/q + (FCI CRF - tau FCI/L) / ((1 - tau) q).
    fci, C, q, i, L, tau = 8.0e7, 1.1e7, 1.5e5, 0.1, 20, 0.3
    crf = i * (1 + i) ** L / ((1 + i) ** L - 1)
    want = C / q + (fci * crf - tau * fci / L) / ((1 - tau) * q)
    for losses in ("credit", "forfeit"):  # taxable income is positive every year at that price
        cf = F.cash_flows(fci, 0.0, C, discount_rate=i, tax_rate=tau, plant_life=L,
                          tax_losses=losses)  # fmt: skip
        assert F.metrics(cf, product_quantity=q).lcop == pytest.approx(want, rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(
    st.floats(1e6, 1e9),
    st.floats(0.0, 5e8),
    st.floats(0.0, 0.6),
    st.floats(0.0, 0.3),
    st.floats(-0.02, 0.08),
    st.sampled_from(F.TAX_LOSS_POLICIES),
    st.lists(st.floats(0.0, 1.0), max_size=3),
)
def test_npv_at_lcop_is_zero_property(fci, opex, tau, rate, infl, losses, ramp):
    q = 1.0e4
    p = dict(discount_rate=rate, tax_rate=tau, plant_life=12, construction_schedule=(0.5, 0.5),
             ramp_up=tuple(ramp), working_capital=0.1 * fci, depreciation="macrs",
             depreciation_life=5, tax_losses=losses, inflation=infl)  # fmt: skip
    lcop = F.metrics(F.cash_flows(fci, 0.0, opex, **p), product_quantity=q).lcop
    assert lcop > 0.0  # capital is spent and never fully recovered without sales
    cf = F.cash_flows(fci, lcop * q, opex, **p)
    assert abs(F.npv(cf.nominal_rate, cf.net)) <= 1e-9 * (fci + 12 * opex)


# --------------------------------------------------------------------------------------------
# bad input


def test_bad_rates():
    with pytest.raises(InputError, match=r"rate must lie in \(-1, inf\)"):
        F.npv(-1.0, [1.0, 2.0])
    with pytest.raises(InputError, match="rate must lie in"):
        F.npv([0.1, -1.5], [[1.0], [2.0]])
    with pytest.raises(InputError, match="rate must lie in"):
        F.capital_recovery_factor(-1.0, 10)
    with pytest.raises(InputError, match="rate must lie in"):
        F.discounted_payback(-2.0, [1.0])
    with pytest.raises(InputError, match="discount_rate must lie in"):
        F.cash_flows(**dict(BASE, discount_rate=-1.0))
    with pytest.raises(InputError, match="inflation must lie in"):
        F.cash_flows(**dict(BASE, inflation=-1.0))


def test_nan_anywhere_is_an_error():
    with pytest.raises(InputError, match="cashflows must be finite"):
        F.npv(0.1, [1.0, np.nan])
    with pytest.raises(InputError, match="cashflows must be finite"):
        F.irr([-1.0, np.inf])
    with pytest.raises(InputError, match="rate must be finite"):
        F.npv(np.nan, [1.0])
    with pytest.raises(InputError, match="revenue must be finite"):
        F.cash_flows(**dict(BASE, revenue=[1e7, np.nan]))
    with pytest.raises(InputError, match="salvage_value must be finite"):
        F.cash_flows(**dict(BASE, salvage_value=np.nan))
    with pytest.raises(InputError, match="product_quantity must be finite"):
        F.metrics(F.cash_flows(**BASE), product_quantity=np.nan)


def test_bad_lives_and_schedules():
    with pytest.raises(InputError, match="plant_life must be a whole number of years >= 1"):
        F.cash_flows(**dict(BASE, plant_life=-5))
    with pytest.raises(InputError, match="plant_life must be a whole number"):
        F.cash_flows(**dict(BASE, plant_life=12.5))
    with pytest.raises(InputError, match="years must be > 0"):
        F.capital_recovery_factor(0.1, -3)
    with pytest.raises(InputError, match="life_years must be > 0"):
        F.depreciation_schedule("straight_line", -1)
    with pytest.raises(InputError, match="life_years for MACRS must be one of 3, 5, 7, 10, 15, 20"):
        F.depreciation_schedule("macrs", 6)
    with pytest.raises(InputError, match="method must be one of 'macrs', 'straight_line'"):
        F.depreciation_schedule("double_declining", 5)
    with pytest.raises(InputError, match="construction_schedule must sum to 1"):
        F.cash_flows(**dict(BASE, construction_schedule=(0.5, 0.4)))
    with pytest.raises(InputError, match=r"construction_schedule must lie in \[0, 1\]"):
        F.cash_flows(**dict(BASE, construction_schedule=(1.5, -0.5)))
    with pytest.raises(InputError, match="ramp_up has 20 years but plant_life is 15"):
        F.cash_flows(**dict(BASE, ramp_up=[0.5] * 20))
    with pytest.raises(InputError, match="depreciation_life is required"):
        F.cash_flows(**dict(BASE, depreciation_life=None))


def test_bad_tax_money_and_policies():
    with pytest.raises(InputError, match=r"tax_rate must lie in \[0, 1\)"):
        F.cash_flows(**dict(BASE, tax_rate=1.0))
    with pytest.raises(InputError, match=r"tax_rate must lie in \[0, 1\)"):
        F.cash_flows(**dict(BASE, tax_rate=-0.1))
    with pytest.raises(InputError, match="fixed_capital must be >= 0"):
        F.cash_flows(**dict(BASE, fixed_capital=-1.0))
    with pytest.raises(InputError, match="operating_cost must be >= 0"):
        F.cash_flows(**dict(BASE, operating_cost=-1.0))
    with pytest.raises(InputError, match="tax_losses must be one of 'credit', 'forfeit'"):
        F.cash_flows(**dict(BASE, tax_losses="carry"))
    with pytest.raises(InputError, match="if_multiple must be one of"):
        F.irr([-1.0, 2.0], if_multiple="largest")
    with pytest.raises(InputError, match="batch shapes do not broadcast"):
        F.cash_flows(**dict(BASE, revenue=[1e7, 2e7], operating_cost=[1e6, 2e6, 3e6]))
    with pytest.raises(InputError, match="product_quantity must be > 0"):
        F.metrics(F.cash_flows(**BASE), product_quantity=0.0)
    with pytest.raises(InputError, match="single case"):
        F.cash_flow_table(**dict(BASE, revenue=[1e7, 2e7]))
    with pytest.raises(InputError, match="member is required"):
        F.cash_flows(**dict(BASE, revenue=[1e7, 2e7])).to_frame()
    with pytest.raises(InputError, match="cashflows must be an array"):
        F.npv(0.1, 5.0)
