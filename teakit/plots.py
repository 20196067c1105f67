"""Figures of study results for a memo: every function returns a :class:`matplotlib.figure.Figure`.

The functions take the objects a study produces (DataFrames whose column names carry units,
:class:`~teakit.study.study.Optimum`, :class:`~teakit.finance.CashFlows`, a
:class:`~teakit.process.result.ProcessResult`) plus column names, and draw them in one house style
(:data:`STYLE`, applied inside each function with :func:`matplotlib.rc_context`, so the caller's
settings are left as they were). Figures are built with the object API on a detached
:class:`~matplotlib.figure.Figure` (a :class:`Chart`): nothing is registered with pyplot, nothing
is shown, and any backend (Agg included) can save them. A notebook displays one as a PNG when it
is the value of a cell (or with ``display(fig)``); save one with
:func:`teakit.export.save_figure`.

Units. Values are SI inside teakit; axes show the engineer's display units (:func:`to_display`):
bar, degC, MUSD, t/d, MW, m3, and percent for fractions. Every axis label carries its unit in
brackets, e.g. ``"Pressure [bar]"``.

Greyscale. Series differ by line style, marker and hatch as well as colour, and the filled maps
use a colour map whose lightness falls monotonically, so a printout in black and white reads.

Conventions. P10, P50 and P90 are the 10th, 50th and 90th percentiles of the samples (10 % of
the outcomes lie below P10), computed as :func:`numpy.percentile` does (linear interpolation).
A tornado bar spans the output between a parameter at its low and at its high value, the others
at their base values; bars are ordered by that swing.

References
----------
- Percentiles: numpy's default, definition 7 of R. J. Hyndman & Y. Fan, "Sample quantiles in
  statistical packages", The American Statistician 50, 361 (1996) (from memory); the cumulative
  curve is the empirical distribution function of the samples.
- Sobol indices as estimated by the study (I. M. Sobol, Math. Comput. Simul. 55, 271, 2001;
  A. Saltelli, Comput. Phys. Commun. 145, 280, 2002); the chart draws what it is given.
- Equilibrium lines: :meth:`teakit.chemistry.reaction.ReactionSystem.equilibrium` and
  :func:`teakit.process.cases.so2.equilibrium_line`; cash flows: :mod:`teakit.finance`.
- Tornado charts and P10/P50/P90: common practice in project appraisal.

.. warning::

   Preliminary estimates for feasibility studies. Pressures, temperatures and costs shown are
   not design values: the applicable pressure-vessel code, local regulations and licensed
   engineers govern any design, particularly in hydrogen, ammonia and SO3 service.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from contextlib import contextmanager

import numpy as np
from matplotlib.figure import Figure

from teakit.errors import InputError

__all__ = [
    "PALETTE",
    "STYLE",
    "Chart",
    "bed_path_chart",
    "cash_flow_chart",
    "cost_breakdown_chart",
    "decision_scatter",
    "distribution_chart",
    "equilibrium_chart",
    "label",
    "objective_map",
    "sobol_chart",
    "to_display",
    "tornado_chart",
]

# ------------------------------------------------------------------------------------------------
# house style
# ------------------------------------------------------------------------------------------------

#: Series colours, dark to mid lightness so that they stay apart in greyscale: ink blue, ochre,
#: brick, sage, plum, slate.
PALETTE = ("#1d3b53", "#c08a2e", "#9a3b2f", "#6f8f72", "#6a4c7d", "#7a8793")
#: Line styles and markers that accompany the palette (series differ without colour).
LINESTYLES = ("-", "--", "-.", ":", (0, (5, 1, 1, 1, 1, 1)), (0, (8, 2)))
MARKERS = ("o", "s", "^", "D", "v", "P")
HATCHES = ("", "////", "....", "xxxx", "\\\\\\\\", "++")
#: Neutral tones: text and faint lines.
INK, FAINT = "#222222", "#bdbdbd"
#: Lightness steps of the filled maps, pale sand to deep ink (monotonic in luminance).
MAP_COLOURS = ("#f6f1e4", "#d9d2b3", "#a9b79f", "#6f9287", "#3f6873", "#1d3b53", "#0f1f2e")


def _style() -> dict:
    from cycler import cycler

    return {
        "font.family": "DejaVu Sans",
        "font.size": 8.5,
        "axes.titlesize": 9.5,
        "axes.titleweight": "bold",
        "axes.titlelocation": "left",
        "axes.titlepad": 8.0,
        "axes.labelsize": 8.5,
        "axes.labelcolor": INK,
        "axes.edgecolor": "#4d4d4d",
        "axes.linewidth": 0.7,
        "axes.spines.top": False,
        "axes.spines.right": False,
        "axes.grid": True,
        "axes.axisbelow": True,
        "axes.facecolor": "white",
        "axes.prop_cycle": cycler(color=list(PALETTE)) + cycler(linestyle=list(LINESTYLES)),
        "axes.formatter.useoffset": False,
        "axes.formatter.limits": (-4, 6),
        "grid.color": "#dedede",
        "grid.linewidth": 0.5,
        "grid.linestyle": "-",
        "xtick.labelsize": 7.5,
        "ytick.labelsize": 7.5,
        "xtick.color": "#4d4d4d",
        "ytick.color": "#4d4d4d",
        "xtick.direction": "out",
        "ytick.direction": "out",
        "xtick.major.size": 3.0,
        "ytick.major.size": 3.0,
        "lines.linewidth": 1.5,
        "lines.markersize": 4.5,
        "legend.fontsize": 7.5,
        "legend.frameon": False,
        "legend.handlelength": 2.6,
        "patch.linewidth": 0.6,
        "hatch.linewidth": 0.6,
        "hatch.color": INK,
        "figure.facecolor": "white",
        "figure.dpi": 100,
        "figure.constrained_layout.h_pad": 0.06,
        "figure.constrained_layout.w_pad": 0.06,
        "savefig.dpi": 300,
        "savefig.facecolor": "white",
        "svg.hashsalt": "teakit",
        "pdf.fonttype": 42,
    }


#: The house style as rcParams (applied inside every figure function).
STYLE = _style()


@contextmanager
def _house():
    import matplotlib as mpl

    with mpl.rc_context(STYLE):
        yield


class Chart(Figure):
    """A :class:`matplotlib.figure.Figure` that also shows itself in a notebook.

    Every function of this module returns one. It is a plain Figure for matplotlib (save it,
    add to it); the only addition is :meth:`_repr_png_`, so that Jupyter displays it as an image
    without ``%matplotlib inline`` or pyplot (a detached Figure otherwise shows as text).
    """

    def _repr_png_(self):
        import io

        buf = io.BytesIO()
        self.savefig(buf, format="png", dpi=110)
        return buf.getvalue()


def _figure(width=6.3, height=3.9):
    """A detached figure (no pyplot) in the house size: 16 cm wide, a memo column."""
    return Chart(figsize=(width, height), layout="constrained")


def _wrap(text: str, width_in: float, size: float) -> str:
    """Break a title into lines that fit ``width_in`` inches at ``size`` points (bold DejaVu Sans
    averages about 0.62 em per character)."""
    import textwrap

    per_line = max(int(width_in * 72.0 / (0.62 * size)), 20)
    return "\n".join(textwrap.wrap(str(text), per_line)) if len(str(text)) > per_line else str(text)


def _title(ax, text: str):
    """An axes title (left, bold: the house style) wrapped to the axes' width."""
    fig = ax.get_figure()
    frac = ax.get_position().width if ax.get_position().width > 0 else 0.8
    ax.set_title(_wrap(text, fig.get_figwidth() * frac, STYLE["axes.titlesize"]))


def _suptitle(fig, text: str):
    fig.suptitle(_wrap(text, fig.get_figwidth() * 0.97, 10.0), x=0.01, ha="left", fontweight="bold",
                 fontsize=10)


