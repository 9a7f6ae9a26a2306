"""parcelcast: why the air over a station is warming or cooling.

Horizontal temperature advection on the sphere, air-parcel trajectories,
vertical profiles, and the split of a local temperature trend into advective
and non-advective parts.  Guidance for forecasters, not an official forecast.

Public API (``parcelcast.NAME``; each has its own ``help``):

Reading
    open_analysis            files or globs (NetCDF, GRIB) -> the canonical xarray.Dataset
Geometry
    LatLonGrid, grid_for     the spherical grid of a dataset
Advection
    advection                -V.grad s of DataArrays (K s-1 for temperature; + = warm)
    geostrophic_wind         the geostrophic wind from geopotential
    layer_mean_temperature   hypsometric mean temperature of a layer
Sampling
    value_at, area_mean      a field at a station (bilinear) or averaged around it
Trajectories
    compute_trajectories, write_trajectories
Profiles
    read_profile_csv, column_from_analysis, analyse
The trend split
    trend_split, split_fields, station_guidance

``advection``, ``geostrophic_wind``, ``value_at``, ``area_mean`` and
``layer_mean_temperature`` accept CF coordinate names (``latitude``, ``longitude``,
found by cf_xarray) and pint-xarray quantified arrays; see :mod:`parcelcast.api`.

Example
-------
>>> import parcelcast                                          # doctest: +SKIP
>>> ds = parcelcast.open_analysis("analysis.grb2")             # doctest: +SKIP
>>> t850 = ds["temperature"].sel(level=85000.0)                # doctest: +SKIP
>>> adv = parcelcast.advection(t850, ds["u"].sel(level=85000.0),
...                            ds["v"].sel(level=85000.0))     # doctest: +SKIP

The package root is light: names are imported on first use so the command line starts
quickly.  Modules whose name is also a public function (``parcelcast.advection``) stay
importable as ``from parcelcast.advection import advection_on_level``; the attribute
``parcelcast.advection`` is always the function.
"""

from __future__ import annotations

import importlib
import sys
import types

__version__ = "0.1.0"

#: public name -> module that defines it (grouped by capability, as in the docstring)
_PUBLIC = {
    # reading
    "open_analysis": "parcelcast.io.analysis",
    # geometry
    "LatLonGrid": "parcelcast.grid.latlon",
    "grid_for": "parcelcast.grid",
    # advection
    "advection": "parcelcast.api",
    "geostrophic_wind": "parcelcast.api",
    "layer_mean_temperature": "parcelcast.api",
    # sampling
    "value_at": "parcelcast.api",
    "area_mean": "parcelcast.api",
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

__all__ = ["__version__", *_PUBLIC]


def __getattr__(name: str):
    if name in _PUBLIC:
        return getattr(importlib.import_module(_PUBLIC[name]), name)
    raise AttributeError(f"module 'parcelcast' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(_PUBLIC))


class _Package(types.ModuleType):
    """The package module: importing a submodule named like a public function (for example
    ``parcelcast.advection``) does not hide the function behind the module."""

    def __setattr__(self, name, value):
        if name in _PUBLIC and isinstance(value, types.ModuleType):
            return  # the import system binding the submodule: keep the function public
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package
