"""Reactions, equilibrium and rate laws."""

from teakit.chemistry.kinetics import AmmoniaTemkinPyzhev, RateLaw, ReversibleRate, SO2Collina
from teakit.chemistry.reaction import EquilibriumResult, Reaction, ReactionSystem

__all__ = [
    "AmmoniaTemkinPyzhev",
    "EquilibriumResult",
    "RateLaw",
    "Reaction",
    "ReactionSystem",
    "ReversibleRate",
    "SO2Collina",
]
