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

Safety: a study file is data. It is parsed with :mod:`tomllib` from the standard library and no
part of it is evaluated, executed or unpickled; quantity strings are read by pint's unit parser
(:func:`teakit.units.to_si`), with integer literals read as floats so that an expression such
as ``"9**9**9 bar"`` cannot run for hours. A file larger than :data:`MAX_BYTES` is refused.

Every error is an :class:`~teakit.errors.InputError` that names the key (as a dotted path such
as ``decisions.pressure.low``) and the line where it stands: unknown sections or keys, wrong
types, NaN or infinite numbers, values without a unit where one is needed, units that do not
convert, values outside the case's valid range (absurd magnitudes), distributions whose bounds
leave the parameter's valid range, and years or lives that are not whole numbers.
"""

from __future__ import annotations

import math
import os
import re
import tomllib
from pathlib import Path

from teakit.errors import InputError
from teakit.study.definitions import Decision, Parameter, case_info
from teakit.study.economics import ECONOMICS
from teakit.units import to_si

__all__ = ["MAX_BYTES", "read_study", "study_from_text"]

#: Largest study file accepted [bytes]; study files are a few kB.
MAX_BYTES = 1_000_000

_STUDY_KEYS = {"name", "case", "description", "objective"}
_SECTIONS = {"study", "decisions", "parameters", "uncertainty", "constraints"}
#: Quantities that must be whole numbers (a CEPCI year, a life in years, a count of absorbers).
_WHOLE = {"cost_year", "plant_life", "interpass_absorption"}

_DISTRIBUTIONS = {
    "uniform": {"low", "high"},
    "triangular": {"low", "mode", "high"},
    "pert": {"low", "mode", "high"},
    "normal": {"mean", "sd"},
    "lognormal": {"median", "sigma"},
    "discrete": {"values", "weights"},
}

# -- where a key stands ---------------------------------------------------------------------------

_HEADER = re.compile(r"^\s*\[\[?\s*(.+?)\s*\]\]?\s*(?:#.*)?$")
_KEY = re.compile(r"""^\s*((?:"[^"]*"|'[^']*'|[A-Za-z0-9_\-]+)(?:\s*\.\s*(?:"[^"]*"|'[^']*'|[A-Za-z0-9_\-]+))*)\s*=""")
_PART = re.compile(r"""\s*("[^"]*"|'[^']*'|[A-Za-z0-9_\-]+)\s*(?:\.|$)""")


def _dotted(text: str) -> str:
    """A TOML key or table name as a plain dotted path (quotes removed)."""
    parts = [m.group(1) for m in _PART.finditer(text)]
    return ".".join(p[1:-1] if p[:1] in "\"'" else p for p in parts)


def _locate(text: str, path: str) -> int | None:
    """Line number (1-based) of the key or table ``path``, or of its nearest parent found."""
    lines = text.splitlines()
    while path:
        table = ""
        for i, line in enumerate(lines, 1):
            m = _HEADER.match(line)
            if m and not _KEY.match(line):
                table = _dotted(m.group(1))
                if table == path:
                    return i
                continue
            m = _KEY.match(line)
            if m and (f"{table}.{_dotted(m.group(1))}" if table else _dotted(m.group(1))) == path:
                return i
        path = path.rpartition(".")[0]
    return None


def _at(text: str, path: str) -> str:
    """``path`` followed by `` (line N)`` where the line is known."""
    n = _locate(text, path)
    return f"{path} (line {n})" if n else path


# -- values ---------------------------------------------------------------------------------------


def _number(text, where, value) -> float:
    """A finite float from a TOML number (bool, huge integers and NaN/inf refused)."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{_at(text, where)}: expected a number, got {value!r}")
    try:
        v = float(value)
    except OverflowError:
        v = math.inf
    if not math.isfinite(v):
        raise InputError(f"{_at(text, where)}: {value!r} is not a finite number")
    return v


def _quantity(text, where, value, unit) -> float:
    """A finite number in SI ``unit`` from a TOML value: a number (only if dimensionless) or a
    string with a unit."""
    if isinstance(value, str):
        target = "dimensionless" if unit in ("-", "") else unit
        try:
            v = to_si(value, target, where)
        except InputError as exc:
            raise InputError(f"{_at(text, where)}: {exc}") from None
        if not isinstance(v, float):
            raise InputError(f"{_at(text, where)}: {value!r} must be one quantity, not an array")
        if not math.isfinite(v):
            raise InputError(f"{_at(text, where)}: {value!r} is not a finite quantity")
        return v
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(
            f"{_at(text, where)}: expected a number or a quantity string, got {value!r}"
        )
    v = _number(text, where, value)
    if unit not in ("-", "", "yr") and not (unit == "1/yr" and abs(v) < 1):
        raise InputError(
            f"{_at(text, where)}: {value!r} has no unit; write it with one, e.g. \"{value} {unit}\""
        )
    return v


def _check_whole(text, where, name, value):
    if name in _WHOLE and value != round(value):
        raise InputError(f"{_at(text, where)} = {value:g} must be a whole number")


def _table(text, where, value) -> dict:
    if not isinstance(value, dict):
        raise InputError(f"{_at(text, where)} must be a table, got {value!r}")
    return value


# -- the file -------------------------------------------------------------------------------------


def study_from_text(text: str, source: str = "<string>"):
    """A :class:`~teakit.study.study.Study` from the text of a study file.

    Parameters
    ----------
    text : str or bytes
        The file's contents (bytes are decoded as UTF-8).
    source : str
        Where the text came from, for messages.

    Raises
    ------
    InputError
        For anything that is not a valid study file; the message names the key and its line.
    """
    from teakit.study.study import OBJECTIVES, Study

    if isinstance(text, bytes | bytearray):
        try:
            text = bytes(text).decode("utf-8")
        except UnicodeDecodeError as exc:
            raise InputError(f"{source} is not UTF-8 text: {exc}") from None
    if not isinstance(text, str):
        raise InputError(f"text of a study file must be a str, got {type(text).__name__}")
    if len(text) > MAX_BYTES:
        raise InputError(f"{source} is larger than {MAX_BYTES} bytes; a study file is a few kB")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{source} is not valid TOML: {exc}") from exc
    except RecursionError:
        raise InputError(f"{source} is not a study file: arrays or tables nested too deeply") from None
    unknown = set(data) - _SECTIONS
    if unknown:
        k = sorted(unknown)[0]
        raise InputError(f"unknown section {k!r}{_line(text, k)} in {source}; sections: {', '.join(sorted(_SECTIONS))}")
    head = data.get("study")
    if not isinstance(head, dict) or "case" not in head:
        raise InputError(f"{source} needs a [study] section with case = \"...\"{_line(text, 'study')}")
    bad = set(head) - _STUDY_KEYS
    if bad:
        k = sorted(bad)[0]
        raise InputError(f"unknown key {_at(text, 'study.' + k)}; keys: {', '.join(sorted(_STUDY_KEYS))}")
    for k in ("name", "case", "description", "objective"):
        if k in head and not isinstance(head[k], str):
            raise InputError(f"{_at(text, 'study.' + k)} must be a string, got {head[k]!r}")
    try:
        info = case_info(head["case"])
    except InputError as exc:
        raise InputError(f"{_at(text, 'study.case')}: {exc}") from None
    objective = head.get("objective", "npv")
    if objective not in OBJECTIVES:
        raise InputError(
            f"{_at(text, 'study.objective')} must be one of {', '.join(OBJECTIVES)}, got {objective!r}"
        )
    sections = {k: _table(text, k, data.get(k) or {}) for k in _SECTIONS - {"study"}}

    dspecs = info["decisions"]
    decisions = {}
    for name, entry in sections["decisions"].items():
        where = f"decisions.{name}"
        if name not in dspecs:
            raise InputError(f"unknown decision {name!r}{_line(text, where)} for case {head['case']}; decisions: {', '.join(dspecs)}")
        if not isinstance(entry, dict):
            raise InputError(f"{_at(text, where)} must be a table with low/high/default or value")
        sp = dspecs[name]
        keys = set(entry)

        def value(key, sp=sp, entry=entry, where=where, name=name):
            v = _quantity(text, f"{where}.{key}", entry[key], sp.unit)
            if not sp.low <= v <= sp.high:
                raise InputError(
                    f"{where} {key}{_line(text, f'{where}.{key}')}: {v:g} {sp.unit} is outside the "
                    f"case's range [{sp.low:g}, {sp.high:g}] {sp.unit}"
                )
            _check_whole(text, f"{where}.{key}", name, v)
            return v

        if "value" in keys:
            if keys - {"value"}:
                raise InputError(f"{_at(text, where)}: a fixed decision takes only 'value'")
            lo = hi = de = value("value")
        else:
            if keys - {"low", "high", "default"} or not {"low", "high"} <= keys:
                raise InputError(f"{_at(text, where)}: a free decision takes low, high and optionally default")
            lo, hi = value("low"), value("high")
            if not lo < hi:
                raise InputError(f"{_at(text, where)}: low must be below high")
            de = value("default") if "default" in entry else 0.5 * (lo + hi)
            if not lo <= de <= hi:
                raise InputError(
                    f"{_at(text, where + '.default')}: {de:g} {sp.unit} must lie within "
                    f"[low, high] = [{lo:g}, {hi:g}] {sp.unit}"
                )
        decisions[name] = Decision(name, sp.unit, lo, hi, de, "value" not in keys, sp.doc)

    pspecs = {**{k: (s, "physics") for k, s in info["physics"].items()}, **{k: (s, "economics") for k, s in ECONOMICS.items()}}
    raw, unc = sections["parameters"], sections["uncertainty"]
    extra = sorted(set(unc) - set(pspecs))
    if extra:
        raise InputError(f"unknown parameter {extra[0]!r}{_line(text, 'uncertainty.' + extra[0])} in [uncertainty]; parameters: {', '.join(pspecs)}")
    for name in raw:
        if name not in pspecs:
            raise InputError(f"unknown parameter {name!r}{_line(text, 'parameters.' + name)}; parameters: {', '.join(pspecs)}")
    parameters = {}
    for name in [*raw, *(k for k in unc if k not in raw)]:
        sp, kind = pspecs[name]
        where = f"parameters.{name}"
        if name in raw:
            nominal = _quantity(text, where, raw[name], sp.unit)
            _check_whole(text, where, name, nominal)
            if not sp.low <= nominal <= sp.high:
                raise InputError(
                    f"{_at(text, where)} = {nominal:g} {sp.unit} is outside its valid range "
                    f"[{sp.low:g}, {sp.high:g}] {sp.unit}"
                )
        else:
            nominal = sp.default
        dist = _distribution(text, name, unc[name], sp) if name in unc else None
        parameters[name] = Parameter(name, sp.unit, nominal, kind, dist, sp.doc)

    constraints = {}
    cspecs = info["constraints"]
    for name, value in sections["constraints"].items():
        where = f"constraints.{name}"
        if name not in cspecs:
            raise InputError(f"unknown constraint {name!r}{_line(text, where)}; constraints: {', '.join(cspecs)}")
        unit = cspecs[name][2]
        limit = _quantity(text, where, value, unit)
        if unit == "K" and not limit > 0:
            raise InputError(f"{_at(text, where)} = {limit:g} K must be above absolute zero")
        constraints[name] = limit
    return Study(head["case"], decisions, parameters, objective, constraints,
                 head.get("name", ""), head.get("description", ""), text)


def _line(text, path) -> str:
    n = _locate(text, path)
    return f" (line {n})" if n else ""


def _distribution(text, name, entry, spec):
    where = f"uncertainty.{name}"
    if not isinstance(entry, dict) or "distribution" not in entry:
        raise InputError(f"{_at(text, where)} needs distribution = one of {', '.join(_DISTRIBUTIONS)}")
    kind = entry["distribution"]
    if not isinstance(kind, str) or kind not in _DISTRIBUTIONS:
        raise InputError(f"{_at(text, where + '.distribution')} must be one of {', '.join(_DISTRIBUTIONS)}, got {kind!r}")
    need = _DISTRIBUTIONS[kind]
    got = set(entry) - {"distribution"}
    if got != need and not (kind == "discrete" and got == {"values"}):
        raise InputError(f"{_at(text, where)}: a {kind} distribution takes {', '.join(sorted(need))}, got {', '.join(sorted(got)) or 'nothing'}")
    unit = spec.unit
    out = {"distribution": kind}
    for k in sorted(got):
        v = entry[k]
        if k in ("values", "weights"):
            if not isinstance(v, list) or not v:
                raise InputError(f"{_at(text, f'{where}.{k}')} must be a non-empty list")
            out[k] = [(_quantity(text, f"{where}.{k}", x, unit) if k == "values" else _number(text, f"{where}.{k}", x)) for x in v]
        elif k == "sigma":
            out[k] = _number(text, f"{where}.{k}", v)
        else:
            out[k] = _quantity(text, f"{where}.{k}", v, unit)
    # the distribution must stay inside the parameter's valid range: bounded ones entirely,
    # normal and lognormal at their centre (the sampler reports samples beyond the range)
    for k in sorted(set(out) & {"values", "low", "high", "mode", "mean", "median"}):
        vals = out[k] if isinstance(out[k], list) else [out[k]]
        for v in vals:
            if not spec.low <= v <= spec.high:
                raise InputError(
                    f"{_at(text, f'{where}.{k}')} = {v:g} {unit} is outside the valid range of "
                    f"{name}, [{spec.low:g}, {spec.high:g}] {unit}"
                )
    if kind in ("triangular", "pert") and not out["low"] <= out["mode"] <= out["high"]:
        raise InputError(f"{_at(text, where)}: need low <= mode <= high")
    if kind == "uniform" and not out["low"] < out["high"]:
        raise InputError(f"{_at(text, where)}: need low < high")
    if kind == "normal" and not out["sd"] > 0:
        raise InputError(f"{_at(text, where + '.sd')}: sd must be > 0")
    if kind == "lognormal" and not (out["sigma"] > 0 and out["median"] > 0):
        raise InputError(f"{_at(text, where)}: a lognormal distribution needs median > 0 and sigma > 0")
    if "weights" in out and (len(out["weights"]) != len(out["values"]) or min(out["weights"]) < 0
                             or not sum(out["weights"]) > 0):
        raise InputError(f"{_at(text, where + '.weights')}: weights must be >= 0, one per value, with a positive sum")
    return out


def read_study(path):
    """Read a study file (UTF-8 TOML).

    Parameters
    ----------
    path : str or os.PathLike
        The file; a bare name is also looked up in the package's ``data/studies`` folder.

    Raises
    ------
    InputError
        If the path is not a path, the file is missing, unreadable, too large, not UTF-8, or
        not a valid study file (see :func:`study_from_text`).
    """
    if not isinstance(path, str | os.PathLike):
        raise InputError(f"path must be a file name (str or path), got {path!r}")
    from teakit.data import data_dir

    try:
        p = Path(path)
        if not p.is_file():
            alt = data_dir() / "studies" / p.name
            if not alt.is_file():
                raise InputError(f"study file {str(path)!r} not found (also looked in {alt.parent})")
            p = alt
    except (OSError, ValueError) as exc:  # e.g. an embedded NUL or a name too long
        if isinstance(exc, InputError):
            raise
        raise InputError(f"study file {str(path)[:200]!r} cannot be opened: {exc}") from None
    try:
        if p.stat().st_size > MAX_BYTES:
            raise InputError(f"study file {str(p)!r} is larger than {MAX_BYTES} bytes; a study file is a few kB")
        raw = p.read_bytes()
    except OSError as exc:
        raise InputError(f"study file {str(p)!r} cannot be read: {exc}") from None
    return study_from_text(raw, str(p))
