"""Loading the data tables in ``data/`` once, cached.

Every table is a CSV file with a ``source`` column (or ``source_*`` columns) naming where each row
came from. The folder is found next to the package (a source checkout or an editable install)
or inside it as ``teakit/_data`` (a built wheel), or wherever ``TEAKIT_DATA`` points.
"""

from __future__ import annotations

import functools
import os
from pathlib import Path

import pandas as pd

from teakit.errors import InputError

__all__ = ["data_dir", "load_table"]


@functools.cache
def data_dir() -> Path:
    """The folder that holds teakit's data tables."""
    env = os.environ.get("TEAKIT_DATA")
    candidates = [Path(env)] if env else []
    here = Path(__file__).resolve().parent
    candidates += [here / "_data", here.parent / "data"]
    for c in candidates:
        if (c / "species.csv").is_file():
            return c
    raise FileNotFoundError(
        "teakit's data folder was not found; looked in " + ", ".join(str(c) for c in candidates)
    )


@functools.cache
def _read(name: str) -> pd.DataFrame:
    path = data_dir() / f"{name}.csv"
    if not path.is_file():
        available = sorted(p.stem for p in data_dir().glob("*.csv"))
        raise InputError(f"no data table named {name!r}; available: {', '.join(available)}")
    return pd.read_csv(path, comment="#", skipinitialspace=True)


def load_table(name: str) -> pd.DataFrame:
    """Return a copy of the data table ``data/<name>.csv`` (read once, then cached)."""
    return _read(name).copy()
