"""Quantities at the edge: parse "200 bar", "450 degC", "3.5 USD/kg" once, work in SI inside.

Inside teakit every number is SI (K, Pa, mol/s, kg, m, J, W) and money is US dollars of the
study's stated cost year. This module is the one place where pint is used. Plain numbers passed to
:func:`to_si` are taken to be in the SI unit already; strings and pint quantities are converted.

The registry defines a currency dimension with ``USD`` (and ``kUSD``, ``MUSD``), ``MMBtu``, and
``m2``/``m3`` as written in the trade ("60 m3"); ``t`` is the metric tonne. ``barg`` is *not*
defined on purpose: pressures are absolute (state gauge pressure as such in your own code).
"""

from __future__ import annotations

import functools
import re

import numpy as np

from teakit.errors import InputError

__all__ = ["Q_", "registry", "to_si"]

_DEFINITIONS = [
    "USD = [currency]",
    "kUSD = 1e3 * USD",
    "MUSD = 1e6 * USD",
    "cent = 0.01 * USD",
    "MMBtu = 1e6 * Btu",
    "m2 = meter ** 2",
    "m3 = meter ** 3",
]


@functools.cache
def registry():
    """The shared pint UnitRegistry (offset units auto-converted, currency defined)."""
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    for line in _DEFINITIONS:
        ureg.define(line)
    return ureg


def Q_(value, unit=None):
    """A pint Quantity on the teakit registry: ``Q_("450 degC")`` or ``Q_(450, "degC")``."""
    ureg = registry()
    if unit is None:
        return ureg.Quantity(value)
    return ureg.Quantity(value, unit)


def to_si(value, unit: str, name: str = "value") -> np.ndarray | float:
    """Convert ``value`` to a float (array) in ``unit``.

    Parameters
    ----------
    value : float, array_like, str, pint.Quantity, or a list of strings/quantities
        A plain number or array is returned unchanged (taken to be in ``unit`` already); a string
        such as ``"300 atm"``, a pint quantity, or a list of them (``["150 bar", "200 bar"]``)
        is converted.
    unit : str
        Target unit, e.g. ``"K"``, ``"Pa"``, ``"USD/kg"``.
    name : str
        Argument name used in error messages.

    Returns
    -------
    float or numpy.ndarray
        The magnitude in ``unit``.

    Raises
    ------
    InputError
        If the string cannot be parsed or its dimension does not convert to ``unit``.
    """
    if isinstance(value, list | tuple) and any(isinstance(v, str) or hasattr(v, "units") for v in value):
        return np.array([to_si(v, unit, f"{name}[{i}]") for i, v in enumerate(value)], dtype=float)
    if isinstance(value, str) or (hasattr(value, "magnitude") and hasattr(value, "units")):
        ureg = registry()
        import pint

        try:
            q = _parse(ureg, value) if isinstance(value, str) else value
            out = q.to(unit).magnitude
            out = np.asarray(out, dtype=float) if np.ndim(out) else float(out)
        except pint.errors.DimensionalityError as exc:
            raise InputError(
                f"{name} = {value!r} does not convert to {unit} ({exc.dim1} vs {exc.dim2})"
            ) from exc
        except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError) as exc:
            raise InputError(f"{name} = {value!r}: unknown unit ({exc})") from exc
        except InputError:
            raise
        except Exception as exc:  # pint's parser also raises AssertionError, TokenError, ...
            raise InputError(
                f"{name} = {value!r} is not a quantity with a unit: {type(exc).__name__}: {exc}"
            ) from exc
        return out
    return value


# An integer literal that is not part of a name or of a decimal number.
_INT = re.compile(r"(?<![\w.])(\d+)(?![\w.])")
_MAX_LENGTH = 200


def _parse(ureg, text: str):
    """A pint Quantity from ``text``, with integer literals read as floats.

    pint evaluates integer literals as Python integers, so that ``"9**9**9 bar"`` would compute
    a number of some 370 million digits (a hang); as floats it overflows at once and raises.
    Strings longer than 200 characters are refused, and so are commas: pint would read
    ``"2,5 bar"`` as 25 bar (a decimal comma) and ``"1,000 bar"`` as 1000 bar.
    """
    if len(text) > _MAX_LENGTH:
        raise ValueError(f"a quantity string must be at most {_MAX_LENGTH} characters")
    if not text.strip():
        raise ValueError("an empty string is not a quantity")
    if "," in text:
        raise ValueError("write numbers with a decimal point and without thousands separators "
                         "(a ',' is ambiguous)")
    return ureg.Quantity(_INT.sub(r"\1.0", text))
