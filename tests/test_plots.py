"""Figures: each function returns a Figure whose axes carry units, and draws what it was given.

Expected values are derived in the tests, independently of teakit.plots: unit conversions from
their definitions (BIPM, The International System of Units, 9th ed., 2019: 1 bar = 1e5 Pa,
Table 8; t/degC = T/K - 273.15, section 2.3.1) and cross-checked with pint; equilibrium lines
against Cantera's equilibrate("TP") on a phase built from the kit's own data and against
Larson (1924); percentiles against numpy; NPV against numpy-financial; Sobol bars against the
analytic Ishigami indices (Ishigami & Homma 1990; Saltelli et al., Global Sensitivity Analysis:
The Primer, Wiley 2008, section 4.6); orders and sums computed here by hand.
"""

import warnings

import matplotlib as mpl
import numpy as np
import pandas as pd
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.contour import ContourSet
from matplotlib.figure import Figure
from reference import cantera_phase_from_kit

from teakit import plots
from teakit.errors import InputError, RangeWarning
from teakit.finance import cash_flows
from teakit.process.cases.so2 import SPECIES, so2_converter
from teakit.study.study import Optimum, Study
from teakit.units import Q_

BAR = 1e5  # Pa, SI Brochure 9th ed. Table 8
ZERO_C = 273.15  # K, SI Brochure 9th ed. section 2.3.1
ATM = 101325.0  # Pa, SI Brochure 9th ed. (standard atmosphere)


def _render(fig):
    """Draw with Agg (as a headless notebook or CI would) and return the figure."""
    FigureCanvasAgg(fig).draw()
    return fig


def _texts(fig):
    """Every piece of text the figure shows: titles, axis and tick labels, legends, notes."""
    out = [fig._suptitle] if fig._suptitle is not None else []
    for leg in fig.legends:
        out += [*leg.get_texts(), leg.get_title()]
    for ax in fig.axes:
        if not ax.axison:
            continue
        out += [ax.title, ax._left_title, ax._right_title, ax.xaxis.label, ax.yaxis.label, *ax.texts]
        for axis in (ax.xaxis, ax.yaxis):  # tick labels drawn, i.e. inside the view limits
            lo, hi = sorted(axis.get_view_interval())
            tol = 1e-9 * max(abs(lo), abs(hi), 1.0)
            out += [lab for tick in axis.get_major_ticks() if lo - tol <= tick.get_loc() <= hi + tol
                    for lab in (tick.label1, tick.label2)]
        if ax.get_legend() is not None:
            out += [*ax.get_legend().get_texts(), ax.get_legend().get_title()]
    return [t for t in out if t.get_visible() and t.get_text().strip()]


def _check_figure(fig):
    assert isinstance(fig, Figure)
    assert fig.canvas.manager is None  # not registered with pyplot: nothing to show, nothing leaks
    _render(fig)
    # nothing clipped at the figure's edge (1 px of slack for anti-aliasing)
    renderer = fig.canvas.get_renderer()
    W, H = fig.bbox.width, fig.bbox.height
    for t in _texts(fig):
        bb = t.get_window_extent(renderer)
        assert bb.x0 >= -1 and bb.y0 >= -1 and bb.x1 <= W + 1 and bb.y1 <= H + 1, \
            f"text {t.get_text()!r} is cut off at the figure's edge: {bb} in {W} x {H}"


def _line(ax, label_start):
    hits = [ln for ln in ax.get_lines() if ln.get_label().startswith(label_start)]
    assert hits, f"no line labelled {label_start!r}: {[ln.get_label() for ln in ax.get_lines()]}"
    return hits[0]


# ------------------------------------------------------------------------------------------------
# data: an analytic landscape, and small real ones from the acid demo study
# ------------------------------------------------------------------------------------------------

P_GRID = np.linspace(100e5, 300e5, 9)
T_GRID = np.linspace(640.0, 720.0, 7)
T_LIMIT = 703.15  # K: the analytic constraint's boundary


@pytest.fixture(scope="module")
def analytic_landscape():
    # NPV a paraboloid with its top at (200 bar, 690 K); one constraint linear in T with its
    # boundary at T_LIMIT (margin = T_LIMIT - T), so that margin = 0 is exactly T = T_LIMIT.
    g = np.array([(p, t) for t in T_GRID for p in P_GRID])
    df = pd.DataFrame({"pressure [Pa]": g[:, 0], "inlet_temperature [K]": g[:, 1]})
    df["npv [USD]"] = 1e8 - ((g[:, 0] - 2e7) / 1e6) ** 2 * 1e5 - (g[:, 1] - 690.0) ** 2 * 1e4
    df["yield [-]"] = 0.2 + 1e-9 * g[:, 0] - 1e-4 * (g[:, 1] - 640.0)
    df["margin_peak_temperature [K]"] = T_LIMIT - g[:, 1]
    df["status"] = "ok"
    df["feasible"] = df["margin_peak_temperature [K]"] >= 0
    return df


