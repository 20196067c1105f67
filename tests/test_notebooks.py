"""The template notebooks and the ``teakit demo`` / ``teakit run`` main job, executed headless.

Checks against the study layer itself (each notebook's summary equals what the public API gives)
and against facts of the trade named beside them; sample counts are small (``--quick``).
"""

import json
import subprocess
import sys

import numpy as np
import pytest

from teakit.cli import main


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    assert main(["demo", "--quick", "--out", str(out)]) == 0
    return out


def test_demo_writes_notebooks_figures_tables_and_summary(demo_dir):
    summary = json.loads((demo_dir / "summary.json").read_text())
    assert set(summary["studies"]) == {"ammonia", "acid", "uncertainty"}
    assert "Preliminary estimates" in summary["caution"]
    for name in ("ammonia", "acid", "uncertainty"):
        assert (demo_dir / f"{name}.ipynb").is_file()
        pngs = list((demo_dir / name).glob("*.png"))
        assert pngs, name
        for p in pngs:  # every figure has its provenance record beside it
            assert (p.parent / (p.name + ".provenance.json")).is_file()
    from PIL import Image

    with Image.open(demo_dir / "ammonia" / "profit_and_yield_maps.png") as im:
        assert round(im.info["dpi"][0]) == 300
    assert (demo_dir / "ammonia" / "cash_flow.xlsx").is_file()


def test_demo_optima_and_the_gap_to_maximum_yield(demo_dir):
    s = json.loads((demo_dir / "summary.json").read_text())["studies"]
    nh3 = s["ammonia"]
    # Common practice for iron-catalyst loops: 100-300 bar; the demo's bounds are 100-300 bar.
    assert nh3["optimum"]["pressure"]["unit"] == "Pa"
    assert 100e5 < nh3["optimum"]["pressure"]["value"] < 300e5
    assert nh3["objective"]["optimum"] > nh3["objective"]["max_yield"]
    acid = s["acid"]
    # Contact plants run near atmospheric pressure (common practice); SO2 limit 2 kg/t (40 CFR 60 H).
    assert acid["optimum"]["pressure"]["value"] < 2.0e5
    assert acid["so2_emission_kg_per_t"] <= 2.0
    assert acid["objective"]["optimum"] > acid["objective"]["max_yield"]
    unc = s["uncertainty"]
    p = unc["npv_percentiles_USD"]
    assert p["P10"] <= p["P50"] <= p["P90"]
    assert set(unc["sobol_total"]) == set(unc["uncertain_parameters"])
    assert all(np.isfinite(v) for v in unc["sobol_total"].values())
    assert unc["evpi_USD"] >= 0


def test_demo_does_not_overwrite_without_asking(demo_dir, capsys):
    before = (demo_dir / "summary.json").read_bytes()
    assert main(["demo", "--quick", "--out", str(demo_dir)]) == 2
    assert "overwrite" in capsys.readouterr().err
    assert (demo_dir / "summary.json").read_bytes() == before


def test_run_a_study_file_and_bad_targets(tmp_path, capsys):
    assert main(["run", "acid_redmesa.toml", "-p", "map_points", "3", "--out", str(tmp_path)]) == 0
    summary = json.loads((tmp_path / "acid_redmesa" / "summary.json").read_text())
    assert summary["case"] == "so2_converter"
    assert main(["run", "notes.txt", "--out", str(tmp_path)]) == 2
    assert "expected a study file (.toml) or a notebook (.ipynb)" in capsys.readouterr().err


def test_help_explains_the_options():
    out = subprocess.run([sys.executable, "-m", "teakit.cli", "demo", "--help"], capture_output=True, text=True, check=True).stdout
    for word in ("--out", "--quick", "--overwrite", "maximum-yield", "Sobol"):
        assert word in out
