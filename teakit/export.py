"""Files for a memo: figures (PNG, SVG, PDF), tables (CSV, XLSX) and a provenance record beside each.

Every file written here is

- **atomic**: written to a temporary file in the target's folder and moved into place with
  :func:`os.replace` only when complete; when several files make one output (a figure in three
  formats, each with its record) all are written first and moved last, so a failure leaves
  neither a partial file nor part of the set;
- **never silently overwritten**: an existing file raises :class:`~teakit.errors.InputError`
  unless ``overwrite=True`` (checked for the whole set before anything is written);
- **traceable**: a JSON record ``<file>.provenance.json`` beside it holds the file's SHA-256, the
  study file's text (``Study.source``), the parameter values, seed and sample count, the
  versions of teakit, Python, numpy, pandas and matplotlib, the time of writing (UTC) and the
  :data:`CAUTION`;
- **deterministic** where the format allows: SVG and PDF carry no creation date and SVG ids
  come from a fixed hash salt, so saving the same figure twice gives byte-identical files; PNG
  text chunks hold no time either.

Tables keep units in their headers (``"npv [USD]"``, as teakit's DataFrames name them); a
floating-point column without a unit is refused unless ``units=`` supplies one, so that no
number leaves the kit without its unit.

.. warning::

   Preliminary estimates only. Exported figures and tables are for feasibility studies; the
   applicable pressure-vessel code, local regulations and licensed engineers govern any design.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import os
import re
import tempfile
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np

from teakit.errors import InputError

__all__ = [
    "CAUTION",
    "FIGURE_FORMATS",
    "TABLE_FORMATS",
    "provenance",
    "save_figure",
    "save_json",
    "save_table",
]

#: The caution every exported file and record carries.
CAUTION = ("Preliminary estimates only, for feasibility studies: not for design or fabrication. "
           "The applicable pressure-vessel code, local regulations and licensed engineers govern "
           "any design, particularly in hydrogen, ammonia and SO3 service.")

FIGURE_FORMATS = ("png", "svg", "pdf")
TABLE_FORMATS = ("csv", "xlsx")
PROVENANCE_SUFFIX = ".provenance.json"
SVG_HASHSALT = "teakit"
#: Settings in force while saving: fixed SVG ids, TrueType fonts embedded in PDF (editable text).
SAVE_RC = {"svg.hashsalt": SVG_HASHSALT, "pdf.fonttype": 42, "savefig.facecolor": "white"}
_UNIT = re.compile(r".*\[[^\[\]]*\]\s*$")


# ------------------------------------------------------------------------------------------------
# atomic writes
# ------------------------------------------------------------------------------------------------


class _Batch:
    """Temporary files in the targets' folders, moved into place together on success.

    Use as a context manager: ``with _Batch(targets, overwrite) as b: write(b.temp(t)) ...``;
    an exception inside removes every temporary file and leaves the targets as they were.
    """

    def __init__(self, targets: Sequence[Path], overwrite: bool):
        if not isinstance(overwrite, bool):
            raise InputError(f"overwrite must be True or False, got {overwrite!r}")
        self.targets = [Path(t) for t in targets]
        if len(set(self.targets)) != len(self.targets):
            raise InputError(f"two outputs would share a file name: {[str(t) for t in self.targets]}")
        self.overwrite = overwrite
        self._check()
        self._temps: dict[Path, Path] = {}

    def _check(self):
        if self.overwrite:
            return
        existing = [str(t) for t in self.targets if t.exists()]
        if existing:
            raise InputError(f"{', '.join(existing)} already exist(s); pass overwrite=True to replace "
                             "(nothing was written)")

    def temp(self, target: Path) -> Path:
        target = Path(target)
        target.parent.mkdir(parents=True, exist_ok=True)
        fd, name = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".tmp")
        try:
            os.fchmod(fd, 0o666 & ~_umask())  # mkstemp makes 0600; the final file gets the usual mode
        except (AttributeError, OSError):  # pragma: no cover - platforms without fchmod
            pass
        finally:
            os.close(fd)
        self._temps[target] = Path(name)
        return Path(name)

    def __enter__(self):
        return self

    def __exit__(self, exc_type, exc, tb):
        if exc_type is None:
            try:
                self._check()  # a file that appeared meanwhile is not replaced either
                for target in self.targets:
                    tmp = self._temps[target]
                    with open(tmp, "rb") as fh:
                        os.fsync(fh.fileno())
                for target in self.targets:
                    os.replace(self._temps[target], target)
                    del self._temps[target]
            finally:
                self._cleanup()
            return False
        self._cleanup()
        return False

    def _cleanup(self):
        for tmp in self._temps.values():
            try:
                tmp.unlink()
            except FileNotFoundError:
                pass
        self._temps.clear()


def _umask() -> int:
    """The process umask, read without changing it where the system allows (Linux)."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except OSError:
        pass
    return 0o022


