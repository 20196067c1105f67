"""A study: one process case, its decisions and parameters, an objective and constraints.

``Study.evaluate`` prices a batch of operating points (decisions x parameter sets) through the
process and cost layers in one call; ``Study.optimize`` finds the profit-optimal decisions (and,
with the same machinery, the maximum-yield point) for one or many parameter sets; ``landscape``
maps the objective over two decisions.

The optimiser is global enough for these smooth, low-dimensional problems: a scrambled Sobol
sample of the decision box (Sobol, USSR Comput. Math. Math. Phys. 7, 86, 1967; scipy.stats.qmc)
evaluated in one batch, then a batched compass search with Hooke-Jeeves pattern moves from the
best few distinct points (Hooke & Jeeves, J. ACM 8, 212, 1961; Kolda, Lewis & Torczon, SIAM
Rev. 45, 385, 2003), all starts and all parameter sets
stepping together in one batch per iteration, with step halving to a tolerance. Constraints are
handled by a penalty on their relative violation; members the process reports infeasible never
win.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from teakit.errors import InputError
from teakit.process.cases.common import Spec
from teakit.study.definitions import Constraint, Decision, Parameter, case_info
from teakit.study.economics import ECONOMICS, plant_economics
from teakit.units import to_si

__all__ = ["OBJECTIVES", "Optimum", "Study"]

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
        info = case_info(self.case)
        self._info = info
        if self.objective not in OBJECTIVES:
            raise InputError(f"objective must be one of {', '.join(OBJECTIVES)}, got {self.objective!r}")
        dspecs: dict[str, Spec] = info["decisions"]
        decs = {}
        for k, v in self.decisions.items():
            if k not in dspecs:
                raise InputError(f"unknown decision {k!r} for case {self.case}; decisions: {', '.join(dspecs)}")
            sp = dspecs[k]
            if isinstance(v, Decision):
                d = v
            else:
                v = dict(v)
                d = Decision(k, sp.unit, float(v.get("low", sp.low)), float(v.get("high", sp.high)),
                             float(v.get("default", sp.default)), bool(v.get("free", True)), sp.doc)
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
            p = v if isinstance(v, Parameter) else Parameter(k, sp.unit, float(v), kind, None, sp.doc)
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
                cons[k] = Constraint(k, float(v), cons[k].sense, cons[k].unit)
            else:
                raise InputError(f"unknown constraint {k!r}; constraints: {', '.join(cons)} (or pass a Constraint)")
        self._constraints = cons

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
        dec = {}
        for k, d in self._decisions.items():
            v = (decisions or {}).get(k, d.default)
            dec[k] = np.atleast_1d(np.asarray(to_si(v, d.unit, k) if d.unit != "-" else v, dtype=float))
        unknown = set(decisions or {}) - set(self._decisions)
        if unknown:
            raise InputError(f"unknown decision(s) {sorted(unknown)}; decisions: {', '.join(self._decisions)}")
        par = {}
        for k, p in self._parameters.items():
            v = (parameters or {}).get(k, p.nominal)
            par[k] = np.atleast_1d(np.asarray(to_si(v, p.unit, k) if p.unit not in ("-", "") else v, dtype=float))
        unknown = set(parameters or {}) - set(self._parameters)
        if unknown:
            raise InputError(f"unknown parameter(s) {sorted(unknown)}; parameters: {', '.join(self._parameters)}")
        try:
            B = int(np.broadcast_shapes(*(v.shape for v in (*dec.values(), *par.values())))[0])
        except ValueError:
            raise InputError("decision and parameter arrays do not broadcast to one batch") from None
        return ({k: np.broadcast_to(v, (B,)) for k, v in dec.items()},
                {k: np.broadcast_to(v, (B,)) for k, v in par.items()}, B)

    def _run(self, dec, par, B, with_metrics=True, warm=None, search=False):
        phys = {k: v for k, v in par.items() if self._parameters[k].kind == "physics"}
        econ = {k: v for k, v in par.items() if self._parameters[k].kind == "economics"}
        fn = self._info["function"]
        # During the search a coarser solve serves (fewer bed steps, looser loop tolerance:
        # objective differences stay below 1e-4 relative); reported figures use the defaults.
        kw = dict(self._info.get("search_options", {})) if search else {}
        if warm is not None:
            kw["warm"] = warm
        proc = fn(dec, phys, **kw)
        money = plant_economics(proc, econ, with_metrics=with_metrics)
        vals = {**proc.values, **{k: v for k, v in money.items() if not k.startswith("_") and k != "status"}}
        margins = {}
        for name, c in self._constraints.items():
            if c.function is not None:
                margins[name] = np.asarray(c.function(vals), dtype=float)
            else:
                v = vals[name]
                margins[name] = (c.limit - v) if c.sense == "max" else (v - c.limit)
        status = money["status"]
        yld = np.where(status == "ok", self._info["yield"](proc.values), 0.0)
        return proc, vals, margins, status, yld

    def evaluate(self, decisions: Mapping | None = None, parameters: Mapping | None = None):
        """Results of a batch of operating points as a DataFrame (one row per point).

        Parameters
        ----------
        decisions : mapping, optional
            Decision values (SI numbers, arrays or strings with units); others at their default.
        parameters : mapping, optional
            Parameter values; others at their nominal value. Arrays broadcast with decisions.

        Returns
        -------
        pandas.DataFrame
            Every decision, every process figure, capex and opex by item, revenue, NPV, IRR,
            LCOP, constraint margins (``margin_<name>``, >= 0 feasible), ``yield``, ``status`` and
            ``feasible``; column names carry units.
        """
        import pandas as pd

        dec, par, B = self._arrays(decisions, parameters)
        proc, vals, margins, status, yld = self._run(dec, par, B)
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
                 seed: int = 0, tol: float = 2e-3, max_iter: int = 25, max_yield: bool = True):
        """The profit-optimal decisions (and the maximum-yield point) for one or many parameter sets.

        Parameters
        ----------
        parameters : mapping, optional
            Parameter values; arrays of length P give P parameter sets and P optima.
        n_start : int
            Sobol points of the first, global stage (rounded up to a power of 2).
        starts : int
            Best distinct points refined by the batched pattern search.
        seed : int
            Seed of the scrambled Sobol sequence (results are reproducible).
        tol : float
            Final pattern step, as a fraction of each decision's range [-].
        max_iter : int
            Bound on pattern-search iterations.
        max_yield : bool
            Also find the maximum-yield point.

        Returns
        -------
        Optimum or list of Optimum
            One per parameter set (a single Optimum when no array parameters are given).
        """
        _, par, P = self._arrays({}, parameters)
        par_sets = [{k: v[i : i + 1] for k, v in par.items()} for i in range(P)]
        best = self._optimize_sets(par, P, n_start, starts, seed, tol, max_iter, "objective")
        out = []
        yb = self._optimize_sets(par, P, n_start, starts, seed, tol, max_iter, "yield") if max_yield else None
        for i in range(P):
            opt = self._finish(best[i], par_sets[i])
            if yb is not None:
                opt.max_yield = self._finish(yb[i], par_sets[i])
            out.append(opt)
        return out[0] if P == 1 and not any(np.ndim(v) for v in (parameters or {}).values()) else out

    def _finish(self, found, par1):
        u_dec, n_eval = found
        df = self.evaluate(u_dec, {k: v[0] for k, v in par1.items()})
        row = df.iloc[0]
        dec = {k: float(u_dec[k][0]) if np.ndim(u_dec[k]) else float(u_dec[k]) for k in self._decisions}
        obj = float(row[next(c for c in df.columns if c.startswith(f"{self.objective} ["))])
        margins = {c[len("margin_"):].split(" [")[0]: row[c] for c in df.columns if c.startswith("margin_")}
        active = [k for k, m in margins.items() if abs(m) <= 5e-3 * max(abs(self._constraints[k].limit), 1.0)]
        for k in self.free:  # decisions held at a bound are reported too
            dd = self._decisions[k]
            span = dd.high - dd.low
            if dec[k] <= dd.low + 1e-3 * span:
                active.append(f"{k} at its lower bound")
            elif dec[k] >= dd.high - 1e-3 * span:
                active.append(f"{k} at its upper bound")
        return Optimum(dec, obj, row.to_dict(), active, bool(row["feasible"]), None, n_eval, self.objective)

    def _optimize_sets(self, par, P, n_start, starts, seed, tol, max_iter, target):
        from scipy.stats import qmc

        free = self.free
        if not free:
            raise InputError("the study has no free decisions to optimise; mark some with free = true")
        d = len(free)
        lo = np.array([self._decisions[k].low for k in free])
        hi = np.array([self._decisions[k].high for k in free])
        fixed = {k: dd.default for k, dd in self._decisions.items() if not dd.free}
        m = int(np.ceil(np.log2(max(n_start, 2))))
        U = qmc.Sobol(d, scramble=True, seed=seed).random_base2(m)
        default_u = np.array([(self._decisions[k].default - lo[i]) / (hi[i] - lo[i]) for i, k in enumerate(free)])
        U = np.vstack([default_u[None], U])
        n0 = U.shape[0]
        n_eval = 0

        def run(u, p_idx, warm=None):
            x = lo + u * (hi - lo)
            dec = {k: x[:, i] for i, k in enumerate(free)} | {k: np.full(len(u), v) for k, v in fixed.items()}
            pr = {k: v[p_idx] for k, v in par.items()}
            proc, vals, margins, status, yld = self._run(dec, pr, len(u), self.objective in ("irr", "lcop"), warm, search=True)
            # A small slack on every constraint during the coarser search keeps the optimum
            # feasible when it is evaluated again at full accuracy.
            merit, _, _ = self._merit(vals, margins, status, yld, target, slack=1e-4)
            return merit, proc.state

        # Stage 1: the Sobol sample for every parameter set (physics shared where equal).
        merit0, state0 = run(np.tile(U, (P, 1)), np.repeat(np.arange(P), n0))
        merit0 = merit0.reshape(P, n0)
        n_eval += P * n0
        # Best distinct starts per set (at least 0.1 apart in the unit box).
        S = []
        for p in range(P):
            order = np.argsort(-merit0[p])
            chosen = []
            for j in order:
                if not np.isfinite(merit0[p, j]):
                    break
                if all(np.max(np.abs(U[j] - U[c])) > 0.1 for c in chosen):
                    chosen.append(j)
                if len(chosen) == starts:
                    break
            chosen = chosen or [int(order[0])]
            chosen += [chosen[0]] * (starts - len(chosen))
            S.append(U[chosen])
        X = np.stack(S)  # (P, starts, d)
        pick = np.array([[p * n0 + int(np.argmin(np.abs(U - X[p, s]).sum(axis=1))) for s in range(starts)] for p in range(P)])
        F = merit0.ravel()[pick]
        # Solver state of each centre (a recycle loop's converged tear), to warm-start the stencil.
        centre = {k: v[pick] for k, v in state0.items()}  # (P, starts, ...)
        step = np.full((P, starts), 0.1)
        E = np.vstack([np.eye(d), -np.eye(d)])  # compass directions
        move = np.zeros((P, starts, d))  # last accepted displacement (Hooke-Jeeves pattern)
        nc = 2 * d + 2
        for _ in range(max_iter):
            active = step > tol
            if not active.any():
                break
            compass = X[:, :, None, :] + step[:, :, None, None] * E[None, None]
            pattern = X[:, :, None, :] + np.stack([move, 2.0 * move], axis=2)  # ridge moves
            cand = np.clip(np.concatenate([compass, pattern], axis=2), 0.0, 1.0)  # (P,S,nc,d)
            pidx = np.repeat(np.arange(P), starts * nc)
            warm = {k: np.repeat(v.reshape((P * starts,) + v.shape[2:]), nc, axis=0) for k, v in centre.items()} or None
            mc, st = run(cand.reshape(-1, d), pidx, warm)
            mc = mc.reshape(P, starts, nc)
            n_eval += P * starts * nc
            j = np.argmax(mc, axis=-1)
            better = (mc.max(axis=-1) > F) & active
            new_X = np.take_along_axis(cand, j[..., None, None], axis=2)[:, :, 0, :]
            move = np.where(better[..., None], new_X - X, 0.0)
            X = np.where(better[..., None], new_X, X)
            for k, v in st.items():
                v = v.reshape((P, starts, nc) + v.shape[1:])
                chosen = np.take_along_axis(v, j.reshape((P, starts, 1) + (1,) * (v.ndim - 3)), axis=2)[:, :, 0]
                centre[k] = np.where(better.reshape((P, starts) + (1,) * (v.ndim - 3)), chosen, centre[k])
            F = np.where(better, mc.max(axis=-1), F)
            step = np.where(better | ~active, step, step / 2.0)
        out = []
        for p in range(P):
            s = int(np.argmax(F[p]))
            x = lo + X[p, s] * (hi - lo)
            dec = {k: np.array([x[i]]) for i, k in enumerate(free)} | {k: np.array([v]) for k, v in fixed.items()}
            out.append((dec, n_eval))
        return out

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
