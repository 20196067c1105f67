"""Uncertainty studies on a Study: Monte Carlo, Sobol, Morris, tornado, value of information.

Every function takes the uncertain parameters from the study's parameter distributions
(``study._parameters[name].distribution``, read from ``[uncertainty.<name>]`` sections of a study
file), or from ``distributions=`` (name -> distribution mapping, SI), and evaluates batches of
parameter sets through one model per chunk of samples:

- **re-optimised**: ``study.optimize_batch(params, start=nominal_optimum)`` gives, per parameter
  set, the profit-optimal decisions and every figure of :meth:`Study.evaluate` there;
- **fixed**: ``study.evaluate(nominal_optimum.decisions, params)`` gives the figures of the
  deterministic optimum held fixed, as the comparison (columns prefixed ``fixed_``).

Chunks run in-process or on any :class:`concurrent.futures.Executor` (a process pool or a Dask
cluster's ``Client.get_executor()``) with checkpoints, retries and a progress bar
(:func:`teakit.uncertainty.runner.run_batches`); results are identical for the same seed whatever
the executor, and a run interrupted and restarted with the same checkpoint directory resumes.

Results are objects with ``.to_frame()`` and ``.summary()``:

- :func:`monte_carlo` -> :class:`MonteCarloResult`: samples with re-optimised and fixed-optimum
  figures side by side; summary (mean, sd, P10/P50/P90, P(NPV < 0) with intervals) and the
  convergence of these with sample count.
- :func:`sobol` -> :class:`SobolResult`: first/total (and second) order Sobol indices of the
  objective and each optimal decision, with bootstrap intervals (SALib; Saltelli et al. 2010).
- :func:`morris` -> :class:`MorrisResult`: elementary-effects screening (Morris 1991).
- :func:`tornado` -> :class:`TornadoResult`: one-at-a-time P10 -> P90 swings (or given low/high)
  on the objective at the re-optimised and at the fixed optimum.
- :func:`value_of_information` -> :class:`ValueOfInformation`: EVPI, EVPPI per parameter, and
  the expected regret of running at the deterministic optimum.

Preliminary estimates only: these studies propagate the uncertainty of a feasibility-level
model; pressures, temperatures and wall thicknesses behind them need the applicable codes and
licensed engineers before any design use.

References
----------
See :mod:`teakit.uncertainty.sampling` (Latin hypercube, Sobol sequences, Iman-Conover) and
:mod:`teakit.uncertainty.analysis` (intervals, Sobol and Morris estimators, EVPI).
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from teakit.errors import InputError
from teakit.uncertainty import analysis as A
from teakit.uncertainty.distributions import Marginal, marginal
from teakit.uncertainty.runner import atomic_write_bytes, parquet_bytes, run_batches
from teakit.uncertainty.sampling import sample

__all__ = [
    "MonteCarloResult",
    "MorrisResult",
    "SobolResult",
    "TornadoResult",
    "ValueOfInformation",
    "monte_carlo",
    "morris",
    "sobol",
    "tornado",
    "uncertain_parameters",
    "value_of_information",
]

_SENSE = {"npv": 1.0, "annual_profit": 1.0, "irr": 1.0, "lcop": -1.0}
#: Figures of the fixed optimum kept beside the re-optimised ones (with the objective).
_FIXED_KEEP = ("npv", "annual_profit", "irr", "lcop")


# -- the study's uncertain parameters ----------------------------------------------------------
def _valid_range(study, name):
    from teakit.study.economics import ECONOMICS

    spec = study._info["physics"].get(name) or ECONOMICS.get(name)
    return (spec.low, spec.high) if spec is not None else (-np.inf, np.inf)


def uncertain_parameters(study, distributions: Mapping | None = None, parameters=None) -> dict[str, Marginal]:
    """The uncertain parameters of a study and their validated marginals.

    Parameters
    ----------
    study : Study
    distributions : mapping, optional
        Name -> distribution (SI; see :mod:`teakit.uncertainty.distributions`), adding to or
        replacing those of the study file.
    parameters : sequence of str, optional
        Use only these (default: every parameter with a distribution).

    Returns
    -------
    dict
        Name -> :class:`~teakit.uncertainty.distributions.Marginal`, in the study's order.
    """
    specs = {k: p.distribution for k, p in study._parameters.items() if p.distribution}
    for k, v in (distributions or {}).items():
        if k not in study._parameters:
            raise InputError(f"distributions names unknown parameter {k!r}; parameters: {', '.join(study._parameters)}")
        specs[k] = v
    if parameters is not None:
        if isinstance(parameters, str):
            parameters = [parameters]
        missing = [k for k in parameters if k not in specs]
        if missing:
            raise InputError(
                f"parameter {missing[0]!r} has no distribution; uncertain parameters: {', '.join(specs) or 'none'} "
                "(add an [uncertainty.<name>] section or pass distributions=)"
            )
        specs = {k: specs[k] for k in parameters}
    if not specs:
        raise InputError(
            "the study has no uncertain parameters: add [uncertainty.<name>] sections to the study file "
            "or pass distributions={name: {...}}"
        )
    return {k: marginal(k, specs[k]) for k in _canonical_order(study, specs)}


def _canonical_order(study, names):
    """Names in the order of the case's physics table, then the economics table.

    A fixed order (not the order a study file happened to be read in) keeps the sample, and so
    every result, the same for the same seed in every process.
    """
    from teakit.study.economics import ECONOMICS

    ref = [*study._info["physics"], *ECONOMICS]
    return sorted(names, key=lambda k: (ref.index(k) if k in ref else len(ref), k))


def _check_samples(study, X):
    for k in X.columns:
        lo, hi = _valid_range(study, k)
        v = X[k].to_numpy()
        bad = (v < lo) | (v > hi)
        if bad.any():
            unit = study._parameters[k].unit
            raise InputError(
                f"the distribution of {k!r} gives {int(bad.sum())} of {v.size} samples outside its valid range "
                f"[{lo:g}, {hi:g}] {unit} (e.g. {v[bad][0]:g}); use a bounded distribution (triangular, pert, "
                "uniform) or a narrower one"
            )


def _fingerprint(study) -> str:
    """A stable hash of what the study computes (for checkpoint keys)."""
    parts = [type(study).__module__, type(study).__qualname__, study.case, study.objective]
    # Sorted by name: the order a study file was read in is not the same in every process.
    for _, d in sorted(study._decisions.items()):
        parts.append(repr((d.name, d.unit, d.low, d.high, d.default, d.free)))
    for _, p in sorted(study._parameters.items()):
        dist = sorted((k, repr(v)) for k, v in (p.distribution or {}).items())
        parts.append(repr((p.name, p.unit, p.nominal, p.kind, dist)))
    for _, c in sorted(study._constraints.items()):
        parts.append(repr((c.name, c.limit, c.sense, c.unit, getattr(c.function, "__qualname__", None))))
    return hashlib.sha256("\n".join(parts).encode()).hexdigest()


def _nominal(study, nominal):
    """(start for optimize_batch, fixed decisions dict) from an Optimum, a mapping or None."""
    if nominal is None:
        nominal = study.optimize(max_yield=False)
    if isinstance(nominal, Mapping):
        dec = dict(nominal)
    elif hasattr(nominal, "decisions"):
        dec = dict(nominal.decisions)
    else:
        raise InputError(f"nominal must be an Optimum or a mapping of decisions, got {type(nominal).__name__}")
    unknown = set(dec) - set(study._decisions)
    if unknown:
        raise InputError(f"nominal names unknown decision(s) {sorted(unknown)}; decisions: {', '.join(study._decisions)}")
    dec = {k: float(dec.get(k, d.default)) for k, d in study._decisions.items()}
    return nominal, dec


# -- the model run per chunk -------------------------------------------------------------------
def _study_state(study):
    return type(study), {f.name: getattr(study, f.name) for f in dataclasses.fields(study)}


class _StudyModel:
    """One chunk of parameter sets -> re-optimised and/or fixed-optimum figures (picklable).

    A Study holds references to its case functions that the standard pickle cannot carry, so
    the model pickles the study's constructor fields and rebuilds it in the worker.
    """

    def __init__(self, study, names, start, fixed_decisions, *, reoptimize=True, fixed=True,
                 options=None, decision_columns=False):
        self.study = study
        self.names = list(names)
        self.start = start
        self.fixed_decisions = dict(fixed_decisions)
        self.reoptimize = reoptimize
        self.fixed = fixed
        self.options = dict(options or {})
        self.decision_columns = decision_columns

    def __getstate__(self):
        state = self.__dict__.copy()
        state["study"] = _study_state(self.study)
        return state

    def __setstate__(self, state):
        cls, fields = state["study"]
        state["study"] = cls(**fields)
        self.__dict__.update(state)

    def __call__(self, chunk):
        import pandas as pd

        st = self.study
        # Each chunk starts from an empty memo of process evaluations, so its result depends on
        # its own inputs only: identical whichever worker, executor or order runs it.
        st.clear_memo()
        params = {k: chunk[k].to_numpy(dtype=float) for k in self.names}
        parts = []
        if self.reoptimize:
            re = st.optimize_batch(params, start=self.start, **self.options)
            if len(re) != len(chunk):
                raise ValueError(f"optimize_batch returned {len(re)} rows for {len(chunk)} parameter sets")
            parts.append(re.reset_index(drop=True))
        if self.fixed or self.decision_columns:
            if self.decision_columns:  # candidate decisions given per row
                dec = {k: chunk[f"{k} [{d.unit}]"].to_numpy(dtype=float) for k, d in st._decisions.items()}
            else:
                dec = self.fixed_decisions
            fx = st.evaluate(dec, params)
            keep = {st.objective, *_FIXED_KEEP}
            cols = [c for c in fx.columns if c.split(" [")[0] in keep] + ["feasible", "status"]
            parts.append(fx[cols].add_prefix("fixed_").reset_index(drop=True))
        return pd.concat(parts, axis=1)


def _study_chunk_size(study, names, n: int) -> int:
    """Default rows per chunk of a study (a function of the study's parameters and n only).

    Sets that differ only in economic parameters share their physics inside a chunk (one chunk
    of 10^4 price sets costs about as much as one of 2,500), so they run as one chunk of up to
    20,000; sets with physics varying share nothing and are split into about eight chunks (at
    least 64 rows) for executors and checkpoints.
    """
    physics = any(study._parameters[k].kind == "physics" for k in names)
    return int(min(n, max(64, math.ceil(n / 8)) if physics else 20000))


def _run(study, X, names, nominal, *, reoptimize, fixed, executor, checkpoint, chunk_size, retries,
         progress, overwrite, options, what, extra_key=""):
    start, fixed_dec = nominal
    model = _StudyModel(study, names, start, fixed_dec, reoptimize=reoptimize, fixed=fixed, options=options)
    if chunk_size is None:
        chunk_size = _study_chunk_size(study, names, len(X))
    key = "|".join([what, _fingerprint(study), repr(sorted(fixed_dec.items())), repr(sorted((options or {}).items())),
                    f"reoptimize={reoptimize}", f"fixed={fixed}", extra_key])
    return run_batches(model, X, executor=executor, chunk_size=chunk_size, checkpoint=checkpoint, retries=retries,
                       progress=progress, overwrite=overwrite, key=key, desc=what)


def _check_flags(reoptimize, fixed):
    if not (reoptimize or fixed):
        raise InputError("nothing to compute: reoptimize and fixed are both False")


# -- Monte Carlo -------------------------------------------------------------------------------
@dataclass
class MonteCarloResult:
    """A Monte Carlo study: samples, re-optimised and fixed-optimum figures.

    Attributes
    ----------
    samples : pandas.DataFrame
        Parameter sets, one column per uncertain parameter [SI unit of each].
    outputs : pandas.DataFrame
        Per sample: re-optimised decisions and figures (columns as :meth:`Study.evaluate`),
        and ``fixed_*`` figures of the deterministic optimum.
    units : dict
        Parameter -> SI unit.
    objective : str
        The study objective (``"npv"``, ...); ``sense`` +1 maximised, -1 minimised.
    nominal_decisions : dict
        The deterministic optimum's decisions held fixed [SI].
    info : dict
        Seed, method, correlation, chunking and checkpoint key.
    """

    samples: object
    outputs: object
    units: dict
    objective: str
    sense: float
    nominal_decisions: dict
    info: dict = field(default_factory=dict)

    @property
    def n(self) -> int:
        """Number of samples."""
        return len(self.samples)

    @property
    def objective_column(self) -> str:
        """The re-optimised objective's column (e.g. ``"npv [USD]"``), or the fixed one."""
        cols = [c for c in self.outputs.columns if c.startswith(f"{self.objective} [")]
        return cols[0] if cols else f"fixed_{self._fixed_objective_column()}"

    def _fixed_objective_column(self):
        c = next(c for c in self.outputs.columns if c.startswith(f"fixed_{self.objective} ["))
        return c[len("fixed_"):]

    def to_frame(self):
        """Samples and figures side by side: parameters as ``"<name> [unit]"``, then the outputs.

        With both runs present a ``regret [<unit>]`` column gives, per sample, how much the
        re-optimised objective beats the fixed optimum's (sense-adjusted: >= 0 means better).
        """
        import pandas as pd

        ins = self.samples.rename(columns={k: f"{k} [{self.units[k]}]" for k in self.samples.columns})
        clash = set(ins.columns) & set(self.outputs.columns)
        if clash:
            ins = ins.rename(columns={c: f"sampled_{c}" for c in clash})
        df = pd.concat([ins, self.outputs], axis=1)
        re = [c for c in self.outputs.columns if c.startswith(f"{self.objective} [")]
        fx = [c for c in self.outputs.columns if c.startswith(f"fixed_{self.objective} [")]
        if re and fx:
            unit = re[0].split(" [", 1)[1]
            df[f"regret [{unit}"] = self.sense * (df[re[0]] - df[fx[0]])
        return df

    def _columns(self, columns):
        if columns is None:
            cands = ["npv [", "fixed_npv [", f"{self.objective} [", f"fixed_{self.objective} ["]
            cols = []
            for p in cands:
                cols += [c for c in self.outputs.columns if c.startswith(p) and c not in cols]
            return cols
        if isinstance(columns, str):
            columns = [columns]
        frame = self.to_frame()
        missing = [c for c in columns if c not in frame.columns]
        if missing:
            raise InputError(f"unknown column {missing[0]!r}; columns include: {', '.join(list(self.outputs.columns)[:12])}, ...")
        return list(columns)

    def summary(self, columns=None, *, conf: float = 0.95, threshold: float = 0.0, feasible_only: bool = False):
        """Mean, sd, P10, P50, P90 and P(< threshold) with confidence intervals.

        Parameters
        ----------
        columns : str or sequence of str, optional
            Columns of :meth:`to_frame`; default NPV re-optimised and at the fixed optimum (and
            the objective if it is not NPV).
        conf : float
            Confidence level of the intervals [-] (methods in :mod:`teakit.uncertainty.analysis`).
        threshold : float
            Threshold of the probability row, e.g. 0 for P(NPV < 0) [column unit].
        feasible_only : bool
            Use only samples whose (re-optimised or fixed) point is feasible.

        Returns
        -------
        pandas.DataFrame
            Index (column, statistic); columns ``estimate``, ``low``, ``high``, ``interval``.
        """
        import pandas as pd

        frame = self.to_frame()
        out = []
        for c in self._columns(columns):
            y = frame[c]
            if feasible_only:
                flag = "fixed_feasible" if c.startswith("fixed_") else "feasible"
                if flag in frame:
                    y = y[frame[flag].to_numpy(bool)]
            t = A.summary_statistics(y.to_numpy(float), conf=conf, threshold=threshold)
            t.index = pd.MultiIndex.from_product([[c], t.index], names=["output", "statistic"])
            out.append(t)
        return pd.concat(out)

    def convergence(self, column=None, ns=None, *, conf: float = 0.95, threshold: float = 0.0):
        """The summary statistics of the first n samples, by n (:func:`analysis.convergence_table`).

        Parameters
        ----------
        column : str, optional
            Default the re-optimised objective (e.g. ``"npv [USD]"``).
        ns : sequence of int, optional
            Sample counts; default powers of 2 and n.
        """
        col = self.objective_column if column is None else self._columns(column)[0]
        return A.convergence_table(self.to_frame()[col].to_numpy(float), ns, conf=conf, threshold=threshold)

    # -- files ---------------------------------------------------------------------------------
    def save(self, path, *, overwrite: bool = False) -> Path:
        """Write :meth:`to_frame` and the study information to a Parquet file, atomically.

        Raises InputError if ``path`` exists, unless ``overwrite=True``.
        """
        import json

        p = Path(path)
        if p.exists() and not overwrite:
            raise InputError(f"{str(p)!r} exists; pass overwrite=True to replace it")
        meta = {"teakit_result": "monte_carlo", "teakit_info": json.dumps({
            "parameters": list(self.samples.columns), "units": self.units, "objective": self.objective,
            "sense": self.sense, "nominal_decisions": self.nominal_decisions,
            "outputs": list(self.outputs.columns), "info": {k: v for k, v in self.info.items() if _jsonable(v)}})}
        atomic_write_bytes(p, parquet_bytes(self.to_frame(), meta))
        return p

    @classmethod
    def load(cls, path) -> MonteCarloResult:
        """Read a result written by :meth:`save` (Parquet and JSON metadata only; nothing is unpickled)."""
        import json

        import pandas as pd
        import pyarrow.parquet as pq

        meta = pq.read_schema(path).metadata or {}
        if meta.get(b"teakit_result") != b"monte_carlo":
            raise InputError(f"{str(path)!r} is not a saved Monte Carlo result")
        info = json.loads(meta[b"teakit_info"])
        df = pd.read_parquet(path)
        units = info["units"]
        ins = [f"{k} [{units[k]}]" if f"{k} [{units[k]}]" in df.columns and f"{k} [{units[k]}]" not in info["outputs"]
               else f"sampled_{k} [{units[k]}]" for k in info["parameters"]]
        samples = df[ins].set_axis(info["parameters"], axis=1)
        return cls(samples, df[info["outputs"]], units, info["objective"], info["sense"], info["nominal_decisions"],
                   info["info"])


def _jsonable(v):
    import json

    try:
        json.dumps(v)
    except (TypeError, ValueError):
        return False
    return True


def monte_carlo(study, n: int = 1000, seed: int = 0, executor=None, method: str = "lhs", checkpoint=None, *,
                distributions: Mapping | None = None, parameters=None, correlation=None,
                copula: str = "iman-conover", reoptimize: bool = True, fixed: bool = True, nominal=None,
                chunk_size: int | None = None, retries: int = 1, progress: bool = True,
                overwrite: bool = False, optimize_options: Mapping | None = None) -> MonteCarloResult:
    """Monte Carlo of the study's optimum over its uncertain parameters.

    Parameters
    ----------
    study : Study
    n : int
        Samples [-].
    seed : int
        Seed of the sample (the same seed gives the same result, whatever the executor) [-].
    executor : concurrent.futures.Executor, optional
        Where chunks run (default in-process).
    method : {"lhs", "sobol", "random"}
        Sampling design (:func:`teakit.uncertainty.sampling.uniform_design`).
    checkpoint : str or Path, optional
        Directory of finished chunks; a run restarted with the same arguments resumes.
    distributions : mapping, optional
        Name -> distribution (SI), adding to or replacing the study file's.
    parameters : sequence of str, optional
        Only these uncertain parameters (others at nominal).
    correlation : matrix, DataFrame or mapping ``{(a, b): rho}``, optional
        Target Spearman rank correlation (:func:`teakit.uncertainty.sampling.check_correlation`).
    copula : {"iman-conover", "gaussian"}
        How the correlation is induced.
    reoptimize : bool
        Re-optimise the decisions for every sample (``study.optimize_batch``).
    fixed : bool
        Also evaluate the deterministic optimum held fixed (columns ``fixed_*``).
    nominal : Optimum or mapping, optional
        The deterministic optimum (start of the re-optimisation and the fixed decisions);
        default ``study.optimize(max_yield=False)``.
    chunk_size, retries, progress, overwrite
        As for :func:`teakit.uncertainty.runner.run_batches`.
    optimize_options : mapping, optional
        Keyword arguments of ``study.optimize_batch`` (``tol``, ``max_iter``, ``seed``).

    Returns
    -------
    MonteCarloResult
    """
    _check_flags(reoptimize, fixed)
    margs = uncertain_parameters(study, distributions, parameters)
    names = list(margs)
    X = sample(margs, n, seed, method=method, correlation=correlation, copula=copula)
    _check_samples(study, X)
    nom = _nominal(study, nominal)
    out = _run(study, X, names, nom, reoptimize=reoptimize, fixed=fixed, executor=executor, checkpoint=checkpoint,
               chunk_size=chunk_size, retries=retries, progress=progress, overwrite=overwrite,
               options=optimize_options, what="monte_carlo")
    info = {"seed": seed, "method": method, "copula": copula, "correlation": None if correlation is None else repr(correlation),
            **{k: out.attrs.get(k) for k in ("n_chunks", "chunk_size", "resumed_chunks", "computed_chunks", "key")}}
    return MonteCarloResult(X, out, {k: study._parameters[k].unit for k in names}, study.objective,
                            _SENSE[study.objective], nom[1], info)


# -- Sobol -------------------------------------------------------------------------------------
def _default_outputs(study):
    return [study.objective] + [f"{k} [{study._decisions[k].unit}]" for k in study.free]


def _resolve_outputs(frame, outputs):
    cols = []
    for o in outputs:
        if o in frame.columns:
            cols.append(o)
            continue
        hit = [c for c in frame.columns if c.startswith(f"{o} [")]
        if not hit:
            raise InputError(f"unknown output {o!r}; outputs include: {', '.join(list(frame.columns)[:15])}, ...")
        cols.append(hit[0])
    return cols


@dataclass
class SobolResult:
    """Sobol indices of several outputs.

    Attributes
    ----------
    indices : pandas.DataFrame
        Index (output, parameter); columns ``S1``, ``S1_conf``, ``ST``, ``ST_conf`` [-].
    second : pandas.DataFrame or None
        Index (output, parameter_i, parameter_j); ``S2``, ``S2_conf`` [-].
    samples, outputs : pandas.DataFrame
        The design in parameter values [SI] and the model outputs at its rows.
    info : dict
        N, seed, number of evaluations, confidence level.
    """

    indices: object
    second: object
    samples: object
    outputs: object
    info: dict = field(default_factory=dict)

    def to_frame(self):
        """S1, S1_conf, ST, ST_conf per output and parameter (index (output, parameter))."""
        return self.indices.copy()

    def second_order(self):
        """S2 and S2_conf per output and parameter pair (needs ``calc_second_order=True``)."""
        if self.second is None:
            raise InputError("second-order indices were not computed; run sobol(..., calc_second_order=True)")
        return self.second.copy()

    def summary(self):
        """Per output: the parameter with the largest total index, sum of S1 (1 - sum S1 is the
        share of variance due to interactions), the smallest total index, and the widest interval.

        The smallest total index bounds the share of the output's variance that no parameter
        explains: an output with a noise component independent of the inputs, such as an
        optimal decision resolved only to the optimiser's tolerance, adds that share to every
        total index (Jansen's estimator; Saltelli et al. 2010, Comput. Phys. Commun. 181, 259),
        so ``ST_floor`` well above zero, or ``top_ST`` above 1, says the indices of that output
        are partly noise.

        Returns
        -------
        pandas.DataFrame
            Index output; columns ``top_parameter``, ``top_ST``, ``sum_S1``, ``ST_floor``,
            ``max_conf``.
        """
        import pandas as pd

        rows = {}
        for o, g in self.indices.groupby(level="output", sort=False):
            g = g.droplevel("output")
            top = g["ST"].idxmax()
            rows[o] = {"top_parameter": top, "top_ST": float(g.loc[top, "ST"]), "sum_S1": float(g["S1"].sum()),
                       "ST_floor": float(g["ST"].min()),
                       "max_conf": float(max(g["S1_conf"].max(), g["ST_conf"].max()))}
        return pd.DataFrame.from_dict(rows, orient="index").rename_axis("output")


def sobol(study, n: int = 512, seed: int = 0, executor=None, outputs=None, *, calc_second_order: bool = False,
          num_resamples: int = 100, conf_level: float = 0.95, distributions: Mapping | None = None, parameters=None,
          reoptimize: bool = True, nominal=None, checkpoint=None, chunk_size: int | None = None, retries: int = 1,
          progress: bool = True, overwrite: bool = False, optimize_options: Mapping | None = None) -> SobolResult:
    """Sobol indices of the objective and of each optimal decision (Saltelli scheme via SALib).

    Parameters
    ----------
    study : Study
    n : int
        Base sample size N, a power of 2; the model runs N (D + 2) times (N (2D + 2) with
        second order) for D uncertain parameters [-].
    seed : int
        Seed of the scrambled Sobol design and of the bootstrap [-].
    executor : concurrent.futures.Executor, optional
    outputs : sequence of str, optional
        Output names (``"npv"``) or columns (``"pressure [Pa]"``, ``"fixed_npv [USD]"``); default
        the objective and every free decision.
    calc_second_order : bool
        Also second-order indices.
    num_resamples, conf_level
        Bootstrap of the intervals (``_conf`` columns are half-widths at ``conf_level``).
    distributions, parameters, nominal, checkpoint, chunk_size, retries, progress, overwrite, optimize_options
        As for :func:`monte_carlo`.
    reoptimize : bool
        Re-optimise per sample (default); False: indices of the fixed optimum's figures only.

    Returns
    -------
    SobolResult

    Notes
    -----
    Sobol indices assume independent inputs: correlations are not applied here. Indices of the
    optimal decisions include the effect of the optimiser's tolerance as noise: it adds to every
    total index, and ``summary()["ST_floor"]`` (the smallest total index) bounds its share.
    """
    margs = uncertain_parameters(study, distributions, parameters)
    names = list(margs)
    U = A.sobol_design(names, n, seed, calc_second_order=calc_second_order)
    import pandas as pd

    X = pd.DataFrame({k: margs[k].ppf(U[:, j]) for j, k in enumerate(names)})
    _check_samples(study, X)
    wanted = list(outputs) if outputs is not None else (_default_outputs(study) if reoptimize else [f"fixed_{study.objective}"])
    need_fixed = (not reoptimize) or any(str(o).startswith("fixed_") for o in wanted)
    nom = _nominal(study, nominal)
    out = _run(study, X, names, nom, reoptimize=reoptimize, fixed=need_fixed, executor=executor, checkpoint=checkpoint,
               chunk_size=chunk_size, retries=retries, progress=progress, overwrite=overwrite,
               options=optimize_options, what="sobol", extra_key=f"second={calc_second_order}")
    cols = _resolve_outputs(out, wanted)
    firsts, seconds = [], []
    for c in cols:
        ft, sec = A.sobol_indices(names, out[c].to_numpy(float), calc_second_order=calc_second_order,
                                  num_resamples=num_resamples, conf_level=conf_level, seed=seed)
        firsts.append(pd.concat({c: ft}, names=["output"]))
        if sec is not None:
            seconds.append(pd.concat({c: sec}, names=["output"]))
    info = {"N": n, "seed": seed, "evaluations": len(X), "conf_level": conf_level,
            "calc_second_order": calc_second_order, **{k: out.attrs.get(k) for k in ("n_chunks", "resumed_chunks", "key")}}
    return SobolResult(pd.concat(firsts), pd.concat(seconds) if seconds else None, X, out, info)


# -- Morris ------------------------------------------------------------------------------------
@dataclass
class MorrisResult:
    """Morris screening of several outputs.

    Attributes
    ----------
    indices : pandas.DataFrame
        Index (output, parameter); columns ``mu``, ``mu_star``, ``sigma``, ``mu_star_conf``
        [output unit per quantile range].
    samples, outputs : pandas.DataFrame
    info : dict
    """

    indices: object
    samples: object
    outputs: object
    info: dict = field(default_factory=dict)

    def to_frame(self):
        """mu, mu_star, sigma, mu_star_conf per output and parameter."""
        return self.indices.copy()

    def summary(self):
        """Per output, the parameters ranked by mu* (most influential first).

        Returns
        -------
        pandas.DataFrame
            Index output; column ``ranking`` (list of names) and ``top_mu_star``.
        """
        import pandas as pd

        rows = {}
        for o, g in self.indices.groupby(level="output", sort=False):
            g = g.droplevel("output").sort_values("mu_star", ascending=False)
            rows[o] = {"ranking": list(g.index), "top_mu_star": float(g["mu_star"].iloc[0])}
        return pd.DataFrame.from_dict(rows, orient="index").rename_axis("output")


def morris(study, trajectories: int = 10, seed: int = 0, executor=None, outputs=None, *, num_levels: int = 4,
           quantile_range=(0.005, 0.995), distributions: Mapping | None = None, parameters=None,
           reoptimize: bool = True, nominal=None, checkpoint=None, chunk_size: int | None = None,
           retries: int = 1, progress: bool = True, overwrite: bool = False,
           optimize_options: Mapping | None = None) -> MorrisResult:
    """Morris elementary-effects screening (Morris 1991; mu* of Campolongo et al. 2007).

    The design's unit levels are mapped onto the quantiles ``quantile_range`` of each marginal
    (levels in probability space, tails cut so unbounded distributions stay finite; Saltelli et
    al. 2008, ch. 3), then through the inverse CDF. Elementary effects are per the whole quantile
    range. The model runs r (D + 1) times.

    Parameters
    ----------
    trajectories : int
        Number of trajectories r [-].
    num_levels : int
        Grid levels per axis (even) [-].
    quantile_range : (float, float)
        Probabilities the unit levels 0 and 1 map to [-].
    Others
        As for :func:`sobol`.

    Returns
    -------
    MorrisResult
    """
    import pandas as pd

    q0, q1 = (float(v) for v in quantile_range)
    if not 0.0 <= q0 < q1 <= 1.0:
        raise InputError(f"quantile_range must be two probabilities 0 <= low < high <= 1, got {quantile_range!r}")
    margs = uncertain_parameters(study, distributions, parameters)
    names = list(margs)
    U = A.morris_design(names, trajectories, seed, num_levels=num_levels)
    X = pd.DataFrame({k: margs[k].ppf(q0 + U[:, j] * (q1 - q0)) for j, k in enumerate(names)})
    _check_samples(study, X)
    wanted = list(outputs) if outputs is not None else (_default_outputs(study) if reoptimize else [f"fixed_{study.objective}"])
    need_fixed = (not reoptimize) or any(str(o).startswith("fixed_") for o in wanted)
    nom = _nominal(study, nominal)
    out = _run(study, X, names, nom, reoptimize=reoptimize, fixed=need_fixed, executor=executor, checkpoint=checkpoint,
               chunk_size=chunk_size, retries=retries, progress=progress, overwrite=overwrite,
               options=optimize_options, what="morris", extra_key=f"q={q0},{q1}")
    cols = _resolve_outputs(out, wanted)
    frames = [pd.concat({c: A.morris_indices(names, U, out[c].to_numpy(float), num_levels=num_levels, seed=seed)},
                        names=["output"]) for c in cols]
    info = {"trajectories": trajectories, "seed": seed, "evaluations": len(X), "num_levels": num_levels,
            "quantile_range": (q0, q1)}
    return MorrisResult(pd.concat(frames), X, out, info)


# -- tornado -----------------------------------------------------------------------------------
@dataclass
class TornadoResult:
    """One-at-a-time swings of the objective, re-optimised and at the fixed optimum.

    Attributes
    ----------
    table : pandas.DataFrame
        Index parameter (largest re-optimised swing first); columns ``unit``, ``low``, ``high``
        [parameter unit], ``objective_low``, ``objective_high``, ``swing``, and ``fixed_*`` of the
        same at the fixed optimum [objective unit].
    base : dict
        Objective at the base point: ``"reoptimized"``, ``"fixed"`` [objective unit].
    evaluations : pandas.DataFrame
        Every evaluated point (base first, then low and high of each parameter).
    """

    table: object
    base: dict
    evaluations: object
    objective_column: str = ""

    def to_frame(self):
        """The swing table (see the class docstring)."""
        return self.table.copy()

    def summary(self):
        """The swing table's main columns, largest swing first."""
        cols = [c for c in ("low", "high", "objective_low", "objective_high", "swing", "fixed_swing") if c in self.table]
        return self.table[cols].copy()


def tornado(study, *, parameters=None, distributions: Mapping | None = None, low: Mapping | None = None,
            high: Mapping | None = None, percentiles=(10, 90), base: Mapping | None = None, nominal=None,
            reoptimize: bool = True, fixed: bool = True, executor=None, progress: bool = False,
            optimize_options: Mapping | None = None) -> TornadoResult:
    """Tornado: each parameter swung from its P10 to its P90 (or given low/high), others at base.

    Parameters
    ----------
    study : Study
    parameters : sequence of str, optional
        Parameters to swing; default those with a distribution and those named in low/high.
    distributions : mapping, optional
        As for :func:`monte_carlo`.
    low, high : mapping, optional
        Name -> swing ends [SI], overriding the percentiles.
    percentiles : (float, float)
        Percentiles of the swing ends [-] (P10 = 10 % of outcomes below).
    base : mapping, optional
        Base values [SI]; default each parameter's nominal value.
    nominal, reoptimize, fixed, executor, progress, optimize_options
        As for :func:`monte_carlo`.

    Returns
    -------
    TornadoResult
    """
    import pandas as pd

    _check_flags(reoptimize, fixed)
    low, high, base = dict(low or {}), dict(high or {}), dict(base or {})
    for k in (*low, *high, *base):
        if k not in study._parameters:
            raise InputError(f"unknown parameter {k!r}; parameters: {', '.join(study._parameters)}")
    specs = {k: p.distribution for k, p in study._parameters.items() if p.distribution} | dict(distributions or {})
    if parameters is None:
        names = _canonical_order(study, {*specs, *low, *high})
    else:
        names = [parameters] if isinstance(parameters, str) else list(parameters)
    if not names:
        raise InputError("no parameters to swing: give distributions or low=/high= values")
    q0, q1 = (float(v) for v in percentiles)
    if not 0.0 <= q0 < q1 <= 100.0:
        raise InputError(f"percentiles must be two values 0 <= low < high <= 100, got {percentiles!r}")
    lo_v, hi_v = [], []
    for k in names:
        if k not in study._parameters:
            raise InputError(f"unknown parameter {k!r}; parameters: {', '.join(study._parameters)}")
        m = marginal(k, specs[k]) if k in specs else None
        if m is None and not (k in low and k in high):
            raise InputError(f"parameter {k!r} has no distribution: give both low[{k!r}] and high[{k!r}]")
        lo_v.append(float(low[k]) if k in low else m.percentile(q0))
        hi_v.append(float(high[k]) if k in high else m.percentile(q1))
    b = {k: float(base.get(k, study._parameters[k].nominal)) for k in names}
    rows = [dict(b)]
    for k, lo_, hi_ in zip(names, lo_v, hi_v, strict=True):
        rows += [b | {k: lo_}, b | {k: hi_}]
    X = pd.DataFrame(rows, columns=names)
    _check_samples(study, X)
    nom = _nominal(study, nominal)
    out = _run(study, X, names, nom, reoptimize=reoptimize, fixed=fixed, executor=executor, checkpoint=None,
               chunk_size=len(X) if executor is None else None, retries=1, progress=progress, overwrite=False,
               options=optimize_options, what="tornado")
    table = pd.DataFrame({"unit": [study._parameters[k].unit for k in names], "low": lo_v, "high": hi_v},
                         index=pd.Index(names, name="parameter"))
    basevals = {}
    ocol = ""
    for prefix, label in (("", "reoptimized"), ("fixed_", "fixed")):
        hit = [c for c in out.columns if c.startswith(f"{prefix}{study.objective} [")]
        if not hit:
            continue
        y = out[hit[0]].to_numpy(float)
        ocol = ocol or hit[0]
        t = A.tornado_frame(names, lo_v, hi_v, y[1::2], y[2::2], y[0])
        table[f"{prefix}objective_low"] = t["output_low"]
        table[f"{prefix}objective_high"] = t["output_high"]
        table[f"{prefix}swing"] = t["swing"]
        basevals[label] = float(y[0])
    key = "swing" if "swing" in table else "fixed_swing"
    table = table.sort_values(key, ascending=False, kind="stable")
    ev = pd.concat([X.rename(columns={k: f"{k} [{study._parameters[k].unit}]" for k in names}), out], axis=1)
    return TornadoResult(table, basevals, ev, ocol)


# -- value of information ----------------------------------------------------------------------
@dataclass
class ValueOfInformation:
    """Expected value of perfect information, per parameter, and the regret of the nominal optimum.

    Attributes
    ----------
    table : pandas.DataFrame
        Index quantity (``EVPI``, ``EVPI_candidates``, ``expected_regret_nominal``,
        ``EVPPI[<name>]``); columns ``value`` [objective unit, sense-adjusted: a gain] and
        ``share_of_EVPI`` [-].
    candidates : pandas.DataFrame
        The candidate decisions (nominal optimum first) with their expected objective and the
        fraction of samples where they are feasible.
    values : numpy.ndarray
        Objective of each candidate (columns) in each sample (rows), sense-adjusted.
    monte_carlo : MonteCarloResult
        The re-optimised Monte Carlo the study rests on.
    unit : str
    """

    table: object
    candidates: object
    values: object
    monte_carlo: object
    unit: str = ""
    info: dict = field(default_factory=dict)

    def to_frame(self):
        """The value-of-information table (see the class docstring)."""
        return self.table.copy()

    def summary(self):
        """The values with the expected objective under perfect information, at the nominal
        optimum and at the best candidate appended (rows ``E[...]``, objective unit).

        Returns
        -------
        pandas.DataFrame
            Index quantity; column ``value``.
        """
        import pandas as pd

        extra = pd.Series({"E[objective | perfect information]": self.info["perfect"],
                           "E[objective | nominal optimum]": self.info["nominal"],
                           "E[objective | best candidate]": self.info["best"]})
        return pd.concat([self.table["value"], extra]).rename_axis("quantity").to_frame("value")



def value_of_information(study, n: int = 256, seed: int = 0, executor=None, *, candidates: int = 16, mc=None,
                         bins: int | None = None, method: str = "lhs", correlation=None,
                         copula: str = "iman-conover", distributions: Mapping | None = None, parameters=None,
                         nominal=None, checkpoint=None, chunk_size: int | None = None, retries: int = 1,
                         progress: bool = True, overwrite: bool = False,
                         optimize_options: Mapping | None = None) -> ValueOfInformation:
    """EVPI, EVPPI per parameter and the expected regret of the deterministic optimum.

    1. A re-optimised Monte Carlo (``mc``, or :func:`monte_carlo` with these arguments) gives
       the objective with perfect information, :math:`V(d^*(\\theta), \\theta)`, per sample.
    2. Candidate fixed decisions: the nominal optimum and the re-optimised decisions of
       ``candidates`` samples spread through the sample; each is evaluated in every sample,
       giving the matrix :math:`V_{sd}`.
    3. :math:`EVPI = E_s[\\max(V(d^*_s), \\max_d V_{sd})] - \\max_d E_s[V_{sd}]` (Raiffa &
       Schlaifer 1961); the best fixed decision is searched among the candidates, so this is an
       upper estimate of EVPI over all fixed decisions. Expected regret of the nominal optimum:
       :math:`E_s[\\max(\\cdot)] - E_s[V_{s0}]`. EVPPI of each parameter by equal-count bins of
       its samples (:func:`teakit.uncertainty.analysis.evppi`), among the candidates.

    Objectives to minimise (LCOP) are negated, so every value is a gain [objective unit].
    Candidates are evaluated as they are (their objective even where a constraint is violated);
    ``candidates['feasible_fraction']`` says how often each is feasible.

    Parameters
    ----------
    n, seed, executor, method, correlation, copula, distributions, parameters, nominal, checkpoint,
    chunk_size, retries, progress, overwrite, optimize_options
        As for :func:`monte_carlo` (ignored for the sample when ``mc`` is given). A
        ``checkpoint`` directory holds two run directories, ``monte_carlo`` and ``candidates``.
    candidates : int
        Re-optimised decision sets tried as fixed decisions, besides the nominal optimum [-].
    mc : MonteCarloResult, optional
        A re-optimised Monte Carlo to reuse.
    bins : int, optional
        Bins per parameter for EVPPI (default :math:`\\sqrt n`).

    Returns
    -------
    ValueOfInformation
    """
    import pandas as pd

    if isinstance(candidates, bool) or not isinstance(candidates, int) or candidates < 0:
        raise InputError(f"candidates must be a whole number >= 0, got {candidates!r}")
    ck = Path(checkpoint) if checkpoint is not None else None
    if mc is None:
        nom = _nominal(study, nominal)
        mc = monte_carlo(study, n, seed, executor, method, ck / "monte_carlo" if ck else None,
                         distributions=distributions, parameters=parameters, correlation=correlation, copula=copula,
                         reoptimize=True, fixed=False, nominal=nom[0], chunk_size=chunk_size, retries=retries,
                         progress=progress, overwrite=overwrite, optimize_options=optimize_options)
    if not isinstance(mc, MonteCarloResult):
        raise InputError(f"mc must be a MonteCarloResult, got {type(mc).__name__}")
    re_cols = [c for c in mc.outputs.columns if c.startswith(f"{study.objective} [")]
    if not re_cols:
        raise InputError("value_of_information needs a re-optimised Monte Carlo (monte_carlo(..., reoptimize=True))")
    ocol = re_cols[0]
    unit = ocol.split(" [", 1)[1].rstrip("]")
    sense = _SENSE[study.objective]
    S = mc.n
    names = list(mc.samples.columns)
    dec_cols = {k: f"{k} [{d.unit}]" for k, d in study._decisions.items()}
    missing = [c for c in dec_cols.values() if c not in mc.outputs.columns]
    if missing:
        raise InputError(f"the Monte Carlo outputs lack decision column {missing[0]!r}")
    picks = np.unique(np.linspace(0, S - 1, min(candidates, S)).round().astype(int)) if candidates else np.array([], int)
    cand = [dict(mc.nominal_decisions)] + [{k: float(mc.outputs[c].iloc[i]) for k, c in dec_cols.items()} for i in picks]
    D = len(cand)
    rows = pd.concat([mc.samples] * D, ignore_index=True)
    for k, c in dec_cols.items():
        rows[c] = np.repeat([cd[k] for cd in cand], S)
    model = _StudyModel(study, names, None, {}, reoptimize=False, fixed=False, decision_columns=True)
    key = "|".join(["candidates", _fingerprint(study), str(mc.info.get("key"))])
    out = run_batches(model, rows, executor=executor, chunk_size=chunk_size, checkpoint=ck / "candidates" if ck else None,
                      retries=retries, progress=progress, overwrite=overwrite, key=key, desc="candidates")
    fcol = f"fixed_{ocol}"
    V = sense * out[fcol].to_numpy(float).reshape(D, S).T
    feas = out["fixed_feasible"].to_numpy(bool).reshape(D, S).T
    v_re = sense * mc.outputs[ocol].to_numpy(float)
    perfect = np.maximum(v_re, V.max(axis=1))
    means = V.mean(axis=0)
    best = int(np.argmax(means))
    e_perfect = float(perfect.mean())
    value = {"EVPI": max(e_perfect - float(means[best]), 0.0),
             "EVPI_candidates": A.evpi(V),
             "expected_regret_nominal": max(e_perfect - float(means[0]), 0.0)}
    for k in names:
        value[f"EVPPI[{k}]"] = A.evppi(V, mc.samples[k].to_numpy(float), bins)
    evpi_ = value["EVPI"]
    table = pd.DataFrame({"value": value, "share_of_EVPI": {k: (v / evpi_ if evpi_ > 0 else 0.0) for k, v in value.items()}})
    table.index.name = "quantity"
    ctab = pd.DataFrame([{dec_cols[k]: v for k, v in cd.items()} for cd in cand])
    ctab.insert(0, "source", ["nominal optimum"] + [f"re-optimum of sample {i}" for i in picks])
    ctab[f"expected {ocol}"] = sense * means
    ctab["feasible_fraction"] = feas.mean(axis=0)
    info = {"perfect": sense * e_perfect, "nominal": sense * float(means[0]), "best": sense * float(means[best]),
            "best_candidate": best, "samples": S}
    return ValueOfInformation(table, ctab, V, mc, unit, info)
