"""The error and warning hierarchy of teakit.

Every error a user can meet is one of these. Messages name the argument, the value that
failed and the valid range or choices, so that a notebook user can fix the input without
reading the source.

- :class:`InputError` (a :class:`ValueError`): a bad argument (wrong range, unknown name, NaN).
- :class:`OutOfRangeError` (an :class:`InputError`): a value outside the validity range of a
  data table or correlation, far enough that an answer would be meaningless.
- :class:`ConvergenceError` (a :class:`RuntimeError`): an iterative solver did not converge within
  its bounded iterations; carries which batch members failed and their residuals.
- :class:`RangeWarning` (a :class:`UserWarning`): a correlation used somewhat outside its stated
  range; the result is returned but should be read with care.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "ConvergenceError",
    "InputError",
    "OutOfRangeError",
    "RangeWarning",
    "TeakitError",
    "TeakitWarning",
]


class TeakitError(Exception):
    """Base class of all teakit errors."""


class InputError(TeakitError, ValueError):
    """A bad input: the message names the argument, its value and the valid range."""


class OutOfRangeError(InputError):
    """A value outside the validity range of a data table or correlation."""


class ConvergenceError(TeakitError, RuntimeError):
    """An iterative solver did not converge within its iteration bound.

    Parameters
    ----------
    message : str
        What failed.
    members : array_like of int, optional
        Flat indices of the batch members that did not converge.
    residuals : array_like of float, optional
        Their final residuals, in the solver's own measure (stated in ``message``).
    iterations : int, optional
        Iterations spent.
    """

    def __init__(self, message, members=None, residuals=None, iterations=None):
        self.members = np.atleast_1d(np.asarray(members if members is not None else [], dtype=int))
        self.residuals = np.atleast_1d(
            np.asarray(residuals if residuals is not None else [], dtype=float)
        )
        self.iterations = iterations
        detail = ""
        if self.members.size:
            shown = ", ".join(
                f"{m} (residual {r:.3g})"
                for m, r in zip(self.members[:10], self.residuals[:10], strict=False)
            )
            more = f" and {self.members.size - 10} more" if self.members.size > 10 else ""
            detail = f"; members not converged: {shown}{more}"
        if iterations is not None:
            detail += f"; after {iterations} iterations"
        super().__init__(message + detail)


class TeakitWarning(UserWarning):
    """Base class of teakit warnings."""


class RangeWarning(TeakitWarning):
    """A correlation or data table used outside its stated validity range (but not absurdly)."""
