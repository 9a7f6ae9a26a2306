"""Values at a station (bilinear in latitude/longitude) and area means (box or radius).

Missing values are never filled: a point whose four neighbours include a NaN
gives NaN; an area mean skips NaN points and reports how many it skipped.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import EARTH_RADIUS
from parcelcast.errors import SelectionError


def _bracket(coord: np.ndarray, x: float, periodic: bool = False):
    """Indices (i0, i1) and weight of i1 for ``x`` inside ascending ``coord``."""
    if periodic:
        n = coord.size
        span = 360.0
        rel = np.mod(x - coord[0], span)
        steps = np.append(np.diff(coord), coord[0] + span - coord[-1])
        edges = np.concatenate([[0.0], np.cumsum(steps)])
        i0 = int(np.searchsorted(edges, rel, side="right") - 1)
        i0 = min(i0, n - 1)
        w = (rel - edges[i0]) / steps[i0]
        return i0, (i0 + 1) % n, float(w)
    i0 = int(np.searchsorted(coord, x, side="right") - 1)
    i0 = min(max(i0, 0), coord.size - 2)
    w = (x - coord[i0]) / (coord[i0 + 1] - coord[i0])
    return i0, i0 + 1, float(w)


def value_at(da, lat: float, lon: float, grid=None):
    """Bilinear value of ``da`` (..., lat, lon) at one point; leading dims kept.

    Raises :class:`SelectionError` (listing the grid's extent) for a point outside the grid.
    """
    from parcelcast.grid import grid_for

    grid = grid if grid is not None else grid_for(da)
    if not grid.contains(lat, lon):
        raise SelectionError(
            "point", f"{lat:g},{lon:g}",
            f"latitudes {grid.lat[0]:g}..{grid.lat[-1]:g}, longitudes "
            + ("all (global grid)" if grid.periodic_lon else f"{grid.lon[0]:g}..{grid.lon[-1]:g}"),
        )
    j0, j1, wy = _bracket(grid.lat, lat)
    x = float(grid.lon_in_grid(lon)) if not grid.periodic_lon else lon
    i0, i1, wx = _bracket(grid.lon, x, grid.periodic_lon)
    corners = da.isel(lat=[j0, j1], lon=[i0, i1])
    import xarray as xr

    wlat = xr.DataArray([1 - wy, wy], dims="lat")
    wlon = xr.DataArray([1 - wx, wx], dims="lon")
    out = (corners.drop_vars(["lat", "lon"]) * wlat * wlon).sum(["lat", "lon"], skipna=False)
    out.attrs = dict(da.attrs)
    return out.assign_coords(lat=lat, lon=lon)


def great_circle_km(lat1, lon1, lat2, lon2):
    """Great-circle distance (km) on the sphere of radius EARTH_RADIUS (haversine)."""
    p1, p2 = np.deg2rad(lat1), np.deg2rad(lat2)
    dphi = p2 - p1
    dlmb = np.deg2rad(np.asarray(lon2) - np.asarray(lon1))
    h = np.sin(dphi / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dlmb / 2) ** 2
    return 2 * EARTH_RADIUS / 1000.0 * np.arcsin(np.sqrt(np.clip(h, 0, 1)))


def area_mean(da, lat: float, lon: float, radius_km: float | None = None,
              half_width_deg: float | None = None):
    """Area-weighted (cos lat) mean over a radius or a lat-lon box around a point.

    Returns
    -------
    (xarray.DataArray, dict)
        The mean (leading dims kept) and ``{"points": n, "missing": m}`` with the
        number of grid points in the area and how many of them were NaN (skipped).
    """
    if (radius_km is None) == (half_width_deg is None):
        raise ValueError("give exactly one of radius_km or half_width_deg")
    lat2d, lon2d = np.meshgrid(da["lat"].values, da["lon"].values, indexing="ij")
    if radius_km is not None:
        inside = great_circle_km(lat, lon, lat2d, lon2d) <= radius_km
        what = f"radius {radius_km:g} km"
    else:
        dlon = np.abs(((lon2d - lon + 180.0) % 360.0) - 180.0)
        inside = (np.abs(lat2d - lat) <= half_width_deg) & (dlon <= half_width_deg)
        what = f"box +/-{half_width_deg:g} deg"
    if not inside.any():
        raise SelectionError("area", f"{what} around {lat:g},{lon:g}", "no grid point inside it")
    import xarray as xr

    weights = xr.DataArray(np.where(inside, np.cos(np.deg2rad(lat2d)), 0.0), dims=("lat", "lon"))
    valid = da.notnull()
    total = (da.fillna(0.0) * weights).sum(["lat", "lon"])
    norm = (weights * valid).sum(["lat", "lon"])
    mean = total / norm.where(norm > 0)
    mean.attrs = dict(da.attrs)
    mean.attrs["cell_methods"] = f"area: mean ({what}, cos-latitude weights, NaN skipped)"
    missing = int((~valid & (weights > 0)).sum()) if da.ndim else 0
    return mean, {"points": int(inside.sum()), "missing": missing}
