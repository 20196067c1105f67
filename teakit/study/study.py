"""A study: one process case, its decisions and parameters, an objective and constraints.

``Study.evaluate`` prices a batch of operating points (decisions x parameter sets) through the
process and cost layers in one call; ``Study.optimize`` finds the profit-optimal decisions (and,
with the same machinery, the maximum-yield point) for one or many parameter sets; ``landscape``
maps the objective over two decisions.

The optimiser is global enough for these smooth, low-dimensional problems: a scrambled Sobol
sample of the decision box (Sobol, USSR Comput. Math. Math. Phys. 7, 86, 1967; scipy.stats.qmc)
evaluated in one batch, then a batched compass search with Hooke-Jeeves pattern moves and a
Newton step through the last stencil, expanding on sufficient increase and contracting on
failure (Hooke & Jeeves, J. ACM 8, 212, 1961; Kolda, Lewis & Torczon, SIAM Rev. 45, 385, 2003),
from the best few distinct points; all starts, targets and parameter sets step together in one
batch per iteration, and the tracks of sets with equal physics finally seed each other. Process
evaluations are memoised per physics set on a lattice of the unit decision box and kept between
calls, and prices that enter the objective linearly are applied to stored physics exactly, so
re-optimising for many price sets costs little physics. Points violating a constraint rank below
every feasible point, by total relative violation; members the process reports infeasible never
win. Every reported figure is a full-accuracy evaluation of the decisions found; a point that
breaks a constraint only at full accuracy (the search's coarser process is a few tenths of a
kelvin off in a peak temperature) is searched again there, close by, at full accuracy.

Preliminary estimates only: the applicable pressure-vessel code, local regulations and licensed
engineers govern design.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, fields

import numpy as np

from teakit.errors import InputError
from teakit.process.cases.common import Spec
from teakit.study.definitions import Constraint, Decision, Parameter, case_info
from teakit.study.economics import ECONOMICS, plant_economics
from teakit.units import to_si

__all__ = ["OBJECTIVES", "Optimum", "Study"]

#: Merit of a point violating a constraint: below every feasible objective (lexicographic order:
#: feasible by objective, then infeasible by total relative violation, then process failures).
_INFEASIBLE = -1e30
#: Economic parameters the NPV and annual profit are linear in (at fixed discount rate, tax rate,
#: plant life, hours, efficiencies and catalyst density and life).
_LINEAR_ECONOMICS = frozenset({
    "product_price", "electricity_price", "hydrogen_price", "nitrogen_price", "sulfur_price",
    "steam_credit", "fuel_price", "cooling_water_price", "catalyst_price", "operator_salary",
    "contingency", "fee", "auxiliary", "working_capital_fraction",
})


class _NotLinear(Exception):
    """Linear pricing does not apply (a constraint reads money)."""


def _compose(objective, good, violation):
    """Lexicographic merit as one float: feasible points by objective; points violating a
    constraint below all of them, ordered by total relative violation; failures last."""
    m = np.where(np.isfinite(objective), objective, _INFEASIBLE)
    v = np.minimum(violation, 1e6)
    return np.where(good & (violation == 0), m, np.where(good, _INFEASIBLE * (1.0 + v), 1e4 * _INFEASIBLE))
#: Lattice of the unit decision box on which process evaluations are memoised (2^-24).
_LATTICE = float(2**24)
#: Constraint slack during the search, relative to each limit: the search's coarser bed
#: integration moves a peak temperature by up to about 0.3 K, so 5e-4 (0.4 K at 800 K) keeps the
#: optimum feasible when it is evaluated again at full accuracy.
_SLACK = 5e-4


class _PhysicsMemo:
    """Process figures (a :func:`_flatten` matrix), feasibility and solver state by point key."""

    MAX_ROWS = 200_000

    def __init__(self):
        self.index: dict[bytes, int] = {}
        self.template: dict = {}  # column layout of the figure matrix (see _flatten)
        self.n = 0
        self.Q = self.ok = None
        self.state: dict = {}

    def add(self, keys, Q, ok, state):
        n_new = len(keys)
        if self.Q is None:
            cap = max(1024, 2 * n_new)
            self.Q = np.empty((cap, Q.shape[1]))
            self.ok = np.empty(cap, bool)
            self.state = {k: np.empty((cap,) + v.shape[1:]) for k, v in state.items()}
        elif self.n + n_new > len(self.Q):
            cap = 2 * (self.n + n_new)
            self.Q = np.resize(self.Q, (cap, self.Q.shape[1]))
            self.ok = np.resize(self.ok, cap)
            self.state = {k: np.resize(v, (cap,) + v.shape[1:]) for k, v in self.state.items()}
        sl = slice(self.n, self.n + n_new)
        self.Q[sl], self.ok[sl] = Q, ok
        for k, v in state.items():
            self.state[k][sl] = v
        for j, key in enumerate(keys):
            self.index[key] = self.n + j
        self.n += n_new

    def get(self, rows):
        return self.Q[rows], self.ok[rows], {k: v[rows] for k, v in self.state.items()}


def _number(value, unit: str, what: str) -> float:
    """A finite number in SI ``unit`` from a number or a string with units; InputError naming ``what``."""
    if isinstance(value, bool) or not isinstance(value, int | float | str | np.floating | np.integer):
        raise InputError(f"{what} must be a number or a string with units, got {value!r}")
    v = to_si(value, unit, what) if isinstance(value, str) and unit not in ("-", "") else value
    try:
        v = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}") from None
    if not np.isfinite(v):
        raise InputError(f"{what} must be finite, got {value!r}")
    return v


def _value_array(value, unit: str, what: str) -> np.ndarray:
    """A 1-d array of finite SI values from a number, a string with units or a sequence of either."""
    try:
        if isinstance(value, str) or (isinstance(value, list | tuple) and value and all(isinstance(x, str) for x in value)):
            v = to_si(value, unit, what) if unit not in ("-", "") else np.asarray(value, dtype=float)
        elif isinstance(value, bool):
            raise TypeError
        else:
            v = value
        a = np.atleast_1d(np.asarray(v, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, a string with units or a 1-d sequence of them, got {value!r}") from None
    if a.ndim != 1 or a.size == 0:
        raise InputError(f"{what} must be a scalar or a non-empty 1-d array, got shape {a.shape}")
    if not np.isfinite(a).all():
        raise InputError(f"{what} must be finite, got {value!r}")
    return a


def _take(proc, idx):
    """Members ``idx`` of a ProcessResult (repeats allowed)."""
    from teakit.process.result import ProcessResult

    n = len(proc)

    def pick(v):
        return np.asarray(v)[idx] if np.ndim(v) and np.shape(v)[0] == n else v

    return ProcessResult(proc.case, {k: pick(v) for k, v in proc.values.items()}, proc.units,
                         {item: {f: pick(v) for f, v in spec.items()} for item, spec in proc.equipment.items()},
                         proc.status[idx], {k: pick(v) for k, v in proc.profiles.items()},
                         {k: pick(v) for k, v in proc.state.items()})


def _flatten(proc):
    """Every numeric figure of a ProcessResult as columns of one matrix (N, q), and a template."""
    n = len(proc)
    cols, arrays = [], []
    for k, v in proc.values.items():
        a = np.asarray(v, dtype=float)
        if a.shape == (n,):
            cols.append(("v", k, None))
            arrays.append(a)
    consts = {}
    for item, spec in proc.equipment.items():
        consts[item] = {}
        for f, v in spec.items():
            if isinstance(v, str) or np.ndim(v) == 0:
                consts[item][f] = v
            else:
                cols.append(("e", item, f))
                arrays.append(np.asarray(v, dtype=float))
    return np.stack(arrays, axis=1), {"case": proc.case, "units": proc.units, "cols": cols, "consts": consts}


def _rebuild(Q, ok, template):
    """A ProcessResult from (rows of) a figure matrix of :func:`_flatten`, for pricing."""
    from teakit.process.result import ProcessResult

    values, equipment = {}, {item: dict(c) for item, c in template["consts"].items()}
    for j, (kind, a, b) in enumerate(template["cols"]):
        if kind == "v":
            values[a] = Q[:, j]
        else:
            equipment[a][b] = Q[:, j]
    status = np.where(ok, "ok", "process infeasible")
    return ProcessResult(template["case"], values, template["units"], equipment, status)

#: Objectives and their sense: +1 maximise, -1 minimise.
OBJECTIVES = {"npv": 1.0, "annual_profit": 1.0, "irr": 1.0, "lcop": -1.0}


@dataclass
class Optimum:
    """The optimum of a study for one parameter set.

    Attributes
    ----------
    decisions : dict
        Optimal value of every decision, SI units.
    objective : float
        Objective at the optimum (NPV [USD] by default).
    metrics : dict
        Every evaluated figure at the optimum (column name with unit -> value).
    active_constraints : list of str
        Constraints within 0.5 % of their limit, and free decisions at a bound.
    max_yield : Optimum or None
        The maximum-yield point (decisions maximising the case's yield measure under the same
        bounds and constraints) and its metrics.
    evaluations : int
        Operating points evaluated.
    """

    decisions: dict
    objective: float
    metrics: dict
    active_constraints: list
    feasible: bool
    max_yield: Optimum | None = None
    evaluations: int = 0
    objective_name: str = "npv"

    @property
    def profit_lost_for_yield(self) -> float:
        """Objective at the optimum minus the objective at the maximum-yield point [USD]."""
        if self.max_yield is None:
            raise InputError("no maximum-yield point was computed for this optimum")
        return self.objective - self.max_yield.objective

    def __repr__(self):
        dec = ", ".join(f"{k}={v:.4g}" for k, v in self.decisions.items())
        return f"Optimum({self.objective_name}={self.objective:.4g}; {dec})"


@dataclass
class Study:
    """A techno-economic study of one process case (see the module docstring).

    Parameters
    ----------
    case : str
        Process case, e.g. ``"ammonia_loop"`` or ``"so2_converter"``.
    decisions : mapping, optional
        Name -> :class:`Decision` (or dict of ``low``, ``high``, ``default``, ``free``) overriding
        the case's decision table; decisions not named are held at the case default.
    parameters : mapping, optional
        Name -> :class:`Parameter` or nominal value, physics (the case's table) or economic
        (:data:`teakit.study.economics.ECONOMICS`).
    objective : {"npv", "annual_profit", "irr", "lcop"}
    constraints : mapping, optional
        Name -> limit overriding the case's default constraint limits (SI), or
        :class:`Constraint` objects (including callables).
    """

    case: str
    decisions: Mapping = field(default_factory=dict)
    parameters: Mapping = field(default_factory=dict)
    objective: str = "npv"
    constraints: Mapping = field(default_factory=dict)
    name: str = ""
    description: str = ""
    source: str | None = None

    def __post_init__(self):
        if not isinstance(self.case, str):
            raise InputError(f"case must be a case name (str), got {self.case!r}")
        info = case_info(self.case)
        self._info = info
        if not isinstance(self.objective, str) or self.objective not in OBJECTIVES:
            raise InputError(f"objective must be one of {', '.join(OBJECTIVES)}, got {self.objective!r}")
        for name in ("decisions", "parameters", "constraints"):
            if not isinstance(getattr(self, name), Mapping):
                raise InputError(f"{name} must be a mapping of name -> value, got {type(getattr(self, name)).__name__}")
        dspecs: dict[str, Spec] = info["decisions"]
        decs = {}
        for k, v in self.decisions.items():
            if k not in dspecs:
                raise InputError(f"unknown decision {k!r} for case {self.case}; decisions: {', '.join(dspecs)}")
            sp = dspecs[k]
            if isinstance(v, Decision):
                d = v
            elif isinstance(v, Mapping):
                v = dict(v)
                bad = set(v) - {"low", "high", "default", "free"}
                if bad:
                    raise InputError(f"decision {k!r}: unknown key(s) {sorted(bad)}; keys: low, high, default, free")
                d = Decision(k, sp.unit, _number(v.get("low", sp.low), sp.unit, f"decision {k!r} low"),
                             _number(v.get("high", sp.high), sp.unit, f"decision {k!r} high"),
                             _number(v.get("default", sp.default), sp.unit, f"decision {k!r} default"),
                             bool(v.get("free", True)), sp.doc)
            else:
                raise InputError(f"decision {k!r} must be a Decision or a mapping with low, high, default, free; got {v!r}")
            if d.low < sp.low or d.high > sp.high:
                raise InputError(
                    f"decision {k!r}: bounds [{d.low:g}, {d.high:g}] {sp.unit} must lie within the "
                    f"case's range [{sp.low:g}, {sp.high:g}]"
                )
            decs[k] = d
        for k, sp in dspecs.items():
            decs.setdefault(k, Decision(k, sp.unit, sp.low, sp.high, sp.default, False, sp.doc))
        self._decisions = decs
        pspecs = {**{k: (s, "physics") for k, s in info["physics"].items()},
                  **{k: (s, "economics") for k, s in ECONOMICS.items()}}
        pars = {}
        for k, v in self.parameters.items():
            if k not in pspecs:
                raise InputError(f"unknown parameter {k!r}; parameters: {', '.join(pspecs)}")
            sp, kind = pspecs[k]
            p = v if isinstance(v, Parameter) else Parameter(k, sp.unit, _number(v, sp.unit, f"parameter {k!r}"), kind, None, sp.doc)
            if not sp.low <= p.nominal <= sp.high:
                raise InputError(f"parameter {k!r} = {p.nominal:g} {sp.unit} is outside [{sp.low:g}, {sp.high:g}]")
            pars[k] = p
        for k, (sp, kind) in pspecs.items():
            pars.setdefault(k, Parameter(k, sp.unit, sp.default, kind, None, sp.doc))
        self._parameters = pars
        cons = {}
        for k, (sense, limit, unit) in info["constraints"].items():
            cons[k] = Constraint(k, limit, sense, unit)
        for k, v in self.constraints.items():
            if isinstance(v, Constraint):
                cons[k] = v
            elif k in cons:
                cons[k] = Constraint(k, _number(v, cons[k].unit, f"constraint {k!r}"), cons[k].sense, cons[k].unit)
            else:
                raise InputError(f"unknown constraint {k!r}; constraints: {', '.join(cons)} (or pass a Constraint)")
        self._constraints = cons

    # -- pickling (worker processes rebuild the case registry entry and start a fresh memo) ----
    def __getstate__(self):
        return {f.name: getattr(self, f.name) for f in fields(self)}

    def __setstate__(self, state):
        for k, v in state.items():
            setattr(self, k, v)
        self.__post_init__()

    # -- uncertainty studies (teakit.study.uncertainty) --------------------------------------
    def monte_carlo(self, n: int = 1000, seed: int = 0, executor=None, **options):
        """Monte Carlo of the re-optimised and the fixed optimum: see :func:`teakit.study.uncertainty.monte_carlo`."""
        from teakit.study.uncertainty import monte_carlo

        return monte_carlo(self, n, seed, executor, **options)

    def sobol(self, n: int = 512, seed: int = 0, executor=None, **options):
        """Sobol indices of NPV and the optimal decisions: see :func:`teakit.study.uncertainty.sobol`."""
        from teakit.study.uncertainty import sobol

        return sobol(self, n, seed, executor, **options)

    def morris(self, trajectories: int = 10, seed: int = 0, executor=None, **options):
        """Morris screening: see :func:`teakit.study.uncertainty.morris`."""
        from teakit.study.uncertainty import morris

        return morris(self, trajectories, seed, executor, **options)

    def tornado(self, **options):
        """One-at-a-time swings of each uncertain parameter: see :func:`teakit.study.uncertainty.tornado`."""
        from teakit.study.uncertainty import tornado

        return tornado(self, **options)

    def value_of_information(self, n: int = 256, seed: int = 0, executor=None, **options):
        """EVPI, EVPPI per parameter and the regret of the fixed optimum: see
        :func:`teakit.study.uncertainty.value_of_information`."""
        from teakit.study.uncertainty import value_of_information

        return value_of_information(self, n, seed, executor, **options)

    # -- introspection -----------------------------------------------------------------------
    @property
    def free(self) -> list[str]:
        """Names of the decisions the optimiser moves."""
        return [k for k, d in self._decisions.items() if d.free]

    def decision_table(self):
        """A DataFrame of the decisions: unit, bounds, default, free."""
        import pandas as pd

        return pd.DataFrame([{"decision": d.name, "unit": d.unit, "low": d.low, "high": d.high,
                              "default": d.default, "free": d.free, "meaning": d.doc}
                             for d in self._decisions.values()]).set_index("decision")

    def parameter_table(self):
        """A DataFrame of the parameters: unit, nominal, kind."""
        import pandas as pd

        return pd.DataFrame([{"parameter": p.name, "unit": p.unit, "nominal": p.nominal, "kind": p.kind,
                              "distribution": p.distribution} for p in self._parameters.values()]).set_index("parameter")

    # -- evaluation --------------------------------------------------------------------------
    def _arrays(self, decisions, parameters):
        for name, m in (("decisions", decisions), ("parameters", parameters)):
            if m is not None and not isinstance(m, Mapping):
                raise InputError(f"{name} must be a mapping of name -> value, got {type(m).__name__}")
        dec = {}
        for k, d in self._decisions.items():
            dec[k] = _value_array((decisions or {}).get(k, d.default), d.unit, f"decision {k!r}")
        unknown = set(decisions or {}) - set(self._decisions)
        if unknown:
            raise InputError(f"unknown decision(s) {sorted(unknown)}; decisions: {', '.join(self._decisions)}")
        par = {}
        for k, p in self._parameters.items():
            par[k] = _value_array((parameters or {}).get(k, p.nominal), p.unit, f"parameter {k!r}")
        unknown = set(parameters or {}) - set(self._parameters)
        if unknown:
            raise InputError(f"unknown parameter(s) {sorted(unknown)}; parameters: {', '.join(self._parameters)}")
        try:
            B = int(np.broadcast_shapes(*(v.shape for v in (*dec.values(), *par.values())))[0])
        except ValueError:
            raise InputError("decision and parameter arrays do not broadcast to one batch") from None
        return ({k: np.broadcast_to(v, (B,)) for k, v in dec.items()},
                {k: np.broadcast_to(v, (B,)) for k, v in par.items()}, B)

    def _process(self, dec, par, warm=None, search=False):
        phys = {k: v for k, v in par.items() if self._parameters[k].kind == "physics"}
        # During the search a coarser solve serves (fewer bed steps, looser loop tolerance:
        # objective differences stay below 1e-4 relative); reported figures use the defaults.
        kw = dict(self._info.get("search_options", {})) if search else {}
        if warm is not None:
            kw["warm"] = warm
        return self._info["function"](dec, phys, **kw)

    def _price(self, proc, par, with_metrics=True):
        econ = {k: v for k, v in par.items() if self._parameters[k].kind == "economics"}
        money = plant_economics(proc, econ, with_metrics=with_metrics)
        vals = {**proc.values, **{k: v for k, v in money.items() if not k.startswith("_") and k != "status"}}
        margins = self._margins(vals)
        status = money["status"]
        yld = np.where(status == "ok", self._info["yield"](proc.values), 0.0)
        return vals, margins, status, yld

    def _run(self, dec, par, B, with_metrics=True, warm=None, search=False):
        proc = self._process(dec, par, warm, search)
        return (proc, *self._price(proc, par, with_metrics))

    def evaluate(self, decisions: Mapping | None = None, parameters: Mapping | None = None, *,
                 process=None):
        """Results of a batch of operating points as a DataFrame (one row per point).

        Parameters
        ----------
        decisions : mapping, optional
            Decision values (SI numbers, arrays or strings with units); others at their default.
        parameters : mapping, optional
            Parameter values; others at their nominal value. Arrays broadcast with decisions.
        process : ProcessResult, optional
            The result of :meth:`process` for the same decisions and physics parameters: the
            points are priced again without repeating the physics.

        Returns
        -------
        pandas.DataFrame
            Every decision, every process figure, capex and opex by item, revenue, NPV, IRR,
            LCOP, constraint margins (``margin_<name>``, >= 0 feasible), ``yield``, ``status`` and
            ``feasible``; column names carry units.
        """
        dec, par, B = self._arrays(decisions, parameters)
        if process is None:
            # Rows with equal decisions and physics (e.g. a fixed optimum priced for many price
            # sets) are solved once.
            keys = np.stack([np.broadcast_to(dec[k], (B,)) for k in dec]
                            + [np.broadcast_to(v, (B,)) for k, v in par.items() if self._parameters[k].kind == "physics"], axis=1)
            uniq, inv = np.unique(keys, axis=0, return_inverse=True)
            if len(uniq) < B:
                first = np.array([np.flatnonzero(inv.ravel() == i)[0] for i in range(len(uniq))])
                sub = self._process({k: np.broadcast_to(v, (B,))[first] for k, v in dec.items()},
                                    {k: np.broadcast_to(v, (B,))[first] for k, v in par.items()})
                return self._frame(dec, par, _take(sub, inv.ravel()))
            return self._frame(dec, par, self._process(dec, par))
        made = getattr(process, "inputs", None)
        if made is None or made[0] is not self:
            raise InputError("process must be a ProcessResult returned by this study's process()")
        _, pdec, pphys = made
        n = len(process)
        same = all(np.array_equal(np.broadcast_to(dec[k], (n,)) if B in (1, n) else dec[k], pdec[k]) for k in pdec) and all(
            np.array_equal(np.broadcast_to(par[k], (n,)) if B in (1, n) else par[k], pphys[k]) for k in pphys)
        if not same:
            raise InputError("process= was computed for other decisions or physics parameters; "
                             "only economic parameters may differ (call process() again)")
        return self._frame(pdec, par, process)

    def cash_flows(self, decisions: Mapping | None = None, parameters: Mapping | None = None):
        """The yearly cash flows (a :class:`teakit.finance.CashFlows`) of a batch of points.

        Examples
        --------
        >>> from teakit import Study
        >>> s = Study.from_toml("acid_redmesa.toml")
        >>> cf = s.cash_flows(s.decision_table()["default"].to_dict())
        >>> round(float(cf.npv[0]) / 1e6) == round(float(s.evaluate({})["npv [USD]"].iloc[0]) / 1e6)
        True
        """
        dec, par, _ = self._arrays(decisions, parameters)
        proc = self._process(dec, par)
        econ = {k: v for k, v in par.items() if self._parameters[k].kind == "economics"}
        return plant_economics(proc, econ, with_metrics=False)["_cash_flows"]

    def process(self, decisions: Mapping | None = None, parameters: Mapping | None = None):
        """The process run alone (a ProcessResult) for a batch of operating points.

        Pass it back to :meth:`evaluate` as ``process=`` to price the same points again at other
        economic parameters without repeating the physics (maps, interactive panels).
        """
        dec, par, _ = self._arrays(decisions, parameters)
        proc = self._process(dec, par)
        proc.inputs = (self, dec, {k: v for k, v in par.items() if self._parameters[k].kind == "physics"})
        return proc

    def _frame(self, dec, par, proc):
        import pandas as pd

        B = len(proc)
        dec = {k: np.broadcast_to(v, (B,)) for k, v in dec.items()}
        par = {k: np.broadcast_to(v, (B,)) for k, v in par.items()}
        vals, margins, status, yld = self._price(proc, par)
        cols = {f"{k} [{d.unit}]": dec[k] for k, d in self._decisions.items()}
        for k, v in proc.values.items():
            cols[f"{k} [{proc.units.get(k, '-')}]"] = v
        for k, v in vals.items():
            if k not in proc.values:
                unit = "USD/yr" if k.startswith(("opex_", "revenue", "annual_")) else (
                    "1/yr" if k == "irr" else "yr" if k == "payback" else "USD/kg" if k == "lcop" else "USD")
                cols[f"{k} [{unit}]"] = v
        for k, v in margins.items():
            cols[f"margin_{k} [{self._constraints[k].unit}]"] = v
        cols["yield [-]"] = yld
        feasible = (status == "ok") & np.all(np.stack([m >= 0 for m in margins.values()]), axis=0) if margins else status == "ok"
        cols["status"] = status
        cols["feasible"] = feasible
        return pd.DataFrame(cols)

    # -- optimisation ------------------------------------------------------------------------
    def _merit(self, vals, margins, status, yld, target, slack=0.0):
        ok = status == "ok"
        if target == "yield":
            obj = yld
            sense = 1.0
        else:
            obj = vals[self.objective]
            sense = OBJECTIVES[self.objective]
        m = sense * np.where(np.isfinite(obj), obj, -sense * 1e300)
        viol = np.zeros_like(m)
        for name, mg in margins.items():
            c = self._constraints[name]
            scale = max(abs(c.limit), 1.0)
            viol += np.maximum(slack * scale - mg, 0.0) / scale
        scale = np.nanmedian(np.abs(m[ok])) if ok.any() else 1.0
        merit = m - 10.0 * max(scale, 1e-12) * (1.0 + 100.0 * viol) * (viol > 0)
        return np.where(ok, merit, -np.inf), obj, viol

    def optimize(self, parameters: Mapping | None = None, *, n_start: int = 128, starts: int = 3,
                 seed: int = 0, tol: float = 2e-3, max_iter: int = 30, max_yield: bool = True):
        """The profit-optimal decisions (and the maximum-yield point) for one or many parameter sets.

        A global stage (a scrambled Sobol sample of the decision box, shared by all parameter sets
        with equal physics) picks the best distinct starts; a batched compass search with pattern
        moves refines each (see the module docstring). The profit and yield searches share
        their process evaluations.

        Parameters
        ----------
        parameters : mapping, optional
            Parameter values; arrays of length P give P parameter sets and P optima.
        n_start : int
            Sobol points of the first, global stage (rounded up to a power of 2).
        starts : int
            Best distinct points refined by the local search.
        seed : int
            Seed of the scrambled Sobol sequence (results are reproducible).
        tol : float
            Final trust radius, as a fraction of each decision's range [-].
        max_iter : int
            Bound on local iterations (one batched process call each).
        max_yield : bool
            Also find the maximum-yield point.

        Returns
        -------
        Optimum or list of Optimum
            One per parameter set (a single Optimum when no array parameters are given).
        """
        for name, v, lo_, hi_ in (("n_start", n_start, 2, 65536), ("starts", starts, 1, 64), ("max_iter", max_iter, 1, 1000)):
            if not isinstance(v, int | np.integer) or not lo_ <= v <= hi_:
                raise InputError(f"{name} must be a whole number from {lo_} to {hi_}, got {v!r}")
        if not (isinstance(tol, float | int) and 1e-6 <= tol <= 0.5):
            raise InputError(f"tol must be a fraction of the decision range in [1e-6, 0.5], got {tol!r}")
        _, par, P = self._arrays({}, parameters)
        targets = ["objective", "yield"] if max_yield else ["objective"]
        found, n_eval = self._search(par, P, n_start=n_start, starts=starts, seed=seed, tol=tol,
                                     max_iter=max_iter, targets=targets)
        best = self._finish(found["objective"], par, P, n_eval, "objective", tol, max_iter, seed)
        if max_yield:
            for o, y in zip(best, self._finish(found["yield"], par, P, n_eval, "yield", tol, max_iter, seed), strict=True):
                o.max_yield = y
        return best[0] if P == 1 and not any(np.ndim(v) for v in (parameters or {}).values()) else best

    def optimize_batch(self, parameters: Mapping, *, start: Mapping | Optimum | None = None,
                       tol: float = 2e-3, max_iter: int = 15, seed: int = 0):
        """Re-optimise the decisions for a batch of parameter sets; one row per set.

        The uncertainty studies call this once per chunk of samples. Each set starts from
        ``start`` (typically the deterministic optimum) and is refined by the local search alone;
        sets with equal physics parameters share every process evaluation, so a batch that
        varies only prices costs little more than one optimum. Sets whose point breaks a
        constraint only at full accuracy are searched again close by at full accuracy.

        Parameters
        ----------
        parameters : mapping
            Name -> array (P,) of parameter values (SI); names not given stay nominal.
        start : mapping or Optimum, optional
            Starting decisions [SI]; default: a full :meth:`optimize` at nominal parameters.
        tol, max_iter, seed
            As for :meth:`optimize`; ``max_iter`` bounds each pass of the local search (a
            track still improving after it keeps its best point so far, never worse than
            ``start``).

        Returns
        -------
        pandas.DataFrame
            Per set: the optimal decisions and every figure of :meth:`evaluate` there (columns
            with units), ``feasible`` and ``status``.
        """
        _, par, P = self._arrays({}, parameters)
        if start is None:
            start = self.optimize(max_yield=False)
        if isinstance(start, Optimum):
            start = start.decisions
        x0 = {k: float(start.get(k, d.default)) for k, d in self._decisions.items()}
        found, _ = self._search(par, P, n_start=2, starts=1, seed=seed, tol=tol, max_iter=max_iter,
                                targets=["objective"], start=x0)
        dec = {k: np.array([f[k] for f in found["objective"]]) for k in self._decisions}
        return self._repair(dec, par, self.evaluate(dec, par), "objective", tol, max_iter, seed)[1]

    def _repair(self, dec, par, df, target, tol, max_iter, seed):
        """Search again, at full accuracy and close by, the members whose found point breaks a
        constraint only at full accuracy (the search's coarser process moves a peak temperature
        by up to about 0.5 K, more than its slack in a few per cent of re-optimisations); a
        member keeps its repaired point where that is feasible. Returns (dec, df, evaluations)."""
        bad = np.flatnonzero(~df["feasible"].to_numpy() & (df["status"].to_numpy() == "ok"))
        if not bad.size:
            return dec, df, 0
        sub = {k: np.broadcast_to(np.asarray(v, float), (len(df),))[bad] for k, v in par.items()}
        found, n_eval = self._search(sub, bad.size, n_start=2, starts=1, seed=seed, tol=tol, max_iter=max_iter,
                                     targets=[target], start={k: dec[k][bad] for k in self.free}, accurate=True)
        new = {k: np.array([f[k] for f in found[target]]) for k in self._decisions}
        df_new = self.evaluate(new, sub)
        fixed = np.flatnonzero(df_new["feasible"].to_numpy())
        if not fixed.size:
            return dec, df, n_eval
        dec = {k: v.copy() for k, v in dec.items()}
        for k in self._decisions:
            dec[k][bad[fixed]] = new[k][fixed]
        df = df.copy()
        for c in df.columns:  # column by column: each keeps its dtype
            col = df[c].to_numpy().copy()
            col[bad[fixed]] = df_new[c].to_numpy()[fixed]
            df[c] = col
        return dec, df, n_eval

    def _finish(self, found, par, P, n_eval, target, tol, max_iter, seed):
        """Evaluate the found decisions at full accuracy, in one batch (repairing any found
        infeasible only there), and describe each optimum."""
        dec = {k: np.array([f[k] for f in found]) for k in self._decisions}
        dec, df, n_more = self._repair(dec, par, self.evaluate(dec, par), target, tol, max_iter, seed)
        n_eval += n_more
        obj_col = next(c for c in df.columns if c.startswith(f"{self.objective} ["))
        mcols = [c for c in df.columns if c.startswith("margin_")]
        out = []
        for i in range(P):
            row = df.iloc[i]
            di = {k: float(dec[k][i]) for k in self._decisions}
            margins = {c[len("margin_"):].split(" [")[0]: row[c] for c in mcols}
            active = [k for k, m in margins.items() if abs(m) <= 5e-3 * max(abs(self._constraints[k].limit), 1.0)]
            for k in self.free:  # decisions held at a bound are reported too
                dd = self._decisions[k]
                span = dd.high - dd.low
                if di[k] <= dd.low + 1e-3 * span:
                    active.append(f"{k} at its lower bound")
                elif di[k] >= dd.high - 1e-3 * span:
                    active.append(f"{k} at its upper bound")
            out.append(Optimum(di, float(row[obj_col]), row.to_dict(), active, bool(row["feasible"]), None,
                               n_eval, self.objective))
        return out

    def _search(self, par, P, *, n_start, starts, seed, tol, max_iter, targets, start=None, accurate=False):
        """Best decisions per parameter set and target (the search of the module docstring).

        Physics groups (parameter sets with equal physics parameters) share every process
        evaluation: the global Sobol stage and every coinciding step of all their tracks
        (parameter sets x targets x starts), memoised on a lattice; the money is recomputed
        exactly for each track from the stored process figures. ``start`` maps each free
        decision to a value or to an array of one value per parameter set. ``accurate`` runs the
        process at full accuracy (its own memo) instead of the case's search options, and starts
        from the given points with small steps: the repair of :meth:`_repair`.
        """
        from scipy.stats import qmc

        free = self.free
        if not free:
            raise InputError("the study has no free decisions to optimise; mark some with free = true")
        d = len(free)
        lo = np.array([self._decisions[k].low for k in free])
        hi = np.array([self._decisions[k].high for k in free])
        fixed = {k: dd.default for k, dd in self._decisions.items() if not dd.free}
        pnames = [k for k in par if self._parameters[k].kind == "physics"]
        enames = [k for k in par if self._parameters[k].kind == "economics"]
        keys = np.stack([np.asarray(par[k], float) for k in pnames], axis=1) if pnames else np.zeros((P, 1))
        uniq, g_of_p = np.unique(keys, axis=0, return_inverse=True)
        g_of_p = g_of_p.ravel()
        G = len(uniq)
        fn = self._info["function"]
        kw = {} if accurate else dict(self._info.get("search_options", {}))
        memo = self._memo(accurate)
        template = memo.template

        def physics(X, gi, warm):
            x = lo + X * (hi - lo)
            dec = {k: x[:, i] for i, k in enumerate(free)} | {k: np.full(len(X), v) for k, v in fixed.items()}
            phys = {k: uniq[gi, j] for j, k in enumerate(pnames)}
            proc = fn(dec, phys, **kw, **({"warm": warm} if warm else {}))
            Q, tmpl = _flatten(proc)
            template.setdefault("t", tmpl)
            return Q, proc.ok, proc.state

        # Tracks: (parameter set, target, start).
        tgt_code = {"objective": 0, "yield": 1}
        tr_p, tr_tgt = [], []
        for p in range(P):
            for tg in targets:
                tr_p += [p] * (starts if start is None else 1)
                tr_tgt += [tgt_code[tg]] * (starts if start is None else 1)
        tr_p = np.array(tr_p, int)
        tr_tgt = np.array(tr_tgt, int)
        need_metrics = self.objective in ("irr", "lcop")

        def merit_direct(Q, ok, t):
            p = tr_p[t]
            proc = _rebuild(Q, ok, template["t"])
            econ = {k: np.asarray(par[k])[p] for k in enames}
            money = plant_economics(proc, econ, with_metrics=need_metrics)
            vals = {**proc.values, **{k: v for k, v in money.items() if not k.startswith("_") and k != "status"}}
            good = money["status"] == "ok"
            yld = np.where(good, self._info["yield"](proc.values), 0.0)
            obj = OBJECTIVES[self.objective] * np.asarray(vals[self.objective], float)
            return _compose(np.where(tr_tgt[t] == 1, yld, obj), good, self._violation(vals))

        # Linear pricing: with only prices and cost factors that enter the objective linearly
        # varying between sets (NPV and annual profit are linear in every price and in the
        # capital factors at fixed discount rate, tax rate, life and hours; losses are credited),
        # the objective of every stored point is a(x) + sum_k (e_k - e0_k) b_k(x), computed once
        # per point. Checked against the direct pricing before use. It costs K + 1 pricings per
        # stored point (K varying prices) against about one per track that meets the point, so it
        # serves where a physics group holds more tracks than that (price-only Monte Carlo), not
        # where the physics differs from set to set (a Sobol design: one to a few sets a group).
        varying = [k for k in enames if np.ptp(np.asarray(par[k], float)) > 0]
        lin = None
        if (varying and set(varying) <= _LINEAR_ECONOMICS and self.objective in ("npv", "annual_profit")
                and len(tr_p) > (len(varying) + 1) * G
                and all(c.function is None for c in self._constraints.values())):
            e0 = {k: float(np.asarray(par[k])[0]) for k in enames}
            delta = {k: (0.5 * e0[k] if e0[k] > 0 else 0.01) for k in varying}
            lin = {"e0": e0, "delta": delta, "k": varying, "a": {}, "checked": False}

        def lin_rows(rows):
            """Objective intercept, slopes, feasibility and yield of stored rows (cached)."""
            new = np.unique(rows[[r not in lin["a"] for r in rows]]) if len(rows) else rows
            if len(new):
                Q, ok, _ = memo.get(new)
                proc = _rebuild(Q, ok, template["t"])
                K = len(lin["k"])
                econ = {k: np.full(len(new), lin["e0"][k]) for k in enames}
                money = plant_economics(proc, econ, with_metrics=False)
                vals = {**proc.values, **{k: v for k, v in money.items() if not k.startswith("_") and k != "status"}}
                if any(c.name not in proc.values for c in self._constraints.values()):
                    raise _NotLinear
                good = money["status"] == "ok"
                viol = self._violation(vals)
                yld = np.where(good, self._info["yield"](proc.values), 0.0)
                base = OBJECTIVES[self.objective] * np.asarray(vals[self.objective], float)
                # One pricing of the K perturbed copies stacked (each price moved alone).
                n_new = len(new)
                proc_k = _take(proc, np.tile(np.arange(n_new), K))
                e = {k: np.tile(econ[k], K) for k in enames}
                for j, k in enumerate(lin["k"]):
                    e[k][j * n_new:(j + 1) * n_new] += lin["delta"][k]
                mk = OBJECTIVES[self.objective] * np.asarray(plant_economics(proc_k, e, with_metrics=False)[self.objective], float)
                slopes = ((mk.reshape(K, n_new) - base) / np.array([lin["delta"][k] for k in lin["k"]])[:, None]).T
                for i, r in enumerate(new):
                    lin["a"][int(r)] = (base[i], slopes[i], bool(good[i]), viol[i], yld[i])
            recs = [lin["a"][int(r)] for r in rows]
            return (np.array([x[0] for x in recs]), np.array([x[1] for x in recs]).reshape(len(rows), -1),
                    np.array([x[2] for x in recs], bool), np.array([x[3] for x in recs]), np.array([x[4] for x in recs]))

        def merit(rows, t):
            """Merit of stored points ``rows`` for tracks ``t`` (see _compose)."""
            nonlocal lin
            if lin is not None:
                try:
                    a, b, good, viol, yld = lin_rows(rows)
                except _NotLinear:
                    lin = None
                else:
                    p = tr_p[t]
                    de = np.stack([np.asarray(par[k], float)[p] - lin["e0"][k] for k in lin["k"]], axis=1)
                    obj = a + np.einsum("ij,ij->i", b, de)
                    m = _compose(np.where(tr_tgt[t] == 1, yld, obj), good, viol)
                    if not lin["checked"]:  # the decomposition must reproduce the direct pricing
                        pick = np.unique(np.linspace(0, len(rows) - 1, min(len(rows), 8)).astype(int))
                        Q, ok, _ = memo.get(rows[pick])
                        direct = merit_direct(Q, ok, t[pick])
                        if not np.allclose(direct, m[pick], rtol=1e-9, atol=1e-6):
                            lin = None
                            return merit(rows, t)
                        lin["checked"] = True
                    return m
            Q, ok, _ = memo.get(rows)
            return merit_direct(Q, ok, t)

        # Physics evaluations, memoised per group on a fine lattice of the unit box: candidates
        # that coincide (the same step of two price sets, a return to an earlier point, the
        # profit and yield searches) are evaluated once.
        gkeys = [uniq[grp].tobytes() for grp in range(G)]
        n_eval = 0

        def lookup(X, gi, warm_rows=None, warm=None):
            """Row indices into the memo of points X (N, d) of groups gi, evaluating misses."""
            nonlocal n_eval
            lat = np.round(X * _LATTICE).astype(np.int64)
            keys = [gkeys[gg] + lat[i].tobytes() for i, gg in enumerate(gi)]
            rows = np.array([memo.index.get(k, -1) for k in keys], int)
            miss_keys: dict = {}
            for i in np.flatnonzero(rows < 0):
                miss_keys.setdefault(keys[i], i)
            if miss_keys:
                mi = np.array(list(miss_keys.values()))
                w = None
                if warm is not None and warm_rows is not None:
                    w = {k: v[warm_rows[mi]] for k, v in warm.items()}
                Q, ok, st = physics(X[mi], gi[mi], w)
                n_eval += len(mi)
                memo.add(list(miss_keys), Q, ok, st)
                rows = np.array([memo.index[k] for k in keys], int)
            return rows

        gather = memo.get

        T = len(tr_p)
        tg = g_of_p[tr_p]
        if start is None:
            m = int(np.ceil(np.log2(max(n_start, 2))))
            U = qmc.Sobol(d, scramble=True, seed=seed).random_base2(m)
            default_u = np.array([(self._decisions[k].default - lo[i]) / (hi[i] - lo[i]) for i, k in enumerate(free)])
            U = np.vstack([default_u[None], U])
            n0 = len(U)
            rows0 = lookup(np.tile(U, (G, 1)), np.repeat(np.arange(G), n0)).reshape(G, n0)
            # Best distinct starts of every (set, target) among its group's sample.
            lead = np.arange(0, T, starts)
            f0 = merit(rows0[tg[lead]].ravel(), np.repeat(lead, n0)).reshape(-1, n0)
            sidx = []
            for row in f0:
                chosen = []
                for j in np.argsort(-row):
                    if all(np.max(np.abs(U[j] - U[c])) > 0.1 for c in chosen):
                        chosen.append(j)
                    if len(chosen) == starts:
                        break
                chosen += [chosen[0]] * (starts - len(chosen))
                sidx.append(chosen)
            sidx = np.array(sidx).ravel()  # (T,)
            X = U[sidx]
            rows = rows0[tg, sidx]
            F = np.take_along_axis(f0, sidx.reshape(-1, starts), axis=1).ravel()
            step = np.full(T, 0.1)
        else:
            x0 = np.stack([(np.broadcast_to(np.asarray(start[k], float), (P,)) - lo[i]) / (hi[i] - lo[i])
                           for i, k in enumerate(free)], axis=1)
            X = np.clip(x0, 0.0, 1.0)[tr_p]
            rows = lookup(X, tg)
            F = merit(rows, np.arange(T))
            # An infeasible start (other physics move a constraint) searches wider; a repair
            # starts just outside the feasible set and searches close by.
            step = np.where((F > _INFEASIBLE / 2) | accurate, 0.02, 0.08)
        # Batched compass search with Hooke-Jeeves pattern moves, all tracks together, plus one
        # model step per track: the Newton step of the separable quadratic through the last
        # compass stencil (central differences), which speeds up the long moves.
        E = np.vstack([np.eye(d), -np.eye(d)])
        nc = 2 * d + 3

        def pattern_search(X, rows, F, step):
            move = np.zeros((T, d))
            model = X.copy()
            for _ in range(max_iter):
                active = step > tol

                if not active.any():
                    break
                ta = np.flatnonzero(active)
                A = len(ta)
                compass = X[ta, None, :] + step[ta, None, None] * E[None]
                extra = np.stack([X[ta] + move[ta], X[ta] + 2.0 * move[ta], model[ta]], axis=1)
                cand = np.clip(np.concatenate([compass, extra], axis=1), 0.0, 1.0)  # (A, nc, d)
                cg = np.repeat(tg[ta], nc)
                _, _, st_c = gather(rows[ta])
                crow = lookup(cand.reshape(-1, d), cg, np.repeat(np.arange(A), nc), st_c or None)
                mc = merit(crow, np.repeat(ta, nc)).reshape(-1, nc)
                # The model step from this stencil (valid where both neighbours are inside the box and
                # feasible; otherwise no move along that axis).
                s_ = step[ta][:, None]
                mp, mm, f = mc[:, :d], mc[:, d : 2 * d], F[ta][:, None]
                inside = (X[ta] + s_ <= 1.0) & (X[ta] - s_ >= 0.0)
                good = inside & (mp > _INFEASIBLE / 2) & (mm > _INFEASIBLE / 2) & (f > _INFEASIBLE / 2)
                grad = (mp - mm) / (2.0 * s_)
                curv = (mp - 2.0 * f + mm) / s_**2
                newton = np.where(curv < 0, -grad / np.where(curv < 0, curv, -1.0), np.sign(grad) * 2.0 * s_)
                # Rounded to whole steps: every point stays on one lattice, so the tracks of
                # neighbouring parameter sets meet on the same points and share them.
                delta = np.where(good, np.round(np.clip(newton, -4.0 * s_, 4.0 * s_) / s_) * s_, 0.0)
                j = np.argmax(mc, axis=1)
                # Sufficient increase (a forcing term above the search-accuracy noise of money,
                # 1e-6 relative; yields, fractions near 1 with tiny gains, 1e-10): noise alone
                # never keeps a track walking.
                force = np.where(tr_tgt[ta] == 1, 1e-10, 1e-6) * np.maximum(np.abs(F[ta]), 1.0)
                better = mc[np.arange(A), j] > F[ta] + force * (F[ta] > _INFEASIBLE / 2)
                new_x = cand[np.arange(A), j]
                model[ta] = np.clip(X[ta] + delta, 0.0, 1.0)
                move[ta] = np.where(better[:, None], new_x - X[ta], 0.0)
                X[ta] = np.where(better[:, None], new_x, X[ta])
                rows[ta] = np.where(better, crow.reshape(-1, nc)[np.arange(A), j], rows[ta])
                F[ta] = np.where(better, mc[np.arange(A), j], F[ta])
                # Expand after a success, contract after a failure (Kolda, Lewis & Torczon 2003,
                # sec. 3.3): long walks take few iterations; steps stay powers of two.
                step[ta] = np.where(better, np.minimum(2.0 * step[ta], 0.16), step[ta] / 2.0)
            return X, rows, F

        X, rows, F = pattern_search(X, rows, F, step)
        lost = np.flatnonzero(F <= _INFEASIBLE / 2)
        if start is not None and lost.size and not accurate:
            # A re-optimisation that found no feasible point near the start (other physics moved
            # a constraint far) falls back to a global stage for its physics group.
            U = qmc.Sobol(d, scramble=True, seed=seed).random_base2(6)
            for grp in np.unique(tg[lost]):
                tt = lost[tg[lost] == grp]
                r0 = lookup(U, np.full(len(U), grp))
                f0 = merit(np.tile(r0, len(tt)), np.repeat(tt, len(U))).reshape(len(tt), len(U))
                jb = np.argmax(f0, axis=1)
                up = f0[np.arange(len(tt)), jb] > F[tt]
                X[tt[up]], rows[tt[up]], F[tt[up]] = U[jb[up]], r0[jb[up]], f0[np.arange(len(tt)), jb][up]
            X, rows, F = pattern_search(X, rows, F, np.where(np.isin(np.arange(T), lost), 0.1, 0.0))
        # Cross-seeding: a track whose merit is higher at another track's result of the same
        # physics group (its figures are already stored: only the money is recomputed) moves
        # there and polishes again. This keeps the optima of neighbouring price sets mutually
        # consistent, which any true optimum is (each beats the other's under its own prices).
        if T > 1:
            for _ in range(2):
                adopt = np.zeros(T, bool)
                for grp in np.unique(tg):
                    tt = np.flatnonzero(tg == grp)
                    if len(tt) < 2:
                        continue
                    ends = np.unique(rows[tt])
                    if len(ends) > 32:  # bound the work for large batches: an even subset
                        ends = ends[np.linspace(0, len(ends) - 1, 32).astype(int)]
                    me = merit(np.tile(ends, len(tt)), np.repeat(tt, len(ends))).reshape(len(tt), len(ends))
                    jb = np.argmax(me, axis=1)
                    up = me[np.arange(len(tt)), jb] > F[tt] + 1e-9 * np.abs(F[tt])
                    src = {int(r): i for i, r in enumerate(rows)}
                    for i in np.flatnonzero(up):
                        t = tt[i]
                        X[t] = X[src[int(ends[jb[i]])]]
                        rows[t] = ends[jb[i]]
                        F[t] = me[i, jb[i]]
                        adopt[t] = True
                if not adopt.any():
                    break
                X, rows, F = pattern_search(X, rows, F, np.where(adopt, 4.0 * tol, 0.0))
        per = starts if start is None else 1
        out = {tg_: [] for tg_ in targets}
        for p in range(P):
            for k_t, tg_ in enumerate(targets):
                base = (p * len(targets) + k_t) * per
                s_best = base + int(np.argmax(F[base : base + per]))
                x = lo + X[s_best] * (hi - lo)
                out[tg_].append({k: float(x[i]) for i, k in enumerate(free)} | {k: float(v) for k, v in fixed.items()})
        return out, n_eval

    def clear_memo(self):
        """Forget the stored process evaluations (results then depend on this call's inputs only)."""
        self._physics_memo = self._physics_memo_full = None

    def _memo(self, accurate=False):
        """The study's memo of process evaluations at search accuracy (kept between calls, so
        re-optimising after a price change re-uses the physics already computed), or at full
        accuracy for the repair of points found infeasible there."""
        name = "_physics_memo_full" if accurate else "_physics_memo"
        memo = getattr(self, name, None)
        if memo is None or memo.n > _PhysicsMemo.MAX_ROWS:
            memo = _PhysicsMemo()
            setattr(self, name, memo)
        return memo

    def _violation(self, vals):
        """Total relative constraint violation of evaluated points, with a small slack (a point
        found at search accuracy stays feasible when evaluated again at full accuracy: _SLACK)."""
        viol = 0.0
        for name, mg in self._margins(vals).items():
            sc = max(abs(self._constraints[name].limit), 1.0)
            viol = viol + np.maximum(_SLACK * sc - mg, 0.0) / sc
        return np.broadcast_to(np.asarray(viol, float), np.shape(next(iter(vals.values()))))

    def _margins(self, vals):
        margins = {}
        for name, c in self._constraints.items():
            if c.function is not None:
                margins[name] = np.asarray(c.function(vals), dtype=float)
            else:
                v = vals[name]
                margins[name] = (c.limit - v) if c.sense == "max" else (v - c.limit)
        return margins

    # -- maps ----------------------------------------------------------------------------------
    def landscape(self, x: str, y: str, n: int = 15, at: Mapping | None = None, parameters: Mapping | None = None):
        """The objective (and yield, feasibility) on an n x n grid of two decisions.

        The other decisions are held at ``at`` (e.g. ``optimum.decisions``) or their defaults.

        Returns
        -------
        pandas.DataFrame
            One row per grid point with both decisions, the objective, yield and feasibility.
        """
        for k in (x, y):
            if k not in self._decisions:
                raise InputError(f"unknown decision {k!r}; decisions: {', '.join(self._decisions)}")
        if not (isinstance(n, int) and 2 <= n <= 200):
            raise InputError(f"n must be a whole number from 2 to 200, got {n!r}")
        dx, dy = self._decisions[x], self._decisions[y]
        gx, gy = np.meshgrid(np.linspace(dx.low, dx.high, n), np.linspace(dy.low, dy.high, n))
        base = {k: dd.default for k, dd in self._decisions.items()} | dict(at or {})
        dec = {k: np.full(n * n, float(v)) for k, v in base.items()}
        dec[x], dec[y] = gx.ravel(), gy.ravel()
        return self.evaluate(dec, parameters)

    # -- files ---------------------------------------------------------------------------------
    @classmethod
    def from_toml(cls, path):
        """Read a study from a TOML file that holds only data (see :mod:`teakit.study.files`)."""
        from teakit.study.files import read_study

        return read_study(path)
