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

from parcelcast.errors import GridError, ImplausibleValuesError, InputFileError, UnitsError
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


def height_coordinates(obj) -> list[str]:
    """Names of the one-valued height-above-ground coordinates of a dataset or variable
    (CF standard name ``height``, or a name such as cfgrib's ``heightAboveGround``)."""
    standard_names, names, _ = COORDINATES["height"]
    return [str(name) for name, coord in obj.coords.items()
            if coord.size == 1 and (coord.attrs.get("standard_name") in standard_names
                                    or str(name).lower() in names)]


def standardise(raw: xr.Dataset, path: Path, crs=None) -> xr.Dataset:
    """Rename and convert the coordinates of one raw dataset (no data values touched).

    ``crs`` (a ``pyproj.CRS``) declares the projection of a GRIB grid; NetCDF files
    declare theirs with a CF ``grid_mapping`` variable.
    """
    ds = raw
    lat = _find_coord(ds, "lat")
    lon = _find_coord(ds, "lon")
    if lat is None or lon is None:
        raise GridError(
            f"{path}: latitude/longitude coordinates not found; coordinates present: "
            f"{', '.join(map(str, ds.coords)) or '(none)'}"
        )
    if ds[lat].ndim == 2 and ds[lon].ndim == 2:
        ds = _standardise_projected(ds, lat, lon, path, crs)
    elif ds[lat].ndim != 1 or ds[lon].ndim != 1:
        raise GridError(f"{path}: latitude and longitude must both be 1-D (a lat-lon grid) or both "
                        "2-D (a map-projected grid)")
    else:
        ds = ds.rename({lat: "lat", lon: "lon"})
    ds = _standardise_level(ds, path)
    ds = _standardise_time(ds, path)
    ds = _standardise_member(ds)
    keep = set(_CANONICAL_ORDER) | {"x", "y", "crs"}
    keep.update(height_coordinates(ds))  # 2 m, 10 m: recognise near-surface fields (roles.py)
    extra = [c for c in ds.coords if c not in keep and c not in ds.dims]
    return ds.drop_vars(extra)


def _standardise_projected(ds: xr.Dataset, lat: str, lon: str, path: Path, crs) -> xr.Dataset:
    """A map-projected grid: dims ``y, x`` (m), 2-D ``lat``/``lon`` and the CRS as WKT."""
    import pyproj

    ydim, xdim = ds[lat].dims
    if crs is None:
        crs = _cf_crs(ds, path)
    ds = ds.rename({lat: "lat", lon: "lon"})
    if ydim != "y" or xdim != "x":
        ds = ds.rename({ydim: "y", xdim: "x"})
    to_map = pyproj.Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True)
    px, py = to_map.transform(ds["lon"].values, ds["lat"].values)
    coords = {}
    for dim, projected, along in (("x", px, 0), ("y", py, 1)):
        # x is constant down each column (mean over axis 0), y along each row (axis 1)
        if dim in ds.coords and ds[dim].attrs.get("units"):
            values = convert(ds[dim].values, ds[dim].attrs["units"], "height",
                             f"projection coordinate {dim}", str(path))
        else:  # GRIB: no x/y values in the file; they follow from the declared projection
            values = projected.mean(axis=along)
        expected = values[None, :] if dim == "x" else values[:, None]
        spread = float(np.nanmax(np.abs(projected - expected)))
        step = float(np.nanmedian(np.abs(np.diff(values))))
        if not spread < 0.01 * step:
            raise GridError(
                f"{path}: the 2-D latitude/longitude do not match the declared projection "
                f"({crs.name}): {dim} differs by up to {spread:.0f} m, grid step {step:.0f} m"
            )
        coords[dim] = (dim, values,
                       {"units": "m", "standard_name": f"projection_{dim}_coordinate", "axis": dim.upper()})
    # the projection travels as a scalar coordinate, so every DataArray taken from the
    # dataset still knows its grid (CF grid-mapping variable, section 5.6)
    coords["crs"] = ((), 0, {"crs_wkt": crs.to_wkt(), "long_name": "map projection"})
    return ds.assign_coords(**coords)


