"""Thermodynamics of moist air: pure, vectorised functions on float64 SI arrays.

Units inside: K, Pa, kg/kg, m.  Missing values (NaN) stay NaN.  See
``design_notes/thermodynamics.md`` for the formulas, sources and tolerances.
"""

from parcelcast.thermo.dry import (
    density,
    dry_adiabat,
    potential_temperature,
    static_stability,
    temperature_from_potential_temperature,
    thickness,
    virtual_temperature,
)

__all__ = [
    # dry
    "potential_temperature",
    "temperature_from_potential_temperature",
    "dry_adiabat",
    "virtual_temperature",
    "density",
    "thickness",
    "static_stability",
]
