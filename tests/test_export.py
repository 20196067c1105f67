"""Export: files, formats, determinism, round trips, provenance, no overwriting, atomic writes.

References: PNG resolution read back with Pillow (pHYs chunk, PNG specification ISO/IEC
15948:2004 section 11.3.5.3, pixels per metre, so 300 dpi reads back as 299.9994); SHA-256 with
hashlib; CSV read back with pandas and XLSX with openpyxl (reference readers, used here only);
the study file's text read from disk here.
"""

import hashlib
import json
import os
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from matplotlib.figure import Figure

import teakit
from teakit import export, plots
from teakit.data import data_dir
from teakit.errors import InputError
from teakit.study.study import Study

STUDY_FILE = "acid_redmesa.toml"


@pytest.fixture(scope="module")
def study():
    return Study.from_toml(STUDY_FILE)


def _fig():
    rng = np.random.default_rng(0)
    return plots.distribution_chart(rng.normal(1e7, 2e7, 200), "npv [USD]")


def _table():
    return pd.DataFrame({"pressure [Pa]": [1.3e5, 1.45e5, 3.0e5],
                         "npv [USD]": [3.1e7, 3.2040e7 + 0.123456789, -np.inf],
                         "payback [yr]": [11.8, np.nan, 7.25],
                         "status": ["ok", "ok", "process infeasible"],
                         "feasible": [True, True, False],
                         "members [-]": [1, 2, 3]})


def _listing(d: Path):
    return sorted(p.name for p in d.iterdir())


# ------------------------------------------------------------------------------------------------
# figures
# ------------------------------------------------------------------------------------------------


def test_figure_in_three_formats_with_records(tmp_path, study):
    fig = _fig()
    out = export.save_figure(fig, tmp_path / "npv", study=study, seed=7, samples=200)
    names = [p.name for p in out]
    assert names == ["npv.png", "npv.svg", "npv.pdf", "npv.png.provenance.json",
                     "npv.svg.provenance.json", "npv.pdf.provenance.json"]
    assert _listing(tmp_path) == sorted(names)  # and no temporary files left behind
    from PIL import Image  # Pillow comes with matplotlib

    with Image.open(tmp_path / "npv.png") as im:
        assert im.info["dpi"] == pytest.approx((300, 300), abs=0.01)  # pHYs is in pixels per metre
        w, h = fig.get_size_inches()
        assert im.size == (round(w * 300), round(h * 300))
        assert "licensed engineers" in im.info["Disclaimer"]
    assert (tmp_path / "npv.svg").read_bytes().startswith(b"<?xml")
    assert (tmp_path / "npv.pdf").read_bytes().startswith(b"%PDF")
    assert b"licensed engineers" in (tmp_path / "npv.svg").read_bytes()


def test_svg_and_pdf_are_byte_identical_on_resave(tmp_path):
    fig = _fig()
    a = export.save_figure(fig, tmp_path / "a" / "fig", formats=("svg", "pdf"))
    b = export.save_figure(fig, tmp_path / "b" / "fig", formats=("svg", "pdf"))
    for fa, fb in zip(a[:2], b[:2], strict=True):
        assert fa.read_bytes() == fb.read_bytes()
    # a second figure drawn the same way gives the same bytes too (no date, fixed SVG ids)
    c = export.save_figure(_fig(), tmp_path / "c" / "fig", formats=("svg", "pdf"))
    assert c[0].read_bytes() == a[0].read_bytes() and c[1].read_bytes() == a[1].read_bytes()
    assert b"CreationDate" not in a[1].read_bytes()
    assert b"<dc:date>" not in a[0].read_bytes()


def test_suffix_picks_one_format(tmp_path):
    out = export.save_figure(_fig(), tmp_path / "only.pdf")
    assert [p.name for p in out] == ["only.pdf", "only.pdf.provenance.json"]
    with pytest.raises(InputError, match="formats must be among png, svg, pdf"):
        export.save_figure(_fig(), tmp_path / "x", formats=("jpg",))
    with pytest.raises(InputError, match="matplotlib Figure"):
        export.save_figure("not a figure", tmp_path / "x")
    with pytest.raises(InputError, match="dpi"):
        export.save_figure(_fig(), tmp_path / "x", dpi=10)


# ------------------------------------------------------------------------------------------------
# provenance
# ------------------------------------------------------------------------------------------------


