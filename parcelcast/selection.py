"""Choosing a level, a time and a member from a canonical dataset, with errors that list what exists."""

from __future__ import annotations

import numpy as np

from parcelcast.errors import SelectionError


def _source(ds) -> str:
    return ds.attrs.get("source_files", "")


def available_times(ds) -> str:
    if "time" not in ds.dims:
        return "(the file has no time coordinate)"
    times = [str(t)[:16].replace("T", " ") for t in ds["time"].values]
    if len(times) > 12:
        times = times[:5] + ["..."] + times[-5:]
    return ", ".join(times) + " UTC"


def select_time(ds, when=None, default: str = "last"):
    """The slice at valid time ``when`` (numpy datetime64, UTC); ``None`` picks ``default``.

    An exact match is required (no silent interpolation between analysis times).
    """
    if "time" not in ds.dims:
        if when is not None:
            raise SelectionError("time", str(when)[:16], available_times(ds), _source(ds))
        return ds
    if when is None:
        return ds.isel(time=-1 if default == "last" else 0)
    times = ds["time"].values
    hit = np.flatnonzero(times == np.datetime64(when, "ns"))
    if hit.size == 0:
        raise SelectionError("time", str(np.datetime64(when, "m")).replace("T", " ") + " UTC",
                             available_times(ds), _source(ds))
    return ds.isel(time=int(hit[0]))


#: the near-surface level: 2-m temperature advected by the 10-m wind (``io/roles.py``)
SURFACE = "surface"


def is_surface(level) -> bool:
    """True for the near-surface level (``"surface"``), False for a pressure in hPa."""
    return isinstance(level, str) and level == SURFACE


def level_label(level) -> str:
    """The level for people: ``"850 hPa"`` or ``"surface (2-m temperature, 10-m wind)"``."""
    return "surface (2-m temperature, 10-m wind)" if is_surface(level) else f"{level:g} hPa"


def level_phrase(level) -> str:
    """The level after "at" in a sentence: ``"850 hPa"``, or ``"the surface (2-m temperature,
    10-m wind)"``."""
    return f"the {level_label(level)}" if is_surface(level) else level_label(level)


def level_json(level) -> dict:
    """``level`` and ``level_hPa`` for JSON output (``level_hPa`` null at the surface)."""
    if is_surface(level):
        return {"level": SURFACE, "level_hPa": None}
    return {"level": f"{level:g} hPa", "level_hPa": float(level)}


def check_surface_wind(wind: str) -> None:
    """Refuse the geostrophic wind at the surface: it comes from geopotential on pressure
    levels, and friction makes the 10-m wind far from geostrophic anyway."""
    if wind != "actual":
        from parcelcast.errors import UsageError

        raise UsageError(f"the {wind} wind is not available at the surface level: it needs "
                         "geopotential on pressure levels; the surface level uses the "
                         "10-m wind (--wind actual)")


def roles_at_level(roles, level) -> list[str]:
    """The roles to read for ``roles`` at ``level``: at the surface each pressure-level
    role with a near-surface counterpart becomes it (temperature -> 2-m temperature, u, v
    -> 10-m wind) and the others are left out (there is no omega or geopotential at 2 m)."""
    from parcelcast.io.roles import NEAR_SURFACE

    if not is_surface(level):
        return list(roles)
    return sorted({NEAR_SURFACE[r] for r in roles if r in NEAR_SURFACE})


def select_level(ds, level_hpa):
    """The slice at pressure level ``level_hpa`` (hPa), or the near-surface level.

    ``level_hpa="surface"``: the 2-m temperature and 10-m wind under the names of their
    pressure-level counterparts (``temperature``, ``u``, ``v``), no ``level`` dimension,
    and ``attrs["level"] = "surface"`` (calling it again returns the same dataset).
    """
    if is_surface(level_hpa):
        return _near_surface(ds)
    if "level" not in ds.dims:
        near = [r for r in ("near_surface_temperature", "near_surface_u") if r in ds.data_vars]
        hint = "; near-surface fields exist: use the surface level" if near else ""
        raise SelectionError("pressure level", f"{level_hpa:g} hPa",
                             f"none (the quantities found have no pressure levels{hint})", _source(ds))
    levels = ds["level"].values
    hit = np.flatnonzero(np.isclose(levels, level_hpa * 100.0, rtol=0, atol=1.0))
    if hit.size == 0:
        raise SelectionError("pressure level", f"{level_hpa:g} hPa",
                             ", ".join(f"{p / 100:g}" for p in levels) + " hPa", _source(ds))
    return ds.isel(level=int(hit[0]))


def member_mean(da):
    """Mean over ensemble members; a member that is missing makes the mean missing.

    (xarray's default would skip NaN members silently: missing values must stay missing.)
    Without a member dimension the input is returned unchanged.
    """
    return da.mean("member", skipna=False) if "member" in da.dims else da


def _near_surface(ds):
    """2-m temperature and 10-m wind as the canonical ``temperature``, ``u``, ``v``."""
    import xarray as xr

    from parcelcast.io.roles import NEAR_SURFACE

    if ds.attrs.get("level") == SURFACE:
        return ds
    found = {name: ds[role].rename(name) for name, role in NEAR_SURFACE.items()
             if role in ds.data_vars}
    if not found:
        have = (", ".join(f"{p / 100:g}" for p in ds["level"].values) + " hPa"
                if "level" in ds.dims else "none")
        raise SelectionError("level", "surface (2-m temperature and 10-m wind)",
                             f"pressure levels {have}; no near-surface field was found "
                             "(GRIB 2t/10u/10v, NetCDF t2m/u10/v10 or CF standard names with "
                             "a height of 2 m / 10 m)", _source(ds))
    out = xr.Dataset(found)
    out.attrs = dict(ds.attrs)
    out.attrs["level"] = SURFACE
    return out
