"""Studies: decisions, parameters, objective and constraints bound to a process case."""

from teakit.study.definitions import CASES, Constraint, Decision, Parameter
from teakit.study.economics import ECONOMICS, plant_economics
from teakit.study.files import read_study, study_from_text
from teakit.study.study import OBJECTIVES, Optimum, Study

__all__ = [
    "CASES",
    "ECONOMICS",
    "OBJECTIVES",
    "Constraint",
    "Decision",
    "Optimum",
    "Parameter",
    "Study",
    "plant_economics",
    "read_study",
    "study_from_text",
]
