"""Equipment sizing (physics, no money): vessels, heat exchangers, refrigeration, catalyst beds.

.. warning::

   Wall thicknesses are a preliminary estimate, not for design or fabrication; the applicable
   pressure-vessel code, local regulations and a licensed engineer govern.

Compressor power lives in :mod:`teakit.equipment.compressor`.
"""

from __future__ import annotations

from teakit.equipment.catalyst import (
    BedDimensions,
    catalyst_bed_dimensions,
    catalyst_mass,
    catalyst_volume_from_space_velocity,
    gas_hourly_space_velocity,
    normal_volumetric_flow,
)
from teakit.equipment.exchanger import (
    cooling_water_flow,
    exchanger_area,
    fired_heater_fuel,
    lmtd,
)
from teakit.equipment.refrigeration import carnot_cop, refrigeration_power
from teakit.equipment.vessel import (
    ShellThickness,
    allowable_stress,
    allowable_stress_materials,
    head_surface_area,
    head_thickness,
    shell_thickness,
    shell_thickness_detail,
    vessel_mass,
)

__all__ = [
    "BedDimensions",
    "ShellThickness",
    "allowable_stress",
    "allowable_stress_materials",
    "carnot_cop",
    "catalyst_bed_dimensions",
    "catalyst_mass",
    "catalyst_volume_from_space_velocity",
    "cooling_water_flow",
    "exchanger_area",
    "fired_heater_fuel",
    "gas_hourly_space_velocity",
    "head_surface_area",
    "head_thickness",
    "lmtd",
    "normal_volumetric_flow",
    "refrigeration_power",
    "shell_thickness",
    "shell_thickness_detail",
    "vessel_mass",
]