def _sha256(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


# ------------------------------------------------------------------------------------------------
# provenance
# ------------------------------------------------------------------------------------------------


def _jsonable(obj):
    """Plain JSON types; numpy scalars and arrays become numbers and lists, non-finite floats
    the strings ``"nan"``, ``"inf"``, ``"-inf"`` (JSON has no NaN)."""
    if isinstance(obj, Mapping):
        return {str(k): _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, str | bool) or obj is None:
        return obj
    if isinstance(obj, np.ndarray):
        return [_jsonable(v) for v in obj.tolist()]
    if isinstance(obj, list | tuple | set):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, np.bool_):
        return bool(obj)
    if isinstance(obj, int | np.integer):
        return int(obj)
    if isinstance(obj, float | np.floating):
        f = float(obj)
        return f if np.isfinite(f) else ("nan" if np.isnan(f) else ("inf" if f > 0 else "-inf"))
    if isinstance(obj, os.PathLike):
        return os.fspath(obj)
    if hasattr(obj, "magnitude") and hasattr(obj, "units"):  # a pint quantity
        return str(obj)
    return repr(obj)


def _versions() -> dict:
    import platform
    import sys

    import teakit

    out = {"teakit": teakit.__version__, "python": sys.version.split()[0],
           "platform": platform.platform(), "numpy": np.__version__}
    for mod in ("pandas", "matplotlib", "openpyxl"):
        try:
            out[mod] = __import__(mod).__version__
        except ImportError:  # optional for the record
            pass
    return out


def provenance(study=None, *, parameters: Mapping | None = None, seed=None, samples=None,
               notes=None, timestamp: str | None = None) -> dict:
    """The record that travels with an exported file.

    Parameters
    ----------
    study : Study, optional
        The study the output comes from: its name, case, objective, the text of its study file
        (``study.source``), its decision bounds and its parameters (nominal values, units,
        distributions) are recorded.
    parameters : mapping, optional
        Parameter values actually used where they differ from the study's nominal ones (e.g. a
        price moved in the explorer), name -> value [SI units of each parameter]
    seed : int, optional
        Random seed of the sampling [-]
    samples : int, optional
        Sample count (Monte Carlo samples, Sobol base samples, ...) [-]
    notes : str or mapping, optional
        Anything else worth keeping (a description, sampler settings).
    timestamp : str, optional
        Time of writing; default now, UTC, ISO 8601 to the second.

    Returns
    -------
    dict
        JSON-ready: ``caution``, ``created``, ``versions``, ``study``, ``parameters``,
        ``parameter_overrides``, ``seed``, ``samples``, ``notes``.
    """
    if seed is not None and not isinstance(seed, int | np.integer):
        raise InputError(f"seed must be a whole number, got {seed!r}")
    if samples is not None and not (isinstance(samples, int | np.integer) and samples >= 0):
        raise InputError(f"samples must be a whole number >= 0, got {samples!r}")
    if parameters is not None and not isinstance(parameters, Mapping):
        raise InputError(f"parameters must be a mapping of names to values, got {type(parameters).__name__}")
    rec: dict = {
        "caution": CAUTION,
        "created": timestamp or _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
        "versions": _versions(),
        "study": None,
        "parameters": {},
        "parameter_overrides": _jsonable(dict(parameters or {})),
        "seed": None if seed is None else int(seed),
        "samples": None if samples is None else int(samples),
        "notes": _jsonable(notes),
    }
    if study is not None:
        try:
            dtab = study.decision_table()
            ptab = study.parameter_table()
        except AttributeError as exc:
            raise InputError(f"study must be a teakit Study, got {type(study).__name__}") from exc
        rec["study"] = {
            "name": getattr(study, "name", ""),
            "case": getattr(study, "case", ""),
            "objective": getattr(study, "objective", ""),
            "description": getattr(study, "description", ""),
            "source": getattr(study, "source", None),
            "decisions": {str(k): _jsonable(row.to_dict()) for k, row in dtab.iterrows()},
        }
        rec["parameters"] = {
            str(k): {"value": _jsonable(row["nominal"]), "unit": row["unit"], "kind": row["kind"],
                     "distribution": _jsonable(row["distribution"])}
            for k, row in ptab.iterrows()
        }
    for k, v in (parameters or {}).items():
        entry = rec["parameters"].setdefault(str(k), {})
        entry["value"] = _jsonable(v)
    return rec


