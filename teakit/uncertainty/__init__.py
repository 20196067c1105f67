"""Uncertainty machinery independent of any study: distributions, sampling, batch runs, statistics.

- :mod:`~teakit.uncertainty.distributions`: marginals (uniform, triangular, PERT, normal,
  lognormal, discrete) with a vectorised inverse CDF, mean and percentiles.
- :mod:`~teakit.uncertainty.sampling`: seeded Latin hypercube or scrambled Sobol samples, rank
  correlation by Iman-Conover or a Gaussian copula.
- :mod:`~teakit.uncertainty.runner`: a vectorised model over many rows in chunks, on any
  :class:`concurrent.futures.Executor`, with Parquet checkpoints, retries and a progress bar;
  :func:`~teakit.uncertainty.runner.local_cluster` starts a Dask cluster on this machine.
- :mod:`~teakit.uncertainty.analysis`: Monte Carlo summaries with intervals and their
  convergence, Sobol and Morris indices (SALib), tornado tables, EVPI and EVPPI.

The study-level functions (Monte Carlo of the optimum, Sobol indices of NPV and of the optimal
decisions, tornado, value of information) are in :mod:`teakit.study.uncertainty`.
"""

from teakit.uncertainty.distributions import KINDS, Marginal, marginal
from teakit.uncertainty.runner import BatchError, CheckpointError, local_cluster, run_batches
from teakit.uncertainty.sampling import check_correlation, iman_conover, sample, uniform_design

__all__ = [
    "KINDS",
    "BatchError",
    "CheckpointError",
    "Marginal",
    "check_correlation",
    "iman_conover",
    "local_cluster",
    "marginal",
    "run_batches",
    "sample",
    "uniform_design",
]
