"""The split as maps over the whole analysis area, for every window of a record, streamed.

One task per window: it reads the window's analysis times (whole horizontal slabs, only
the levels the split needs) and runs :func:`parcelcast.budget.split_fields` on them; the
maps are appended to a NetCDF file as they arrive.  Memory holds the windows in flight
(about one per worker thread), whatever the record's length.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from pathlib import Path

import numpy as np

from parcelcast.climate.level import level_view
from parcelcast.climate.output import append_window_time, define_window_time
from parcelcast.climate.neighbourhood import level_neighbourhood
from parcelcast.climate.windows import bounding_slice, consecutive_windows, gap_reason, usual_step

PART_NAMES = ("observed_change", "advective", "vertical", "residual")


def window_fields(block, level_hpa: float, start, end, wind: str):
    """The split maps of one window, computed in memory (one task)."""
    from parcelcast.budget import split_fields
    from parcelcast.climate.run import small_netcdf_chunk_cache

    small_netcdf_chunk_cache()  # for files this worker opens from now on
    return split_fields(block.load(), level_hpa, start, end, wind)


def field_windows(ds, level, window_hours: float, wind: str = "actual",
                  scheduler: str | None = None) -> Iterator:
    """Split maps (``xarray.Dataset`` of ``observed_change``, ``advective``, ``vertical``
    where omega exists, ``residual``; K) for every window, in time order.  A window over a
    gap in the analysis times is skipped, its ``attrs["missing"]`` saying why."""
    import dask

    from parcelcast.climate.run import in_order

    view = level_view(ds, level, wind)
    if "advective_K" in view.missing:
        from parcelcast.errors import ParcelcastError

        raise ParcelcastError(f"split maps need the advective part: {view.missing['advective_K']}")
    cut = level_neighbourhood(view.ds, view.level_hpa)
    times = cut["time"].values
    windows = consecutive_windows(times, window_hours)
    step = usual_step(times)
    task = dask.delayed(window_fields, pure=True)

    def tasks():
        for w in windows:
            gap = gap_reason(times, w, step)
            if gap:
                yield dask.delayed(_skipped)(w.start, w.end, gap)
            else:
                yield task(cut.isel(time=bounding_slice(times, w, w)), view.level_hpa,
                           w.start, w.end, wind)

    yield from in_order(tasks(), scheduler)


def _skipped(start, end, reason):
    import xarray as xr

    return xr.Dataset(attrs={"start": str(start)[:19], "end": str(end)[:19], "missing": reason})


@contextlib.contextmanager
def maps_writer(target, attrs: dict):
    """Yield ``write(maps)`` appending one window's maps to the NetCDF file ``target``
    (written whole or not at all: a temporary file renamed at the end)."""
    import netCDF4

    from parcelcast.io.atomic import atomic_path

    target = Path(target)
    if target.suffix.lower() != ".nc":
        from parcelcast.errors import ParcelcastError

        raise ParcelcastError(f"--out {target}: split maps are written to a .nc file")
    with atomic_path(target) as tmp, netCDF4.Dataset(tmp, "w", format="NETCDF4") as nc:
        state: dict = {}

        def write(maps) -> None:
            if "observed_change" not in maps:
                return  # a skipped window (gap): said in the command's output
            if not state:
                state.update(_define(nc, maps, attrs))
            k = append_window_time(state["time"], state["bounds"], maps.attrs["start"],
                                   maps.attrs["end"])
            for name in PART_NAMES:
                if name in maps:
                    state[name][k, ...] = maps[name].values
        yield write


def _define(nc, maps, attrs: dict) -> dict:
    horizontal = list(maps["observed_change"].dims)
    out = dict(zip(("time", "bounds"), define_window_time(nc)))
    for dim in horizontal:
        nc.createDimension(dim, maps.sizes[dim])
        var = nc.createVariable(dim, maps[dim].dtype, (dim,))
        var[:] = maps[dim].values
        var.setncatts(maps[dim].attrs)
    for name in PART_NAMES:
        if name in maps:
            chunks = (1, *[maps.sizes[d] for d in horizontal])
            var = nc.createVariable(name, "f4", ("time", *horizontal), fill_value=np.float32(np.nan),
                                    chunksizes=chunks)
            var.setncatts({**maps[name].attrs, "cell_methods": "time: sum (integral over the window)"})
            out[name] = var
    nc.setncatts({"Conventions": "CF-1.10", **{k: str(v) for k, v in attrs.items()},
                  "time_integration": maps.attrs.get("time_integration", "")})
    return out

