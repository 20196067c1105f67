"""Argument checks shared by every model function.

Each helper converts its argument to a float numpy array, checks it and raises
:class:`~teakit.errors.InputError` with a message that names the argument, the offending value
and the valid range. They never return NaN: a NaN or inf input is an error.
"""

from __future__ import annotations

import numpy as np

from teakit.errors import InputError, OutOfRangeError

__all__ = [
    "as_float_array",
    "broadcast_arrays",
    "check_finite",
    "check_fraction",
    "check_positive",
    "check_range",
    "check_scalar",
    "finite_result",
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


def check_scalar(name: str, a) -> float:
    """``a`` (already checked) as a float; InputError naming ``name`` unless it is one number."""
    a = np.asarray(a)
    if a.ndim != 0:
        raise InputError(f"{name} must be a single number, got an array of shape {a.shape}")
    return float(a)


def check_fraction(name: str, value, open_ends: bool = False) -> np.ndarray:
    """Float array of ``value``; InputError unless every element is in [0, 1] ((0, 1) if open)."""
    inc = (not open_ends, not open_ends)
    return check_range(name, value, 0.0, 1.0, inclusive=inc)


def check_composition(name: str, y, names, T: np.ndarray, P: np.ndarray, what: str = "mole fractions"):
    """Mole fractions ``y`` (last axis = the species ``names``) checked and normalised, and the
    broadcast shape of ``T``, ``P`` and ``y`` without its species axis.

    Raises InputError for non-finite values, a last axis of the wrong length, negative entries,
    an all-zero composition, or shapes that do not broadcast.
    """
    y = check_finite(name, y)
    n = len(names)
    if y.ndim == 0 or y.shape[-1] != n:
        raise InputError(f"{name} must have a last axis of length {n} ({', '.join(names)}), got shape {y.shape}")
    if (y < 0).any():
        raise InputError(f"{name} ({what}) must be >= 0, got min {y.min():g}")
    tot = y.sum(axis=-1, keepdims=True)
    if (tot <= 0).any():
        raise InputError(f"{name} ({what}) must not all be zero")
    y = y / tot
    try:
        shape = np.broadcast_shapes(np.shape(T), np.shape(P), y.shape[:-1])
    except ValueError:
        raise InputError(
            f"T {np.shape(T)}, P {np.shape(P)} and {name} {y.shape[:-1]} (without its species axis) "
            "do not broadcast"
        ) from None
    return y, shape


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


def _extremeness(value) -> float:
    """How far the magnitudes in ``value`` are from 1, in decades (0 for non-numbers)."""
    try:
        a = np.abs(np.asarray(value, dtype=float)).ravel()
    except (TypeError, ValueError):
        return 0.0
    a = a[np.isfinite(a) & (a > 0)]
    return float(np.abs(np.log10(a)).max()) if a.size else 0.0


def _describe(name: str, value) -> str:
    try:
        a = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        return name
    if a.size == 0:
        return name
    if a.ndim == 0:
        return f"{name} = {float(a):g}"
    mags = np.abs(a[np.isfinite(a)])
    if mags.size == 0:
        return name
    return f"{name} (magnitudes {mags.min():g} to {mags.max():g})"


def finite_result(what: str, result, **inputs):
    """``result`` unchanged if every number in it is finite, else an OutOfRangeError.

    Model functions call this on their result: with finite inputs a NaN or inf can only come
    from the float range being exceeded (e.g. a diameter of 1e300 m squared). The message
    names ``what`` and every input in ``inputs`` with its value or magnitudes, the most extreme
    first, so the user can find the argument that is absurdly large or small.

    Parameters
    ----------
    what : str
        What the result is, e.g. ``"shell_thickness"``.
    result : float or array_like
        The result to check.
    **inputs
        The arguments the result was computed from, by name.

    Raises
    ------
    OutOfRangeError
        If any element of ``result`` is NaN or infinite.
    """
    a = np.asarray(result)
    if a.dtype.kind not in "fc" or np.all(np.isfinite(a)):
        return result
    names = sorted(inputs, key=lambda k: -_extremeness(inputs[k]))
    desc = ", ".join(_describe(k, inputs[k]) for k in names)
    raise OutOfRangeError(
        f"{what} is not finite for these inputs (the float range is exceeded): {desc}; check "
        "their magnitudes and units"
    )
