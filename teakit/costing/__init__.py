"""teakit's money layer: equipment costs, capital build-up, operating costs, cost indices.

Pure functions of sizes, prices and factors; this package never imports the process layer. Money
is in US dollars of a stated cost year (CEPCI basis): Turton's equipment correlations give USD at
CEPCI 397 (2001) unless a ``cepci_target`` is passed; :func:`escalate` moves costs between years.

Out-of-range policy (everywhere in this package, see :mod:`teakit.costing._range`): inside a
correlation's stated range, silent; outside but within a factor 10, a RangeWarning naming the
range; further out, OutOfRangeError. Capacities above a correlation's maximum are split into
equal parallel units by default (up to 10 units).

Modules: :mod:`~teakit.costing.equipment_cost`, :mod:`~teakit.costing.capital`,
:mod:`~teakit.costing.operating`, :mod:`~teakit.costing.escalation`.
"""

from __future__ import annotations

from teakit.costing._range import RANGE_FACTOR
from teakit.costing.capital import (
    LANG_FACTORS,
    capital_breakdown,
    fixed_capital_investment,
    grassroots_cost,
    lang_estimate,
    total_module_cost,
    working_capital,
)
from teakit.costing.equipment_cost import (
    bare_module_constants,
    bare_module_cost,
    bare_module_factor,
    base_bare_module_cost,
    equipment_kinds,
    material_factor,
    materials,
    parallel_units,
    pressure_factor,
    purchased_cost,
    vessel_cost_from_mass,
    vessel_diameter,
)
from teakit.costing.escalation import (
    TURTON_CEPCI_BASIS,
    capacity_scale,
    cepci,
    cepci_years,
    escalate,
)
from teakit.costing.operating import (
    DEFAULT_OPERATING_HOURS,
    HOURS_PER_YEAR,
    OPERATORS_PER_POSITION,
    breakdown_frame,
    catalyst_cost,
    com_breakdown,
    cooling_water_cost,
    cost_of_manufacture,
    electricity_cost,
    emissions_cost,
    heat_cost,
    operating_breakdown,
    operating_hours,
    operating_labour_cost,
    operators_per_shift,
    product_revenue,
    raw_material_cost,
    refrigeration_cost,
)

# The sizing functions users reach for when they price equipment (physics lives in
# teakit.equipment; re-exported here for convenience).
from teakit.equipment import compressor_power, shell_thickness

__all__ = [
    "DEFAULT_OPERATING_HOURS",
    "HOURS_PER_YEAR",
    "LANG_FACTORS",
    "OPERATORS_PER_POSITION",
    "RANGE_FACTOR",
    "TURTON_CEPCI_BASIS",
    "bare_module_constants",
    "bare_module_cost",
    "bare_module_factor",
    "base_bare_module_cost",
    "breakdown_frame",
    "capacity_scale",
    "capital_breakdown",
    "catalyst_cost",
    "cepci",
    "cepci_years",
    "com_breakdown",
    "compressor_power",
    "cooling_water_cost",
    "cost_of_manufacture",
    "electricity_cost",
    "emissions_cost",
    "equipment_kinds",
    "escalate",
    "fixed_capital_investment",
    "grassroots_cost",
    "heat_cost",
    "lang_estimate",
    "material_factor",
    "materials",
    "operating_breakdown",
    "operating_hours",
    "operating_labour_cost",
    "operators_per_shift",
    "parallel_units",
    "pressure_factor",
    "product_revenue",
    "purchased_cost",
    "raw_material_cost",
    "refrigeration_cost",
    "shell_thickness",
    "total_module_cost",
    "vessel_cost_from_mass",
    "vessel_diameter",
    "working_capital",
]
