"""From a canonical analysis dataset to the kernel's :class:`FieldSource`.

What belongs here: choosing the variables a trajectory mode needs, deriving those that are
not stored (geostrophic wind, omega from w, potential temperature), and loading one
analysis time at a time as float64 arrays ``(member, level, lat, lon)`` (so dask-backed
datasets are read a slice at a time).

Omega from vertical velocity w (m s-1) uses the hydrostatic relation
``omega = -rho g w = -p g w / (R_d T)`` (Holton and Hakim 2013, eq. 3.44; virtual
temperature effects neglected).
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import DRY_AIR_GAS_CONSTANT, STANDARD_GRAVITY
from parcelcast.trajectories.errors import MissingInputError
from parcelcast.trajectories.integrate import FieldSource
from parcelcast.trajectories.interpolate import GridGeometry

_EPOCH = np.datetime64("1970-01-01T00:00:00", "ns")


def to_seconds(times) -> np.ndarray:
    """datetime64 values as float seconds since 1970-01-01 (UTC)."""
    return (np.asarray(times, dtype="datetime64[ns]") - _EPOCH) / np.timedelta64(1, "s")


def from_seconds(seconds) -> np.ndarray:
    """Inverse of :func:`to_seconds` (NaN becomes NaT)."""
    s = np.asarray(seconds, dtype=np.float64)
    out = np.full(s.shape, np.datetime64("NaT"), dtype="datetime64[ns]")
    ok = np.isfinite(s)
    out[ok] = _EPOCH + np.round(s[ok] * 1e9).astype("int64").astype("timedelta64[ns]")
    return out


def _as_block(da, has_member: bool, has_level: bool) -> np.ndarray:
    """DataArray without time -> float64 (nm, nl, ny, nx)."""
    dims = [d for d in ("member", "level", "lat", "lon") if d in da.dims]
    arr = np.asarray(da.transpose(*dims).values, dtype=np.float64)
    if "member" not in da.dims:
        arr = arr[None]
    if "level" not in da.dims:
        arr = arr[:, None]
    return arr


def build_source(ds, mode: str = "isobaric", wind: str = "actual", samples=(),
                 steady: bool | None = None, periodic_lon: bool | None = None):
    """Wrap a canonical dataset as a :class:`FieldSource` for :func:`integrate`.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis (dims ``member?, time, level?, lat, lon``).
    mode : {"isobaric", "3d", "isentropic"}
    wind : {"actual", "geostrophic"}
        ``geostrophic`` derives the wind from ``geopotential`` with
        :func:`parcelcast.geostrophic.geostrophic_wind` (NaN near the equator, where a
        parcel then stops with ``missing_data``).
    samples : sequence of str
        Dataset variables to interpolate along the paths.
    steady : bool, optional
        Treat a one-time analysis as a steady flow (default: True when there is one time).

    Returns
    -------
    (FieldSource, dict)
        The source and a description (``levels_present``, ``samples``, ``wind``).
    """
    present = set(ds.data_vars)
    if wind == "geostrophic":
        if "geopotential" not in present:
            raise MissingInputError("geostrophic-wind", "geopotential", present)
        from parcelcast.geostrophic import geostrophic_wind

        gw = geostrophic_wind(ds)
        if isinstance(gw, tuple):
            u, v = gw
        else:  # a Dataset
            u, v = gw[list(gw.data_vars)[0]], gw[list(gw.data_vars)[1]]
    elif wind == "actual":
        if not {"u", "v"} <= present:
            raise MissingInputError("actual-wind", "u and v (or --wind geostrophic)", present)
        u, v = ds["u"], ds["v"]
    else:
        raise MissingInputError(f"wind={wind!r}", "wind 'actual' or 'geostrophic'", present)
    has_member = "member" in ds.dims
    has_level = "level" in ds.dims and ds.sizes["level"] > 1
    levels = ds["level"].values.astype(np.float64) if has_level else None
    from parcelcast.grid.earth import radius_of

    geom = GridGeometry.from_coords(ds["lat"].values, ds["lon"].values, levels, periodic_lon,
                                    radius=radius_of(ds))
    extra = {}
    if mode == "3d":
        if "omega" in present:
            extra["omega"] = ds["omega"]
        elif "vertical_velocity" in present and "temperature" in present:
            p = ds["level"]
            extra["omega"] = -p * STANDARD_GRAVITY * ds["vertical_velocity"] / (
                DRY_AIR_GAS_CONSTANT * ds["temperature"])
        else:
            raise MissingInputError("3-D", "omega (or vertical_velocity with temperature)", present)
    if mode == "isentropic" and "temperature" not in present:
        raise MissingInputError("isentropic", "temperature (for potential temperature)", present)
    if "surface_pressure" in present and mode != "isentropic":
        extra["surface_pressure"] = ds["surface_pressure"]
    sample_vars = {}
    for name in samples:
        if name in ("potential_temperature", "geopotential_height"):
            continue
        if name not in present:
            raise MissingInputError("sampling", name, present)
        sample_vars[name] = ds[name]
    times = to_seconds(ds["time"].values)
    if steady is None:
        steady = times.size == 1

    def loader(ti: int) -> dict:
        scal = {}
        for name, da in {**extra, **sample_vars}.items():
            sub = da.isel(time=ti) if "time" in da.dims else da
            scal[name] = _as_block(sub, has_member, has_level)
        if mode == "isentropic":
            from parcelcast.thermo import potential_temperature

            t = _as_block(ds["temperature"].isel(time=ti), has_member, has_level)
            scal["theta"] = potential_temperature(t, levels[None, :, None, None])
        uu = _as_block(u.isel(time=ti), has_member, has_level)
        vv = _as_block(v.isel(time=ti), has_member, has_level)
        return geom.prepare(scal, (uu, vv))

    n_members = ds.sizes["member"] if has_member else 1
    src = FieldSource(geom, times, loader, n_members, bool(steady))
    return src, {"samples": list(sample_vars), "wind": wind, "levels": levels}
