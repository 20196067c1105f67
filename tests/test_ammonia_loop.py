"""The ammonia synthesis loop: balances, physical bounds and common-practice ranges.

Sources: conservation of elements (exact); the thermodynamic core's equilibrium (the converter
outlet cannot pass it); stoichiometry (hydrogen per tonne of ammonia >= 3/2 x 2.016/17.031 t/t);
industrial ranges (Appl, Ammonia, in Ullmann's Encyclopedia of Industrial Chemistry; Maxwell,
Synthetic Nitrogen Products, 2004): converter outlet 12-20 mol % NH3 and 15-25 % per-pass
conversion at about 200 bar and a 400-450 degC inlet; separator vapour of about 2-4 mol % NH3 at
-10 degC (common practice).

Recorded when this test was written, 1000 t/d, 200 bar, 400 degC first-bed inlet, 420 degC later
beds, -10 degC separator, 3 % purge, catalyst activity 1 (Dyson & Simon rate, effectiveness 1):
15 m3 of catalyst gives 14.7 % NH3 at the converter outlet, 23 % per pass, a recycle ratio of 3.2
and 3.0 % NH3 in the separator vapour; the space velocity is then about 34,000 1/h, above the
10,000-25,000 1/h of industrial converters, whose larger particles (effectiveness 0.3-0.6,
Dyson & Simon Table I) and aged catalyst convert more slowly than the intrinsic rate: a study
should treat the catalyst activity as uncertain.
"""

import numpy as np
import pytest

from teakit import Reaction
from teakit.errors import InputError
from teakit.process.cases.ammonia import DECISIONS, SPECIES, ammonia_loop
from teakit.thermo import species_set

TYPICAL = dict(catalyst_volume=15.0)


@pytest.fixture(scope="module")
def batch():
    rng = np.random.default_rng(3)
    B = 40
    dec = dict(
        pressure=rng.uniform(140e5, 300e5, B),
        inlet_temperature=rng.uniform(643.0, 703.0, B),
        interbed_temperature=rng.uniform(653.0, 703.0, B),
        separator_temperature=rng.uniform(253.0, 278.0, B),
        purge_fraction=rng.uniform(0.01, 0.08, B),
        catalyst_volume=rng.uniform(12.0, 60.0, B),
    )
    return dec, ammonia_loop(dec)


def test_element_balance_every_member(batch):
    _, r = batch
    sset = species_set(SPECIES)
    inflow = np.stack([r[f"makeup_{s}"] for s in SPECIES], axis=-1) @ sset.element_matrix.T
    out = np.stack([r[f"purge_{s}_flow"] + r[f"dissolved_{s}"] for s in SPECIES], axis=-1)
    out[:, 2] += r["product_NH3_flow"] - r["dissolved_NH3"]  # the liquid's NH3 is the product
    outflow = out @ sset.element_matrix.T
    ok = r.ok
    assert ok.sum() >= 35
    # Relative to the loop's largest stream, the converter feed (the make-up is 3-5x smaller;
    # relative to it the closure is about 3e-9 with the default loop tolerance).
    feed = (np.stack([r[f"converter_inlet_y_{s}"] for s in SPECIES], axis=-1)
            * r["converter_feed_flow"][:, None]) @ sset.element_matrix.T
    scale = feed[ok].max(axis=-1, keepdims=True)
    assert np.max(np.abs(outflow[ok] - inflow[ok]) / scale) < 1e-9


def test_production_at_capacity_and_no_nan(batch):
    _, r = batch
    df = r.to_frame()
    numeric = df.drop(columns="status")
    assert np.isfinite(numeric.to_numpy()).all()
    np.testing.assert_allclose(r["production_tpd"][r.ok], 1000.0, rtol=1e-7)
    # Stoichiometry: N2 + 3 H2 = 2 NH3 needs 177.55 kg H2 per tonne NH3 at least.
    assert np.all(r["hydrogen_per_tonne"][r.ok] >= 3 / 2 * 2.016 / 17.031 * 1000 * (1 - 1e-9))


def test_outlet_below_equilibrium(batch):
    # The last bed approaches equilibrium from below at every point and ends at its outlet
    # temperature, so the effluent holds no more NH3 than equilibrium of the converter feed at
    # that temperature and the loop pressure (rate law and core share the Dyson-Simon
    # fugacity coefficients).
    dec, r = batch
    ok = r.ok
    feed = {s: r[f"converter_inlet_y_{s}"][ok] for s in SPECIES}
    eq = Reaction("N2 + 3 H2 = 2 NH3").equilibrium(
        T=r["bed3_outlet_temperature"][ok], P=dec["pressure"][ok], feed=feed, eos="dyson-simon")
    assert np.all(r["converter_outlet_NH3"][ok] <= eq["NH3"] * (1 + 1e-9))
    assert np.all(r["converter_outlet_NH3"][ok] > r["converter_inlet_NH3"][ok])


def test_common_practice_ranges():
    r = ammonia_loop(TYPICAL)
    assert r.status[0] == "ok"
    assert 0.12 <= r["converter_outlet_NH3"][0] <= 0.20
    assert 0.15 <= r["per_pass_conversion"][0] <= 0.25
    assert 0.02 <= r["separator_vapour_NH3"][0] <= 0.04
    assert r["peak_catalyst_temperature"][0] < 823.15  # below the 550 degC window of the rate


