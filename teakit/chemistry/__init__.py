"""Reactions, equilibrium and rate laws."""

from teakit.chemistry.reaction import EquilibriumResult, Reaction, ReactionSystem

__all__ = ["EquilibriumResult", "Reaction", "ReactionSystem"]
