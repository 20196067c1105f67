"""Shared helpers of the property-based (fuzz) tests: the typed-error contract every public entry
point must keep (a finite result, or a teakit error naming an argument) and input strategies."""

import math
import re
import warnings

import numpy as np
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from teakit.chemistry import ReactionSystem
from teakit.errors import ConvergenceError, InputError
from teakit.thermo.fugacity import FugacityModel


def mentions(message: str, name: str) -> bool:
    """Whether ``name`` appears in ``message`` as a word of its own."""
    return re.search(rf"(?<![A-Za-z0-9_]){re.escape(name)}(?![A-Za-z0-9_])", message) is not None


def assert_finite(value, where="result"):
    """Every number in ``value`` (arrays, dataclasses, mappings, sequences, frames) is finite."""
    if value is None or isinstance(value, str | bool | np.bool_):
        return
    if isinstance(value, int | float | np.number):
        assert math.isfinite(float(value)), f"{where} = {value!r} is not finite"
        return
    if isinstance(value, np.ndarray):
        if value.dtype.kind in "fc":
            assert np.all(np.isfinite(value)), f"{where} has non-finite entries: {value!r}"
        return
    if hasattr(value, "__dataclass_fields__"):
        for k in value.__dataclass_fields__:
            assert_finite(getattr(value, k), f"{where}.{k}")
        return
    if isinstance(value, dict):
        for k, v in value.items():
            assert_finite(v, f"{where}[{k!r}]")
        return
    if hasattr(value, "y") and hasattr(value, "moles"):  # EquilibriumResult
        for k in ("y", "moles", "extent", "T", "P"):
            assert_finite(np.asarray(getattr(value, k)), f"{where}.{k}")
        return
    if isinstance(value, tuple | list):
        for i, v in enumerate(value):
            assert_finite(v, f"{where}[{i}]")
        return
    if isinstance(value, FugacityModel | ReactionSystem):  # objects: no numbers to check
        return
    if hasattr(value, "select_dtypes"):  # a pandas DataFrame
        assert_finite(value.select_dtypes("number").to_numpy(dtype=float), where)
        return
    raise AssertionError(f"{where}: unexpected result type {type(value).__name__}")


def call(fn, *args, bad=(), names=(), check=assert_finite, **kwargs):
    """``fn(*args, **kwargs)``: a result passing ``check``, or a typed error naming an argument.

    An InputError must name one of ``bad`` (the arguments replaced by bad values) or of
    ``names`` (every argument: a plausible value can be invalid in combination, e.g. P >= S E).
    A ConvergenceError is an accepted outcome. Returns the result, or None after a typed error.
    """
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            out = fn(*args, **kwargs)
    except ConvergenceError:
        return None
    except InputError as exc:
        pool = (*bad, *names)
        if pool:
            assert any(mentions(str(exc), n) for n in pool), (
                f"{type(exc).__name__} names none of {pool}: {exc}"
            )
        return None
    check(out)
    return out


SPECIAL = [math.nan, math.inf, -math.inf, 0.0, -0.0, -1.0, 5e-324, 1e-310, 1e-300, 1e300, 1.7e308,
           -1e308]
ANY_FLOAT = st.floats(allow_nan=True, allow_infinity=True, allow_subnormal=True)
SPECIAL_FLOAT = st.sampled_from(SPECIAL)
ARRAYS = hnp.arrays(np.float64, hnp.array_shapes(min_dims=0, max_dims=2, max_side=3), elements=ANY_FLOAT)
JUNK = st.one_of(
    st.none(),
    st.booleans(),
    st.text(max_size=6),
    st.just([]),
    st.just({}),
    st.just([[1.0], [1.0, 2.0]]),  # ragged
    st.lists(ANY_FLOAT, max_size=4),
    st.complex_numbers(max_magnitude=1e3),
    st.just(object()),
    st.just(b"\x00"),
)
#: Anything a user might pass for a number.
ANY = st.one_of(SPECIAL_FLOAT, ANY_FLOAT, st.integers(-(2**70), 2**70), ARRAYS, JUNK)
#: Anything a user might pass for a name or a choice.
ANY_CHOICE = st.one_of(st.text(max_size=8), JUNK, st.integers(), st.just(["auto"]))



@st.composite
def mutated(draw, plausible: dict, bad: dict | None = None, max_bad: int = 2):
    """(kwargs, names): plausible values, with up to ``max_bad`` replaced by bad ones."""
    kw = {k: draw(s) for k, s in plausible.items()}
    names = draw(st.lists(st.sampled_from(sorted(plausible)), max_size=max_bad, unique=True))
    for n in names:
        kw[n] = draw((bad or {}).get(n, ANY))
    return kw, tuple(names)