def _record(base: dict | None, kw: dict) -> dict:
    if base is not None:
        if kw:
            raise InputError(f"give either provenance= or {', '.join(kw)}, not both")
        if not isinstance(base, Mapping):
            raise InputError(f"provenance must be a dict from teakit.export.provenance, got {type(base).__name__}")
        rec = dict(base)
        rec.setdefault("caution", CAUTION)
        return rec
    return provenance(**kw)


def _dump(obj) -> str:
    return json.dumps(_jsonable(obj), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def _write_records(batch: _Batch, files: list[Path], temps: dict, rec: dict, extra: dict):
    for f in files:
        r = {"caution": rec.get("caution", CAUTION), "file": f.name, "format": f.suffix.lstrip("."), "sha256": _sha256(temps[f]),
             "bytes": temps[f].stat().st_size, **extra.get(f, {}), **rec}
        p = batch.temp(_provenance_path(f))
        p.write_text(_dump(r), encoding="utf-8")


def _provenance_path(f: Path) -> Path:
    return f.with_name(f.name + PROVENANCE_SUFFIX)


def _targets(path, formats, known: tuple[str, ...], what: str) -> list[Path]:
    p = Path(os.fspath(path))
    suffix = p.suffix.lower().lstrip(".")
    if formats is None:
        formats = (suffix,) if suffix in known else known
    elif isinstance(formats, str):
        formats = (formats,)
    formats = tuple(str(f).lower().lstrip(".") for f in formats)
    bad = [f for f in formats if f not in known]
    if bad or not formats:
        raise InputError(f"{what} formats must be among {', '.join(known)}, got {list(formats)}")
    stem = p.with_suffix("") if suffix in known else p
    if not stem.name:
        raise InputError(f"path {str(path)!r} has no file name")
    return [stem.with_name(f"{stem.name}.{f}") for f in dict.fromkeys(formats)]


# ------------------------------------------------------------------------------------------------
# figures
# ------------------------------------------------------------------------------------------------


def _figure_title(fig) -> str:
    sup = getattr(fig, "_suptitle", None)
    if sup is not None and sup.get_text():
        return sup.get_text()
    for ax in fig.axes:
        for loc in ("left", "center", "right"):
            t = ax.get_title(loc)
            if t:
                return t
    return ""


def save_figure(fig, path, *, formats=None, dpi: int = 300, overwrite: bool = False,
                title: str | None = None, provenance: dict | None = None, **record) -> list[Path]:
    """Save a figure as PNG, SVG and/or PDF, each with a provenance record beside it.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure (e.g. from :mod:`teakit.plots`).
    path : str or Path
        Target without suffix (``"out/npv_map"``: every format in ``formats``) or with one of
        them (``"out/npv_map.png"``: that format only, unless ``formats`` is given).
    formats : str or sequence of {"png", "svg", "pdf"}, optional
        Formats to write [-]
    dpi : int
        Resolution of the PNG (and of any raster parts of SVG/PDF), 72 to 1200 [1/inch]
    overwrite : bool
        Replace existing files; otherwise an existing target raises ``InputError`` and nothing
        is written.
    title : str, optional
        Title stored in the files' metadata; default the figure's own title.
    provenance : dict, optional
        A record from :func:`provenance`; or give its arguments (``study=``, ``parameters=``,
        ``seed=``, ``samples=``, ``notes=``) directly.

    Returns
    -------
    list of Path
        The files written, figures first, then their provenance records.

    Raises
    ------
    InputError
        For a non-figure, unknown formats, a dpi out of range, an existing target without
        ``overwrite``.
    """
    import matplotlib as mpl
    from matplotlib.figure import Figure

    import teakit

    if not isinstance(fig, Figure):
        raise InputError(f"fig must be a matplotlib Figure, got {type(fig).__name__}")
    if not (isinstance(dpi, int | np.integer) and 72 <= dpi <= 1200):
        raise InputError(f"dpi must be a whole number from 72 to 1200, got {dpi!r}")
    files = _targets(path, formats, FIGURE_FORMATS, "figure")
    rec = _record(provenance, record)
    title = title if title is not None else _figure_title(fig)
    creator = f"teakit {teakit.__version__}"
    meta = {
        "png": {"Title": title, "Description": CAUTION, "Disclaimer": CAUTION, "Software": creator},
        "svg": {"Title": title, "Description": CAUTION, "Creator": creator, "Date": None},
        "pdf": {"Title": title, "Subject": CAUTION, "Creator": creator, "CreationDate": None,
                "ModDate": None},
    }
    targets = files + [_provenance_path(f) for f in files]
    temps = {}
    with _Batch(targets, overwrite) as batch, mpl.rc_context(SAVE_RC):
        for f in files:
            fmt = f.suffix.lstrip(".")
            tmp = batch.temp(f)
            fig.savefig(tmp, format=fmt, dpi=int(dpi), metadata=meta[fmt])
            temps[f] = tmp
        extra = {f: {"dpi": int(dpi)} for f in files if f.suffix == ".png"}
        _write_records(batch, files, temps, rec, extra)
    return targets


# ------------------------------------------------------------------------------------------------
# tables
# ------------------------------------------------------------------------------------------------


def _table(table, units: Mapping | None):
    import pandas as pd

    if isinstance(table, pd.Series):
        table = table.to_frame()
    if not isinstance(table, pd.DataFrame):
        raise InputError(f"table must be a pandas DataFrame or Series, got {type(table).__name__}")
    if isinstance(table.columns, pd.MultiIndex):
        raise InputError("table has MultiIndex columns; flatten them to 'name [unit]' strings first")
    df = table
    keep_index = isinstance(df.index, pd.MultiIndex) or any(n is not None for n in df.index.names) \
        or not isinstance(df.index, pd.RangeIndex)
    if keep_index:
        df = df.reset_index()
    df = df.copy()
    df.columns = [str(c) for c in df.columns]
    units = dict(units or {})
    unknown = [k for k in units if k not in df.columns]
    if unknown:
        raise InputError(f"units names column(s) {unknown} that the table does not have; columns: {', '.join(df.columns)}")
    rename = {}
    for c, u in units.items():
        if _UNIT.match(c):
            raise InputError(f"column {c!r} already carries a unit; do not give it in units=")
        rename[c] = f"{c} [{u}]"
    df = df.rename(columns=rename)
    missing = [c for c in df.columns if not _UNIT.match(c) and pd.api.types.is_float_dtype(df[c])]
    if missing:
        raise InputError(f"column(s) {missing} hold numbers but no unit in the header; name them "
                         "'<name> [<unit>]' or give units={...} (use '-' for a dimensionless number)")
    if len(set(df.columns)) != len(df.columns):
        raise InputError(f"table has repeated column names: {list(df.columns)}")
    return df


def save_table(table, path, *, formats=None, units: Mapping | None = None, overwrite: bool = False,
               sheet_name: str = "table", provenance: dict | None = None, **record) -> list[Path]:
    """Save a table as CSV and/or XLSX with units in the headers, each with a provenance record.

    Parameters
    ----------
    table : pandas.DataFrame or pandas.Series
        The table; a named or multi-level index is written as leading column(s).
    path : str or Path
        Target without suffix (every format in ``formats``) or with ``.csv``/``.xlsx``.
    formats : str or sequence of {"csv", "xlsx"}, optional
        Formats to write [-]
    units : mapping, optional
        Column name -> unit for columns whose header has none, e.g. ``{"S1": "-"}`` [-]
    overwrite : bool
        Replace existing files; otherwise an existing target raises ``InputError``.
    sheet_name : str
        Worksheet of the data in the XLSX file (a second sheet, ``notes``, holds the caution and
        the provenance) [-]
    provenance : dict, optional
        A record from :func:`provenance`; or give its arguments directly.

    Returns
    -------
    list of Path
        The files written, tables first, then their provenance records.

    Notes
    -----
    CSV: UTF-8, comma separated, a header row, floats written to full precision (they read back
    exactly), NaN written ``NaN`` and infinities ``inf``. XLSX (openpyxl): the same header, bold and
    frozen; floats to 16 significant digits (openpyxl writes ``%.16g``; Excel itself shows 15);
    NaN and infinities as the text ``NaN``/``inf``.

    Raises
    ------
    InputError
        For a float column without a unit, unknown formats, an existing target without
        ``overwrite``, or a bad ``sheet_name``.
    """
    if not (isinstance(sheet_name, str) and 1 <= len(sheet_name) <= 31 and sheet_name != "notes"
            and not set(sheet_name) & set("[]:*?/\\")):
        raise InputError(f"sheet_name must be 1-31 characters without []:*?/\\ and not 'notes', got {sheet_name!r}")
    df = _table(table, units)
    files = _targets(path, formats, TABLE_FORMATS, "table")
    rec = _record(provenance, record)
    targets = files + [_provenance_path(f) for f in files]
    temps = {}
    with _Batch(targets, overwrite) as batch:
        for f in files:
            tmp = batch.temp(f)
            if f.suffix == ".csv":
                df.to_csv(tmp, index=False, encoding="utf-8", lineterminator="\n", na_rep="NaN")
            else:
                _write_xlsx(df, tmp, sheet_name, rec)
            temps[f] = tmp
        extra = {f: {"rows": len(df), "columns": list(df.columns)} for f in files}
        _write_records(batch, files, temps, rec, extra)
    return targets


def _write_xlsx(df, path: Path, sheet_name: str, rec: dict):
    import pandas as pd
    from openpyxl.styles import Alignment, Font

    with pd.ExcelWriter(path, engine="openpyxl") as xw:
        df.to_excel(xw, sheet_name=sheet_name, index=False, na_rep="NaN", inf_rep="inf")
        ws = xw.sheets[sheet_name]
        ws.freeze_panes = "A2"
        for j, col in enumerate(df.columns, start=1):
            ws.cell(row=1, column=j).font = Font(bold=True)
            letter = ws.cell(row=1, column=j).column_letter
            ws.column_dimensions[letter].width = min(max(len(col) + 2, 11), 60)
        notes = xw.book.create_sheet("notes")
        notes.append(["caution", CAUTION])
        notes.cell(row=1, column=1).font = Font(bold=True)
        notes.cell(row=1, column=2).alignment = Alignment(wrap_text=True)
        for key in ("created", "seed", "samples"):
            notes.append([key, _jsonable(rec.get(key))])
        study = rec.get("study") or {}
        for key in ("name", "case", "objective"):
            if study.get(key):
                notes.append([f"study {key}", str(study[key])])
        for k, v in (rec.get("versions") or {}).items():
            notes.append([f"version {k}", str(v)])
        notes.append(["provenance", "see the .provenance.json file beside this workbook"])
        notes.column_dimensions["A"].width = 18
        notes.column_dimensions["B"].width = 100
        props = xw.book.properties
        props.creator = "teakit"
        props.title = sheet_name
        props.description = CAUTION


# ------------------------------------------------------------------------------------------------
# JSON
# ------------------------------------------------------------------------------------------------


def save_json(data, path, *, overwrite: bool = False) -> Path:
    """Write a JSON document atomically (e.g. a run summary), with the :data:`CAUTION` added.

    Parameters
    ----------
    data : mapping
        The content; numpy numbers and arrays are converted, non-finite floats written as the
        strings ``"nan"``/``"inf"``/``"-inf"``.
    path : str or Path
        The file (``.json``).
    overwrite : bool
        Replace an existing file; otherwise it raises ``InputError``.

    Returns
    -------
    Path
        The file written.
    """
    if not isinstance(data, Mapping):
        raise InputError(f"data must be a mapping, got {type(data).__name__}")
    p = Path(os.fspath(path))
    if p.suffix.lower() != ".json":
        raise InputError(f"path must end in .json, got {str(path)!r}")
    text = _dump({"caution": CAUTION, **data})
    with _Batch([p], overwrite) as batch:
        batch.temp(p).write_text(text, encoding="utf-8")
    return p
