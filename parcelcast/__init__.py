"""parcelcast: why the air over a station is warming or cooling.

Horizontal temperature advection on the sphere, air-parcel trajectories,
vertical profiles, and the split of a local temperature trend into advective
and non-advective parts.  Guidance for forecasters, not an official forecast.

The package root is light: names are imported on first use so the command
line starts quickly.
"""

from __future__ import annotations

import importlib

__version__ = "0.1.0"

#: public name -> module that defines it (grouped by capability)
_PUBLIC = {
    # reading
    "open_analysis": "parcelcast.io.analysis",
    # geometry
    "LatLonGrid": "parcelcast.grid.latlon",
    "grid_for": "parcelcast.grid",
    # advection
    "advection": "parcelcast.advection",
    "geostrophic_wind": "parcelcast.geostrophic",
    "layer_mean_temperature": "parcelcast.layers",
    # sampling
    "value_at": "parcelcast.sampling",
    "area_mean": "parcelcast.sampling",
    # trajectories
    "compute_trajectories": "parcelcast.trajectories.api",
    "write_trajectories": "parcelcast.trajectories.output",
    # profiles
    "read_profile_csv": "parcelcast.profiles",
    "column_from_analysis": "parcelcast.profiles",
    "analyse": "parcelcast.profiles",
    # the trend split
    "trend_split": "parcelcast.budget",
    "split_fields": "parcelcast.budget",
    "station_guidance": "parcelcast.budget",
}

__all__ = sorted(_PUBLIC)


def __getattr__(name: str):
    if name in _PUBLIC:
        return getattr(importlib.import_module(_PUBLIC[name]), name)
    raise AttributeError(f"module 'parcelcast' has no attribute {name!r}")