def _cf_crs(ds: xr.Dataset, path: Path):
    """The CRS named by the CF ``grid_mapping`` attribute of the data variables."""
    import pyproj

    names = {v.attrs.get("grid_mapping") for v in ds.data_vars.values()} - {None}
    if not names:
        raise GridError(f"{path}: 2-D latitude/longitude but no CF grid_mapping attribute: "
                        "the projection must be declared (CF conventions, section 5.6)")
    name = sorted(names)[0].split(":")[0].strip()
    if name not in ds.variables:
        raise GridError(f"{path}: grid_mapping '{name}' names no variable in the file")
    try:
        return pyproj.CRS.from_cf(dict(ds[name].attrs))
    except Exception as exc:
        raise GridError(f"{path}: grid_mapping '{name}' is not a projection pyproj understands: "
                        f"{exc}") from None


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
    if not np.isfinite(values).all() or values.max() > 110_000.0 or values.min() <= 0.0:
        raise ImplausibleValuesError(
            "pressure level", f"{path} coordinate '{name}'",
            f"levels {values.min():g} .. {values.max():g} Pa after conversion from '{units}'; "
            "expected 1 .. 110000 Pa (hPa and Pa confused?)",
        )
    if len(np.unique(values)) != values.size:
        raise GridError(f"{path}: coordinate '{name}' repeats a pressure level: "
                        f"{', '.join(f'{v / 100:g}' for v in values)} hPa")
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
        if not np.issubdtype(valid.dtype, np.datetime64):  # e.g. a damaged year: cftime objects
            raise InputFileError(path, "the valid time does not decode to a date between the "
                                 "years 1678 and 2262 (the GRIB date is damaged)")
        if valid.ndim == 0:
            if "time" in ds.dims:
                raise GridError(f"{path}: several reference times with one valid time")
            # a scalar time: made a dimension by time_as_dimension once the levels are cut
            ds = ds.drop_vars([c for c in ("time", "step") if c in ds.coords])
            return ds.rename({"valid_time": "time"})
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
            if cname in ("lat", "lon", "level", "x", "y"):
                continue  # a position is never the time, even with time-like units
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
    missing = int(np.isnat(ds["time"].values).sum())
    if missing:
        raise ImplausibleValuesError("time coordinate", str(path),
                                     f"{missing} time(s) missing (NaT); every field needs its time")
    return ds  # a scalar time stays scalar here: see time_as_dimension


def time_as_dimension(var: xr.DataArray) -> xr.DataArray:
    """``var`` with a scalar ``time`` coordinate made a dimension of length 1.

    Kept apart from :func:`standardise` because xarray reads every value of a lazily
    opened variable to add a dimension: called once the variable is cut to the levels used.
    """
    if "time" in var.coords and "time" not in var.dims:
        return var.expand_dims("time")
    return var


def _standardise_member(ds: xr.Dataset) -> xr.Dataset:
    name = _find_coord(ds, "member")
    if name is None:
        return ds
    if ds[name].ndim == 0:
        return ds.drop_vars(name)
    return ds.rename({name: "member"})


def _refuse_repeated_times(times, path: Path) -> None:
    """A valid time given twice in one file is refused: which of the two fields is meant
    cannot be known (documented in the README; never silently reduced to the first)."""
    repeated = np.flatnonzero(times[1:] == times[:-1])
    if repeated.size:
        stamps = sorted({str(times[i])[:16] for i in repeated})
        raise InputFileError(path, f"the valid time {', '.join(stamps[:5])} UTC occurs more than "
                             "once in the file; keep each time once (for example with "
                             "xarray: ds.drop_duplicates('time'))")


def normalise(ds: xr.Dataset, path: Path) -> xr.Dataset:
    """Order coordinates: lat ascending, lon contiguous ascending (projected grids: y and x
    ascending), level descending, time ascending."""
    if "x" in ds.dims and "y" in ds.dims:
        ds = ds.sortby(["y", "x"])
    else:
        ds = _normalise_lat_lon(ds, path)
    if "level" in ds.dims:
        ds = ds.sortby("level", ascending=False)
    if "time" in ds.dims:
        ds = ds.sortby("time")
        _refuse_repeated_times(ds["time"].values, path)
        ds["time"].attrs = {"standard_name": "time", "long_name": "valid time (UTC)"}
    horizontal = ("y", "x") if "x" in ds.dims else ("lat", "lon")
    canonical = ("member", "time", "level", *horizontal)
    order = [d for d in ds.dims if d not in canonical] + [d for d in canonical if d in ds.dims]
    ds = ds.transpose(*order)
    ds["lat"].attrs = {"units": "degrees_north", "standard_name": "latitude"}
    ds["lon"].attrs = {"units": "degrees_east", "standard_name": "longitude"}
    if "lat" in ds.dims:
        ds["lat"].attrs["axis"] = "Y"
        ds["lon"].attrs["axis"] = "X"
    return ds


def _normalise_lat_lon(ds: xr.Dataset, path: Path) -> xr.Dataset:
    lat = ds["lat"].values.astype(np.float64)
    for name in ("lat", "lon"):
        values = ds[name].values
        if not np.issubdtype(values.dtype, np.number) or not np.isfinite(values).all():
            raise GridError(f"{path}: the {name} coordinate must hold finite numbers (degrees); "
                            f"found {values.dtype} values {str(values)[:60]}")
    if np.any(np.abs(lat) > 90.0 + 1e-6):
        raise ImplausibleValuesError("latitude", str(path), f"values {lat.min()} .. {lat.max()}")
    if len(np.unique(lat)) != len(lat):
        raise GridError(f"{path}: repeated latitudes")
    ds = ds.assign_coords(lat=("lat", lat)).sortby("lat")
    ds = _normalise_longitude(ds, path)
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
    if len(np.unique(lon)) != len(lon):
        raise GridError(f"{path}: repeated longitudes")
    wrapped = np.mod(lon, 360.0)
    _, first = np.unique(np.round(wrapped, 9), return_index=True)
    if len(first) != len(lon):
        ds = ds.isel(lon=np.sort(first))  # a repeated wrap column (0 and 360): keep one
        lon = ds["lon"].values.astype(np.float64)
    order, values, _ = longitude_order(lon)
    ds = ds.isel(lon=order)
    return ds.assign_coords(lon=("lon", values))
