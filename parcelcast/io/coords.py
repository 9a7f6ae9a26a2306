"""Coordinates of the canonical form: recognise, rename, convert and order them.

``standardise`` works on one raw dataset (a NetCDF file or one cfgrib group):
it finds latitude, longitude, pressure level, time and ensemble member by the
criteria in :data:`parcelcast.io.roles.COORDINATES`, renames them, converts
levels to Pa and uses the *valid* time of forecasts.  ``normalise`` orders the
assembled dataset: latitude ascending, longitude contiguous and ascending,
levels descending in pressure, time ascending.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import xarray as xr

from parcelcast.errors import GridError, ImplausibleValuesError, UnitsError
from parcelcast.io.roles import COORDINATES
from parcelcast.units import convert

_CANONICAL_ORDER = ("member", "time", "level", "lat", "lon")


def _find_coord(ds: xr.Dataset, role: str) -> str | None:
    standard_names, names, axis = COORDINATES[role]
    for name, coord in ds.coords.items():
        if coord.attrs.get("standard_name") in standard_names:
            return name
    for name in ds.coords:
        if str(name).lower() in names:
            return name
    if axis:
        for name, coord in ds.coords.items():
            if coord.attrs.get("axis") == axis:
                return name
    return None


def standardise(raw: xr.Dataset, path: Path) -> xr.Dataset:
    """Rename and convert the coordinates of one raw dataset (no data values touched)."""
    ds = raw
    lat = _find_coord(ds, "lat")
    lon = _find_coord(ds, "lon")
    if lat is None or lon is None:
        raise GridError(
            f"{path}: latitude/longitude coordinates not found; coordinates present: "
            f"{', '.join(map(str, ds.coords)) or '(none)'}"
        )
    if ds[lat].ndim != 1 or ds[lon].ndim != 1:
        raise GridError(
            f"{path}: two-dimensional latitude/longitude (a map-projected grid) is not supported "
            "yet; provide the analysis on a regular latitude-longitude grid"
        )
    ds = ds.rename({lat: "lat", lon: "lon"})
    ds = _standardise_level(ds, path)
    ds = _standardise_time(ds, path)
    ds = _standardise_member(ds)
    keep = set(_CANONICAL_ORDER)
    extra = [c for c in ds.coords if c not in keep and c not in ds.dims]
    return ds.drop_vars(extra)


def _standardise_level(ds: xr.Dataset, path: Path) -> xr.Dataset:
    name = _find_coord(ds, "level")
    if name is None:
        return ds
    coord = ds[name]
    units = coord.attrs.get("units")
    if not units:
        units = {"isobaricinhpa": "hPa", "isobaricinpa": "Pa"}.get(str(name).lower())
    if not units:
        raise UnitsError("pressure level coordinate", None, "pressure (hPa or Pa)",
                         f"{path} coordinate '{name}'")
    values = np.atleast_1d(convert(coord.values, units, "pressure", "pressure level",
                                   f"{path} coordinate '{name}'"))
    if values.max() > 110_000.0 or values.min() <= 0.0:
        raise ImplausibleValuesError(
            "pressure level", f"{path} coordinate '{name}'",
            f"levels {values.min():g} .. {values.max():g} Pa after conversion from '{units}'; "
            "expected 1 .. 110000 Pa (hPa and Pa confused?)",
        )
    attrs = {"units": "Pa", "standard_name": "air_pressure", "long_name": "pressure level",
             "positive": "down", "axis": "Z"}
    if coord.ndim == 0:
        ds = ds.drop_vars(name).expand_dims(level=values)
    else:
        ds = ds.rename({name: "level"}).assign_coords(level=("level", values))
    ds["level"].attrs = attrs
    return ds


def _standardise_time(ds: xr.Dataset, path: Path) -> xr.Dataset:
    if "valid_time" in ds.coords:
        valid = ds["valid_time"]
        if valid.ndim == 0:
            if "time" in ds.dims:
                raise GridError(f"{path}: several reference times with one valid time")
            ds = ds.drop_vars([c for c in ("time", "step", "valid_time") if c in ds.coords])
            return ds.expand_dims(time=[valid.values])
        if valid.ndim == 1:
            dim = valid.dims[0]
            values = valid.values
            ds = ds.drop_vars([c for c in ("time", "step", "valid_time") if c in ds.coords
                               and c != dim])
            if dim != "time":
                ds = ds.rename({dim: "time"})
            return ds.assign_coords(time=("time", values))
        raise GridError(
            f"{path}: several reference times and forecast steps in one file; "
            "split it so that each file holds one of them"
        )
    name = "time" if "time" in ds.coords else None
    if name is None:
        for cname, coord in ds.coords.items():
            if coord.attrs.get("standard_name") == "time" or np.issubdtype(coord.dtype, np.datetime64):
                name = cname
                break
    if name is None:
        return ds
    if name != "time":
        ds = ds.rename({name: "time"})
    if not np.issubdtype(ds["time"].dtype, np.datetime64):
        raise UnitsError("time coordinate", ds["time"].attrs.get("units"),
                         "a CF time ('hours since ...') that decodes to dates", str(path))
    if ds["time"].ndim == 0:
        ds = ds.expand_dims("time")
    return ds


def _standardise_member(ds: xr.Dataset) -> xr.Dataset:
    name = _find_coord(ds, "member")
    if name is None:
        return ds
    if ds[name].ndim == 0:
        return ds.drop_vars(name)
    return ds.rename({name: "member"})


def normalise(ds: xr.Dataset, path: Path) -> xr.Dataset:
    """Order coordinates: lat ascending, lon contiguous ascending, level descending, time ascending."""
    lat = ds["lat"].values.astype(np.float64)
    if np.any(np.abs(lat) > 90.0 + 1e-6):
        raise ImplausibleValuesError("latitude", str(path), f"values {lat.min()} .. {lat.max()}")
    if len(np.unique(lat)) != len(lat):
        raise GridError(f"{path}: repeated latitudes")
    ds = ds.assign_coords(lat=("lat", lat)).sortby("lat")
    ds = _normalise_longitude(ds, path)
    if "level" in ds.dims:
        ds = ds.sortby("level", ascending=False)
    if "time" in ds.dims:
        ds = ds.sortby("time")
        ds["time"].attrs = {"standard_name": "time", "long_name": "valid time (UTC)"}
    order = [d for d in ds.dims if d not in _CANONICAL_ORDER] + [d for d in _CANONICAL_ORDER if d in ds.dims]
    ds = ds.transpose(*order)
    ds["lat"].attrs = {"units": "degrees_north", "standard_name": "latitude", "axis": "Y"}
    ds["lon"].attrs = {"units": "degrees_east", "standard_name": "longitude", "axis": "X"}
    return ds


def longitude_order(lon: np.ndarray) -> tuple[np.ndarray, np.ndarray, bool]:
    """Return (order, new_values, is_global) making longitudes contiguous and ascending.

    Global grids (no gap wider than 1.5 grid steps) map to [-180, 180).  A regional
    grid keeps one unbroken run starting in [-180, 180), so a domain across the
    dateline reads for example 170 ... 190.
    """
    lon = np.asarray(lon, dtype=np.float64)
    wrapped = np.mod(lon, 360.0)
    order = np.argsort(wrapped, kind="stable")
    ordered = wrapped[order]
    if len(lon) < 2:
        return order, ((ordered + 180.0) % 360.0) - 180.0, False
    gaps = np.diff(np.append(ordered, ordered[0] + 360.0))
    step = np.median(gaps)
    is_global = bool(gaps.max() < 1.5 * step) and len(lon) * step > 358.0
    if is_global:
        shifted = ((wrapped + 180.0) % 360.0) - 180.0
        order = np.argsort(shifted, kind="stable")
        return order, shifted[order], True
    cut = int(np.argmax(gaps)) + 1
    order = np.roll(order, -cut)
    run = wrapped[order]
    run = run[0] + np.mod(run - run[0], 360.0)
    start = ((run[0] + 180.0) % 360.0) - 180.0
    return order, run - run[0] + start, False


def _normalise_longitude(ds: xr.Dataset, path: Path) -> xr.Dataset:
    lon = ds["lon"].values.astype(np.float64)
    wrapped = np.mod(lon, 360.0)
    _, first = np.unique(np.round(wrapped, 9), return_index=True)
    if len(first) != len(lon):
        ds = ds.isel(lon=np.sort(first))  # a repeated wrap column (0 and 360): keep one
        lon = ds["lon"].values.astype(np.float64)
    order, values, _ = longitude_order(lon)
    ds = ds.isel(lon=order)
    return ds.assign_coords(lon=("lon", values))
