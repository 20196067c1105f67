"""The interactive explorer, driven programmatically (the browser test drives it end to end).

Checks are against the study itself (an independent evaluation of the displayed point) and
against the explorer's own contract: moving a price slider re-optimises and changes the table.
"""

import matplotlib
import numpy as np
import pytest

matplotlib.use("Agg")

from teakit.errors import InputError
from teakit.explore import Explorer


@pytest.fixture(scope="module")
def explorer():
    return Explorer(n_map=5)


def test_slider_move_re_optimises_and_updates_the_table(explorer):
    before = explorer.table.value
    npv0 = explorer.objective
    s = explorer.sliders["hydrogen_price"][0]
    s.value = s.value * 1.3  # hydrogen 30 % dearer
    assert explorer.table.value != before
    assert explorer.objective < npv0
    # The displayed point is a true evaluation of the study at the slider prices ...
    df = explorer.study.evaluate(explorer.decisions, explorer.parameters())
    assert df["npv [USD]"].iloc[0] == pytest.approx(explorer.objective, rel=1e-9)
    assert bool(df["feasible"].iloc[0])
    # ... at least as good as the first optimum held fixed at the new prices.
    fixed = explorer.study.evaluate(explorer.optimum.decisions, explorer.parameters())
    assert explorer.objective >= fixed["npv [USD]"].iloc[0] - 1e-6 * abs(npv0)
    assert explorer.last_update_s < 60  # finite and recorded (speed is measured in benchmarks/)


def test_refine_never_does_worse_than_the_stored_neighbourhood(explorer):
    explorer.set(electricity_price=explorer.sliders["electricity_price"][0].value * 1.5)
    quick = explorer.objective
    explorer.refine()
    assert explorer.objective >= quick - 1e-6 * abs(quick)


def test_explorer_rejects_unknown_sliders_and_bad_sizes(explorer):
    with pytest.raises(InputError, match="unknown slider"):
        explorer.set(hydrogen_prize=3.0)
    with pytest.raises(InputError, match="n_map must be"):
        Explorer(n_map=1)
    assert np.isfinite([v for _, v, _ in explorer.optimum_table()]).all()
