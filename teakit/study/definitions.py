"""Decisions, parameters and constraints of a study, and the registry of process cases."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

from teakit.errors import InputError

__all__ = ["CASES", "Constraint", "Decision", "Parameter", "case_info"]


@dataclass(frozen=True)
class Decision:
    """An operating decision: SI unit, bounds and a default; ``free`` ones are optimised.

    Attributes
    ----------
    name : str
        A decision of the process case (e.g. ``"pressure"``).
    unit : str
        SI unit of the values [-].
    low, high : float
        Bounds for the optimiser [unit].
    default : float
        Value used when not optimised, and the starting point [unit].
    free : bool
        Optimised (True) or held at ``default``.
    """

    name: str
    unit: str
    low: float
    high: float
    default: float
    free: bool = True
    doc: str = ""

    def __post_init__(self):
        if not self.low <= self.default <= self.high:
            raise InputError(
                f"decision {self.name!r}: default {self.default:g} {self.unit} must lie within "
                f"[{self.low:g}, {self.high:g}]"
            )


@dataclass(frozen=True)
class Parameter:
    """A physics or economic parameter with its nominal value (and, later, a distribution).

    Attributes
    ----------
    name : str
    unit : str
        SI unit [-].
    nominal : float
        Nominal value [unit].
    kind : {"physics", "economics"}
        Physics parameters change the process result; economic ones only its price.
    distribution : dict, optional
        Uncertainty description as read from a study file (used by uncertainty studies).
    """

    name: str
    unit: str
    nominal: float
    kind: str
    distribution: Mapping | None = None
    doc: str = ""

    def __post_init__(self):
        if self.kind not in ("physics", "economics"):
            raise InputError(f"parameter {self.name!r}: kind must be 'physics' or 'economics', got {self.kind!r}")


@dataclass(frozen=True)
class Constraint:
    """A constraint on a result: ``name <= limit`` (``sense="max"``) or ``>=`` (``"min"``).

    ``function`` may be a Python callable of the results DataFrame returning a margin array
    (>= 0 feasible) for constraints no result column expresses; no strings are evaluated.
    """

    name: str
    limit: float = 0.0
    sense: str = "max"
    unit: str = "-"
    function: Callable | None = field(default=None, compare=False)

    def __post_init__(self):
        if self.sense not in ("max", "min"):
            raise InputError(f"constraint {self.name!r}: sense must be 'max' or 'min', got {self.sense!r}")


def _ammonia():
    from teakit.process.cases import ammonia

    return {
        "function": ammonia.ammonia_loop,
        "decisions": ammonia.DECISIONS,
        "physics": ammonia.PHYSICS,
        # Overall yield: NH3 made per mol of N2 in the make-up (x 2), i.e. feed utilisation.
        "yield": lambda v: v["product_NH3_flow"] / (2.0 * v["makeup_N2"]),
        "yield_name": "nitrogen converted to product per nitrogen fed",
        "search_options": {"steps": 16, "tol": 1e-7, "flash_tol": 1e-10},
        "constraints": {
            "peak_catalyst_temperature": ("max", 803.15, "K"),  # 530 degC, iron catalyst (common practice)
            "makeup_discharge_temperature": ("max", 453.15, "K"),  # 180 degC stage discharge (common practice)
            "shell_formula_margin": ("min", 0.0, "-"),  # within ASME VIII-1 UG-27 (or its thick-wall form)
        },
    }


def _so2():
    from teakit.process.cases import so2

    return {
        "function": so2.so2_converter,
        "decisions": so2.DECISIONS,
        "physics": so2.PHYSICS,
        "yield": lambda v: v["overall_conversion"],
        "yield_name": "overall SO2 conversion",
        "search_options": {"steps": 24},
        "constraints": {
            "peak_catalyst_temperature": ("max", 903.15, "K"),  # 630 degC, vanadium catalyst (common practice)
            "so2_emission": ("max", 2.0, "kg/t"),  # 40 CFR 60 Subpart H new-source limit
            "stack_pressure_margin": ("min", 0.0, "Pa"),  # gas must leave the final absorber above ambient
        },
    }


CASES: dict[str, Callable[[], dict]] = {"ammonia_loop": _ammonia, "so2_converter": _so2}


def case_info(case: str) -> dict:
    """The registry entry of a process case: function, decision and physics tables, yield."""
    if case not in CASES:
        raise InputError(f"unknown case {case!r}; cases: {', '.join(CASES)}")
    return CASES[case]()
