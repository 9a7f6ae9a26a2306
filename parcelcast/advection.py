"""Horizontal advection -V.grad(s) of any scalar on the sphere.

Sign convention: the result is ``-(u ds/dx + v ds/dy)``; for temperature it is
positive for warm advection (warmer air carried in).  Units: those of the
scalar per second (K s-1 for temperature).  Missing values (NaN) in any input
make the result NaN at every point whose stencil touches them; pole rows are
NaN (the eastward derivative is undefined there).

Three layers (see DEVELOPERS.md): a kernel on float64 arrays owned by the grid
(``grid.fill_advection``: compiled for lat-lon grids, numpy for projected grids;
small lat-lon fields take the numpy reference stencils, quicker than loading the kernel),
:func:`advection_array` (numpy, shapes ``(..., ny, nx)``) and :func:`advection`
(xarray, unit-checked, dask-friendly through ``apply_ufunc``).
"""

from __future__ import annotations

import numpy as np


def advection_array(scalar, u, v, grid) -> np.ndarray:
    """-(u ds/dx + v ds/dy) on float64 arrays of shape (..., ny, nx).

    Parameters
    ----------
    scalar : ndarray (..., ny, nx)
        The advected quantity (any unit X).
    u, v : ndarray (..., ny, nx)
        Eastward and northward wind, m s-1 (broadcastable to ``scalar``).
    grid : LatLonGrid or ProjectedGrid
        Geometry with ``grid.shape == (ny, nx)``; winds are earth-relative (east, north).

    Returns
    -------
    ndarray (..., ny, nx)
        Advection in X s-1, positive where higher values are carried in.

    Example
    -------
    >>> import numpy as np
    >>> g = LatLonGrid(np.arange(-10., 11.), np.arange(0., 21.), periodic_lon=False)
    >>> t = np.broadcast_to(-0.01 * np.arange(21.)[None, :], g.shape)  # colder to the east
    >>> adv = advection_array(t, np.full(g.shape, 10.), np.zeros(g.shape), g)
    >>> bool(adv[10, 10] < 0)          # westerly wind brings colder air: cold advection
    True
    """
    s = np.asarray(scalar, dtype=np.float64)
    shape = np.broadcast_shapes(s.shape, np.shape(u), np.shape(v))
    s, u, v = (np.ascontiguousarray(np.broadcast_to(np.asarray(a, dtype=np.float64), shape))
               for a in (s, u, v))
    if shape[-2:] != grid.shape:
        raise ValueError(f"field shape {shape[-2:]} does not match the grid {grid.shape}")
    if _numpy_is_quicker(grid, s.size):
        out = -(u * grid.ddx(s) + v * grid.ddy(s))
        out[np.isnan(s)] = np.nan  # centred stencils skip their own point: keep it missing
        return out
    out = np.empty(shape, dtype=np.float64)
    grid.fill_advection(s.reshape(-1, *grid.shape), u.reshape(-1, *grid.shape),
                        v.reshape(-1, *grid.shape), out.reshape(-1, *grid.shape))
    return out


#: Below this many points (all fields of one call together) the numpy reference stencils
#: (``LatLonGrid.ddx``/``ddy``, 12-22 ns a point here) finish long before the compiled kernel
#: has loaded (about 0.4 s with numba's cache warm): a 0.25-degree global field is 1.04 million
#: points.  Both give the same answer (tests/test_advection_dispatch.py).
NUMPY_BELOW_POINTS = 2_000_000


def _numpy_is_quicker(grid, points: int) -> bool:
    from parcelcast.grid.latlon import LatLonGrid

    return isinstance(grid, LatLonGrid) and points < NUMPY_BELOW_POINTS


