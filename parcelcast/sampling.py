"""Values at a station (bilinear in latitude/longitude) and area means (box or radius).

Missing values are never filled: a point whose four neighbours include a NaN
gives NaN; an area mean skips NaN points and reports how many it skipped.
"""

from __future__ import annotations

import numpy as np

from parcelcast.errors import SelectionError


def corner_box(da, lat: float, lon: float, grid=None):
    """The 2 x 2 grid points around ``lat, lon`` used for the bilinear value (horizontal
    coordinates dropped); raises :class:`SelectionError` for a point outside the grid."""
    from parcelcast.grid import grid_for

    grid = grid if grid is not None else grid_for(da)
    corners = grid.bilinear(lat, lon)
    if corners is None:
        raise SelectionError("point", f"{lat:g},{lon:g}", grid.extent_text())
    (j0, j1, _), (i0, i1, _) = corners
    ydim, xdim = grid.dims
    box = da.isel({ydim: [j0, j1], xdim: [i0, i1]})
    return box.drop_vars([c for c in box.coords if set(box[c].dims) & {ydim, xdim}])


def value_at(da, lat: float, lon: float, grid=None):
    """Bilinear value of ``da`` (..., horizontal dims) at one point; leading dims kept.

    Bilinear in latitude/longitude on lat-lon grids, in projection x/y on projected
    grids.  Raises :class:`SelectionError` (stating the grid's extent) for a point
    outside the grid.
    """
    from parcelcast.grid import grid_for

    grid = grid if grid is not None else grid_for(da)
    box = corner_box(da, lat, lon, grid)
    (_, _, wy), (_, _, wx) = grid.bilinear(lat, lon)
    ydim, xdim = grid.dims
    import xarray as xr

    wlat = xr.DataArray([1 - wy, wy], dims=ydim)
    wlon = xr.DataArray([1 - wx, wx], dims=xdim)
    out = (box * wlat * wlon).sum([ydim, xdim], skipna=False)
    out.attrs = dict(da.attrs)
    return out.assign_coords(lat=lat, lon=lon)


def great_circle_km(lat1, lon1, lat2, lon2, radius_m: float | None = None):
    """Great-circle distance (km) on a sphere of ``radius_m`` (default EARTH_RADIUS), haversine."""
    from parcelcast.grid.earth import DEFAULT_RADIUS
    from parcelcast.trajectories.sphere import great_circle_distance

    radius = DEFAULT_RADIUS if radius_m is None else radius_m
    return great_circle_distance(lat1, lon1, lat2, lon2, radius) / 1000.0


def area_mean(da, lat: float, lon: float, radius_km: float | None = None,
              half_width_deg: float | None = None, reasons=()):
    """Area-weighted mean over a radius or a lat-lon box around a point (NaN points skipped).

    ``reasons``: optional ``(reason, bool DataArray)`` pairs saying why points may be
    missing (e.g. ``(ground.BELOW_GROUND, mask)``), in order of precedence.

    Returns
    -------
    (xarray.DataArray, dict)
        The mean (leading dims kept) and ``{"points": n, "missing": m,
        "missing_by_reason": {reason: count}}`` with the number of grid points in the
        area, how many of them were NaN (skipped) at any time or member, and why
        (:func:`parcelcast.missing.missing_by_reason`; the rest as "missing in the input").
    """
    if (radius_km is None) == (half_width_deg is None):
        raise ValueError("give exactly one of radius_km or half_width_deg")
    from parcelcast.grid import grid_for

    grid = grid_for(da)
    lat2d, lon2d = grid.latitude_field(), grid.longitude_field()
    if radius_km is not None:
        from parcelcast.grid.earth import radius_of

        inside = great_circle_km(lat, lon, lat2d, lon2d, radius_of(da)) <= radius_km
        what = f"radius {radius_km:g} km"
    else:
        dlon = np.abs(((lon2d - lon + 180.0) % 360.0) - 180.0)
        inside = (np.abs(lat2d - lat) <= half_width_deg) & (dlon <= half_width_deg)
        what = f"box +/-{half_width_deg:g} deg"
    if not inside.any():
        raise SelectionError("area", f"{what} around {lat:g},{lon:g}", "no grid point inside it")
    import xarray as xr

    weights = xr.DataArray(np.where(inside, grid.area_weights(), 0.0), dims=grid.dims)
    valid = da.notnull()
    total = (da.where(valid, 0.0) * weights).sum(list(grid.dims))  # NaN points get no weight
    norm = (weights * valid).sum(list(grid.dims))
    mean = total / norm.where(norm > 0)
    mean.attrs = dict(da.attrs)
    mean.attrs["cell_methods"] = f"area: mean ({what}, cell-area weights, NaN skipped)"
    leading = [d for d in da.dims if d not in grid.dims]
    missing_anywhere = (~valid).any(leading) if leading else ~valid
    missing = int((missing_anywhere & (weights > 0)).sum())
    from parcelcast.missing import missing_by_reason

    by_reason = missing_by_reason(da.where(weights > 0, 0.0), list(reasons), grid.dims,
                                  other="missing in the input")
    return mean, {"points": int(inside.sum()), "missing": missing, "missing_by_reason": by_reason}
