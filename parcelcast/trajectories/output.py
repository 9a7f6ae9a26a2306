"""Writing trajectories: CF DSG NetCDF, tidy CSV, GeoJSON, and the JSON summary.

What belongs here: turning the dataset of :func:`~parcelcast.trajectories.api.compute_trajectories`
into files (atomically, via :func:`parcelcast.io.atomic.atomic_path`) and into the plain
dictionary printed by ``parcelcast track --json``.

* NetCDF: the dataset as it is (featureType ``trajectory``, CF 1.10 section H.4).
* CSV: one row per valid point, columns ``trajectory, analysis_member, cloud_member,
  start_group, status, obs, time, lat, lon, pressure_hPa`` and the sampled fields.
* GeoJSON (RFC 7946): a FeatureCollection, one feature per trajectory with its
  properties (status, members, times and pressures of its points); coordinates are
  ``[lon, lat]`` in degrees within -180..180; a path crossing the antimeridian is cut there
  into a MultiLineString (RFC 7946 section 3.1.9; the cut points, interpolated on the
  ``antimeridian`` package's straight segments, are added to the geometry only).
* JSON (``.json``): the summary document of ``parcelcast track --json``.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from parcelcast.io.atomic import atomic_path
from parcelcast.errors import UsageError

FORMATS = {".nc": "netcdf", ".csv": "csv", ".geojson": "geojson", ".json": "json"}


def _iso(t) -> str | None:
    import pandas as pd

    if np.isnat(t):
        return None
    return pd.Timestamp(t).strftime("%Y-%m-%dT%H:%M:%SZ")


def _num(x, digits=4):
    x = float(x)
    return round(x, digits) if np.isfinite(x) else None


def output_format(path) -> str:
    """The format the suffix of ``path`` asks for; :class:`UsageError` for any other suffix."""
    kind = FORMATS.get(Path(path).suffix.lower())
    if kind is None:
        raise UsageError(f"cannot tell the output format from {Path(path).name!r}; "
                         f"use one of: {', '.join(FORMATS)}")
    return kind


def write_trajectories(ds, path, disclaimer: str = "") -> Path:
    """Write trajectories to ``path``; the format follows the suffix (.nc, .csv, .geojson, .json).

    Raises :class:`parcelcast.errors.UsageError` for an unknown suffix (listing the valid ones).
    """
    path = Path(path)
    kind = output_format(path)
    if kind == "netcdf":
        from parcelcast.io import cf_netcdf

        return cf_netcdf.write(to_cf_dsg(ds), path, "parcelcast air-parcel trajectories")
    with atomic_path(path) as tmp:
        if kind == "csv":
            to_frame(ds).to_csv(tmp, index=False, float_format="%.6g")
        elif kind == "json":
            from parcelcast.schemas import stamp

            tmp.write_text(json.dumps(stamp(to_json_dict(ds, disclaimer)), indent=2,
                                      allow_nan=False) + "\n", encoding="utf-8")
        else:
            tmp.write_text(json.dumps(to_geojson(ds), allow_nan=False), encoding="utf-8")
    return path


#: fill value of integer per-point variables past the end of a trajectory (CF 2.5.1, 9.3.2)
INT_FILL = -1


def to_cf_dsg(ds):
    """The trajectories as a CF discrete-sampling-geometry dataset (CF 1.11 chapter 9).

    Incomplete multidimensional array representation (section 9.3.2), ``featureType =
    trajectory``: along each trajectory the valid points come first and in increasing time
    (a back trajectory is stored from its origin to its arrival point), padding after them
    is missing (NaN, NaT, or :data:`INT_FILL` with ``_FillValue``); every variable is on
    ``(trajectory, obs)`` or ``(trajectory,)``: the spread of a start group is given on each
    of the group's trajectories at the point of the same time; ``time lat lon pressure``
    are coordinates of every per-point variable.
    """
    import xarray as xr

    ntraj, nobs = ds.sizes["trajectory"], ds.sizes["obs"]
    times = ds["time"].values
    valid = ~np.isnat(times) & ~np.isnan(ds["lat"].values)
    order = np.zeros((ntraj, nobs), dtype=np.intp)
    filled = np.zeros((ntraj, nobs), dtype=bool)
    for k in range(ntraj):
        idx = np.flatnonzero(valid[k])
        idx = idx[np.argsort(times[k, idx], kind="stable")]
        order[k, :idx.size] = idx
        filled[k, :idx.size] = True
    group = np.asarray(ds["start_group"].values)

    def points(values, attrs):
        values = np.take_along_axis(np.asarray(values), order, axis=1)
        attrs = dict(attrs)
        if values.dtype.kind == "f":
            values = np.where(filled, values, np.nan)
        elif values.dtype.kind == "M":
            values = np.where(filled, values, np.datetime64("NaT"))
        elif values.dtype.kind in "iub":
            values = np.where(filled, values.astype(np.int8 if values.dtype.itemsize == 1 else
                                                    np.int32), INT_FILL)
            attrs["_FillValue"] = values.dtype.type(INT_FILL)
        return xr.Variable(("trajectory", "obs"), values, attrs)

    data, coords = {}, {}
    for name, var in ds.variables.items():
        if var.dims == ("trajectory", "obs"):
            (coords if name in ("time", "lat", "lon", "pressure") else data)[name] = points(
                var.values, var.attrs)
        elif var.dims == ("start_group", "obs"):  # one value per group: on each member
            attrs = dict(var.attrs, long_name=var.attrs.get("long_name", name)
                         + " (of this trajectory's start group, at this point's time)")
            data[name] = points(var.values[group], attrs)
        elif var.dims == ("start_group",):  # one value per group: on each of its trajectories
            data[name] = xr.Variable(("trajectory",), np.asarray(var.values)[group], dict(
                var.attrs, long_name=var.attrs.get("long_name", name) + " (of this trajectory's "
                "start group)"))
        elif var.dims == ("trajectory",):
            (coords if name == "trajectory_id" else data)[name] = xr.Variable(
                ("trajectory",), var.values, var.attrs)
        elif name not in ds.dims:
            raise ValueError(f"{name}{var.dims}: no place for it in a CF trajectory file")
    out = xr.Dataset(data, coords=coords, attrs=dict(ds.attrs))
    out["pressure"].attrs.setdefault("axis", "Z")
    out["row_size"].attrs["long_name"] = "number of valid points (they come first along obs)"
    out.attrs["featureType"] = "trajectory"
    return out


def to_frame(ds):
    """Tidy table (pandas.DataFrame): one row per valid point."""
    import pandas as pd

    ntraj, nobs = ds.lat.shape
    valid = ~np.isnan(ds.lat.values)
    tr, ob = np.nonzero(valid)
    cols = {
        "trajectory": ds.trajectory_id.values[tr],
        "analysis_member": ds.analysis_member.values[tr],
        "cloud_member": ds.cloud_member.values[tr],
        "start_group": ds.start_group.values[tr],
        "status": ds.status_name.values[tr],
        "obs": ob,
        "time": pd.to_datetime(ds.time.values[tr, ob]).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "lat": ds.lat.values[tr, ob],
        "lon": ds.lon.values[tr, ob],
        "pressure_hPa": ds.pressure.values[tr, ob] / 100.0,
        "on_ground": ds.on_ground.values[tr, ob],
    }
    for name in ("temperature", "potential_temperature", "geopotential_height"):
        if name in ds:
            unit = ds[name].attrs.get("units", "")
            cols[f"{name}_{unit}" if unit else name] = ds[name].values[tr, ob]
    return pd.DataFrame(cols)


def _line_geometry(lon, lat) -> dict:
    """A path as GeoJSON, longitudes in -180..180, cut at the antimeridian (RFC 7946 3.1.9)."""
    import antimeridian
    import shapely.geometry

    lon = (np.asarray(lon) + 180.0) % 360.0 - 180.0
    points = list(zip(lon, lat))
    if len(points) == 1:
        points = points * 2  # a LineString needs two positions
    shape = antimeridian.fix_line_string(shapely.geometry.LineString(points), great_circle=False)
    lines = list(shape.geoms) if shape.geom_type == "MultiLineString" else [shape]
    coords = [[[_num(x, 5), _num(y, 5)] for x, y in line.coords] for line in lines]
    if len(coords) == 1:
        return {"type": "LineString", "coordinates": coords[0]}
    return {"type": "MultiLineString", "coordinates": coords}


def to_geojson(ds) -> dict:
    """GeoJSON FeatureCollection: one (Multi)LineString per trajectory (RFC 7946)."""
    feats = []
    for k in range(ds.sizes["trajectory"]):
        lat = ds.lat.values[k]
        ok = ~np.isnan(lat)
        times = ds.time.values[k][ok]
        feats.append({
            "type": "Feature",
            "geometry": _line_geometry(ds.lon.values[k][ok], lat[ok]),
            "properties": {
                "trajectory": str(ds.trajectory_id.values[k]),
                "status": str(ds.status_name.values[k]),
                "analysis_member": int(ds.analysis_member.values[k]),
                "cloud_member": int(ds.cloud_member.values[k]),
                "central": bool(ds.central.values[k]),
                "start_time": _iso(times[0]) if times.size else None,
                "end_time": _iso(times[-1]) if times.size else None,
                "pressure_hPa": [_num(p / 100.0, 2) for p in ds.pressure.values[k][ok]],
                "times": [_iso(t) for t in times],
                "direction": ds.attrs.get("direction"),
                "mode": ds.attrs.get("mode"),
            },
        })
    return {"type": "FeatureCollection", "features": feats}


def to_json_dict(ds, disclaimer: str = "") -> dict:
    """The ``--json`` summary of the first start group.

    ``{"arrival": {...}, "members": [{"status", "points": [...]}, ...], "spread_km",
    "spread_fraction", "disclaimer"}``.  Points are in ascending time (for a back
    trajectory: from the origin to the arrival point); the unperturbed member comes first.
    ``arrival`` describes the start point of the integration (the arrival point of a back
    trajectory, the release point of a forward one) with ``"role"`` saying which.
    """
    grp = ds.start_group.values
    sel = np.flatnonzero(grp == grp.min())
    order = sel[np.argsort(-ds.central.values[sel], kind="stable")]
    backward = ds.attrs.get("direction") == "backward"
    members = []
    for k in order:
        ok = ~np.isnan(ds.lat.values[k])
        idx = np.flatnonzero(ok)
        if backward:
            idx = idx[::-1]
        pts = []
        for o in idx:
            pt = {
                "time": _iso(ds.time.values[k, o]),
                "lat": _num(ds.lat.values[k, o]),
                "lon": _num(ds.lon.values[k, o]),
                "pressure_hPa": _num(ds.pressure.values[k, o] / 100.0, 2),
                "temperature_K": _num(ds.temperature.values[k, o], 2) if "temperature" in ds else None,
            }
            if "potential_temperature" in ds:
                pt["potential_temperature_K"] = _num(ds.potential_temperature.values[k, o], 2)
            if "geopotential_height" in ds:
                pt["height_m"] = _num(ds.geopotential_height.values[k, o], 1)
            pts.append(pt)
        members.append({
            "status": str(ds.status_name.values[k]),
            "analysis_member": int(ds.analysis_member.values[k]),
            "cloud_member": int(ds.cloud_member.values[k]),
            "points": pts,
        })
    c = order[0]
    sp = ds.spread.values[0]
    fr = ds.spread_fraction.values[0]
    last = np.flatnonzero(~np.isnan(sp))
    return {
        "arrival": {
            "role": "arrival" if backward else "release",
            "time": _iso(ds.time.values[c, 0]),
            "lat": _num(ds.lat.values[c, 0]),
            "lon": _num(ds.lon.values[c, 0]),
            "pressure_hPa": _num(ds.pressure.values[c, 0] / 100.0, 2),
            "direction": ds.attrs.get("direction"),
            "mode": ds.attrs.get("mode"),
            "scheme": ds.attrs.get("scheme"),
            "wind": ds.attrs.get("wind"),
            "steady_flow": bool(ds.attrs.get("steady_flow", 0)),
            "time_step_s": _num(ds.attrs.get("time_step_s", np.nan), 1),
        },
        "members": members,
        "spread_km": _num(sp[last[-1]] / 1000.0, 2) if last.size else None,
        "spread_fraction": _num(fr[last[-1]], 4) if last.size else None,
        "series": [_group_summary(ds, g) for g in np.unique(grp)],
        "notes": [ds.attrs["regridded"]] if "regridded" in ds.attrs else [],
        "disclaimer": disclaimer,
    }


def _group_summary(ds, group: int) -> dict:
    """One arrival (or release) time of a series: where its central path ends, and the spread."""
    rows = np.flatnonzero(ds.start_group.values == group)
    c = rows[np.argmax(ds.central.values[rows])]
    end = int(ds.row_size.values[c]) - 1
    sp = ds.spread.values[group]
    valid = np.flatnonzero(~np.isnan(sp))
    return {
        "time": _iso(ds.time.values[c, 0]),
        "status": str(ds.status_name.values[c]),
        "end": {"time": _iso(ds.time.values[c, end]), "lat": _num(ds.lat.values[c, end]),
                "lon": _num(ds.lon.values[c, end]),
                "pressure_hPa": _num(ds.pressure.values[c, end] / 100.0, 2),
                "temperature_K": _num(ds.temperature.values[c, end], 2) if "temperature" in ds else None},
        "spread_km": _num(sp[valid[-1]] / 1000.0, 2) if valid.size else None,
    }
