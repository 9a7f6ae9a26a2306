"""From a map-projected grid to a latitude-longitude grid (bilinear in projection x/y).

Used where a method needs latitude-longitude geometry (trajectories).  The target grid
covers the projected domain's latitude/longitude range with a spacing close to the
projected grid's; points outside the projected domain are NaN (missing, not filled),
so a parcel that leaves the domain stops there.  Winds are already east/north
components in the canonical form, so they interpolate like any other field.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import EARTH_RADIUS


def to_lat_lon(ds, spacing_deg: float | None = None):
    """A canonical lat-lon dataset holding ``ds`` (dims ``..., y, x``) interpolated.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical dataset on a projected grid (``crs`` coordinate, dims ``y, x``).
    spacing_deg : float, optional
        Target spacing in degrees; default the projected grid step converted at the
        Earth's radius (e.g. 25 km -> 0.225 deg).
    """
    import pyproj
    import xarray as xr
    from scipy.ndimage import map_coordinates

    from parcelcast.grid.projected import ProjectedGrid

    grid = ProjectedGrid.from_dataset(ds)
    lat2d, lon2d = grid.latitude_field(), grid.longitude_field()
    if spacing_deg is None:
        step_m = float(np.median(np.concatenate([np.diff(grid.x), np.diff(grid.y)])))
        spacing_deg = np.rad2deg(step_m / EARTH_RADIUS)  # a choice of spacing only
    centre = float(np.rad2deg(np.arctan2(np.sin(np.deg2rad(lon2d)).mean(),
                                         np.cos(np.deg2rad(lon2d)).mean())))
    rel = ((lon2d - centre + 180.0) % 360.0) - 180.0
    lat = np.arange(np.floor(lat2d.min() / spacing_deg) * spacing_deg,
                    min(lat2d.max(), 90.0) + 1e-9, spacing_deg)
    lon = centre + np.arange(np.floor(rel.min() / spacing_deg) * spacing_deg,
                             rel.max() + 1e-9, spacing_deg)
    crs = pyproj.CRS.from_wkt(ds["crs"].attrs["crs_wkt"])
    to_map = pyproj.Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True)
    lon_t, lat_t = np.meshgrid(lon, lat)
    px, py = to_map.transform(lon_t, lat_t)
    # fractional grid indices (x and y ascending; uneven steps allowed)
    ix = np.interp(px, grid.x, np.arange(grid.x.size), left=np.nan, right=np.nan)
    iy = np.interp(py, grid.y, np.arange(grid.y.size), left=np.nan, right=np.nan)
    outside = ~(np.isfinite(ix) & np.isfinite(iy))
    where = np.stack([np.where(outside, 0.0, iy), np.where(outside, 0.0, ix)])

    def regrid(values):
        flat = values.reshape(-1, *grid.shape)
        out = np.empty((flat.shape[0], lat.size, lon.size))
        for k, field in enumerate(flat):
            out[k] = map_coordinates(field, where, order=1, mode="nearest")
        out[:, outside] = np.nan
        return out.reshape(*values.shape[:-2], lat.size, lon.size)

    variables = {}
    for name, da in ds.data_vars.items():
        leading = [d for d in da.dims if d not in ("y", "x")]
        values = regrid(np.asarray(da.transpose(*leading, "y", "x").values, dtype=np.float64))
        variables[name] = ((*leading, "lat", "lon"), values, dict(da.attrs))
    coords = {c: ds[c] for c in ds.coords if c not in ("x", "y", "lat", "lon", "crs")
              and set(ds[c].dims) <= set(ds.dims) - {"x", "y"}}
    out = xr.Dataset(variables, coords={**coords, "lat": ("lat", lat), "lon": ("lon", lon)})
    out["lat"].attrs = {"units": "degrees_north", "standard_name": "latitude", "axis": "Y"}
    out["lon"].attrs = {"units": "degrees_east", "standard_name": "longitude", "axis": "X"}
    from parcelcast.grid import earth

    earth.declare(out, earth.from_cf(crs.to_cf()))  # the projection's own Earth
    out.attrs = dict(ds.attrs)
    out.attrs["regridded"] = (f"bilinear from the projected grid to {spacing_deg:.3f} deg "
                              "latitude-longitude; outside the projected domain: missing")
    return out