def test_provenance_record_contents(tmp_path, study):
    out = export.save_figure(_fig(), tmp_path / "npv.png", study=study, seed=11, samples=256,
                             parameters={"product_price": 0.12}, notes="P10/P50/P90 of NPV")
    rec = json.loads(out[1].read_text(encoding="utf-8"))
    for key in ("caution", "file", "format", "sha256", "bytes", "dpi", "created", "versions", "study",
                "parameters", "parameter_overrides", "seed", "samples", "notes"):
        assert key in rec, key
    assert rec["file"] == "npv.png" and rec["dpi"] == 300
    assert rec["sha256"] == hashlib.sha256(out[0].read_bytes()).hexdigest()
    assert rec["bytes"] == out[0].stat().st_size
    assert "preliminary" in rec["caution"].lower() and "licensed engineers" in rec["caution"]
    assert "pressure-vessel code" in rec["caution"] and "local regulations" in rec["caution"]
    assert rec["study"]["source"] == (data_dir() / "studies" / STUDY_FILE).read_text(encoding="utf-8")
    assert rec["study"]["case"] == "so2_converter"
    assert rec["seed"] == 11 and rec["samples"] == 256
    assert rec["parameters"]["product_price"]["value"] == 0.12  # the override, not the nominal 0.10
    assert rec["parameter_overrides"] == {"product_price": 0.12}
    assert rec["parameters"]["sulfur_price"] == {"value": 0.12, "unit": "USD/kg", "kind": "economics",
                                                 "distribution": {"distribution": "pert", "high": 0.3,
                                                                  "low": 0.06, "mode": 0.12}}
    assert rec["versions"]["teakit"] == teakit.__version__
    assert rec["versions"]["numpy"] == np.__version__
    assert rec["versions"]["python"] == ".".join(map(str, __import__("sys").version_info[:3]))
    # ISO 8601 with a UTC offset
    from datetime import datetime

    assert datetime.fromisoformat(rec["created"]).utcoffset().total_seconds() == 0


def test_provenance_arguments_checked():
    with pytest.raises(InputError, match="seed"):
        export.provenance(seed=1.5)
    with pytest.raises(InputError, match="samples"):
        export.provenance(samples=-1)
    with pytest.raises(InputError, match="Study"):
        export.provenance(object())
    rec = export.provenance(seed=np.int64(3), timestamp="2026-01-01T00:00:00+00:00",
                            notes={"x": np.array([1.0, np.inf])})
    assert rec["seed"] == 3 and rec["created"].startswith("2026-01-01")
    assert json.loads(json.dumps(rec))["notes"] == {"x": [1.0, "inf"]}  # JSON has no inf


# ------------------------------------------------------------------------------------------------
# tables
# ------------------------------------------------------------------------------------------------


def test_csv_and_xlsx_round_trip_with_unit_headers(tmp_path, study):
    df = _table()
    out = export.save_table(df, tmp_path / "points", study=study)
    assert [p.name for p in out] == ["points.csv", "points.xlsx", "points.csv.provenance.json",
                                     "points.xlsx.provenance.json"]
    back = pd.read_csv(out[0])
    pd.testing.assert_frame_equal(back, df, check_exact=True)  # floats to full precision, NaN, inf
    import openpyxl

    wb = openpyxl.load_workbook(out[1])
    ws = wb["table"]
    rows = list(ws.iter_rows(values_only=True))
    assert list(rows[0]) == list(df.columns)
    assert rows[1][0] == df.iloc[0, 0]  # 1.3e5 exactly
    assert rows[2][1] == pytest.approx(df.iloc[1, 1], rel=1e-15)  # openpyxl writes %.16g
    assert rows[3][1] == "-inf" and rows[2][2] == "NaN"  # spelled out, not blank
    assert rows[3][3:] == ("process infeasible", False, 3)
    notes = dict(wb["notes"].iter_rows(values_only=True))
    assert "licensed engineers" in notes["caution"]
    assert notes["study case"] == "so2_converter"
    rec = json.loads(out[2].read_text(encoding="utf-8"))
    assert rec["rows"] == 3 and rec["columns"] == list(df.columns)
    assert rec["sha256"] == hashlib.sha256(out[0].read_bytes()).hexdigest()


def test_table_units_required_and_indexes_kept(tmp_path):
    sob = pd.DataFrame({"S1": [0.31, 0.44], "ST": [0.56, 0.44]},
                       index=pd.MultiIndex.from_tuples([("npv", "x1"), ("npv", "x2")], names=["output", "parameter"]))
    with pytest.raises(InputError, match=r"\['S1', 'ST'\] hold numbers but no unit"):
        export.save_table(sob, tmp_path / "sobol")
    assert _listing(tmp_path) == []
    out = export.save_table(sob, tmp_path / "sobol.csv", units={"S1": "-", "ST": "-"})
    back = pd.read_csv(out[0])
    assert list(back.columns) == ["output", "parameter", "S1 [-]", "ST [-]"]
    assert back["S1 [-]"].tolist() == [0.31, 0.44]
    with pytest.raises(InputError, match="already carries a unit"):
        export.save_table(_table(), tmp_path / "t", units={"npv [USD]": "USD"})
    with pytest.raises(InputError, match="does not have"):
        export.save_table(_table(), tmp_path / "t", units={"price": "USD/kg"})
    # a cash-flow table (named index "year") keeps its years
    cf = teakit.finance.cash_flows(1e6, 5e5, 1e5, discount_rate=0.1, tax_rate=0.25, plant_life=3)
    out = export.save_table(cf.to_frame(), tmp_path / "cash.csv")
    assert pd.read_csv(out[0])["year"].tolist() == [0, 1, 2, 3]


