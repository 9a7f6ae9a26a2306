"""Vertical profiles: read, validate, analyse.

A profile comes from a CSV file (:func:`read_profile_csv`) or from an analysis
column (:func:`column_from_analysis`); :func:`analyse` computes the sounding
indices, the thermal-wind advection by layer and the top-temperature guidance.
"""

from parcelcast.profiles.column import column_from_analysis, gridded_layer_advection
from parcelcast.profiles.csv import read_profile_csv
from parcelcast.profiles.guidance import top_temperature_guidance
from parcelcast.profiles.indices import analyse, crossing_height, inversions, precipitable_water
from parcelcast.profiles.profile import Profile, fill_heights, validate
from parcelcast.profiles.thermal_wind import coriolis_parameter, layer_advection, thermal_wind_advection

__all__ = [
    # the profile
    "Profile",
    "validate",
    "fill_heights",
    "read_profile_csv",
    "column_from_analysis",
    # analysis
    "analyse",
    "precipitable_water",
    "crossing_height",
    "inversions",
    "top_temperature_guidance",
    # thermal wind
    "coriolis_parameter",
    "layer_advection",
    "thermal_wind_advection",
    "gridded_layer_advection",
]