def advection(scalar, u, v, grid=None):
    """Horizontal advection -V.grad(s) of a canonical DataArray, with units checked.

    Parameters
    ----------
    scalar : xarray.DataArray (..., lat, lon) or (..., y, x)
        Any scalar with a ``units`` attribute (temperature in any unit gives K s-1).
        Latitude and longitude may come in any order (0..360 or -180..180, north to
        south or south to north); the result has the input's order.
    u, v : xarray.DataArray (..., lat, lon)
        Eastward/northward wind with ``units`` of speed (converted to m s-1).
    grid : LatLonGrid or ProjectedGrid, optional
        Geometry; by default built from the coordinates (:func:`parcelcast.grid.grid_for`).

    Returns
    -------
    xarray.DataArray
        Advection in units of the scalar per second, with CF metadata
        (``tendency_of_air_temperature_due_to_advection`` for temperature).
        Dask-backed inputs give a lazy result (computed per lat-lon slab).
    """
    import xarray as xr

    from parcelcast.grid import grid_for
    from parcelcast.grid.latlon import in_grid_order
    from parcelcast.units import convert

    (scalar, u, v), restore = (scalar, u, v), (lambda r: r)
    if grid is None:  # any latitude/longitude order in, the same order out
        (scalar, u, v), restore = in_grid_order(scalar, u, v)
        grid = grid_for(scalar)
    scalar_units = scalar.attrs.get("units")
    if not scalar_units:
        from parcelcast.errors import UnitsError

        raise UnitsError(str(scalar.name or "scalar"), None, "any stated unit")
    is_temperature = scalar.attrs.get("standard_name") in ("air_temperature", "virtual_temperature") \
        or scalar.name in ("temperature", "near_surface_temperature", "layer_mean_temperature")
    if is_temperature:  # any temperature unit: gradients are temperature differences, in K
        zero, one = convert([0.0, 1.0], scalar_units, "temperature", str(scalar.name or "temperature"))
        if one - zero != 1.0:
            scalar = scalar * (one - zero)  # the slope of the conversion: 1 degF = 5/9 K
    winds = []
    for name, wind in (("u", u), ("v", v)):
        zero, one = convert([0.0, 1.0], wind.attrs.get("units"), "speed", f"wind component {name}")
        winds.append(wind if (zero, one) == (0.0, 1.0) else wind * one)
    result = xr.apply_ufunc(
        advection_array, scalar, winds[0], winds[1],
        kwargs={"grid": grid},
        input_core_dims=[list(grid.dims)] * 3,
        output_core_dims=[list(grid.dims)],
        dask="parallelized",
        output_dtypes=[np.float64],
    )
    result = result.transpose(*[d for d in scalar.dims if d in result.dims])
    if is_temperature:
        result.attrs = {
            "standard_name": "tendency_of_air_temperature_due_to_advection",
            "long_name": "horizontal temperature advection (-V.grad T), positive = warm advection",
            "units": "K s-1",
        }
        result.name = "temperature_advection"
    else:
        result.attrs = {
            "long_name": f"horizontal advection of {scalar.attrs.get('long_name', scalar.name)} "
            "(-V.grad s)",
            "units": f"({scalar_units}) s-1",
        }
        result.name = f"{scalar.name}_advection"
    result.attrs["wind"] = u.attrs.get("long_name", "wind")
    result.attrs["pole_rows"] = "NaN (eastward derivative undefined)" if grid.has_pole_rows else "none"
    return restore(result)


