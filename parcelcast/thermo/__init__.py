"""Thermodynamics of moist air: pure, vectorised functions on float64 SI arrays.

Units inside: K, Pa, kg/kg, m.  Missing values (NaN) stay NaN.  See
``design_notes/thermodynamics.md`` for the formulas, sources and tolerances.
The public names are grouped below; the modules hold one job each
(``dry``, ``saturation``, ``moisture``, ``lcl``, ``moist``, ``parcel``).
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
from parcelcast.thermo.lcl import lcl_pressure_bolton, lcl_romps, lcl_temperature_bolton
from parcelcast.thermo.moist import (
    equivalent_potential_temperature,
    pseudoadiabat,
    pseudoadiabat_lookup,
    pseudoadiabatic_lapse_rate,
    saturation_equivalent_potential_temperature,
    wet_bulb_potential_temperature,
)
from parcelcast.thermo.moisture import (
    dewpoint_from_relative_humidity,
    dewpoint_from_specific_humidity,
    latent_heat_vaporisation,
    mixing_ratio_from_dewpoint,
    mixing_ratio_from_specific_humidity,
    mixing_ratio_from_vapour_pressure,
    relative_humidity_from_dewpoint,
    saturation_mixing_ratio,
    specific_humidity_from_dewpoint,
    specific_humidity_from_mixing_ratio,
    vapour_pressure_from_dewpoint,
    vapour_pressure_from_mixing_ratio,
    wet_bulb_temperature,
)
from parcelcast.thermo.parcel import PARCELS, ParcelResult, interpolate_at_pressure, lift_parcel, lift_parcels
from parcelcast.thermo.saturation import (
    dewpoint_from_vapour_pressure,
    saturation_vapour_pressure,
    saturation_vapour_pressure_derivative,
)

__all__ = [
    # dry air
    "potential_temperature",
    "temperature_from_potential_temperature",
    "dry_adiabat",
    "virtual_temperature",
    "density",
    "thickness",
    "static_stability",
    # saturation
    "saturation_vapour_pressure",
    "saturation_vapour_pressure_derivative",
    "dewpoint_from_vapour_pressure",
    # humidity
    "latent_heat_vaporisation",
    "mixing_ratio_from_vapour_pressure",
    "vapour_pressure_from_mixing_ratio",
    "saturation_mixing_ratio",
    "specific_humidity_from_mixing_ratio",
    "mixing_ratio_from_specific_humidity",
    "vapour_pressure_from_dewpoint",
    "relative_humidity_from_dewpoint",
    "dewpoint_from_relative_humidity",
    "dewpoint_from_specific_humidity",
    "specific_humidity_from_dewpoint",
    "mixing_ratio_from_dewpoint",
    "wet_bulb_temperature",
    # condensation level, moist adiabats
    "lcl_romps",
    "lcl_temperature_bolton",
    "lcl_pressure_bolton",
    "pseudoadiabatic_lapse_rate",
    "pseudoadiabat",
    "pseudoadiabat_lookup",
    "equivalent_potential_temperature",
    "saturation_equivalent_potential_temperature",
    "wet_bulb_potential_temperature",
    # parcels
    "PARCELS",
    "ParcelResult",
    "lift_parcel",
    "lift_parcels",
    "interpolate_at_pressure",
]