def test_infeasible_points_say_why():
    r = ammonia_loop(dict(separator_temperature=[313.15, 263.15], pressure=[80e5, 200e5], catalyst_volume=[5.0, 1.0]))
    assert r.status[0] == "separator above the dew point: nothing condenses"
    assert r.status[1].startswith("capacity not reached")
    assert np.all(r["production"] == 0.0)
    assert np.isfinite(r.to_frame().drop(columns="status").to_numpy()).all()


def test_more_purge_fewer_inerts_and_batch_equals_single():
    purge = np.array([0.01, 0.03, 0.1])
    r = ammonia_loop(dict(purge_fraction=purge, catalyst_volume=20.0))
    assert np.all(np.diff(r["converter_inlet_inerts"]) < 0)
    one = ammonia_loop(dict(purge_fraction=0.03, catalyst_volume=20.0))
    for k in ("makeup_flow", "electric_power", "recycle_ratio", "converter_outlet_NH3"):
        assert one[k][0] == pytest.approx(r[k][1], rel=1e-7)


@pytest.mark.parametrize(
    "decisions,match",
    [
        ({"pressur": 200e5}, "unknown decision 'pressur'"),
        ({"pressure": 10e5}, r"decision 'pressure' = 1e\+06 Pa is outside its valid range"),
        ({"purge_fraction": 0.0}, "decision 'purge_fraction'"),
        ({"catalyst_volume": -5.0}, "decision 'catalyst_volume'"),
        ({"separator_temperature": np.nan}, "separator_temperature must be finite"),
        ({"pressure": "200 kg"}, "does not convert to Pa"),
    ],
)
def test_bad_input(decisions, match):
    with pytest.raises(InputError, match=match):
        ammonia_loop(decisions)


def test_units_at_the_edge_and_decision_table():
    a = ammonia_loop(dict(pressure="200 bar", inlet_temperature="400 degC", catalyst_volume=20.0))
    b = ammonia_loop(dict(pressure=200e5, inlet_temperature=673.15, catalyst_volume=20.0))
    assert a["electric_power"][0] == pytest.approx(b["electric_power"][0], rel=1e-12)
    assert set(DECISIONS) == {"pressure", "inlet_temperature", "interbed_temperature",
                              "separator_temperature", "purge_fraction", "catalyst_volume"}
    with pytest.raises(InputError, match="bed1_fraction"):
        ammonia_loop(physics={"bed1_fraction": 0.6, "bed2_fraction": 0.5})


def test_search_accuracy_is_close_to_full_accuracy(batch):
    # The optimiser's search runs the loop coarser (the case's search_options: 16 bed steps, loop
    # tolerance 1e-7, separator flash to 1e-10 in ln K). Measured on this batch against the
    # defaults: electric power 3.8e-4, refrigeration duty 6.8e-4 relative, peak temperature 0.32 K,
    # nearly all from the bed steps; the looser flash alone moves them by about 1e-10.
    from teakit.study.definitions import case_info

    dec, full = batch
    opts = case_info("ammonia_loop")["search_options"]
    coarse = ammonia_loop(dec, **opts)
    tight_flash = ammonia_loop(dec, **(opts | {"flash_tol": 1e-13}))
    ok = full.ok & coarse.ok
    assert ok.sum() >= 0.9 * len(ok)
    for k in ("electric_power", "makeup_flow", "refrigeration_duty", "recovered_heat"):
        np.testing.assert_allclose(coarse[k][ok], full[k][ok], rtol=1.5e-3)
        np.testing.assert_allclose(coarse[k][ok], tight_flash[k][ok], rtol=1e-8)
    np.testing.assert_allclose(coarse["peak_catalyst_temperature"][ok], full["peak_catalyst_temperature"][ok], atol=0.5)
    with pytest.raises(InputError, match="flash_tol"):
        ammonia_loop(dec, flash_tol=1e-3)
    with pytest.raises(InputError, match="flash_tol"):
        ammonia_loop(dec, flash_tol=True)


def test_warm_start_from_nearby_points_gives_the_same_loop(batch):
    # result.state of an earlier call (tear, inverse Jacobian, flash K-values) starts a call at
    # nearby points; the converged loop is the same as from the cold start, to the loop's
    # tolerance (3e-10 of the converter feed) times the sensitivity of each figure.
    dec, cold = batch
    moved = {k: v * (1.0 + 0.01 * (k == "pressure")) for k, v in dec.items()}
    ref = ammonia_loop(moved)
    warm = ammonia_loop(moved, warm=cold.state)
    assert set(cold.state) >= {"tear", "H", "scale", "K_sep", "K_T2"}
    ok = ref.ok & warm.ok
    assert ok.sum() >= 0.9 * len(ok) and np.array_equal(ref.status, warm.status)
    for k in ("electric_power", "makeup_flow", "refrigeration_duty", "peak_catalyst_temperature"):
        np.testing.assert_allclose(warm[k][ok], ref[k][ok], rtol=1e-7)
    bad = dict(cold.state) | {"K_T2": -np.ones_like(cold.state["K_T2"])}
    with pytest.raises(InputError, match="K_T2"):
        ammonia_loop(moved, warm=bad)