@pytest.fixture(scope="module")
def acid():
    return Study.from_toml("acid_redmesa.toml")


@pytest.fixture(scope="module")
def acid_landscape(acid):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RangeWarning)
        return acid.landscape("pressure", "bed1_inlet_temperature", 5)


def _grid_optimum(df, x, y):
    """The best feasible grid point as an Optimum, the highest-yield one as its max_yield."""
    def opt(i, col):
        row = df.iloc[i]
        return Optimum({x: float(row[f"{x} [Pa]"]), y: float(row[f"{y} [K]"])}, float(row[col]),
                       row.to_dict(), [], True)
    feas = df["feasible"].to_numpy()
    i_best = int(np.flatnonzero(feas)[np.argmax(df["npv [USD]"].to_numpy()[feas])])
    i_yield = int(np.argmax(df["yield [-]"].to_numpy()))
    o = opt(i_best, "npv [USD]")
    o.max_yield = opt(i_yield, "yield [-]")
    return o


# ------------------------------------------------------------------------------------------------
# display units and labels
# ------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("value,unit,name,target", [
    (2.0e7, "Pa", "pressure", "bar"),
    (723.15, "K", "inlet_temperature", "degC"),
    (3.2e7, "USD", "npv", "MUSD"),
    (2.6e7, "USD/yr", "opex_total", "MUSD/yr"),
    (11.574, "kg/s", "production", "t/d"),
    (1.5e6, "W", "blower_power", "MW"),
    (3.888, "m**3*s/kg", "bed1_catalyst", "L/(t/d)"),
    (1.5e4, "Pa", "bed1_pressure_drop", "kPa"),
])
def test_to_display_against_pint(value, unit, name, target):
    # pint (a general-purpose units library) is the reference; "L/(t/d)" is the trade's catalyst
    # loading, litres per tonne per day of product; teakit's SI unit is m3 s/kg.
    got, shown = plots.to_display(value, unit, name)
    ref = Q_(value, unit.replace("**", "^")).to(target).magnitude
    assert got == pytest.approx(ref, rel=1e-12)
    assert shown == {"degC": "°C"}.get(target, target)


def test_to_display_keeps_differences_and_shows_fractions_in_percent():
    # A temperature margin is a difference: kelvin and degC steps are equal (SI Brochure 2.3.1).
    assert plots.to_display(12.5, "K", "margin_peak_catalyst_temperature") == (12.5, "K")
    assert plots.to_display(0.999, "-", "overall_conversion") == (pytest.approx(99.9), "%")
    assert plots.to_display(3.0, "-", "recycle_ratio") == (3.0, "-")
    assert plots.label("bed1_inlet_temperature [K]") == "Bed 1 inlet temperature [°C]"
    assert plots.label("margin_so2_emission [kg/t]") == "Margin SO2 emission [kg/t]"
    assert plots.label("npv [USD]") == "NPV [MUSD]"
    assert plots.label("fixed_npv [USD]") == "NPV (fixed decisions) [MUSD]"


# ------------------------------------------------------------------------------------------------
# objective map
# ------------------------------------------------------------------------------------------------


