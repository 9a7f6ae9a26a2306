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


def select_level(ds, level_hpa: float):
    """The slice at pressure level ``level_hpa`` (hPa)."""
    if "level" not in ds.dims:
        raise SelectionError("pressure level", f"{level_hpa:g} hPa",
                             "none (the quantities found have no pressure levels)", _source(ds))
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