def _legend_columns(fig, labels, most: int = 3) -> int:
    """Columns of a legend below the axes so that it fits the figure's width (legend text at
    about 0.55 em per character, plus the handle and the gaps, about 7 characters)."""
    chars = fig.get_figwidth() * 72.0 / (0.55 * STYLE["legend.fontsize"])
    longest = max((len(t) for t in labels), default=1) + 7
    return max(1, min(most, len(labels), int(chars // longest)))


def _map_cmap():
    from matplotlib.colors import LinearSegmentedColormap

    return LinearSegmentedColormap.from_list("teakit_map", MAP_COLOURS)


# ------------------------------------------------------------------------------------------------
# columns, names and display units
# ------------------------------------------------------------------------------------------------

_ACRONYMS = {"npv": "NPV", "irr": "IRR", "lcop": "LCOP", "capex": "Capex", "opex": "Opex",
             "so2": "SO2", "so3": "SO3", "nh3": "NH3", "h2": "H2", "n2": "N2", "o2": "O2"}
_FRACTION_NAMES = ("yield", "conversion", "fraction", "strength", "efficiency", "availability")
_DIFFERENCE_NAMES = ("margin", "approach", "difference", "drop", "rise")


def _split(column: str) -> tuple[str, str]:
    """``"pressure [Pa]"`` -> ``("pressure", "Pa")``; no bracket -> unit ``""``."""
    m = re.fullmatch(r"\s*(.*?)\s*\[(.*)\]\s*", str(column))
    if m:
        return m.group(1), m.group(2)
    return str(column), ""


def to_display(values, unit: str, name: str = ""):
    """Values in SI ``unit`` converted to the unit an engineer reads on a chart.

    Parameters
    ----------
    values : float or array_like
        Values in ``unit`` [unit].
    unit : str
        SI unit as teakit writes it: ``"Pa"``, ``"K"``, ``"USD"``, ``"USD/yr"``, ``"kg/s"``,
        ``"W"``, ``"m3"``, ``"m**3*s/kg"``, ``"-"``, ... [-]
    name : str
        Quantity name; decides between absolute values and differences (``"margin"``,
        ``"approach"``, ``"drop"``: kelvin stay kelvin, pascal become kPa) and whether a
        dimensionless value is a fraction shown in percent (``"yield"``, ``"conversion"``,
        ``"fraction"``, ``"strength"``, ``"efficiency"``) [-]

    Returns
    -------
    values : numpy.ndarray or float
        Converted values [display unit].
    unit : str
        The display unit: bar (absolute pressure), kPa (pressure differences), degC written
        ``"°C"``, MUSD, MUSD/yr, t/d, MW, t, m³, L/(t/d) (catalyst per acid capacity), %,
        %/yr; other units unchanged [-]

    Examples
    --------
    >>> to_display(2.0e7, "Pa", "pressure")
    (200.0, 'bar')
    >>> to_display(723.15, "K", "inlet_temperature")[1]
    '°C'
    """
    v = np.asarray(values, dtype=float)
    low = name.lower()
    diff = any(k in low for k in _DIFFERENCE_NAMES)
    u = unit.strip()
    if u == "Pa":
        out, du = (v / 1e3, "kPa") if diff else (v / 1e5, "bar")
    elif u == "K":
        out, du = (v, "K") if diff else (v - 273.15, "°C")
    elif u == "USD":
        out, du = v / 1e6, "MUSD"
    elif u == "USD/yr":
        out, du = v / 1e6, "MUSD/yr"
    elif u == "kg/s":
        out, du = v * 86.4, "t/d"
    elif u == "W":
        out, du = v / 1e6, "MW"
    elif u == "kg":
        out, du = v / 1e3, "t"
    elif u in ("m3", "m**3"):
        out, du = v, "m³"
    elif u in ("m3/s", "m**3/s"):
        out, du = v, "m³/s"
    elif u in ("m**3*s/kg", "m3*s/kg", "m3 s/kg"):
        # 1 L of catalyst per t/d of product = 1e-3 m3 / (1000 kg / 86400 s) = 0.0864 m3 s/kg
        out, du = v / 0.0864, "L/(t/d)"
    elif u == "1/yr":
        out, du = v * 100.0, "%/yr"
    elif u in ("-", "") and any(k in low for k in _FRACTION_NAMES):
        out, du = v * 100.0, "%"
    else:
        out, du = v, (u or "-")
    return (float(out) if out.ndim == 0 else out), du


def _pretty(name: str) -> str:
    if str(name).startswith("fixed_"):  # a figure at the deterministic optimum held fixed
        return f"{_pretty(str(name)[len('fixed_'):])} (fixed decisions)"
    words = []
    for w in str(name).replace("_", " ").split():
        if w.lower() in _ACRONYMS:
            words.append(_ACRONYMS[w.lower()])
        else:  # "bed1" -> "bed 1"
            words.append(re.sub(r"^([A-Za-z]{2,})(\d+)$", r"\1 \2", w))
    text = " ".join(words)
    return text[:1].upper() + text[1:] if text else text


def label(column: str, unit: str | None = None) -> str:
    """An axis label with its display unit: ``"bed1_inlet_temperature [K]"`` -> ``"Bed 1 inlet
    temperature [°C]"``.

    Parameters
    ----------
    column : str
        Column name ``"<name> [<SI unit>]"`` (or a bare name with ``unit``) [-]
    unit : str, optional
        SI unit when ``column`` has none [-]

    Returns
    -------
    str
        The label [-]
    """
    name, u = _split(column)
    _, du = to_display(0.0, unit if unit is not None else u, name)
    return f"{_pretty(name)} [{du}]"


def _column(df, name: str, what: str = "column") -> str:
    """The column of ``df`` called ``name`` or ``"name [unit]"``."""
    cols = [str(c) for c in df.columns]
    if name in cols:
        return name
    hits = [c for c in cols if _split(c)[0] == name]
    if len(hits) == 1:
        return hits[0]
    choices = ", ".join(cols[:40]) + (" ..." if len(cols) > 40 else "")
    if not hits:
        raise InputError(f"{what} {name!r} not found; columns: {choices}")
    raise InputError(f"{what} {name!r} is ambiguous: {', '.join(hits)}")


def _finite(name: str, v) -> np.ndarray:
    a = np.asarray(v, dtype=float)
    bad = ~np.isfinite(a)
    if bad.any():
        raise InputError(f"{name} has {int(bad.sum())} non-finite value(s) (NaN or inf) of {a.size}; "
                         "drop or repair them before plotting")
    return a


def _frame(data, what: str):
    import pandas as pd

    if isinstance(data, pd.DataFrame):
        return data
    raise InputError(f"{what} must be a pandas DataFrame, got {type(data).__name__}")


def _decision_point(point, names) -> dict | None:
    """Decision values [SI] from an Optimum, a mapping or None."""
    if point is None:
        return None
    dec = getattr(point, "decisions", point)
    if not isinstance(dec, Mapping):
        raise InputError(f"expected an Optimum or a mapping of decision values, got {type(point).__name__}")
    missing = [n for n in names if n not in dec]
    if missing:
        raise InputError(f"the point given has no value for decision(s) {missing}; it has {', '.join(map(str, dec))}")
    return {n: float(dec[n]) for n in names}


def _fmt(v: float) -> str:
    """A number for a label, 3 significant figures, no exponent for everyday sizes."""
    if v == 0 or 1e-3 <= abs(v) < 1e5:
        return f"{v:.3g}" if abs(v) < 1000 else f"{v:,.0f}"
    return f"{v:.3g}"


# ------------------------------------------------------------------------------------------------
# objective map
# ------------------------------------------------------------------------------------------------


#: SI unit of each study objective (teakit.study.study.OBJECTIVES).
_OBJECTIVE_UNITS = {"npv": "USD", "annual_profit": "USD/yr", "irr": "1/yr", "lcop": "USD/kg"}


def _quote(point) -> str:
    """``" (NPV 32 MUSD)"`` for an Optimum with a finite objective, else ``""``."""
    val = getattr(point, "objective", None)
    name = getattr(point, "objective_name", "npv")
    if val is None or not np.isfinite(val) or name not in _OBJECTIVE_UNITS:
        return ""
    v, vu = to_display(float(val), _OBJECTIVE_UNITS[name], name)
    return f" ({_pretty(name)} {_fmt(v)} {vu})"


def _grid(df, xc, yc, zc):
    xv = _finite(xc, df[xc].to_numpy())
    yv = _finite(yc, df[yc].to_numpy())
    X = np.unique(xv)
    Y = np.unique(yv)
    if X.size < 2 or Y.size < 2 or X.size * Y.size != len(df):
        raise InputError(f"the landscape must be a full grid of {xc!r} x {yc!r} (as Study.landscape returns): "
                         f"found {X.size} x {Y.size} distinct values for {len(df)} rows")
    ix = np.searchsorted(X, xv)
    iy = np.searchsorted(Y, yv)
    if np.unique(iy * X.size + ix).size != len(df):
        raise InputError(f"the landscape repeats some ({xc}, {yc}) points; give one row per grid point")
    Z = np.full((Y.size, X.size), np.nan)
    Z[iy, ix] = np.asarray(df[zc].to_numpy(), dtype=float)
    return X, Y, Z, (iy, ix)


def objective_map(landscape, x: str, y: str, optimum=None, *, objective="npv", constraints=None,
                  max_yield=None, levels: int = 12, title: str | None = None):
    """Filled contours of the objective over two decisions, the optimum and the limits marked.

    Parameters
    ----------
    landscape : pandas.DataFrame
        A full grid of operating points, as :meth:`Study.landscape <teakit.study.study.Study.
        landscape>` returns (columns ``"<name> [<unit>]"``, ``status``, ``feasible``,
        ``margin_<constraint> [...]``).
    x, y : str
        The two decisions on the axes (names such as ``"pressure"`` or full column names) [-]
    optimum : Optimum or mapping, optional
        The profit optimum (its ``decisions`` [SI] place the marker; its ``objective`` is quoted
        in the legend). If it carries ``max_yield``, that point is marked too.
    objective : str or sequence of str
        Column(s) to map, one panel each, e.g. ``"npv"`` or ``("npv", "yield")`` for the profit
        map beside the yield map [-]
    constraints : sequence of str, optional
        Constraints whose boundary (margin = 0) is drawn; default every ``margin_*`` column;
        ``()`` for none [-]
    max_yield : Optimum or mapping, optional
        The maximum-yield point, when not carried by ``optimum``. Both points are drawn at their
        values of ``x`` and ``y``; their other decisions may differ from those the landscape
        holds fixed (the map is a slice through ``at`` of :meth:`Study.landscape`).
    levels : int
        Number of contour levels, 3 to 50 [-]
    title : str, optional
        Figure title.

    Returns
    -------
    matplotlib.figure.Figure
        One panel per objective: the objective in display units (filled, with labelled contour
        lines), the region where a constraint is violated or the process is infeasible hatched,
        each constraint boundary as its own line style, the profit optimum (star) and the
        maximum-yield point (diamond).

    Raises
    ------
    InputError
        If a column is missing, the landscape is not a full grid, values are not finite, or
        ``levels`` is out of range.
    """
    import matplotlib as mpl
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    df = _frame(landscape, "landscape")
    if not (isinstance(levels, int | np.integer) and 3 <= levels <= 50):
        raise InputError(f"levels must be a whole number from 3 to 50, got {levels!r}")
    xc, yc = _column(df, x, "decision"), _column(df, y, "decision")
    xn, xu = _split(xc)
    yn, yu = _split(yc)
    objectives = [objective] if isinstance(objective, str) else list(objective)
    if not objectives:
        raise InputError("objective must name at least one column")
    zcs = [_column(df, o, "objective") for o in objectives]
    if constraints is None:
        mcs = [c for c in df.columns if str(c).startswith("margin_")]
    else:
        mcs = [_column(df, c if str(c).startswith("margin_") else f"margin_{c}", "constraint") for c in constraints]
    opt = _decision_point(optimum, (xn, yn))
    my = max_yield if max_yield is not None else getattr(optimum, "max_yield", None)
    myp = _decision_point(my, (xn, yn))
    ok = (df["status"].astype(str).to_numpy() == "ok") if "status" in df else np.ones(len(df), bool)
    feas = df["feasible"].to_numpy(dtype=bool) if "feasible" in df else ok

    with _house():
        n = len(zcs)
        fig = _figure(6.3 if n == 1 else 3.6 * n + 0.6, 4.4 if n == 1 else 3.9)
        axes = fig.subplots(1, n, squeeze=False)[0]
        X, Y, _, (iy, ix) = _grid(df, xc, yc, zcs[0])
        Xd, _ = to_display(X, xu, xn)
        Yd, _ = to_display(Y, yu, yn)
        bad = np.zeros((Y.size, X.size), bool)
        bad[iy, ix] = ~feas
        live = np.zeros((Y.size, X.size), bool)
        live[iy, ix] = ok
        handles = {}
        for ax, zc in zip(axes, zcs, strict=True):
            zn, zu = _split(zc)
            _, _, Z, _ = _grid(df, xc, yc, zc)
            Zd, zdu = to_display(Z, zu, zn)
            if not np.all(np.isfinite(Zd[live])):
                raise InputError(f"{zc!r} has non-finite values at points the process solved (status 'ok')")
            Zm = np.ma.masked_where(~live, Zd)
            if Zm.count() == 0:
                raise InputError(f"no point of the landscape is feasible for the process: nothing to map for {zc!r}")
            cf = ax.contourf(Xd, Yd, Zm, levels=levels, cmap=_map_cmap())
            ax.contour(Xd, Yd, Zm, levels=cf.levels, colors="white", linewidths=0.3, alpha=0.5)
            cb = fig.colorbar(cf, ax=ax, shrink=0.92, pad=0.02, aspect=25)
            cb.set_label(f"{_pretty(zn)} [{zdu}]")
            cb.ax.tick_params(labelsize=7)
            if bad.any():
                # Infeasible region: washed out (half-transparent white) and hatched, so that it
                # reads on dark and light fills alike and in greyscale.
                with mpl.rc_context({"hatch.color": "#3a3a3a", "hatch.linewidth": 0.5}):
                    ax.contourf(Xd, Yd, bad.astype(float), levels=[0.5, 1.5], colors=[(1, 1, 1, 0.5)],
                                hatches=["////"], zorder=2)
                handles["infeasible"] = Patch(facecolor="white", edgecolor="#3a3a3a", hatch="////",
                                              label="limit violated or process infeasible")
            for k, mc in enumerate(mcs):
                _, _, M, _ = _grid(df, xc, yc, mc)
                M = np.ma.masked_where(~live, M)
                if M.count() and M.min() < 0 < M.max():
                    ls = LINESTYLES[k % len(LINESTYLES)]
                    ax.contour(Xd, Yd, M, levels=[0.0], colors=INK, linewidths=1.3, linestyles=[ls], zorder=3)
                    cname = _pretty(_split(mc)[0][len("margin_"):])
                    if cname.split()[0] not in _ACRONYMS.values():
                        cname = cname[:1].lower() + cname[1:]
                    handles[mc] = Line2D([], [], color=INK, lw=1.3, ls=ls, label=f"limit: {cname}")
            if opt is not None:
                ox, _ = to_display(opt[xn], xu, xn)
                oy, _ = to_display(opt[yn], yu, yn)
                txt = "profit optimum" + _quote(optimum)
                ax.plot([ox], [oy], ls="none", marker="*", ms=13, mfc="white", mec=INK, mew=1.1,
                        zorder=5, label=txt, clip_on=False)
                handles["opt"] = Line2D([], [], ls="none", marker="*", ms=11, mfc="white", mec=INK,
                                        mew=1.1, label=txt)
            if myp is not None:
                mx, _ = to_display(myp[xn], xu, xn)
                myy, _ = to_display(myp[yn], yu, yn)
                mtxt = "maximum yield" + _quote(my)
                ax.plot([mx], [myy], ls="none", marker="D", ms=7, mfc=PALETTE[1], mec=INK, mew=1.0,
                        zorder=5, label=mtxt, clip_on=False)
                handles["my"] = Line2D([], [], ls="none", marker="D", ms=6, mfc=PALETTE[1], mec=INK,
                                       mew=1.0, label=mtxt)
            ax.set_xlabel(label(xc))
            ax.set_ylabel(label(yc))
            ax.set_title(_pretty(zn))
            ax.grid(False)
            ax.set_xlim(Xd.min(), Xd.max())
            ax.set_ylim(Yd.min(), Yd.max())
        if handles:
            fig.legend(handles=list(handles.values()), loc="outside lower center",
                       ncols=_legend_columns(fig, [h.get_label() for h in handles.values()]))
        if title:
            _suptitle(fig, title)
    return fig


# ------------------------------------------------------------------------------------------------
# equilibrium yield against pressure
# ------------------------------------------------------------------------------------------------


def equilibrium_chart(reaction, feed: Mapping, temperatures, pressures, *, species: str | None = None,
                      measure: str = "mole_fraction", eos: str = "default", title: str | None = None):
    """Equilibrium yield against pressure, one line per temperature.

    Parameters
    ----------
    reaction : Reaction, ReactionSystem or str
        The reaction(s), e.g. ``"N2 + 3 H2 = 2 NH3"``.
    feed : mapping
        Species to amount of the feed [mol, any basis].
    temperatures : sequence of float or str
        Temperatures, one line each (strings such as ``"450 degC"`` accepted) [K]
    pressures : array_like of float or str
        Absolute pressures along the horizontal axis, at least 2 [Pa]
    species : str, optional
        For ``measure="mole_fraction"`` the product shown (default the first product of the first
        reaction); for ``"conversion"`` the reactant converted (default its first reactant) [-]
    measure : {"mole_fraction", "conversion"}
        Equilibrium mole fraction of ``species`` or its conversion ``1 - n_eq / n_feed`` [-]
    eos : str
        Fugacity model passed to :meth:`ReactionSystem.equilibrium
        <teakit.chemistry.reaction.ReactionSystem.equilibrium>` (``"default"``: the system's own).
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
        Pressure [bar] against the measure [%], each temperature its own line style and marker.

    Raises
    ------
    InputError
        For an unknown species or measure, fewer than two pressures, or conditions the
        equilibrium solver rejects.
    """
    from teakit.chemistry.reaction import Reaction, ReactionSystem
    from teakit.units import to_si

    rx = Reaction(reaction) if isinstance(reaction, str) else reaction
    if not isinstance(rx, ReactionSystem):
        raise InputError(f"reaction must be an equation string, a Reaction or a ReactionSystem, got {type(reaction).__name__}")
    if measure not in ("mole_fraction", "conversion"):
        raise InputError(f"measure must be 'mole_fraction' or 'conversion', got {measure!r}")
    temps = [temperatures] if isinstance(temperatures, str) or np.ndim(temperatures) == 0 else list(temperatures)
    T = np.array([float(to_si(t, "K", "temperatures")) for t in temps])
    P = np.atleast_1d(np.asarray(to_si(list(pressures) if isinstance(pressures, list | tuple) else pressures,
                                       "Pa", "pressures"), dtype=float))
    if P.ndim != 1 or P.size < 2:
        raise InputError(f"pressures must be a 1-D array of at least 2 values [Pa], got shape {P.shape}")
    if T.ndim != 1 or T.size < 1:
        raise InputError("temperatures must hold at least one value [K]")
    nu = np.asarray(rx.nu)[0]
    names = list(rx.species)
    if species is None:
        pick = np.flatnonzero(nu > 0 if measure == "mole_fraction" else nu < 0)
        species = names[int(pick[0])]
    if measure == "conversion" and not np.asarray(feed.get(species, 0.0) > 0).all():
        raise InputError(f"species {species!r} must be fed (feed > 0) to show its conversion")
    P = np.sort(P)
    res = rx.equilibrium(T=T[:, None], P=P[None, :], feed=dict(feed), eos=eos)
    if species not in res.species:
        raise InputError(f"species {species!r} is not in the equilibrium result; species: {', '.join(res.species)}")
    k = res.species.index(species)
    if measure == "mole_fraction":
        Yv = res.y[..., k] * 100.0
        ylabel = f"Equilibrium {species} mole fraction [%]"
    else:
        Yv = (1.0 - res.moles[..., k] / float(feed[species])) * 100.0
        ylabel = f"Equilibrium {species} conversion [%]"
    Pd, pu = to_display(P, "Pa", "pressure")
    with _house():
        fig = _figure(6.3, 3.9)
        ax = fig.subplots()
        every = max(1, P.size // 8)
        for i, t in enumerate(T):
            ax.plot(Pd, Yv[i], color=PALETTE[i % len(PALETTE)], ls=LINESTYLES[i % len(LINESTYLES)],
                    marker=MARKERS[i % len(MARKERS)], markevery=(i % every, every), mfc="white",
                    label=f"{t - 273.15:.0f} °C", clip_on=False)
        ax.set_xlabel(f"Pressure [{pu}]")
        ax.set_ylabel(ylabel)
        ax.set_xlim(Pd.min(), Pd.max())
        if Yv.min() < 0.3 * Yv.max():
            ax.set_ylim(bottom=0)
        ax.legend(title="Temperature", loc="best")
        feed_txt = " + ".join(f"{_fmt(float(v))} {s}" for s, v in feed.items())
        equation = reaction if isinstance(reaction, str) else re.sub(r"^\w+\((.*)\)$", r"\1", repr(rx)).strip("'\"[]")
        _title(ax, title or f"{equation}; feed {feed_txt}")
    return fig


# ------------------------------------------------------------------------------------------------
# converter beds: temperature-conversion path over the equilibrium line
# ------------------------------------------------------------------------------------------------


def bed_path_chart(result, member: int = 0, *, equilibrium: bool = True, n_points: int = 80,
                   title: str | None = None):
    """Temperature-conversion path of each converter bed over the equilibrium line.

    Parameters
    ----------
    result : ProcessResult
        An SO2 converter result (:func:`teakit.process.cases.so2.so2_converter`) with the
        profiles ``bed_T`` [K], ``bed_conversion`` [-] and ``bed_inlet_n`` [mol/s].
    member : int
        Which batch member [-]
    equilibrium : bool
        Draw the equilibrium conversion against temperature (ideal gas,
        :func:`teakit.process.cases.so2.equilibrium_line`) at each gas segment's inlet pressure:
        one line for the beds before an intermediate absorption, one for those after.
    n_points : int
        Points of each equilibrium line, 10 to 1000 [-]
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
        Gas temperature [degC] against SO2 conversion (of the SO2 fed to the converter) [%]:
        each bed a line with its own marker, the cooling between beds dotted, the equilibrium
        line(s) and, where the result reports it, the catalyst temperature limit.

    Raises
    ------
    InputError
        If the result lacks the bed profiles or ``member`` is out of range.
    """
    from teakit.process.cases.so2 import SPECIES, equilibrium_line

    prof = getattr(result, "profiles", None)
    need = ("bed_T", "bed_conversion", "bed_inlet_n")
    if not isinstance(prof, Mapping) or any(k not in prof for k in need):
        raise InputError(f"result must be a converter ProcessResult with profiles {', '.join(need)}")
    B = np.shape(prof["bed_T"])[0]
    if not (isinstance(member, int | np.integer) and -B <= member < B):
        raise InputError(f"member must be a whole number from 0 to {B - 1}, got {member!r}")
    if not (isinstance(n_points, int | np.integer) and 10 <= n_points <= 1000):
        raise InputError(f"n_points must be a whole number from 10 to 1000, got {n_points!r}")
    T = np.asarray(prof["bed_T"])[member]  # (beds, points)
    X = np.asarray(prof["bed_conversion"])[member]
    n_in = np.asarray(prof["bed_inlet_n"])[member]  # (beds, species)
    nb = T.shape[0]
    vals = getattr(result, "values", {})
    iS = (SPECIES.index("SO2"), SPECIES.index("SO3"))
    sulfur = n_in[:, iS[0]] + n_in[:, iS[1]]
    F = float(n_in[0, iS[0]] + n_in[0, iS[1]])  # SO2 fed to the converter (bed 1 has no SO3 removed)
    # Gas segments: consecutive beds with the same sulfur flow (an absorber between them changes it).
    seg_start = [0] + [k for k in range(1, nb) if abs(sulfur[k] - sulfur[k - 1]) > 1e-9 * max(F, 1e-300)]
    with _house():
        fig = _figure(7.6, 4.2)
        ax = fig.subplots()
        Tlo, Thi = float(T.min()) - 25.0, float(T.max()) + 35.0
        if equilibrium:
            Tg = np.linspace(Tlo, Thi, int(n_points))
            for j, k in enumerate(seg_start):
                P_k = float(np.asarray(vals.get(f"bed{k + 1}_inlet_pressure", [1e5]))[member]) \
                    if f"bed{k + 1}_inlet_pressure" in vals else 1e5
                Xe = equilibrium_line(Tg, P_k, n_in[k], basis=F)
                end = seg_start[j + 1] if j + 1 < len(seg_start) else nb
                beds = f"bed {k + 1}" if end - k == 1 else f"beds {k + 1}–{end}"
                after = "\n(after intermediate absorption)" if k > 0 else ""
                ax.plot(Tg - 273.15, Xe * 100.0, color=FAINT if j else "#8c8c8c", lw=2.2,
                        ls="-" if j == 0 else "--", zorder=1,
                        label=f"equilibrium, {beds}, {P_k / 1e5:.2f} bar{after}")
        for k in range(nb):
            ax.plot(T[k] - 273.15, X[k] * 100.0, color=PALETTE[k % len(PALETTE)], ls="-", lw=1.8,
                    marker=MARKERS[k % len(MARKERS)], markevery=[0, T.shape[1] - 1], ms=5.5,
                    mfc="white", mew=1.2, zorder=3, label=f"bed {k + 1}")
            ax.annotate(f"{k + 1}", xy=(T[k, -1] - 273.15, X[k, -1] * 100.0), xytext=(6, -11),
                        textcoords="offset points", fontsize=7.5, fontweight="bold", color=INK)
        for k in range(nb):
            if k + 1 < nb:
                ax.plot([T[k, -1] - 273.15, T[k + 1, 0] - 273.15], [X[k, -1] * 100.0, X[k + 1, 0] * 100.0],
                        color=INK, ls=":", lw=1.0, zorder=2,
                        label="cooling between beds" if k == 0 else "_nolegend_")
        if "peak_catalyst_temperature" in vals and "catalyst_temperature_margin" in vals:
            lim = float(np.asarray(vals["peak_catalyst_temperature"])[member]
                        + np.asarray(vals["catalyst_temperature_margin"])[member])
            if Tlo < lim < Thi + 40.0:
                ax.axvline(lim - 273.15, color=PALETTE[2], ls="-.", lw=1.2, zorder=2,
                           label="catalyst temperature limit")
                Thi = max(Thi, lim + 10.0)
        ax.set_xlim(Tlo - 273.15, Thi - 273.15)
        ax.set_ylim(0, 102)
        ax.set_xlabel("Gas temperature [°C]")
        ax.set_ylabel("SO2 conversion [%]")
        fig.legend(*ax.get_legend_handles_labels(), loc="outside right center")
        _title(ax, title or "Converter beds against equilibrium")
    return fig


# ------------------------------------------------------------------------------------------------
# capital and operating cost breakdown
# ------------------------------------------------------------------------------------------------


def _row(metrics) -> dict:
    import pandas as pd

    m = getattr(metrics, "metrics", metrics)
    if isinstance(m, pd.DataFrame):
        if len(m) != 1:
            raise InputError(f"metrics must be one operating point; the DataFrame has {len(m)} rows (pick one with .iloc[[i]])")
        m = m.iloc[0]
    if isinstance(m, pd.Series):
        m = m.to_dict()
    if not isinstance(m, Mapping):
        raise InputError(f"metrics must be an Optimum, a mapping, a Series or a one-row DataFrame, got {type(metrics).__name__}")
    return {str(k): v for k, v in m.items()}


def _lookup(row: dict, name: str):
    for k, v in row.items():
        if k == name or _split(k)[0] == name:
            return k, v
    return None, None


def _barh(ax, labels, values, hatches, colour=PALETTE[0]):
    """Horizontal bars, first item on top, each bar's value written at its end; hatched bars
    are white with the hatch (greyscale-safe), the others filled with ``colour``."""
    values = np.asarray(values, dtype=float)
    y = np.arange(len(values))[::-1]
    for yi, v, lab, h in zip(y, values, labels, hatches, strict=True):
        ax.barh(yi, v, color="white" if h else colour, edgecolor=INK, height=0.66, hatch=h or None,
                label=lab)
    ax.set_yticks(y, labels)
    ax.set_ylim(-0.6, len(values) - 0.4)
    ax.grid(axis="y", visible=False)
    ax.tick_params(axis="y", length=0)
    top = max(float(np.max(values)), 1e-12)
    for yi, v in zip(y, values, strict=True):
        ax.text(v + 0.012 * top, yi, _fmt(float(v)), va="center", ha="left", fontsize=7, color=INK)
    ax.set_xlim(0, top * 1.14)


#: Bar for the part of the operating-cost total that no ``opex_`` item names.
OTHER_OPEX = "Other costs scaling with output"


def cost_breakdown_chart(metrics, *, title: str | None = None):
    """Capital and operating cost by item, side by side, largest item on top.

    Parameters
    ----------
    metrics : Optimum, mapping, pandas.Series or one-row DataFrame
        Figures of one operating point with unit-carrying names, e.g. ``optimum.metrics`` or a
        row of :meth:`Study.evaluate <teakit.study.study.Study.evaluate>`: ``capex_<item> [USD]``
        (bare-module cost of each equipment item), optionally ``catalyst_charge [USD]``,
        ``bare_module_cost [USD]`` and ``fixed_capital [USD]`` (the difference is shown as
        contingency, fee and auxiliary facilities), and ``opex_<item> [USD/yr]``
        (``opex_total`` is the panel's total, not a bar; what it holds beyond the items, such
        as the share of supervision and overheads that Turton's cost of manufacture, Eq. 8.2,
        puts on utilities and raw materials, is one hatched bar "Other costs scaling with
        output", so that the bars add up to the total).
    title : str, optional
        Figure title.

    Returns
    -------
    matplotlib.figure.Figure
        Left: capital by item [MUSD], equipment plain, catalyst and indirect items hatched;
        right: operating cost by item [MUSD/yr]. Items of zero cost are left out.

    Raises
    ------
    InputError
        If there are no ``capex_`` or no ``opex_`` figures, or a value is not finite.
    """
    row = _row(metrics)
    cap, kind = {}, {}
    for k, v in row.items():
        n, u = _split(k)
        if n.startswith("capex_"):
            cap[_pretty(n[len("capex_"):])] = to_display(_finite(k, v), u or "USD", n)[0]
            kind[_pretty(n[len("capex_"):])] = ""
    if not cap:
        raise InputError("metrics has no capex_<item> figures; pass Optimum.metrics or a row of Study.evaluate")
    _, cat = _lookup(row, "catalyst_charge")
    _, bm = _lookup(row, "bare_module_cost")
    _, fci = _lookup(row, "fixed_capital")
    if cat is not None:
        cap["First catalyst charge"] = float(_finite("catalyst_charge", cat)) * 1e-6
        kind["First catalyst charge"] = HATCHES[1]
    if fci is not None and bm is not None:
        rest = (float(_finite("fixed_capital", fci)) - float(_finite("bare_module_cost", bm))
                - float(cat or 0.0)) * 1e-6
        if rest > 0:
            cap["Contingency, fee, auxiliary facilities"] = rest
            kind["Contingency, fee, auxiliary facilities"] = HATCHES[2]
    op = {}
    for k, v in row.items():
        n, u = _split(k)
        if n.startswith("opex_") and n != "opex_total":
            op[_pretty(n[len("opex_"):]).replace("Labour maintenance overheads",
                                               "Labour, maintenance, overheads")] = \
                to_display(_finite(k, v), u or "USD/yr", n)[0]
    if not op:
        raise InputError("metrics has no opex_<item> figures; pass Optimum.metrics or a row of Study.evaluate")
    op_kind = dict.fromkeys(op, "")
    _, ot = _lookup(row, "opex_total")
    if ot is not None:
        # The total may hold costs no item names (Turton's cost of manufacture multiplies
        # utilities and raw materials by 1.23 for the supervision, overheads and other charges
        # that scale with them): shown as one bar so that the bars add up to the total.
        rest = float(_finite("opex_total", ot)) * 1e-6 - sum(op.values())
        if rest > 1e-9 * max(abs(float(ot)) * 1e-6, 1e-300):
            op[OTHER_OPEX] = rest
            op_kind[OTHER_OPEX] = HATCHES[2]
    cap = dict(sorted(((k, v) for k, v in cap.items() if v > 0), key=lambda kv: -kv[1]))
    op = dict(sorted(((k, v) for k, v in op.items() if v > 0), key=lambda kv: -kv[1]))
    total_cap = float(fci) * 1e-6 if fci is not None else sum(cap.values())
    total_op = float(ot) * 1e-6 if ot is not None else sum(op.values())
    with _house():
        fig = _figure(6.3, 0.27 * (len(cap) + len(op)) + 1.9)
        a1, a2 = fig.subplots(2, 1, height_ratios=[len(cap) + 0.8, len(op) + 0.8])
        _barh(a1, list(cap), list(cap.values()), [kind[k] for k in cap])
        a1.set_xlabel("Capital [MUSD]")
        a1.set_title(f"Fixed capital {_fmt(total_cap)} MUSD")
        _barh(a2, list(op), list(op.values()), [op_kind[k] for k in op], colour=PALETTE[1])
        a2.set_xlabel("Operating cost [MUSD/yr]")
        a2.set_title(f"Operating cost {_fmt(total_op)} MUSD/yr")
        if title:
            _suptitle(fig, title)
    return fig


# ------------------------------------------------------------------------------------------------
# cash flows
# ------------------------------------------------------------------------------------------------


def cash_flow_chart(cash_flows, member=None, *, title: str | None = None):
    """Annual net cash flow (bars) with the cumulative and the cumulative discounted cash flow.

    Parameters
    ----------
    cash_flows : CashFlows or pandas.DataFrame
        A :class:`teakit.finance.CashFlows` or its table (:meth:`CashFlows.to_frame
        <teakit.finance.CashFlows.to_frame>`: index ``year``, columns ``"net cash flow [USD]"``,
        ``"cumulative discounted [USD]"``, optionally ``phase``).
    member : int or tuple, optional
        Batch member of a batched CashFlows [-]
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
        Project year [yr] against cash flow [MUSD] (nominal money of each year): net cash flow
        per year, construction years hatched; cumulative net cash flow (dashed) and cumulative
        discounted cash flow (solid; its last value, the NPV, is quoted).

    Raises
    ------
    InputError
        If the columns are missing or not finite.
    """
    import pandas as pd

    if hasattr(cash_flows, "to_frame") and not isinstance(cash_flows, pd.DataFrame):
        df = cash_flows.to_frame(member)
    else:
        df = _frame(cash_flows, "cash_flows")
    netc = _column(df, "net cash flow")
    cumc = _column(df, "cumulative discounted")
    years = df["year"].to_numpy() if "year" in df.columns else df.index.to_numpy()
    years = _finite("year", years)
    net, nu = to_display(_finite(netc, df[netc].to_numpy()), _split(netc)[1] or "USD", "net")
    disc, _ = to_display(_finite(cumc, df[cumc].to_numpy()), _split(cumc)[1] or "USD", "cum")
    cum = np.cumsum(net)
    building = (df["phase"].astype(str).to_numpy() == "construction") if "phase" in df.columns \
        else np.zeros(len(df), bool)
    with _house():
        fig = _figure(6.3, 3.9)
        ax = fig.subplots()
        for mask, lab, face, hatch in ((building, "net cash flow, construction", "white", "////"),
                                       (~building, "net cash flow, operation", PALETTE[5], None)):
            if mask.any():
                ax.bar(years[mask], net[mask], width=0.72, color=face, edgecolor=INK, hatch=hatch,
                       lw=0.6, label=lab, zorder=2)
        ax.plot(years, cum, color=PALETTE[1], ls="--", marker="o", ms=3.5, mfc="white", lw=1.4,
                label="cumulative cash flow", zorder=3)
        ax.plot(years, disc, color=PALETTE[0], ls="-", marker="s", ms=3.5, lw=1.8,
                label="cumulative discounted cash flow", zorder=4)
        ax.axhline(0.0, color=INK, lw=0.8, zorder=1)
        ax.annotate(f"NPV {_fmt(float(disc[-1]))} {nu}", xy=(years[-1], disc[-1]),
                    xytext=(-6, -14 if disc[-1] < cum[-1] else 10), textcoords="offset points",
                    ha="right", fontsize=7.5, color=INK)
        ax.set_xlabel("Project year [yr]")
        ax.set_ylabel(f"Cash flow [{nu}]")
        ax.set_xlim(years.min() - 0.7, years.max() + 0.7)
        ax.legend(loc="upper left", ncols=2)
        lo, hi = ax.get_ylim()
        ax.set_ylim(lo, hi + 0.22 * (hi - lo))  # room for the legend above the data
        _title(ax, title or "Cash flows (money of each year)")
    return fig


# ------------------------------------------------------------------------------------------------
# tornado
# ------------------------------------------------------------------------------------------------


def _has_column(df, name: str) -> bool:
    return any(str(c) == name or _split(c)[0] == name for c in df.columns)


def tornado_chart(tornado, *, output: str | None = None, unit: str | None = None,
                  units: Mapping | None = None, base: float | None = None, max_bars: int | None = None,
                  title: str | None = None):
    """Tornado chart: the output with each parameter at its low and its high value.

    Parameters
    ----------
    tornado : pandas.DataFrame or a tornado result
        One row per parameter (a ``parameter`` column, or the index): ``low``, ``high`` (the
        parameter's values, optional), ``<output>_low``, ``<output>_high`` (the output at them)
        and ``base`` (the output with every parameter at its base value); headers may carry units
        (``"npv_low [USD]"``); an optional ``unit`` column gives each parameter's SI unit. An
        object with ``to_frame()``, a ``base`` mapping (``"reoptimized"``, ``"fixed"``) and an
        ``objective_column`` (as a study's tornado returns) is read the same way.
    output : str, optional
        Prefix of the ``<output>_low``/``<output>_high`` columns; default the first of ``npv``,
        ``objective``, ``output`` present (``"fixed_objective"`` for the fixed optimum) [-]
    unit : str, optional
        SI unit of the output when neither the headers nor the result say (default ``"USD"``) [-]
    units : mapping, optional
        Parameter name to SI unit, for the value ranges in the labels [-]
    base : float, optional
        The base output, if the frame has no ``base`` column [unit of the output]
    max_bars : int, optional
        Show only the largest swings [-]
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
        Horizontal bars from the base value to the output at the low (hatched) and at the high
        (solid) parameter value, largest swing ``|high - low|`` on top; the parameter's range in
        each label.

    Raises
    ------
    InputError
        For missing columns, non-finite values or no rows.
    """
    import pandas as pd
    from matplotlib.patches import Patch

    result_base, name_col = None, ""
    if not isinstance(tornado, pd.DataFrame) and hasattr(tornado, "to_frame"):
        result_base = getattr(tornado, "base", None)
        name_col = str(getattr(tornado, "objective_column", "") or "")
        tornado = tornado.to_frame()
    df = _frame(tornado, "tornado")
    if len(df) == 0:
        raise InputError("tornado has no rows")
    if output is None:
        output = next((o for o in ("npv", "objective", "output")
                       if _has_column(df, f"{o}_low") and _has_column(df, f"{o}_high")), "npv")
    lc, hc = _column(df, f"{output}_low"), _column(df, f"{output}_high")
    oname, ounit = _split(name_col) if name_col else ("", "")
    if output not in ("objective", "output", "fixed_objective", "fixed_output"):
        oname = output
    oname = oname or "output"
    ou = unit or _split(lc)[1] or ounit or "USD"
    names = df[_column(df, "parameter")].astype(str).tolist() if _has_column(df, "parameter") \
        else [str(i) for i in df.index]
    vlo = _finite(lc, df[lc].to_numpy())
    vhi = _finite(hc, df[hc].to_numpy())
    if base is None:
        if _has_column(df, "base"):
            base = float(_finite("base", df[_column(df, "base")].to_numpy())[0])
        elif isinstance(result_base, Mapping) and result_base:
            key = "fixed" if output.startswith("fixed_") else "reoptimized"
            base = result_base.get(key, next(iter(result_base.values())))
        else:
            raise InputError("tornado has no 'base' column: give base= (the output at the base point)")
    base = float(_finite("base", base))
    swing = np.abs(vhi - vlo)
    order = np.argsort(-swing, kind="stable")
    if max_bars is not None:
        if not (isinstance(max_bars, int | np.integer) and max_bars >= 1):
            raise InputError(f"max_bars must be a whole number >= 1, got {max_bars!r}")
        order = order[:max_bars]
    has_range = _has_column(df, "low") and _has_column(df, "high")
    plo = df[_column(df, "low")].to_numpy() if has_range else None
    phi = df[_column(df, "high")].to_numpy() if has_range else None
    labels = []
    for i in order:
        name = names[i]
        txt = _pretty(name)
        if has_range:
            pu = (units or {}).get(name) or (str(df["unit"].iloc[i]) if "unit" in df.columns else "")
            lo_d, du = to_display(float(plo[i]), pu, name)
            hi_d, _ = to_display(float(phi[i]), pu, name)
            du = "" if du in ("-", "") else f" {du}"
            txt += f"\n{_fmt(lo_d)} to {_fmt(hi_d)}{du}"
        labels.append(txt)
    output = oname
    bd, du = to_display(base, ou, output)
    lo_d, _ = to_display(vlo[order], ou, output)
    hi_d, _ = to_display(vhi[order], ou, output)
    with _house():
        fig = _figure(6.3, max(2.4, 0.42 * len(order) + 1.3))
        ax = fig.subplots()
        y = np.arange(len(order))[::-1]
        ax.barh(y, lo_d - bd, left=bd, height=0.62, color="white", edgecolor=INK, hatch="////",
                label="parameter at its low value", zorder=2)
        ax.barh(y, hi_d - bd, left=bd, height=0.62, color=PALETTE[0], edgecolor=INK,
                label="parameter at its high value", zorder=2)
        ax.axvline(bd, color=INK, lw=1.0, zorder=3)
        ax.set_yticks(y, labels)
        ax.tick_params(axis="y", length=0)
        ax.grid(axis="y", visible=False)
        oname = _pretty(output)
        ax.set_xlabel(f"{oname} [{du}]")
        _title(ax, title or f"{oname} sensitivity (base {_fmt(bd)} {du})")
        fig.legend(handles=[Patch(facecolor="white", edgecolor=INK, hatch="////", label="parameter at its low value"),
                            Patch(facecolor=PALETTE[0], edgecolor=INK, label="parameter at its high value")],
                   loc="outside lower center", ncols=2)
    return fig


# ------------------------------------------------------------------------------------------------
# distribution of a Monte Carlo output
# ------------------------------------------------------------------------------------------------


def distribution_chart(samples, column: str | None = None, *, bins="auto", percentiles=(10, 50, 90),
                       title: str | None = None):
    """Histogram of a Monte Carlo output with its cumulative distribution and P10/P50/P90.

    Parameters
    ----------
    samples : pandas.DataFrame, pandas.Series, array_like or a Monte Carlo result
        One row per sample; the output column is ``column`` (e.g. ``"npv"`` or
        ``"npv [USD]"``). For a plain array ``column`` is read as ``"<name> [<unit>]"`` for
        the label (a bare name is taken to be in USD). An object with ``to_frame()`` (and an
        ``objective_column``, as a study's Monte Carlo returns) is read through its table
        [unit of the column]
    column : str, optional
        The output; default the result's ``objective_column``, else ``"npv"`` [-]
    bins : int, sequence or str
        Passed to :func:`numpy.histogram_bin_edges` [-]
    percentiles : sequence of float
        Percentiles marked, each in (0, 100); default P10, P50, P90 [%]
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
        The output [display unit] against the share of samples per bin [%] (left axis) and the
        empirical cumulative probability [%] (right axis); each percentile a vertical line of
        its own style, quoted in the legend with the probability that the output is below zero.

    Raises
    ------
    InputError
        For fewer than 2 samples, non-finite values or percentiles outside (0, 100).
    """
    import pandas as pd

    if not isinstance(samples, pd.DataFrame | pd.Series | np.ndarray | list | tuple) and hasattr(samples, "to_frame"):
        column = column or getattr(samples, "objective_column", None)
        samples = samples.to_frame()
    column = column or "npv"
    if isinstance(samples, pd.DataFrame):
        col = _column(samples, column, "output")
        v = samples[col].to_numpy()
    elif isinstance(samples, pd.Series):
        col = str(samples.name) if samples.name is not None and "[" in str(samples.name) else column
        v = samples.to_numpy()
    else:
        col, v = column, np.asarray(samples)
    name, u = _split(col)
    u = u or ("USD" if name in ("npv", "fixed_capital") else "")
    v = _finite(col, v).ravel()
    if v.size < 2:
        raise InputError(f"samples must hold at least 2 values, got {v.size}")
    pc = np.asarray(percentiles, dtype=float).ravel()
    if pc.size == 0 or np.any((pc <= 0) | (pc >= 100)) or not np.all(np.isfinite(pc)):
        raise InputError(f"percentiles must lie in (0, 100) [%], got {list(percentiles)}")
    vd, du = to_display(v, u, name)
    vd = np.atleast_1d(vd)
    q = np.percentile(vd, pc)
    edges = np.histogram_bin_edges(vd, bins=bins)
    p_neg = float(np.mean(v < 0.0)) * 100.0
    with _house():
        fig = _figure(6.3, 3.9)
        ax = fig.subplots()
        ax.hist(vd, bins=edges, weights=np.full(vd.size, 100.0 / vd.size), color=PALETTE[5],
                edgecolor="white", lw=0.5, label="samples per bin", zorder=2)
        ax.set_xlabel(f"{_pretty(name)} [{du}]")
        ax.set_ylabel("Share of samples per bin [%]")
        ax2 = ax.twinx()
        ax2.spines["right"].set_visible(True)
        ax2.grid(False)
        xs = np.sort(vd)
        ax2.step(xs, np.arange(1, xs.size + 1) / xs.size * 100.0, where="post", color=PALETTE[0], lw=1.6,
                 ls="-", label="cumulative probability", zorder=3)
        ax2.set_ylim(0, 100)
        ax2.set_ylabel("Cumulative probability [%]")
        styles = ("--", "-", "-.", ":", (0, (5, 1, 1, 1)))
        for i, (p, x) in enumerate(zip(pc, q, strict=True)):
            ax2.axvline(x, color=INK if i != 1 else PALETTE[2], ls=styles[i % len(styles)], lw=1.3,
                        label=f"P{p:g} = {_fmt(float(x))} {du}", zorder=4)
        if edges[0] < 0.0 < edges[-1]:
            ax.axvspan(edges[0], 0.0, color="#efe9da", lw=0, zorder=0, label=f"{_pretty(name)} below zero")
        h1, l1 = ax.get_legend_handles_labels()
        h2, l2 = ax2.get_legend_handles_labels()
        leg_title = f"{v.size} samples; P({_pretty(name)} < 0) = {p_neg:.1f} %"
        fig.legend(h1 + h2, l1 + l2, loc="outside lower center", ncols=_legend_columns(fig, l1 + l2), title=leg_title,
                   title_fontsize=7.5)
        _title(ax, title or f"Distribution of {_pretty(name)}")
        ax.set_xlim(edges[0], edges[-1])
    return fig


# ------------------------------------------------------------------------------------------------
# Sobol indices
# ------------------------------------------------------------------------------------------------


def sobol_chart(indices, *, output: str | None = None, max_parameters: int | None = None,
                title: str | None = None):
    """First-order and total Sobol indices per parameter with their confidence intervals.

    Parameters
    ----------
    indices : pandas.DataFrame or a Sobol result
        Columns ``S1``, ``S1_conf``, ``ST``, ``ST_conf`` (headers may carry ``[-]``); index the
        parameter, or a MultiIndex (output, parameter) as a Sobol study returns; an object with
        ``to_frame()`` giving that table is read through it [-]
    output : str, optional
        Which output of a MultiIndex frame (default the only one, or ``"npv"``) [-]
    max_parameters : int, optional
        Show only the parameters of largest total index [-]
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
        Horizontal bar pairs, parameters ordered by total index (largest on top): first order
        hatched, total solid, each with its confidence half-width as an error bar.

    Raises
    ------
    InputError
        For missing columns, an unknown output or non-finite indices.
    """
    import pandas as pd

    if not isinstance(indices, pd.DataFrame) and hasattr(indices, "to_frame"):
        indices = indices.to_frame()
    df = _frame(indices, "indices")
    if isinstance(df.index, pd.MultiIndex):
        outs = list(dict.fromkeys(df.index.get_level_values(0)))
        if output is None:
            if len(outs) == 1:
                output = outs[0]
            else:  # the objective, re-optimised first, then at the fixed optimum
                output = next((o for want in ("npv", "fixed_npv") for o in outs if _split(str(o))[0] == want), None)
            if output is None:
                raise InputError(f"indices hold several outputs; choose one with output=: {', '.join(map(str, outs))}")
        if output not in outs:  # a bare name matches its column: "npv" -> "npv [USD]"
            hits = [o for o in outs if _split(str(o))[0] == output]
            if len(hits) != 1:
                raise InputError(f"output {output!r} not in the indices; outputs: {', '.join(map(str, outs))}")
            output = hits[0]
        df = df.xs(output, level=0)
    cols = {k: _column(df, k, "index column") for k in ("S1", "S1_conf", "ST", "ST_conf")}
    s1 = _finite("S1", df[cols["S1"]].to_numpy())
    s1c = _finite("S1_conf", df[cols["S1_conf"]].to_numpy())
    st = _finite("ST", df[cols["ST"]].to_numpy())
    stc = _finite("ST_conf", df[cols["ST_conf"]].to_numpy())
    params = [str(p) for p in df.index]
    order = np.argsort(-st, kind="stable")
    if max_parameters is not None:
        order = order[:max_parameters]
    with _house():
        fig = _figure(6.3, max(2.6, 0.5 * len(order) + 1.4))
        ax = fig.subplots()
        y = np.arange(len(order))[::-1].astype(float)
        h = 0.36
        err = {"ecolor": INK, "capsize": 2.5, "elinewidth": 0.9}
        ax.barh(y + h / 2, st[order], height=h, color=PALETTE[0], edgecolor=INK, xerr=stc[order],
                error_kw=err, label="total order ST", zorder=2)
        ax.barh(y - h / 2, s1[order], height=h, color="white", edgecolor=INK, hatch="////",
                xerr=s1c[order], error_kw=err, label="first order S1", zorder=2)
        ax.set_yticks(y, [_pretty(params[i]) for i in order])
        ax.tick_params(axis="y", length=0)
        ax.grid(axis="y", visible=False)
        ax.axvline(0.0, color=INK, lw=0.8)
        hi = float(np.max(np.r_[st + stc, s1 + s1c, 0.0]))
        lo = float(np.min(np.r_[s1 - s1c, st - stc, 0.0]))
        ax.set_xlim(min(lo * 1.1, 0.0), max(hi * 1.08, 0.05))
        ax.set_xlabel("Sobol index [-]")
        what = _pretty(_split(str(output))[0]) if output else ""
        _title(ax, title or (f"Sobol indices of {what}" if what else "Sobol indices"))
        fig.legend(loc="outside lower center", ncols=2,
                   title="bars: estimate; whiskers: confidence half-width", title_fontsize=7)
    return fig


# ------------------------------------------------------------------------------------------------
# optimal decisions across samples
# ------------------------------------------------------------------------------------------------


def decision_scatter(samples, decisions: Sequence[str], *, optimum=None, title: str | None = None):
    """Pairwise scatter of the optimal decisions across Monte Carlo samples (lower triangle).

    Parameters
    ----------
    samples : pandas.DataFrame
        One row per sample with a column per decision (``"pressure [Pa]"``, ...), e.g. the
        optimum of every sample of an uncertainty study [SI units of the columns]
    decisions : sequence of str
        At least two decisions, names or column names [-]
    optimum : Optimum or mapping, optional
        The deterministic optimum, marked in every panel [SI].
    title : str, optional
        Figure title.

    Returns
    -------
    matplotlib.figure.Figure
        A (k-1) x (k-1) lower-triangular grid for k decisions: panel (i, j) shows decision
        j + 1 ... against decision i + 1, axes in display units, shared along rows and columns;
        labels on the outer panels.

    Raises
    ------
    InputError
        For fewer than two decisions, a missing column or non-finite values.
    """
    df = _frame(samples, "samples")
    if isinstance(decisions, str) or len(decisions) < 2:
        raise InputError(f"decisions must name at least two columns, got {decisions!r}")
    cols = [_column(df, d, "decision") for d in decisions]
    names = [_split(c)[0] for c in cols]
    data = [to_display(_finite(c, df[c].to_numpy()), _split(c)[1], _split(c)[0])[0] for c in cols]
    opt = _decision_point(optimum, names)
    k = len(cols)
    m = k - 1
    with _house():
        size = 2.1 * m + 0.9 if m > 1 else 4.6
        fig = _figure(max(size, 4.6), max(size, 3.9) if m > 1 else 3.9)
        axes = fig.subplots(m, m, squeeze=False, sharex="col", sharey="row")
        for i in range(m):  # row: decision i + 1 on y
            for j in range(m):  # column: decision j on x
                ax = axes[i, j]
                if j > i:
                    ax.set_axis_off()
                    continue
                ax.plot(data[j], data[i + 1], ls="none", marker="o", ms=4.0, mfc="#dfe5ea",
                        mec=PALETTE[0], mew=0.8, alpha=0.85, label="optimum of a sample")
                if opt is not None:
                    ox, _ = to_display(opt[names[j]], _split(cols[j])[1], names[j])
                    oy, _ = to_display(opt[names[i + 1]], _split(cols[i + 1])[1], names[i + 1])
                    ax.plot([ox], [oy], ls="none", marker="*", ms=11, mfc=PALETTE[1], mec=INK, mew=0.9,
                            zorder=5, label="deterministic optimum")
                if i == m - 1:
                    ax.set_xlabel(label(cols[j]))
                if j == 0:
                    ax.set_ylabel(label(cols[i + 1]))
        h, lab = axes[0, 0].get_legend_handles_labels()
        if m > 1:
            axes[0, m - 1].legend(h, lab, loc="upper right", title=f"{len(df)} samples")
        else:
            fig.legend(h, lab, loc="outside lower center", ncols=2, title=f"{len(df)} samples")
        if title:
            _suptitle(fig, title)
    return fig
