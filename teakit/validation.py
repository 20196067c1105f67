"""Argument checks shared by every model function.

Each helper converts its argument to a float numpy array, checks it and raises
:class:`~teakit.errors.InputError` with a message that names the argument, the offending value
and the valid range. They never return NaN: a NaN or inf input is an error.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import InputError

__all__ = [
    "as_float_array",
    "broadcast_arrays",
    "check_finite",
    "check_fraction",
    "check_positive",
    "check_range",
    "scalar_or_array",
]


def _first_bad(a: np.ndarray, bad: np.ndarray) -> str:
    idx = np.flatnonzero(bad)
    val = a.ravel()[idx[0]]
    where = "" if a.ndim == 0 else f" at index {np.unravel_index(idx[0], a.shape)}"
    more = f" ({idx.size} values in all)" if idx.size > 1 else ""
    return f"{val!r}{where}{more}"


def as_float_array(name: str, value) -> np.ndarray:
    """Return ``value`` as a float array, or raise InputError naming ``name``."""
    try:
        a = np.asarray(value, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be a number or an array of numbers, got {value!r}") from exc
    return a


def check_finite(name: str, value) -> np.ndarray:
    """Float array of ``value``; InputError if any element is NaN or infinite."""
    a = as_float_array(name, value)
    bad = ~np.isfinite(a)
    if bad.any():
        raise InputError(f"{name} must be finite, got {_first_bad(a, bad)}")
    return a


def check_positive(name: str, value, unit: str = "", allow_zero: bool = False) -> np.ndarray:
    """Float array of ``value``; InputError unless every element is finite and > 0 (>= 0)."""
    a = check_finite(name, value)
    bad = a < 0 if allow_zero else a <= 0
    if bad.any():
        op = ">= 0" if allow_zero else "> 0"
        u = f" {unit}" if unit else ""
        raise InputError(f"{name} must be {op}{u}, got {_first_bad(a, bad)}{u}")
    return a


def check_range(
    name: str,
    value,
    low: float = -np.inf,
    high: float = np.inf,
    unit: str = "",
    inclusive: tuple[bool, bool] = (True, True),
) -> np.ndarray:
    """Float array of ``value``; InputError unless every element lies in [low, high].

    ``inclusive`` says whether each end is allowed.
    """
    a = check_finite(name, value)
    lo_bad = a < low if inclusive[0] else a <= low
    hi_bad = a > high if inclusive[1] else a >= high
    bad = lo_bad | hi_bad
    if bad.any():
        u = f" {unit}" if unit else ""
        lb = "[" if inclusive[0] else "("
        rb = "]" if inclusive[1] else ")"
        raise InputError(
            f"{name} must lie in {lb}{low:g}, {high:g}{rb}{u}, got {_first_bad(a, bad)}{u}"
        )
    return a


def check_fraction(name: str, value, open_ends: bool = False) -> np.ndarray:
    """Float array of ``value``; InputError unless every element is in [0, 1] ((0, 1) if open)."""
    inc = (not open_ends, not open_ends)
    return check_range(name, value, 0.0, 1.0, inclusive=inc)


def broadcast_arrays(**named) -> list[np.ndarray]:
    """Broadcast named arguments against each other as float arrays.

    Raises InputError naming every argument's shape when they do not broadcast.
    """
    try:
        return [np.asarray(a, dtype=float) for a in np.broadcast_arrays(*named.values())]
    except ValueError as exc:
        shapes = ", ".join(f"{k} {np.shape(v)}" for k, v in named.items())
        raise InputError(f"arguments do not broadcast against each other: {shapes}") from exc


def scalar_or_array(a):
    """A 0-d result as a Python scalar (float for float arrays), anything else unchanged."""
    a = np.asarray(a)
    return a.item() if a.ndim == 0 else a
