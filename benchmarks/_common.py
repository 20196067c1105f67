"""Shared helpers for the benchmark scripts."""

from __future__ import annotations

import os
import time


def one_core() -> None:
    """Pin BLAS/OpenMP pools to one thread, so figures are per core."""
    for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ.setdefault(var, "1")


def timed(fn, *args, repeat: int = 3, **kwargs):
    """Best wall time of ``repeat`` calls [s] and the last result."""
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn(*args, **kwargs)
        best = min(best, time.perf_counter() - t0)
    return best, out


def result(name: str, value: float, unit: str, op: str, target: float) -> str:
    """Format and print a RESULT line; returns it."""
    hit = {">=": value >= target, "<=": value <= target, ">": value > target, "<": value < target}[op]
    line = f"RESULT {name} {value:.4g} {unit} target {op}{target:g} {'HIT' if hit else 'MISS'}"
    print(line, flush=True)
    return line