def advection_on_level(ds, level_hpa: float, time=None, wind: str = "actual"):
    """Temperature, wind and temperature advection on one pressure level at one time.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis (needs ``temperature`` and ``u``/``v`` for ``wind="actual"``,
        ``temperature`` and ``geopotential`` for ``wind="geostrophic"``).
    level_hpa : float or "surface"
        Pressure level in hPa, or ``"surface"``: the 2-m temperature advected by the
        10-m wind (``selection.select_level``; actual wind only).
    time : numpy.datetime64, optional
        Valid time (UTC); default the latest analysis time.
    wind : {"actual", "geostrophic"}

    Returns
    -------
    xarray.Dataset
        ``temperature`` (K), ``u``/``v`` (m s-1), ``temperature_advection`` (K s-1,
        positive = warm advection); member dimension kept if present.
    """
    import xarray as xr

    from parcelcast.io.analysis import require
    from parcelcast.selection import check_surface_wind, is_surface, select_level, select_time

    if wind not in ("actual", "geostrophic"):
        raise ValueError(f"wind must be 'actual' or 'geostrophic', not {wind!r}")
    if is_surface(level_hpa):
        check_surface_wind(wind)
        ds = select_level(ds, level_hpa)  # 2-m temperature, 10-m wind as temperature, u, v
    needed = ("temperature", "u", "v") if wind == "actual" else ("temperature", "geopotential")
    require(ds, *needed, purpose=f"temperature advection with the {wind} wind")
    ground_fields = [n for n in ("surface_pressure", "orography", "geopotential")
                     if n in ds.data_vars and n not in needed]  # for parcelcast.ground
    sliced = select_level(select_time(ds[list(needed) + ground_fields], time), level_hpa)
    _check_same_dims(sliced, needed)
    if wind == "actual":
        u, v = sliced["u"], sliced["v"]
    else:
        from parcelcast.geostrophic import geostrophic_wind

        u, v = geostrophic_wind(sliced)
    adv = advection(sliced["temperature"], u, v)
    adv.attrs["wind"] = wind
    out = xr.Dataset({"temperature": sliced["temperature"], "u": u, "v": v,
                      "temperature_advection": adv})
    out = _mask_below_ground(out, sliced)
    out.attrs = {**{k: ds.attrs[k] for k in ("source_files", "Conventions") if k in ds.attrs},
                 **out.attrs}
    out.attrs["wind"] = wind
    out.attrs["missing_points"] = int(out["temperature_advection"].isnull().sum())
    out.attrs.update(_missing_attrs(out, sliced, needed, wind))
    return out


def _check_same_dims(sliced, names) -> None:
    """The fields combined on the level must share their dimensions (a wind with a dimension
    the temperature lacks, such as a second height, has no one value to advect with)."""
    from parcelcast.errors import GridError

    dims = {name: sliced[name].dims for name in names}
    if len({frozenset(d) for d in dims.values()}) > 1:
        found = "; ".join(f"{name} ({', '.join(d)})" for name, d in dims.items())
        raise GridError(f"{sliced.attrs.get('source_files', 'input')}: the fields of the "
                        f"advection do not share their dimensions: {found}")


def _mask_below_ground(out, sliced):
    """The level's fields NaN where the level lies below the ground (see ``parcelcast.ground``);
    the surface pressure travels along for the reason given at a point."""
    from parcelcast.ground import below_ground, mask_below_ground

    mask, method = below_ground(sliced)
    if "surface_pressure" in sliced.data_vars:
        out["surface_pressure"] = sliced["surface_pressure"]
    return mask_below_ground(out, mask, method)


def _missing_attrs(out, sliced, needed, wind) -> dict:
    """Counts of missing grid points of the advection by reason: the attribute
    ``missing_by_reason``, JSON text ``{reason: count}`` (so the fields still write to NetCDF)."""
    import json

    import numpy as np

    from parcelcast import missing
    from parcelcast.geostrophic import EQUATORIAL_BAND_DEG
    from parcelcast.ground import BELOW_GROUND

    adv = out["temperature_advection"]
    lat = adv["lat"]
    causes = [(missing.POLE_ROWS, np.abs(lat) >= 90.0 - 1e-6)]
    if wind == "geostrophic":
        causes.append((missing.EQUATORIAL_BAND, np.abs(lat) < EQUATORIAL_BAND_DEG))
    if "below_ground" in out.data_vars:
        causes.append((BELOW_GROUND, out["below_ground"]))
    in_file = sliced[needed[0]].isnull()
    for name in needed[1:]:
        in_file = in_file | sliced[name].isnull()
    causes.append((missing.MISSING_IN_FILE, in_file))
    dims = tuple(d for d in adv.dims if d in ("lat", "lon", "y", "x"))
    counts = missing.missing_by_reason(adv, causes, dims)
    return {"missing_by_reason": json.dumps(counts), "missing_reasons": missing.reasons_text(counts)}
