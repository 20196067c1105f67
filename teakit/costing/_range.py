"""The out-of-range policy of teakit's money layer, in one place.

Every cost correlation is a fit over a stated range of its variable (a capacity, a pressure, a
scale ratio). teakit treats a value outside that range the same way everywhere in
:mod:`teakit.costing`:

1. inside the stated range ``[low, high]``: the correlation is used as published, silently;
2. outside it but within a factor :data:`RANGE_FACTOR` (10) of it, i.e. in
   ``[low / 10, low)`` or ``(high, 10 high]``: the correlation is extrapolated and a
   :class:`~teakit.errors.RangeWarning` naming the range and its source is issued;
3. further out: :class:`~teakit.errors.OutOfRangeError` naming the range (the answer would be
   meaningless).

Where the lower end of a range is not a positive scale (a gauge pressure can be negative), or a
formula itself stops holding before the factor of 10 (the vessel thickness formula), the caller
passes its own hard limits; the table that holds the range says so. Values that are impossible
whatever the correlation (a negative capacity, an absolute pressure below zero) are an
:class:`~teakit.errors.InputError` raised by :mod:`teakit.validation` before this policy applies.

Capacities above a correlation's maximum are first split into equal parallel units when the caller
asks for it (see :func:`teakit.costing.equipment_cost.parallel_units`); the policy then applies to
the total capacity, so splitting is allowed up to 10 units.
"""

from __future__ import annotations

import os
import sys
import warnings

import numpy as np

from teakit.errors import OutOfRangeError, RangeWarning

__all__ = ["RANGE_FACTOR", "apply_range_policy"]

#: Factor of extrapolation beyond a correlation's range that warns rather than raises.
RANGE_FACTOR = 10.0


def _first(a: np.ndarray, bad: np.ndarray) -> str:
    idx = np.flatnonzero(bad)
    val = a.ravel()[idx[0]]
    where = "" if a.ndim == 0 else f" at index {np.unravel_index(idx[0], a.shape)}"
    more = f" ({idx.size} values in all)" if idx.size > 1 else ""
    return f"{val:g}{where}{more}"


_PKG_DIR = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def _user_stacklevel() -> int:
    """Stack level of the first frame outside the teakit package (the user's call)."""
    level, f = 1, sys._getframe(1)
    while f is not None and os.path.abspath(f.f_code.co_filename).startswith(_PKG_DIR):
        f = f.f_back
        level += 1
    return level


def apply_range_policy(
    name: str,
    value: np.ndarray,
    low: float,
    high: float,
    unit: str,
    source: str,
    *,
    hard_low: float | None = None,
    hard_high: float | None = None,
    silent_high: bool = False,
) -> None:
    """Warn or raise for values of ``value`` outside ``[low, high]`` (the documented policy).

    Parameters
    ----------
    name : str
        What the value is, for the message (e.g. ``"capacity of hx_fixed_tube"``).
    value : numpy.ndarray
        The values, already checked finite, in ``unit``.
    low, high : float
        The stated range of the correlation, in ``unit``.
    unit : str
        Unit of ``value``, ``low`` and ``high``, for the message.
    source : str
        Where the range is stated (book, edition, table).
    hard_low, hard_high : float, optional
        Limits beyond which a value is refused. Default ``low / RANGE_FACTOR`` (or ``low`` when
        ``low <= 0``) and ``high * RANGE_FACTOR``.
    silent_high : bool
        Accept values in ``(high, hard_high]`` without a warning (the caller splits them into
        parallel units that each lie in range).

    Raises
    ------
    OutOfRangeError
        If any value lies beyond the hard limits.
    """
    v = np.asarray(value, dtype=float)
    if hard_low is None:
        hard_low = low / RANGE_FACTOR if low > 0 else low
    if hard_high is None:
        hard_high = high * RANGE_FACTOR
    absurd = (v < hard_low) | (v > hard_high)
    if absurd.any():
        raise OutOfRangeError(
            f"{name} = {_first(v, absurd)} {unit} is far outside the range of {source}, "
            f"[{low:g}, {high:g}] {unit}; teakit accepts only [{hard_low:g}, {hard_high:g}] {unit}"
            + (
                " (extrapolating below the range with a RangeWarning, splitting into at most "
                f"{RANGE_FACTOR:g} parallel units above it)"
                if silent_high
                else " (extrapolated with a RangeWarning outside the stated range)"
            )
        )
    out = (v < low) if silent_high else (v < low) | (v > high)
    if out.any():
        warnings.warn(
            RangeWarning(
                f"{name} = {_first(v, out)} {unit} lies outside the range of {source}, "
                f"[{low:g}, {high:g}] {unit}; the correlation is extrapolated"
            ),
            stacklevel=_user_stacklevel(),
        )
