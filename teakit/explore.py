"""An interactive panel for notebooks: move a price, see the profit-optimal operating point move.

:class:`Explorer` shows sliders for a study's main prices and cost factors and a case selector.
To feel live, a change re-optimises over a stored neighbourhood of the first optimum: a
two-level grid of operating points around it (each free decision at -h, 0, +h for h = 3 % and
10 % of its range, all combinations; beyond 7 free decisions the axial points and 512 Sobol
points of the box) whose process figures are computed once per case; an update
only prices them again (economic parameters change, physics do not) and picks the best feasible
point, in well under a second. The "refine" button runs the study's full re-optimisation from
there (seconds) for a figure to quote. Sliders report their value on release
(``continuous_update=False``) and a change that arrives while an update runs is folded into the
next one: that is the panel's debounce.

The map is a slice through the first optimum (its other decisions held there) computed once per
case and re-priced on every change; the current optimum is marked on it.

Preliminary estimates only: the applicable pressure-vessel code, local regulations and licensed
engineers govern the design of hydrogen, ammonia and SO3 plant.
"""

from __future__ import annotations

import html
import time
import warnings

import numpy as np

from teakit.errors import InputError

__all__ = ["DEMO_STUDIES", "SLIDERS", "Explorer", "explore"]

#: The demo study files the case selector offers (invented scenarios, data/studies).
DEMO_STUDIES = {
    "Ammonia loop, Port Aldren (invented)": "ammonia_port_aldren.toml",
    "Sulfuric acid, Redmesa (invented)": "acid_redmesa.toml",
}

#: Sliders every case shows: parameter -> (label, display unit, factor SI->display).
_COMMON_SLIDERS = {
    "electricity_price": ("electricity price", "USD/MWh", 1000.0),
    "catalyst_price": ("catalyst price", "USD/kg", 1.0),
    "steam_credit": ("steam credit", "USD/GJ", 1.0),
    "discount_rate": ("discount rate", "%/yr", 100.0),
    "contingency": ("contingency", "% of bare-module cost", 100.0),
}

#: Sliders per case: the product and its main feed first, then the common ones.
SLIDERS = {
    "ammonia_loop": {"product_price": ("ammonia price", "USD/t", 1000.0),
                     "hydrogen_price": ("hydrogen price", "USD/kg", 1.0), **_COMMON_SLIDERS},
    "so2_converter": {"product_price": ("acid price", "USD/t", 1000.0),
                      "sulfur_price": ("sulfur price", "USD/t", 1000.0), **_COMMON_SLIDERS},
}

#: The two decisions of each case's map.
MAP_AXES = {"ammonia_loop": ("pressure", "catalyst_volume"), "so2_converter": ("pressure", "bed1_inlet_temperature")}


def _fmt(v: float) -> str:
    a = abs(v)
    return f"{v:,.0f}" if a >= 1000 else f"{v:.4g}"


