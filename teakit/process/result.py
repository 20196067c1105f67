"""What a process case returns: figures per batch member with units, a status, and profiles.

Both cases (ammonia loop, SO2 converter) return a :class:`ProcessResult`, so the costing layer and
the study read the same shape whichever case produced it:

- ``values``: name -> array (B,) in SI units, with ``units`` name -> unit string;
- ``equipment``: item name -> dict with a ``kind`` (a key of the cost tables, e.g.
  ``"vessel_vertical"``, ``"compressor_centrifugal"``) and its sizes as arrays;
- ``status``: per member ``"ok"`` or a short reason why the point is infeasible (it then carries
  zero production, never NaN);
- ``profiles``: arrays for plots (bed temperature-extent paths and the like).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["ProcessResult"]


@dataclass
class ProcessResult:
    """Results of a batch of process cases (see the module docstring)."""

    case: str
    values: dict[str, np.ndarray]
    units: dict[str, str]
    equipment: dict[str, dict]
    status: np.ndarray
    profiles: dict[str, np.ndarray] = field(default_factory=dict)
    #: Solver state per member (e.g. a loop's converged tear and inverse Jacobian), which a
    #: caller may pass back as ``warm`` to solve nearby points faster.
    state: dict[str, np.ndarray] = field(default_factory=dict)

    def __len__(self) -> int:
        return len(self.status)

    def __getitem__(self, name: str) -> np.ndarray:
        try:
            return self.values[name]
        except KeyError:
            raise KeyError(f"{name!r} is not a result of the {self.case} case; results: {', '.join(self.values)}") from None

    @property
    def ok(self) -> np.ndarray:
        """Boolean mask of feasible members."""
        return self.status == "ok"

    def to_frame(self):
        """A pandas DataFrame, one row per member, columns ``"<name> [<unit>]"`` and ``status``."""
        import pandas as pd

        cols = {f"{k} [{self.units.get(k, '-')}]": np.asarray(v) for k, v in self.values.items()}
        df = pd.DataFrame(cols)
        df["status"] = self.status
        return df

    def __repr__(self) -> str:
        n_ok = int(self.ok.sum())
        return f"ProcessResult(case={self.case!r}, members={len(self)}, feasible={n_ok}, values={len(self.values)})"
