"""Study files: TOML that holds only data, read with the standard library (no code is run).

Layout::

    [study]
    name = "..."                  # free text
    case = "ammonia_loop"         # a registered process case
    description = "..."
    objective = "npv"             # npv | annual_profit | irr | lcop

    [decisions.pressure]          # a free decision: bounds and a starting value, with units
    low = "100 bar"
    high = "300 bar"
    default = "200 bar"

    [decisions.purge_fraction]    # a fixed decision: one value
    value = 0.03

    [parameters]                  # nominal values, with units where the quantity has one
    hydrogen_price = "2.0 USD/kg"
    catalyst_activity = 1.0

    [uncertainty.hydrogen_price]  # optional distributions for uncertainty studies
    distribution = "triangular"
    low = "1.5 USD/kg"
    mode = "2.0 USD/kg"
    high = "3.0 USD/kg"

    [constraints]                 # limits overriding the case's defaults
    peak_catalyst_temperature = "530 degC"

Every error names the key (and the line where it can be found): unknown sections or keys,
wrong types, values without a unit where one is needed, units that do not convert, values
outside the case's valid range.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np

from teakit.errors import InputError
from teakit.study.definitions import Decision, Parameter, case_info
from teakit.study.economics import ECONOMICS
from teakit.units import to_si

__all__ = ["read_study", "study_from_text"]

_STUDY_KEYS = {"name", "case", "description", "objective"}
_SECTIONS = {"study", "decisions", "parameters", "uncertainty", "constraints"}


def _line(text: str, key: str) -> str:
    for i, line in enumerate(text.splitlines(), 1):
        stripped = line.strip()
        if stripped.startswith(f"{key} ") or stripped.startswith(f"{key}=") or stripped.endswith(f".{key}]") or stripped == f"[{key}]":
            return f" (line {i})"
    return ""


def _quantity(text, where, value, unit):
    """A number in SI ``unit`` from a TOML value: a number (only if dimensionless) or a string."""
    if isinstance(value, bool) or not isinstance(value, int | float | str):
        raise InputError(f"{where}{_line(text, where.split('.')[-1])}: expected a number or a quantity string, got {value!r}")
    if isinstance(value, str):
        return float(to_si(value, unit, where)) if unit not in ("-", "") else float(to_si(value, "dimensionless", where))
    if unit not in ("-", "", "yr") and not (unit == "1/yr" and abs(value) < 1):
        raise InputError(
            f"{where}{_line(text, where.split('.')[-1])}: {value!r} has no unit; write it with one, e.g. \"{value} {unit}\""
        )
    return float(value)


def study_from_text(text: str, source: str = "<string>"):
    """A :class:`~teakit.study.study.Study` from the text of a study file."""
    from teakit.study.study import Study

    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{source} is not valid TOML: {exc}") from exc
    unknown = set(data) - _SECTIONS
    if unknown:
        k = sorted(unknown)[0]
        raise InputError(f"unknown section {k!r}{_line(text, k)} in {source}; sections: {', '.join(sorted(_SECTIONS))}")
    head = data.get("study")
    if not isinstance(head, dict) or "case" not in head:
        raise InputError(f"{source} needs a [study] section with case = \"...\"")
    bad = set(head) - _STUDY_KEYS
    if bad:
        k = sorted(bad)[0]
        raise InputError(f"unknown key study.{k}{_line(text, k)}; keys: {', '.join(sorted(_STUDY_KEYS))}")
    for k in ("name", "case", "description", "objective"):
        if k in head and not isinstance(head[k], str):
            raise InputError(f"study.{k}{_line(text, k)} must be a string, got {head[k]!r}")
    info = case_info(head["case"])
    dspecs = info["decisions"]
    decisions = {}
    for name, entry in (data.get("decisions") or {}).items():
        where = f"decisions.{name}"
        if name not in dspecs:
            raise InputError(f"unknown decision {name!r}{_line(text, name)} for case {head['case']}; decisions: {', '.join(dspecs)}")
        if not isinstance(entry, dict):
            raise InputError(f"{where}{_line(text, name)} must be a table with low/high/default or value")
        sp = dspecs[name]
        keys = set(entry)
        if "value" in keys:
            if keys - {"value"}:
                raise InputError(f"{where}{_line(text, name)}: a fixed decision takes only 'value'")
            v = _quantity(text, where + ".value", entry["value"], sp.unit)
            decisions[name] = Decision(name, sp.unit, v, v, v, False, sp.doc)
        else:
            if keys - {"low", "high", "default"} or not {"low", "high"} <= keys:
                raise InputError(f"{where}{_line(text, name)}: a free decision takes low, high and optionally default")
            lo = _quantity(text, where + ".low", entry["low"], sp.unit)
            hi = _quantity(text, where + ".high", entry["high"], sp.unit)
            de = _quantity(text, where + ".default", entry.get("default", 0.5 * (lo + hi)), sp.unit) if "default" in entry else 0.5 * (lo + hi)
            if not lo < hi:
                raise InputError(f"{where}{_line(text, name)}: low must be below high")
            decisions[name] = Decision(name, sp.unit, lo, hi, de, True, sp.doc)
        d = decisions[name]
        if d.low < sp.low or d.high > sp.high:
            raise InputError(
                f"{where}{_line(text, name)}: [{d.low:g}, {d.high:g}] {sp.unit} is outside the case's range "
                f"[{sp.low:g}, {sp.high:g}] {sp.unit}"
            )
    pspecs = {**{k: (s, "physics") for k, s in info["physics"].items()}, **{k: (s, "economics") for k, s in ECONOMICS.items()}}
    parameters = {}
    raw = data.get("parameters") or {}
    if not isinstance(raw, dict):
        raise InputError(f"[parameters]{_line(text, 'parameters')} must be a table")
    unc = data.get("uncertainty") or {}
    for name in set(unc) - set(pspecs):
        raise InputError(f"unknown parameter {name!r}{_line(text, name)} in [uncertainty]; parameters: {', '.join(pspecs)}")
    for name in raw:
        if name not in pspecs:
            raise InputError(f"unknown parameter {name!r}{_line(text, name)}; parameters: {', '.join(pspecs)}")
    for name in set(raw) | set(unc):
        sp, kind = pspecs[name]
        nominal = _quantity(text, f"parameters.{name}", raw[name], sp.unit) if name in raw else sp.default
        if not sp.low <= nominal <= sp.high:
            raise InputError(
                f"parameters.{name}{_line(text, name)} = {nominal:g} {sp.unit} is outside its valid range "
                f"[{sp.low:g}, {sp.high:g}] {sp.unit}"
            )
        dist = None
        if name in unc:
            dist = _distribution(text, name, unc[name], sp.unit)
        parameters[name] = Parameter(name, sp.unit, nominal, kind, dist, sp.doc)
    constraints = {}
    cspecs = info["constraints"]
    for name, value in (data.get("constraints") or {}).items():
        if name not in cspecs:
            raise InputError(f"unknown constraint {name!r}{_line(text, name)}; constraints: {', '.join(cspecs)}")
        constraints[name] = _quantity(text, f"constraints.{name}", value, cspecs[name][2])
    return Study(head["case"], decisions, parameters, head.get("objective", "npv"), constraints,
                 head.get("name", ""), head.get("description", ""), text)


_DISTRIBUTIONS = {
    "uniform": {"low", "high"},
    "triangular": {"low", "mode", "high"},
    "pert": {"low", "mode", "high"},
    "normal": {"mean", "sd"},
    "lognormal": {"median", "sigma"},
    "discrete": {"values", "weights"},
}


def _distribution(text, name, entry, unit):
    where = f"uncertainty.{name}"
    if not isinstance(entry, dict) or "distribution" not in entry:
        raise InputError(f"{where}{_line(text, name)} needs distribution = one of {', '.join(_DISTRIBUTIONS)}")
    kind = entry["distribution"]
    if kind not in _DISTRIBUTIONS:
        raise InputError(f"{where}.distribution{_line(text, name)} must be one of {', '.join(_DISTRIBUTIONS)}, got {kind!r}")
    need = _DISTRIBUTIONS[kind]
    got = set(entry) - {"distribution"}
    if got != need and not (kind == "discrete" and got == {"values"}):
        raise InputError(f"{where}{_line(text, name)}: a {kind} distribution takes {', '.join(sorted(need))}, got {', '.join(sorted(got))}")
    out = {"distribution": kind}
    for k in got:
        v = entry[k]
        if k in ("values", "weights"):
            if not isinstance(v, list) or not v:
                raise InputError(f"{where}.{k}{_line(text, name)} must be a non-empty list")
            out[k] = [(_quantity(text, f"{where}.{k}", x, unit) if k == "values" else float(x)) for x in v]
        elif k == "sigma":
            out[k] = float(v)
        else:
            out[k] = _quantity(text, f"{where}.{k}", v, unit)
    if kind in ("triangular", "pert") and not out["low"] <= out["mode"] <= out["high"]:
        raise InputError(f"{where}{_line(text, name)}: need low <= mode <= high")
    if kind == "uniform" and not out["low"] < out["high"]:
        raise InputError(f"{where}{_line(text, name)}: need low < high")
    if kind == "normal" and not out["sd"] > 0:
        raise InputError(f"{where}{_line(text, name)}: sd must be > 0")
    if "weights" in out and (len(out["weights"]) != len(out["values"]) or np.any(np.array(out["weights"]) < 0)):
        raise InputError(f"{where}{_line(text, name)}: weights must be >= 0, one per value")
    return out


def read_study(path):
    """Read a study file (UTF-8 TOML).

    Parameters
    ----------
    path : str or Path
        The file; a bare name is also looked up in the package's ``data/studies`` folder.
    """
    p = Path(path)
    if not p.is_file():
        from teakit.data import data_dir

        alt = data_dir() / "studies" / p.name
        if not alt.is_file():
            raise InputError(f"study file {str(path)!r} not found (also looked in {alt.parent})")
        p = alt
    return study_from_text(p.read_text(encoding="utf-8"), str(p))