# ------------------------------------------------------------------------------------------------
# overwriting
# ------------------------------------------------------------------------------------------------


def test_no_overwrite_without_the_flag(tmp_path):
    out = export.save_table(_table(), tmp_path / "t.csv")
    before = {p.name: p.read_bytes() for p in out}
    with pytest.raises(InputError, match=r"already exist.*overwrite=True"):
        export.save_table(_table().iloc[:1], tmp_path / "t.csv")
    assert {p.name: p.read_bytes() for p in out} == before
    export.save_table(_table().iloc[:1], tmp_path / "t.csv", overwrite=True)
    assert len(pd.read_csv(tmp_path / "t.csv")) == 1
    # a set with one existing member is refused as a whole: nothing else is written
    (tmp_path / "f.pdf").write_bytes(b"mine")
    with pytest.raises(InputError, match="f.pdf"):
        export.save_figure(_fig(), tmp_path / "f")
    assert (tmp_path / "f.pdf").read_bytes() == b"mine"
    assert not any(tmp_path.glob("f.png*")) and not any(tmp_path.glob("f.svg*"))
    with pytest.raises(InputError, match="overwrite must be True or False"):
        export.save_table(_table(), tmp_path / "u.csv", overwrite="yes")


# ------------------------------------------------------------------------------------------------
# atomic writes: a failure mid-write leaves neither a partial file nor part of a set
# ------------------------------------------------------------------------------------------------


class Boom(RuntimeError):
    pass


def test_failing_figure_writer_leaves_nothing(tmp_path, monkeypatch):
    real = Figure.savefig

    def half_then_fail(self, fname, *args, **kwargs):
        if kwargs.get("format") == "pdf":  # the last format: png and svg are already written
            with open(fname, "wb") as fh:
                fh.write(b"%PDF-1.4 half a file")
            raise Boom("disk full")
        return real(self, fname, *args, **kwargs)

    monkeypatch.setattr(Figure, "savefig", half_then_fail)
    with pytest.raises(Boom):
        export.save_figure(_fig(), tmp_path / "fig")
    assert _listing(tmp_path) == []  # no target, no partial file, no temporary file


def test_failing_table_writer_keeps_the_old_file(tmp_path, monkeypatch):
    export.save_table(_table(), tmp_path / "t.csv")
    old = (tmp_path / "t.csv").read_bytes()

    def half_then_fail(self, path, *args, **kwargs):
        Path(path).write_text("pressure [Pa],np", encoding="utf-8")
        raise Boom("interrupted")

    monkeypatch.setattr(pd.DataFrame, "to_csv", half_then_fail)
    with pytest.raises(Boom):
        export.save_table(_table().iloc[:1], tmp_path / "t.csv", overwrite=True)
    assert (tmp_path / "t.csv").read_bytes() == old
    assert _listing(tmp_path) == ["t.csv", "t.csv.provenance.json"]


def test_failing_xlsx_writer_leaves_nothing(tmp_path, monkeypatch):
    def fail(df, path, sheet_name, rec):
        Path(path).write_bytes(b"PK\x03\x04 partial")
        raise Boom("openpyxl failed")

    monkeypatch.setattr(export, "_write_xlsx", fail)
    with pytest.raises(Boom):
        export.save_table(_table(), tmp_path / "t")  # csv first (succeeds), then xlsx fails
    assert _listing(tmp_path) == []


def test_failing_move_removes_the_temporary_files(tmp_path, monkeypatch):
    def no_replace(src, dst):
        raise Boom("rename refused")

    monkeypatch.setattr(os, "replace", no_replace)
    with pytest.raises(Boom):
        export.save_json({"a": 1}, tmp_path / "s.json")
    assert _listing(tmp_path) == []


# ------------------------------------------------------------------------------------------------
# JSON summaries
# ------------------------------------------------------------------------------------------------


def test_save_json(tmp_path):
    p = export.save_json({"npv": np.float64(3.2e7), "p10": -np.inf, "n": np.int64(5)}, tmp_path / "summary.json")
    d = json.loads(p.read_text(encoding="utf-8"))
    assert d == {"caution": export.CAUTION, "npv": 3.2e7, "p10": "-inf", "n": 5}
    with pytest.raises(InputError, match="already exist"):
        export.save_json({}, p)
    with pytest.raises(InputError, match=r"\.json"):
        export.save_json({}, tmp_path / "summary.txt")
