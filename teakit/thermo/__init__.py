"""Thermodynamics: species data, ideal-gas properties, Peng-Robinson, fugacity models."""

from teakit.thermo.flash import (
    FlashEnthalpy,
    FlashResult,
    condenses,
    flash_enthalpy,
    flash_tp,
    saturation_pressure,
)
from teakit.thermo.ideal_gas import (
    cp,
    enthalpy,
    entropy,
    gibbs,
    mixture_cp,
    mixture_enthalpy,
    mixture_entropy,
)
from teakit.thermo.peng_robinson import (
    compressibility,
    fugacity_coefficients,
    kij_matrix,
    residual_enthalpy,
    residual_entropy,
)
from teakit.thermo.species import P_REF, T_REF, R, SpeciesSet, known_species, species_set

__all__ = [
    "P_REF",
    "T_REF",
    "FlashEnthalpy",
    "FlashResult",
    "R",
    "SpeciesSet",
    "compressibility",
    "condenses",
    "cp",
    "enthalpy",
    "entropy",
    "flash_enthalpy",
    "flash_tp",
    "fugacity_coefficients",
    "gibbs",
    "kij_matrix",
    "known_species",
    "mixture_cp",
    "mixture_enthalpy",
    "mixture_entropy",
    "residual_enthalpy",
    "residual_entropy",
    "saturation_pressure",
    "species_set",
]