def test_objective_map_marks_optimum_max_yield_and_the_constraint_boundary(analytic_landscape):
    df = analytic_landscape
    opt = Optimum({"pressure": 2.0e7, "inlet_temperature": 690.0}, 1e8, {}, [], True)
    opt.max_yield = Optimum({"pressure": 3.0e7, "inlet_temperature": 640.0}, 9e7, {}, [], True)
    fig = plots.objective_map(df, "pressure", "inlet_temperature", opt)
    _check_figure(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "Pressure [bar]"
    assert ax.get_ylabel() == "Inlet temperature [°C]"
    assert fig.axes[1].get_ylabel() == "NPV [MUSD]"  # the colour bar
    star = _line(ax, "profit optimum")
    assert star.get_xdata()[0] == pytest.approx(2.0e7 / BAR)  # 200 bar
    assert star.get_ydata()[0] == pytest.approx(690.0 - ZERO_C)
    assert "NPV 100 MUSD" in star.get_label()  # 1e8 USD
    dia = _line(ax, "maximum yield")
    assert (dia.get_xdata()[0], dia.get_ydata()[0]) == pytest.approx((300.0, 640.0 - ZERO_C))
    assert dia.get_label() == "maximum yield (NPV 90 MUSD)"  # 9e7 USD
    # margin = T_LIMIT - T is linear: its zero contour is the straight line T = T_LIMIT.
    bound = [c for c in ax.collections if isinstance(c, ContourSet) and not c.filled and list(c.levels) == [0.0]]
    assert len(bound) == 1
    v = np.vstack([p.vertices for p in bound[0].get_paths()])
    assert np.allclose(v[:, 1], T_LIMIT - ZERO_C)
    assert v[:, 0].min() == pytest.approx(100.0) and v[:, 0].max() == pytest.approx(300.0)
    # the infeasible side is hatched and the legend says what each mark is
    hatched = [c for c in ax.collections if isinstance(c, ContourSet) and c.filled and c.hatches[0]]
    assert len(hatched) == 1
    texts = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "limit: peak temperature" in texts and "limit violated or process infeasible" in texts


def test_objective_map_profit_beside_yield_on_a_real_landscape(acid_landscape):
    df = acid_landscape
    opt = _grid_optimum(df, "pressure", "bed1_inlet_temperature")
    fig = plots.objective_map(df, "pressure", "bed1_inlet_temperature", opt, objective=("npv", "yield"))
    _check_figure(fig)
    maps = [a for a in fig.axes if a.get_xlabel()]
    assert len(maps) == 2
    assert [a.get_title("left") for a in maps] == ["NPV", "Yield"]  # house style: titles on the left
    bars = [a.get_ylabel() for a in fig.axes if not a.get_xlabel()]
    assert bars == ["NPV [MUSD]", "Yield [%]"]
    for ax in maps:
        assert ax.get_xlabel() == "Pressure [bar]" and ax.get_ylabel() == "Bed 1 inlet temperature [°C]"
        star = _line(ax, "profit optimum")
        assert star.get_xdata()[0] == pytest.approx(opt.decisions["pressure"] / BAR)
        assert star.get_ydata()[0] == pytest.approx(opt.decisions["bed1_inlet_temperature"] - ZERO_C)
        dia = _line(ax, "maximum yield")
        assert dia.get_xdata()[0] == pytest.approx(opt.max_yield.decisions["pressure"] / BAR)
    # the filled levels span the NPV of the feasible-process points, in MUSD
    filled = next(c for c in maps[0].collections if isinstance(c, ContourSet) and c.filled)
    npv = df.loc[df["status"] == "ok", "npv [USD]"] / 1e6
    assert filled.levels[0] <= npv.min() and filled.levels[-1] >= npv.max()


def test_objective_map_bad_input(analytic_landscape):
    df = analytic_landscape
    with pytest.raises(InputError, match="decision 'purge' not found"):
        plots.objective_map(df, "purge", "inlet_temperature")
    with pytest.raises(InputError, match="full grid"):
        plots.objective_map(df.iloc[:-1], "pressure", "inlet_temperature")
    with pytest.raises(InputError, match="no value for decision"):
        plots.objective_map(df, "pressure", "inlet_temperature", {"pressure": 2e7})
    with pytest.raises(InputError, match="levels"):
        plots.objective_map(df, "pressure", "inlet_temperature", levels=1)
    bad = df.copy()
    bad.loc[3, "npv [USD]"] = np.nan
    with pytest.raises(InputError, match="non-finite"):
        plots.objective_map(bad, "pressure", "inlet_temperature")


# ------------------------------------------------------------------------------------------------
# equilibrium yield against pressure
# ------------------------------------------------------------------------------------------------


def test_equilibrium_chart_ammonia_against_larson_1924():
    # Larson, J. Am. Chem. Soc. 46, 367 (1924): 35.82 mol % NH3 at 450 degC, 300 atm, 3:1 H2:N2
    # (the table of tests/test_equilibrium.py); the default model is within 1.5 points of it.
    P = np.array([100.0, 200.0, 300.0, 400.0]) * ATM
    fig = plots.equilibrium_chart("N2 + 3 H2 = 2 NH3", {"N2": 1, "H2": 3}, ["400 degC", "450 degC", "500 degC"], P)
    _check_figure(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "Pressure [bar]"
    assert ax.get_ylabel() == "Equilibrium NH3 mole fraction [%]"
    lines = {ln.get_label(): ln for ln in ax.get_lines()}
    assert set(lines) == {"400 °C", "450 °C", "500 °C"}
    x = lines["450 °C"].get_xdata()
    assert x == pytest.approx(P / BAR)
    assert lines["450 °C"].get_ydata()[2] == pytest.approx(35.82, abs=1.5)
    # Le Chatelier (exothermic, fewer moles): more NH3 at higher pressure and lower temperature.
    y = np.array([lines[k].get_ydata() for k in ("400 °C", "450 °C", "500 °C")])
    assert np.all(np.diff(y, axis=1) > 0) and np.all(np.diff(y, axis=0) < 0)
    # greyscale: the lines differ by style and marker, not colour alone
    assert len({lines[k].get_linestyle() for k in lines}) == 3
    assert len({lines[k].get_marker() for k in lines}) == 3


def test_equilibrium_chart_so2_conversion_against_cantera():
    # Cantera equilibrate("TP") on an ideal-gas phase from the kit's data (tests/reference.py);
    # conversion = 1 - n_SO2 / n_SO2,fed with n from the N2 balance.
    feed = {"SO2": 0.105, "O2": 0.105, "N2": 0.79}
    P = np.array([1.0, 2.0, 5.0]) * BAR
    fig = plots.equilibrium_chart("SO2 + 0.5 O2 = SO3", feed, [773.15], P, measure="conversion", eos="ideal")
    _check_figure(fig)
    ax = fig.axes[0]
    assert ax.get_ylabel() == "Equilibrium SO2 conversion [%]"
    y = ax.get_lines()[0].get_ydata()
    gas = cantera_phase_from_kit(list(SPECIES))
    for Pk, yk in zip(P, y, strict=True):
        gas.TPX = 773.15, Pk, feed
        gas.equilibrate("TP")
        n_tot = 0.79 / gas.X[gas.species_index("N2")]
        X_ct = 1.0 - gas.X[gas.species_index("SO2")] * n_tot / 0.105
        assert yk == pytest.approx(100.0 * X_ct, abs=0.05)


def test_long_titles_wrap_inside_the_figure():
    title = "Equilibrium ammonia in a loop gas with argon and methane inerts at the purge the optimum sets, 400-450 degC"
    fig = plots.equilibrium_chart("N2 + 3 H2 = 2 NH3", {"N2": 1, "H2": 3, "Ar": 0.05}, [673.15, 723.15],
                                  [50e5, 150e5, 300e5], title=title)
    _check_figure(fig)  # would fail on a title running off the edge
    assert "\n" in fig.axes[0].get_title("left")
    assert fig.axes[0].get_title("left").replace("\n", " ") == title


def test_equilibrium_chart_bad_input():
    with pytest.raises(InputError, match="measure"):
        plots.equilibrium_chart("N2 + 3 H2 = 2 NH3", {"N2": 1, "H2": 3}, [700.0], [1e6, 2e6], measure="yield")
    with pytest.raises(InputError, match="at least 2"):
        plots.equilibrium_chart("N2 + 3 H2 = 2 NH3", {"N2": 1, "H2": 3}, [700.0], [1e6])


# ------------------------------------------------------------------------------------------------
# converter bed paths
# ------------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def converter():
    return so2_converter(steps=8)


def test_bed_path_chart_draws_the_profiles_and_cantera_equilibrium_lines(converter):
    r = converter
    fig = plots.bed_path_chart(r)
    _check_figure(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "Gas temperature [°C]"
    assert ax.get_ylabel() == "SO2 conversion [%]"
    for k in range(4):
        ln = _line(ax, f"bed {k + 1}")
        assert ln.get_xdata() == pytest.approx(r.profiles["bed_T"][0, k] - ZERO_C)
        assert ln.get_ydata() == pytest.approx(100.0 * r.profiles["bed_conversion"][0, k])
    # Default "3+1" double contact: one equilibrium line for beds 1-3, one for bed 4.
    eq = [ln for ln in ax.get_lines() if ln.get_label().startswith("equilibrium")]
    assert len(eq) == 2
    gas = cantera_phase_from_kit(list(SPECIES))
    F = r.profiles["bed_inlet_n"][0, 0, SPECIES.index("SO2")]  # SO2 fed to the converter
    for ln, bed in zip(eq, (0, 3), strict=True):
        n_in = r.profiles["bed_inlet_n"][0, bed]
        S = n_in[SPECIES.index("SO2")] + n_in[SPECIES.index("SO3")]
        P = r[f"bed{bed + 1}_inlet_pressure"][0]
        assert f"{P / BAR:.2f} bar" in ln.get_label()
        for j in (0, len(ln.get_xdata()) // 2, -1):
            T = ln.get_xdata()[j] + ZERO_C
            gas.TPX = T, P, dict(zip(SPECIES, n_in, strict=True))
            gas.equilibrate("TP")
            xs = gas.X[gas.species_index("SO2")] / (gas.X[gas.species_index("SO2")] + gas.X[gas.species_index("SO3")])
            assert ln.get_ydata()[j] == pytest.approx(100.0 * (1.0 - S * xs / F), abs=0.02)
    # Second law: an adiabatic exothermic bed ends at or below its equilibrium line.
    first = eq[0]
    T1, X1 = r.profiles["bed_T"][0, 0, -1] - ZERO_C, 100.0 * r.profiles["bed_conversion"][0, 0, -1]
    assert X1 <= np.interp(T1, first.get_xdata(), first.get_ydata()) + 0.05
    # The catalyst limit: the case default 903.15 K = 630 degC (so2.PHYSICS, common practice).
    lim = _line(ax, "catalyst temperature limit")
    assert lim.get_xdata()[0] == pytest.approx(903.15 - ZERO_C)


def test_bed_path_chart_bad_input(converter):
    with pytest.raises(InputError, match="member"):
        plots.bed_path_chart(converter, member=5)
    with pytest.raises(InputError, match="profiles"):
        plots.bed_path_chart(object())


# ------------------------------------------------------------------------------------------------
# capital and operating cost
# ------------------------------------------------------------------------------------------------


def _bars(ax):
    """(label, width) of an axes' horizontal bars, top to bottom."""
    ticks = {round(float(t), 6): lab.get_text() for t, lab in zip(ax.get_yticks(), ax.get_yticklabels(), strict=True)}
    rows = sorted(((p.get_y() + p.get_height() / 2, p.get_width()) for p in ax.patches), reverse=True)
    return [(ticks[round(y, 6)], w) for y, w in rows]


def test_cost_breakdown_lists_every_item_largest_first(acid):
    row = acid.evaluate().iloc[0]
    fig = plots.cost_breakdown_chart(row)
    _check_figure(fig)
    cap_ax, op_ax = fig.axes
    assert cap_ax.get_xlabel() == "Capital [MUSD]"
    assert op_ax.get_xlabel() == "Operating cost [MUSD/yr]"
    cap = _bars(cap_ax)
    widths = [w for _, w in cap]
    assert widths == sorted(widths, reverse=True)
    items = {k[len("capex_"):].split(" [")[0]: v / 1e6 for k, v in row.items() if k.startswith("capex_") and v > 0}
    got = dict(cap)
    for name, v in items.items():
        assert got[name.replace("_", " ").capitalize()] == pytest.approx(v)
    assert got["First catalyst charge"] == pytest.approx(row["catalyst_charge [USD]"] / 1e6)
    # the bars add up to the fixed capital (bare modules + indirect costs + first catalyst)
    assert sum(widths) == pytest.approx(row["fixed_capital [USD]"] / 1e6, rel=1e-9)
    op = _bars(op_ax)
    assert sum(w for _, w in op) == pytest.approx(row["opex_total [USD/yr]"] / 1e6, rel=1e-9)
    assert dict(op)["Sulfur"] == pytest.approx(row["opex_sulfur [USD/yr]"] / 1e6)
    # Turton et al., Analysis, Synthesis and Design of Chemical Processes, 4th ed., Eq. 8.2:
    # COM_d = 0.180 FCI + 2.73 C_OL + 1.23 (C_UT + C_WT + C_RM); the items list C_UT and C_RM at
    # face value, so the rest of the total is 0.23 (C_UT + C_RM).
    c_ut_rm = sum(row[f"opex_{k} [USD/yr]"] for k in ("electricity", "fuel", "cooling_water", "catalyst", "sulfur"))
    assert dict(op)[plots.OTHER_OPEX] == pytest.approx(0.23 * c_ut_rm / 1e6, rel=1e-9)
    # the same from an Optimum and from a one-row DataFrame
    opt = Optimum({}, 0.0, row.to_dict(), [], True)
    assert _bars(plots.cost_breakdown_chart(opt).axes[0]) == cap
    assert _bars(plots.cost_breakdown_chart(row.to_frame().T).axes[1]) == op


def test_cost_breakdown_bad_input(acid):
    df = acid.evaluate({"pressure": [1.4e5, 1.5e5]})
    with pytest.raises(InputError, match="one operating point"):
        plots.cost_breakdown_chart(df)
    with pytest.raises(InputError, match="capex_"):
        plots.cost_breakdown_chart({"npv [USD]": 1.0})


# ------------------------------------------------------------------------------------------------
# cash flows
# ------------------------------------------------------------------------------------------------


def test_cash_flow_chart_bars_and_lines_against_hand_and_numpy_financial():
    npf = pytest.importorskip("numpy_financial")
    cf = cash_flows(100e6, 30e6, 10e6, discount_rate=0.10, tax_rate=0.0, plant_life=10,
                    construction_schedule=(0.5, 0.5))
    # By hand: 50 MUSD out in years 0 and 1, then 30 - 10 = 20 MUSD a year for 10 years.
    net = np.r_[-50.0, -50.0, np.full(10, 20.0)]
    for table in (cf, cf.to_frame()):
        fig = plots.cash_flow_chart(table)
        _check_figure(fig)
        ax = fig.axes[0]
        assert ax.get_xlabel() == "Project year [yr]"
        assert ax.get_ylabel() == "Cash flow [MUSD]"
        heights = [p.get_height() for p in sorted(ax.patches, key=lambda p: p.get_x())]
        assert heights == pytest.approx(net)
        assert [p.get_hatch() for p in sorted(ax.patches, key=lambda p: p.get_x())][:3] == ["////", "////", None]
        assert _line(ax, "cumulative cash flow").get_ydata() == pytest.approx(np.cumsum(net))
        disc = _line(ax, "cumulative discounted").get_ydata()
        assert disc[-1] == pytest.approx(npf.npv(0.10, net), rel=1e-12)  # numpy-financial 1.0
        assert any(t.get_text() == f"NPV {npf.npv(0.10, net):.3g} MUSD" for t in ax.texts)


def test_cash_flow_chart_bad_input():
    with pytest.raises(InputError, match="net cash flow"):
        plots.cash_flow_chart(pd.DataFrame({"x [USD]": [1.0]}))


# ------------------------------------------------------------------------------------------------
# tornado
# ------------------------------------------------------------------------------------------------


def _tornado_frame():
    return pd.DataFrame({
        "parameter": ["catalyst_activity", "product_price", "ambient_temperature", "sulfur_price"],
        "low": [0.6, 0.06, 293.15, 0.06], "high": [1.1, 0.16, 313.15, 0.30],
        "unit": ["-", "USD/kg", "K", "USD/kg"],
        "npv_low": [30.9e6, -47.6e6, 33.0e6, 80.2e6], "npv_high": [32.1e6, 151.5e6, 31.0e6, -112.5e6],
        "base": [32.0e6] * 4,
    })


def test_tornado_orders_by_swing_and_draws_from_the_base():
    df = _tornado_frame()
    fig = plots.tornado_chart(df)
    _check_figure(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "NPV [MUSD]"
    # expected order, by hand: |high - low| = 1.2, 199.1, 2.0, 192.7 MUSD -> largest first
    swing = (df["npv_high"] - df["npv_low"]).abs()
    expected = list(df.loc[swing.sort_values(ascending=False).index, "parameter"])
    assert expected == ["product_price", "sulfur_price", "ambient_temperature", "catalyst_activity"]
    top_down = [lab.get_text() for _, lab in sorted(zip(ax.get_yticks(), ax.get_yticklabels(), strict=True),
                                                    key=lambda t: -t[0])]
    assert [t.split("\n")[0] for t in top_down] == ["Product price", "Sulfur price", "Ambient temperature",
                                                    "Catalyst activity"]
    assert top_down[0].split("\n")[1] == "0.06 to 0.16 USD/kg"
    assert top_down[2].split("\n")[1] == "20 to 40 °C"  # 293.15 K, 313.15 K (SI Brochure 2.3.1)
    # every bar starts at the base (32 MUSD) and ends at the output at the low or high value
    ends = sorted(round(p.get_x() + p.get_width(), 6) for p in ax.patches)
    assert all(p.get_x() == pytest.approx(32.0) for p in ax.patches)
    assert ends == pytest.approx(sorted(np.r_[df["npv_low"], df["npv_high"]] / 1e6))
    assert any(list(ln.get_xdata()) == [32.0, 32.0] for ln in ax.get_lines())  # the base line
    fig2 = plots.tornado_chart(df, max_bars=2)
    assert len(fig2.axes[0].get_yticks()) == 2


def test_tornado_reads_the_other_table_shapes():
    # Index "parameter" with output_low/output_high and base (a swing table), and a result
    # object with to_frame(), a base mapping and its objective column: same bars, same order.
    df = _tornado_frame().set_index("parameter").rename(columns={"npv_low": "output_low", "npv_high": "output_high"})
    ref = plots.tornado_chart(_tornado_frame()).axes[0]

    def bars(ax):
        return sorted((round(p.get_y(), 6), round(p.get_width(), 9)) for p in ax.patches)

    assert bars(plots.tornado_chart(df, unit="USD").axes[0]) == bars(ref)

    class Result:  # the duck type a study's tornado returns
        objective_column = "npv [USD]"

        def __init__(self):
            self.base = {"reoptimized": 32.0e6, "fixed": 31.0e6}

        def to_frame(self):
            return df.drop(columns="base").rename(columns=lambda c: c.replace("output_", "objective_"))

    ax = plots.tornado_chart(Result()).axes[0]
    assert bars(ax) == bars(ref) and ax.get_xlabel() == "NPV [MUSD]"


def test_tornado_bad_input():
    with pytest.raises(InputError, match="npv_high"):
        plots.tornado_chart(_tornado_frame().drop(columns="npv_high"))
    with pytest.raises(InputError, match="no rows"):
        plots.tornado_chart(_tornado_frame().iloc[:0])


# ------------------------------------------------------------------------------------------------
# NPV distribution
# ------------------------------------------------------------------------------------------------


def test_distribution_chart_percentiles_equal_numpys():
    rng = np.random.default_rng(7)
    npv = rng.normal(25e6, 50e6, 500)
    df = pd.DataFrame({"product_price [USD/kg]": rng.uniform(0.06, 0.16, 500), "npv [USD]": npv})
    fig = plots.distribution_chart(df)
    _check_figure(fig)
    ax, ax2 = fig.axes
    assert ax.get_xlabel() == "NPV [MUSD]"
    assert ax.get_ylabel() == "Share of samples per bin [%]"
    assert ax2.get_ylabel() == "Cumulative probability [%]"
    expected = np.percentile(npv / 1e6, [10, 50, 90])  # numpy's default (linear) method
    for p, x in zip((10, 50, 90), expected, strict=True):
        ln = _line(ax2, f"P{p} =")
        assert ln.get_xdata()[0] == pytest.approx(x, rel=1e-12)
        assert f"{x:.3g} MUSD" in ln.get_label()
    # the bins hold every sample (100 %), the empirical CDF ends at 100 %
    assert sum(p.get_height() for p in ax.patches if p.get_label() != "NPV below zero") == pytest.approx(100.0)
    cdf = _line(ax2, "cumulative probability")
    assert cdf.get_ydata()[-1] == pytest.approx(100.0) and np.all(np.diff(cdf.get_ydata()) >= 0)
    share_neg = 100.0 * np.mean(npv < 0)
    assert fig.legends[0].get_title().get_text() == f"500 samples; P(NPV < 0) = {share_neg:.1f} %"
    # a bare array with the column name for the label gives the same lines
    fig_a = plots.distribution_chart(npv, "npv [USD]")
    assert _line(fig_a.axes[1], "P90").get_xdata()[0] == pytest.approx(expected[2], rel=1e-12)


def test_distribution_chart_bad_input():
    with pytest.raises(InputError, match="non-finite"):
        plots.distribution_chart(np.array([1.0, np.nan, 2.0]), "npv [USD]")
    with pytest.raises(InputError, match="percentiles"):
        plots.distribution_chart(np.arange(5.0), "npv [USD]", percentiles=(0, 50))


# ------------------------------------------------------------------------------------------------
# Sobol indices
# ------------------------------------------------------------------------------------------------

# Ishigami function, a = 7, b = 0.1: analytic indices (Saltelli et al. 2008, section 4.6):
# S1 = (0.3139, 0.4424, 0), ST = (0.5576, 0.4424, 0.2437).
ISHIGAMI = {"x1": (0.3139, 0.5576), "x2": (0.4424, 0.4424), "x3": (0.0, 0.2437)}


def _sobol_frame():
    rows = []
    for out, scale in (("npv", 1.0), ("irr", 0.5)):
        for p, (s1, st) in ISHIGAMI.items():
            rows.append({"output": out, "parameter": p, "S1": s1 * scale, "S1_conf": 0.02,
                         "ST": st * scale, "ST_conf": 0.03})
    return pd.DataFrame(rows).set_index(["output", "parameter"])


def test_sobol_chart_bars_and_confidence_intervals():
    fig = plots.sobol_chart(_sobol_frame())  # several outputs: "npv" by default
    _check_figure(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "Sobol index [-]"
    assert ax.get_title("left") == "Sobol indices of NPV"
    labels = [lab.get_text() for _, lab in sorted(zip(ax.get_yticks(), ax.get_yticklabels(), strict=True),
                                                  key=lambda t: -t[0])]
    assert labels == ["X1", "X2", "X3"]
    from matplotlib.container import BarContainer

    st_bars, s1_bars = [c for c in ax.containers if isinstance(c, BarContainer)]
    order = ["x1", "x2", "x3"]  # by total index, largest on top (0.5576 > 0.4424 > 0.2437)
    ys_st = [b.get_y() for b in st_bars.patches]
    assert ys_st == sorted(ys_st, reverse=True)
    assert [b.get_width() for b in st_bars.patches] == pytest.approx([ISHIGAMI[p][1] for p in order])
    assert [b.get_width() for b in s1_bars.patches] == pytest.approx([ISHIGAMI[p][0] for p in order])
    # the whiskers span estimate +- confidence half-width
    seg = st_bars.errorbar.lines[2][0].get_segments()
    assert [s[1][0] - s[0][0] for s in seg] == pytest.approx([0.06] * 3)
    assert [(s[0][0] + s[1][0]) / 2 for s in seg] == pytest.approx([ISHIGAMI[p][1] for p in order])
    fig_irr = plots.sobol_chart(_sobol_frame(), output="irr")
    irr_st = next(c for c in fig_irr.axes[0].containers if isinstance(c, BarContainer))
    assert [b.get_width() for b in irr_st.patches] == pytest.approx(
        [0.5 * ISHIGAMI[p][1] for p in order])


def test_sobol_chart_bad_input():
    df = _sobol_frame().rename(index={"npv": "lcop"})
    with pytest.raises(InputError, match="choose one with output="):
        plots.sobol_chart(df)
    with pytest.raises(InputError, match="not in the indices"):
        plots.sobol_chart(df, output="npv")
    with pytest.raises(InputError, match="ST_conf"):
        plots.sobol_chart(_sobol_frame().drop(columns="ST_conf"))


# ------------------------------------------------------------------------------------------------
# optimal decisions across samples
# ------------------------------------------------------------------------------------------------


def test_decision_scatter_lower_triangle_in_display_units():
    rng = np.random.default_rng(3)
    n = 40
    df = pd.DataFrame({"pressure [Pa]": rng.uniform(150e5, 220e5, n),
                       "inlet_temperature [K]": rng.uniform(630.0, 680.0, n),
                       "purge_fraction [-]": rng.uniform(0.005, 0.03, n),
                       "npv [USD]": rng.normal(2e8, 1e7, n)})
    opt = {"pressure": 1.85e7, "inlet_temperature": 652.7, "purge_fraction": 0.005}
    fig = plots.decision_scatter(df, ["pressure", "inlet_temperature", "purge_fraction"], optimum=opt)
    _check_figure(fig)
    grid = np.array(fig.axes).reshape(2, 2)
    assert not grid[0, 1].axison  # upper triangle left empty
    assert grid[1, 0].get_xlabel() == "Pressure [bar]" and grid[1, 1].get_xlabel() == "Inlet temperature [°C]"
    assert grid[0, 0].get_ylabel() == "Inlet temperature [°C]" and grid[1, 0].get_ylabel() == "Purge fraction [%]"
    pts = _line(grid[1, 1], "optimum of a sample")
    assert pts.get_xdata() == pytest.approx(df["inlet_temperature [K]"] - ZERO_C)
    assert pts.get_ydata() == pytest.approx(100.0 * df["purge_fraction [-]"])
    star = _line(grid[1, 0], "deterministic optimum")
    assert (star.get_xdata()[0], star.get_ydata()[0]) == pytest.approx((185.0, 0.5))
    two = plots.decision_scatter(df, ["pressure", "inlet_temperature"])
    assert len(two.axes) == 1 and two.axes[0].get_ylabel() == "Inlet temperature [°C]"


def test_decision_scatter_bad_input():
    df = pd.DataFrame({"pressure [Pa]": [1e7, 2e7]})
    with pytest.raises(InputError, match="at least two"):
        plots.decision_scatter(df, ["pressure"])
    with pytest.raises(InputError, match="not found"):
        plots.decision_scatter(df, ["pressure", "inlet_temperature"])


# ------------------------------------------------------------------------------------------------
# the house style stays inside the functions
# ------------------------------------------------------------------------------------------------


def test_chart_shows_itself_as_png_in_a_notebook(analytic_landscape):
    # IPython's display protocol: an object with _repr_png_ is shown as that image (IPython docs,
    # "Rich output"); PNG files start with the 8-byte signature (ISO/IEC 15948:2004, 5.2).
    fig = plots.tornado_chart(_tornado_frame())
    assert fig._repr_png_()[:8] == b"\x89PNG\r\n\x1a\n"


def test_no_global_state_changes(analytic_landscape):
    before = dict(mpl.rcParams)
    plots.objective_map(analytic_landscape, "pressure", "inlet_temperature")
    plots.distribution_chart(np.linspace(-1e6, 1e6, 50), "npv [USD]")
    plots.tornado_chart(_tornado_frame())
    assert dict(mpl.rcParams) == before
    import sys
    if "matplotlib.pyplot" in sys.modules:  # if anything imported pyplot, nothing was registered
        assert sys.modules["matplotlib.pyplot"].get_fignums() == []
