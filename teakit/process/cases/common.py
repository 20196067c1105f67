"""Helpers shared by the process cases: decision/parameter tables, broadcasting, staging."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from teakit.equipment.compressor import compression_detail
from teakit.errors import InputError
from teakit.units import to_si
from teakit.validation import check_finite

__all__ = ["Spec", "compress_staged", "resolve", "resolve_case"]


@dataclass(frozen=True)
class Spec:
    """A decision or physics parameter of a case: SI unit, valid range, default, meaning."""

    unit: str
    low: float
    high: float
    default: float
    doc: str


def resolve(values: Mapping | None, specs: Mapping[str, Spec], kind: str) -> tuple[dict, int]:
    """Convert ``values`` (numbers, arrays, strings with units) to SI arrays of one batch shape.

    Unknown names and values outside the spec's range raise InputError naming them; names not
    given take their default. Returns ``(arrays, B)`` with every array of shape (B,).
    """
    values = dict(values or {})
    unknown = [k for k in values if k not in specs]
    if unknown:
        raise InputError(f"unknown {kind} {', '.join(map(repr, unknown))}; valid: {', '.join(specs)}")
    out = {}
    for name, spec in specs.items():
        raw = values.get(name, spec.default)
        v = check_finite(name, to_si(raw, spec.unit, name) if spec.unit not in ("-", "") else raw)
        v = np.atleast_1d(np.asarray(v, dtype=float))
        if v.ndim != 1:
            raise InputError(f"{kind} {name!r} must be a scalar or a 1-d array, got shape {v.shape}")
        bad = (v < spec.low) | (v > spec.high)
        if bad.any():
            raise InputError(
                f"{kind} {name!r} = {v[bad][0]:g} {spec.unit} is outside its valid range "
                f"[{spec.low:g}, {spec.high:g}] {spec.unit} ({spec.doc})"
            )
        out[name] = v
    try:
        B = int(np.broadcast_shapes(*(v.shape for v in out.values()))[0])
    except ValueError:
        shapes = {k: v.shape for k, v in out.items() if v.shape != (1,)}
        raise InputError(f"{kind} arrays do not broadcast to one batch: {shapes}") from None
    return {k: np.broadcast_to(v, (B,)).copy() for k, v in out.items()}, B


def resolve_case(decisions, physics, decision_specs, physics_specs) -> tuple[dict, int]:
    """Decisions and physics parameters of a case as SI arrays of one batch shape (B,)."""
    dec, B1 = resolve(decisions, decision_specs, "decision")
    phy, B2 = resolve(physics, physics_specs, "physics parameter")
    try:
        B = int(np.broadcast_shapes((B1,), (B2,))[0])
    except ValueError:
        raise InputError(f"decisions ({B1} members) and physics ({B2}) do not broadcast") from None
    return {k: np.broadcast_to(v, (B,)).copy() for k, v in {**dec, **phy}.items()}, B


def compress_staged(flow, T_in, P_in, P_out, y, species, efficiency, T_intercool, max_ratio=3.0):
    """Compression with the number of stages chosen per member (stage ratio <= ``max_ratio``).

    Members are grouped by stage count (a handful of groups, not a loop over members).

    Returns
    -------
    power [W], T_discharge_max [K], cooler duty [W], stages [-] : ndarrays (B,)
    """
    B = flow.shape[0]
    ratio = np.maximum(P_out / P_in, 1.0)
    stages = np.maximum(1, np.ceil(np.log(ratio) / np.log(max_ratio) - 1e-12)).astype(int)
    power = np.zeros(B)
    T_dis = np.zeros(B)
    duty = np.zeros(B)
    for s in np.unique(stages):
        m = stages == s
        d = compression_detail(
            flow[m], T_in[m], P_in[m], np.maximum(P_out[m], P_in[m]), y[m], stages=int(s),
            efficiency=efficiency[m], T_intercool=T_intercool[m], species=species,
        )
        power[m] = d.power
        T_dis[m] = d.T_discharge.max(axis=-1)
        duty[m] = d.intercooler_duty.sum(axis=-1)
    return power, T_dis, duty, stages
