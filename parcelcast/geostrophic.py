"""Geostrophic wind from geopotential on pressure levels.

    u_g = -(1/f) dPhi/dy,    v_g = (1/f) dPhi/dx,    f = 2 Omega sin(lat)

Holton and Hakim (2013), An Introduction to Dynamic Meteorology, 5th ed., eq. 3.2.
Near the equator f -> 0 and the balance no longer describes the flow: values
within :data:`EQUATORIAL_BAND_DEG` of the equator are NaN (stated in the output).
"""

from __future__ import annotations

import numpy as np

#: Half-width (degrees) of the band around the equator where geostrophic winds are masked.
#: Common practice: geostrophic balance is a poor description equatorward of about 10-15 deg.
EQUATORIAL_BAND_DEG = 10.0


def geostrophic_wind_array(geopotential, grid, band_deg: float = EQUATORIAL_BAND_DEG):
    """(u_g, v_g) in m s-1 (earth-relative) from geopotential (m2 s-2) of shape (..., ny, nx)
    on any grid (lat-lon or projected)."""
    phi = np.asarray(geopotential, dtype=np.float64)
    f = grid.coriolis()
    inv_f = np.where(np.abs(grid.latitude_field()) >= band_deg, 1.0 / np.where(f == 0, np.nan, f),
                     np.nan)
    u_g = -grid.ddy(phi) * inv_f
    v_g = grid.ddx(phi) * inv_f
    return u_g, v_g


def geostrophic_wind(ds, grid=None, band_deg: float = EQUATORIAL_BAND_DEG):
    """Geostrophic wind DataArrays (u_g, v_g) from a canonical dataset's ``geopotential``.

    Returns
    -------
    (xarray.DataArray, xarray.DataArray)
        Eastward and northward geostrophic wind, m s-1, NaN within ``band_deg`` of the
        equator and on pole rows.
    """
    import xarray as xr

    from parcelcast.grid import grid_for
    from parcelcast.io.analysis import require
    from parcelcast.units import convert

    require(ds, "geopotential", purpose="the geostrophic wind")
    phi = ds["geopotential"]
    zero, one = convert([0.0, 1.0], phi.attrs.get("units"), "geopotential", "geopotential")
    if (zero, one) != (0.0, 1.0):
        phi = phi * one
    restore = lambda result: result  # noqa: E731
    if grid is None:  # any latitude/longitude order in, the same order out
        from parcelcast.grid.latlon import in_grid_order

        (phi,), restore = in_grid_order(phi)
        grid = grid_for(phi)
    u_g, v_g = xr.apply_ufunc(
        geostrophic_wind_array, phi,
        kwargs={"grid": grid, "band_deg": band_deg},
        input_core_dims=[list(grid.dims)],
        output_core_dims=[list(grid.dims), list(grid.dims)],
        dask="parallelized", output_dtypes=[np.float64, np.float64],
    )
    note = f"geostrophic wind from geopotential; NaN within {band_deg:g} deg of the equator"
    for da, name, std in ((u_g, "u", "eastward"), (v_g, "v", "northward")):
        # CF standard names of the geostrophic wind (CF standard name table)
        da.attrs = {"units": "m s-1", "standard_name": f"geostrophic_{std}_wind",
                    "long_name": f"{std} geostrophic wind", "comment": note}
        da.name = name
    dims = [d for d in phi.dims]
    return restore(u_g.transpose(*dims)), restore(v_g.transpose(*dims))
