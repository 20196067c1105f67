"""Equipment sizing (physics, no money): vessels, heat exchangers, refrigeration, catalyst beds.

.. warning::

   Wall thicknesses are a preliminary estimate, not for design or fabrication; the applicable
   pressure-vessel code, local regulations and a licensed engineer govern.

Compressor power (:mod:`teakit.equipment.compressor`) is shared with the process layer.
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
from teakit.equipment.compressor import (
    CompressionResult,
    compression_detail,
    compressor_power,
    isentropic_head,
    polytropic_head,
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
    "CompressionResult",
    "ShellThickness",
    "allowable_stress",
    "allowable_stress_materials",
    "carnot_cop",
    "catalyst_bed_dimensions",
    "catalyst_mass",
    "catalyst_volume_from_space_velocity",
    "compression_detail",
    "compressor_power",
    "cooling_water_flow",
    "exchanger_area",
    "fired_heater_fuel",
    "gas_hourly_space_velocity",
    "head_surface_area",
    "head_thickness",
    "isentropic_head",
    "lmtd",
    "normal_volumetric_flow",
    "polytropic_head",
    "refrigeration_power",
    "shell_thickness",
    "shell_thickness_detail",
    "vessel_mass",
]
