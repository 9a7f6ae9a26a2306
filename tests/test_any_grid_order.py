"""The labelled operators accept latitude/longitude in any order and answer in that order.

Second route: the same field computed on its canonical (ascending) form and reordered by hand.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from parcelcast.advection import advection
from parcelcast.geostrophic import geostrophic_wind


def _fields(lat, lon):
    la, lo = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    coords = {"lat": lat, "lon": lon}
    dims = ("lat", "lon")
    t = xr.DataArray(280 - 20 * np.sin(la) + 3 * np.cos(la) * np.sin(3 * lo), dims=dims,
                     coords=coords, attrs={"units": "K", "standard_name": "air_temperature"})
    u = xr.DataArray(10 + 5 * np.cos(la), dims=dims, coords=coords, attrs={"units": "m s-1"})
    v = xr.DataArray(4 * np.sin(2 * lo), dims=dims, coords=coords, attrs={"units": "m s-1"})
    phi = xr.DataArray(5e4 - 2e4 * np.sin(la) ** 2 + 500 * np.cos(lo), dims=dims, coords=coords,
                       attrs={"units": "m2 s-2"})
    return t, u, v, phi


def test_descending_latitude_and_0_to_360_longitude():
    lat_c, lon_c = np.arange(-80.0, 81.0, 2.0), np.arange(-180.0, 180.0, 2.5)
    canonical = advection(*_fields(lat_c, lon_c)[:3])
    lat, lon = lat_c[::-1], np.mod(lon_c, 360.0)
    lon = np.roll(lon, -np.argmin(lon))  # 0 ... 357.5
    t, u, v, phi = _fields(lat, lon)
    result = advection(t, u, v)
    assert list(result["lat"].values) == list(lat) and list(result["lon"].values) == list(lon)
    expected = canonical.assign_coords(lon=np.mod(lon_c, 360.0)).sel(lat=lat, lon=lon)
    np.testing.assert_allclose(result.values, expected.values, rtol=1e-12, atol=1e-15)
    ug, vg = geostrophic_wind(xr.Dataset({"geopotential": phi}))
    ug_c, _ = geostrophic_wind(xr.Dataset({"geopotential": _fields(lat_c, lon_c)[3]}))
    expected_u = ug_c.assign_coords(lon=np.mod(lon_c, 360.0)).sel(lat=lat, lon=lon)
    np.testing.assert_allclose(ug.values, expected_u.values, rtol=1e-12, atol=1e-12, equal_nan=True)
    assert vg.shape == t.shape
