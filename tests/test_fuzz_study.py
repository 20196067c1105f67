"""Fuzzed Study.evaluate and the argument checks of Study.optimize / optimize_batch.

Contract (issue: reliability): every input gives a finite result or a typed teakit error whose
message names the argument. Evaluation is fuzzed with values in and out of each decision's and
parameter's range, non-finite numbers, strings with good and bad units and junk; the optimiser
with bad arguments only (each valid optimum costs seconds and is checked in tests/test_study.py).
"""

import math
import warnings

import numpy as np
import pytest
from fuzzing import ANY, mentions
from hypothesis import given, settings
from hypothesis import strategies as st

from teakit import Study
from teakit.errors import ConvergenceError, InputError

STUDY = Study.from_toml("acid_redmesa.toml")  # the faster demo; the contract is the same code
DECISIONS = list(STUDY.decision_table().index)
PARAMETERS = list(STUDY.parameter_table().index)

VALUE = st.one_of(
    ANY,
    st.floats(-1e7, 1e7),
    st.sampled_from(["1.5 bar", "430 degC", "2 USD/kg", "1 kg", "abc", "", "nan bar"]),
)


@settings(max_examples=40, deadline=None)
@given(st.dictionaries(st.sampled_from(DECISIONS), VALUE, max_size=2),
       st.dictionaries(st.sampled_from(PARAMETERS), VALUE, max_size=2))
def test_evaluate_gives_finite_figures_or_names_the_argument(decisions, parameters):
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            df = STUDY.evaluate(decisions, parameters)
    except ConvergenceError:
        return
    except InputError as exc:
        assert any(mentions(str(exc), n) for n in [*decisions, *parameters]) or "broadcast" in str(exc), str(exc)
        return
    num = df.select_dtypes("number").drop(columns=[c for c in df.columns if c.startswith(("payback", "lcop", "irr"))])
    assert np.isfinite(num.to_numpy(dtype=float)).all()
    # payback, LCOP and IRR have documented sentinels for infeasible members (inf, inf, -1).
    bad = ~df["feasible"].to_numpy()
    for c in (c for c in df.columns if c.startswith(("payback", "lcop"))):
        v = df[c].to_numpy(dtype=float)
        assert (np.isfinite(v) | bad | np.isinf(v)).all()


@settings(max_examples=60, deadline=None)
@given(st.sampled_from(["n_start", "starts", "tol", "max_iter"]),
       st.one_of(st.sampled_from([0, -1, 10**9, math.nan, math.inf, 1.5, "3", None, [2]]), st.integers(-5, 0)))
def test_optimize_rejects_bad_arguments_by_name(name, value):
    with pytest.raises(InputError) as info:
        STUDY.optimize(**{name: value})
    assert mentions(str(info.value), name)


@pytest.mark.parametrize("parameters,name", [
    ({"product_price": [0.1, math.nan]}, "product_price"),
    ({"product_price": "12 m"}, "product_price"),
    ({"no_such_price": 1.0}, "no_such_price"),
])
def test_optimize_batch_rejects_bad_parameters_by_name(parameters, name):
    with pytest.raises(InputError) as info:
        STUDY.optimize_batch(parameters, start=STUDY.decision_table()["default"].to_dict())
    assert name in str(info.value)


@pytest.mark.parametrize("parameters,name", [
    ({"cost_year": [2019, 2023]}, "cost_year"),
    ({"plant_life": 20.5}, "plant_life"),
    ({"plant_life": [15, 20]}, "plant_life"),
])
def test_one_cost_year_and_one_whole_plant_life_per_call(parameters, name):
    # A batch is priced in one money year over one life; a half year is not silently dropped.
    with pytest.raises(InputError, match=name):
        STUDY.evaluate({}, parameters)