class Explorer:
    """The interactive panel (see the module docstring).

    Parameters
    ----------
    study : Study or str, optional
        A study, or the file name of one; default: the first of :data:`DEMO_STUDIES`.
    n_map : int
        Grid points per axis of the objective map (3 to 40) [-].
    map_axes : tuple of str, optional
        The two decisions of the map; default per case in :data:`MAP_AXES`.
    """

    #: Steps of the stored neighbourhood, as fractions of each decision's range [-].
    STEPS = (0.03, 0.10)

    def __init__(self, study=None, *, n_map: int = 9, map_axes: tuple[str, str] | None = None):
        if not (isinstance(n_map, int) and 3 <= n_map <= 40):
            raise InputError(f"n_map must be a whole number from 3 to 40, got {n_map!r}")
        import ipywidgets as w

        self.n_map = n_map
        self._axes_override = map_axes
        self._busy = False
        self._pending = False
        self.last_update_s = float("nan")
        self.case = w.Dropdown(options=list(DEMO_STUDIES), description="study", layout=w.Layout(width="28em"))
        self.sliders: dict = {}
        self.slider_box = w.VBox()
        self.table = w.HTML()
        self.status = w.HTML()
        self.refine_button = w.Button(description="refine", tooltip="full re-optimisation at these prices (seconds)")
        self.refine_button.on_click(lambda _: self.refine())
        self.plot = w.Output()
        self.widget = w.VBox([
            w.HTML("<b>teakit explorer</b>: move a price, the profit-optimal operating point follows "
                   "(preliminary estimates; codes and licensed engineers govern design)"),
            self.case, w.HBox([self.slider_box, w.VBox([self.table, self.refine_button])]), self.status, self.plot,
        ])
        if study is not None and not isinstance(study, str):
            self._set_study(study)
        else:
            name = study or DEMO_STUDIES[self.case.value]
            if name in DEMO_STUDIES.values():
                self.case.value = next(k for k, v in DEMO_STUDIES.items() if v == name)
            self._load(name)
        self.case.observe(self._on_case, names="value")

    # -- loading ----------------------------------------------------------------------------
    def _load(self, name):
        from teakit.study import read_study

        self._set_study(read_study(name))

    def _set_study(self, study):
        import ipywidgets as w

        self.study = study
        self.status.value = "optimising ..."
        t0 = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            self.optimum = study.optimize(max_yield=False)
        self.decisions = dict(self.optimum.decisions)
        self.objective = self.optimum.objective
        specs = SLIDERS.get(study.case, {})
        table = study.parameter_table()
        self.sliders = {}
        for name, (lab, unit, f) in specs.items():
            nominal = float(table.loc[name, "nominal"])
            lo, hi = (0.0, 2.0 * nominal) if nominal > 0 else (0.0, 1.0)
            s = w.FloatSlider(value=nominal * f, min=lo * f, max=hi * f, step=(hi - lo) * f / 100.0,
                              description=lab, continuous_update=False, readout_format=".3g",
                              style={"description_width": "10em"}, layout=w.Layout(width="30em"))
            s.tooltip = f"{lab} [{unit}]"
            s.observe(self._on_slider, names="value")
            self.sliders[name] = (s, f, unit)
        self.slider_box.children = [w.HBox([s, w.Label(u)]) for s, _, u in self.sliders.values()]
        x, y = self._axes_override or MAP_AXES.get(study.case, tuple(study.free[:2]))
        self.map_axes = (x, y)
        dx, dy = study._decisions[x], study._decisions[y]
        gx, gy = np.meshgrid(np.linspace(dx.low, dx.high, self.n_map), np.linspace(dy.low, dy.high, self.n_map))
        grid = {k: np.full(gx.size, v) for k, v in self.decisions.items()}
        grid[x], grid[y] = gx.ravel(), gy.ravel()
        self._grid = grid
        # The stored neighbourhood of the optimum (see the module docstring).
        free = study.free
        lo = np.array([study._decisions[k].low for k in free])
        hi = np.array([study._decisions[k].high for k in free])
        c = np.array([self.decisions[k] for k in free])
        d = len(free)
        if 3**d <= 2187:  # up to 7 free decisions: every combination of -h, 0, +h
            offs = np.stack(np.meshgrid(*[[-1.0, 0.0, 1.0]] * d, indexing="ij"), -1).reshape(-1, d)
        else:  # more: the centre, the axial points and a scrambled Sobol set of the box
            from scipy.stats import qmc

            offs = np.vstack([np.zeros((1, d)), np.eye(d), -np.eye(d),
                              qmc.Sobol(d, scramble=True, seed=0).random_base2(9) * 2.0 - 1.0])
        pts = np.vstack([c + h * offs * (hi - lo) for h in self.STEPS])
        pts = np.unique(np.clip(pts, lo, hi), axis=0)
        self._cands = {k: pts[:, i] for i, k in enumerate(free)} | {
            k: np.full(len(pts), v) for k, v in self.decisions.items() if k not in free}
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            self._map_process = study.process(grid)
            self._cand_process = study.process(self._cands)
        self._render(time.perf_counter() - t0)

    # -- events -----------------------------------------------------------------------------
    def _on_case(self, change):
        self._load(DEMO_STUDIES[change["new"]])

    def _on_slider(self, change):
        if self._busy:  # fold into the update that is running
            self._pending = True
            return
        self.update()

    def parameters(self) -> dict:
        """The slider values as study parameters [SI]."""
        return {name: s.value / f for name, (s, f, _) in self.sliders.items()}

    def update(self):
        """Re-optimise at the slider values over the stored neighbourhood and redraw."""
        self._busy = True
        try:
            while True:
                self._pending = False
                t0 = time.perf_counter()
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    df = self.study.evaluate(self._cands, self.parameters(), process=self._cand_process)
                obj = f"{self.study.objective} [{df.columns[df.columns.str.startswith(self.study.objective + ' [')][0].split('[')[1]}"
                sense = 1.0 if self.study.objective != "lcop" else -1.0
                score = np.where(df["feasible"], sense * df[obj].to_numpy(), -np.inf)
                self._take(df.iloc[int(np.argmax(score))], t0)
                if not self._pending:
                    break
        finally:
            self._busy = False

    def refine(self):
        """Full re-optimisation of the decisions at the slider values (the study's own search)."""
        t0 = time.perf_counter()
        self.status.value = "refining ..."
        par = {k: np.array([v]) for k, v in self.parameters().items()}
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            row = self.study.optimize_batch(par, start=self.decisions).iloc[0]
        self._take(row, t0)

    def _take(self, row, t0):
        self.decisions = {k: float(row[f"{k} [{d.unit}]"]) for k, d in self.study._decisions.items()}
        self.objective = float(row[next(c for c in row.index if c.startswith(f"{self.study.objective} ["))])
        self._render(time.perf_counter() - t0)

    # -- display ----------------------------------------------------------------------------
    def optimum_table(self) -> list[tuple[str, float, str]]:
        """The displayed optimum: (quantity, value, display unit) rows."""
        from teakit.plots import to_display

        rows = []
        for k in self.study.free:
            v, u = to_display(self.decisions[k], self.study._decisions[k].unit, k)
            rows.append((k.replace("_", " "), float(v), u))
        v, u = to_display(self.objective, "USD" if self.study.objective in ("npv",) else "-", self.study.objective)
        rows.append((self.study.objective.upper() if self.study.objective == "npv" else self.study.objective, float(v), u))
        return rows

    def _render(self, seconds):
        import matplotlib.pyplot as plt

        from teakit.plots import objective_map

        self.last_update_s = seconds
        body = "".join(f"<tr><td>{html.escape(n)}</td><td style='text-align:right'>{_fmt(v)}</td><td>{html.escape(u)}</td></tr>"
                       for n, v, u in self.optimum_table())
        self.table.value = f"<table class='teakit-optimum'><tr><th>optimum</th><th>value</th><th>unit</th></tr>{body}</table>"
        self.status.value = f"updated in {seconds:.2f} s"
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            df = self.study.evaluate(self._grid, self.parameters(), process=self._map_process)
        self.plot.clear_output(wait=True)
        with self.plot:
            fig = objective_map(df, *self.map_axes, self.decisions)
            from IPython.display import display

            display(fig)
            plt.close(fig)

    def _ipython_display_(self):
        from IPython.display import display

        display(self.widget)

    def set(self, **values: float):
        """Set sliders by parameter name, in display units, and update once (for scripts)."""
        unknown = set(values) - set(self.sliders)
        if unknown:
            raise InputError(f"unknown slider(s) {sorted(unknown)}; sliders: {', '.join(self.sliders)}")
        self._busy = True
        try:
            for k, v in values.items():
                self.sliders[k][0].value = v
        finally:
            self._busy = False
        self.update()


def explore(study=None, **kwargs) -> Explorer:
    """Build and return an :class:`Explorer` (display it as the last expression of a cell)."""
    return Explorer(study, **kwargs)

