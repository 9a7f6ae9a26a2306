"""A climate run: open lazily, cut out what is needed, compute window blocks as tasks, stream.

Memory is bounded by the blocks in flight, never by the record's length: the files are
opened dask-backed (chunks along time, whole horizontal slabs), the station's 4 x 4
neighbourhood and the needed levels are cut out lazily before any computation, and
results are handed back block by block, in time order, as they are computed.
"""

from __future__ import annotations

from collections.abc import Iterator

from parcelcast.climate.level import level_view
from parcelcast.climate.neighbourhood import level_neighbourhood, neighbourhood
from parcelcast.climate.windows import blocks, bounding_slice, consecutive_windows, usual_step

#: analysis times per dask chunk when the caller gives none.  A chunk is read and converted
#: whole (whole horizontal slabs) before the cut, so it sets the memory per worker thread:
#: 8 times for a station, 1 for maps (a map window then holds just its two times).
STATION_TIME_CHUNK = 8
MAPS_TIME_CHUNK = 1
#: analysis times one station task covers: its chunks are read and cut one by one, and only
#: the 4 x 4 neighbourhood of all of them is held, so a task can span many chunks
TIMES_PER_TASK = 64


#: netCDF-4 chunk cache (bytes per variable and open file) during a climate run.  The record
#: is read once, in time order, so a cache gains nothing; the library default (64 MB per
#: variable, for every file xarray keeps open) would make memory grow with the files read.
NETCDF_CHUNK_CACHE_BYTES = 4 * 2**20


def small_netcdf_chunk_cache() -> None:
    """Set :data:`NETCDF_CHUNK_CACHE_BYTES` for files opened from now on in this process
    (called where the record is opened and in every task, so workers do it too)."""
    import netCDF4

    netCDF4.set_chunk_cache(NETCDF_CHUNK_CACHE_BYTES, 101, 0.75)


def open_record(paths, level, wind: str = "actual", overrides=None, time_chunk=STATION_TIME_CHUNK):
    """Open analysis files lazily (dask-backed, ``time_chunk`` times per chunk) with the
    roles the split at ``level`` needs."""
    from parcelcast.climate.level import roles_needed
    from parcelcast.io.analysis import open_analysis

    small_netcdf_chunk_cache()

    ds = open_analysis(paths, overrides, roles=roles_needed(level, wind),
                       chunks={"time": int(time_chunk)})
    if not any(hasattr(v.data, "dask") for v in ds.data_vars.values()):  # GRIB opens lazily but not chunked
        ds = ds.chunk({"time": int(time_chunk)})
    return ds


def station_rows(ds, lat: float, lon: float, level, window_hours: float, wind: str = "actual",
                 scheduler: str | None = None, windows_per_task: int | None = None) -> Iterator[dict]:
    """The split at a station for every consecutive window of the record, in time order.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis, in memory or dask-backed (:func:`open_record`).
    lat, lon : float
        Station, degrees north/east.
    level : float or "surface"
        Pressure level in hPa, or the near-surface level.
    window_hours : float
        Length of each window (h); windows follow each other from the first analysis time.
    wind : {"actual", "geostrophic"}
    scheduler : str, optional
        Address of a dask.distributed scheduler; None runs on local threads.
    windows_per_task : int, optional
        Windows computed by one task (default: those spanning :data:`TIMES_PER_TASK`
        analysis times).

    Yields
    ------
    dict
        ``start``, ``end`` (datetime64, UTC), ``observed_change_K``, ``advective_K``,
        ``vertical_K``, ``residual_K`` (K over the window, or None) and ``missing``
        (part -> reason).
    """
    import dask

    from parcelcast.climate.station import block_rows

    view = level_view(ds, level, wind)
    box = level_neighbourhood(neighbourhood(view.ds, lat, lon), view.level_hpa)
    times = box["time"].values
    windows = consecutive_windows(times, window_hours)
    step = usual_step(times)
    per_task = windows_per_task or _windows_per_task(window_hours, step)
    task = dask.delayed(block_rows, pure=True)

    def tasks():
        for group in blocks(windows, per_task):
            part = box.isel(time=bounding_slice(times, group[0], group[-1]))
            yield task(part, lat, lon, view.level_hpa, wind, group, view.missing, step)

    for rows in in_order(tasks(), scheduler):
        yield from rows


def _windows_per_task(window_hours: float, step) -> int:
    """Windows spanning about :data:`TIMES_PER_TASK` analysis times (at least one)."""
    import numpy as np

    return max(int(TIMES_PER_TASK * (step / np.timedelta64(1, "h")) // window_hours), 1)


def in_order(tasks: Iterator, scheduler: str | None) -> Iterator:
    """Compute delayed tasks a batch at a time (one per worker thread: each task's chunks are
    shared among the threads too) and yield their results in the order of ``tasks``."""
    import dask

    from parcelcast.climate.scheduler import tasks_run_on

    with tasks_run_on(scheduler) as in_flight:
        batch = []
        for t in tasks:
            batch.append(t)
            if len(batch) >= in_flight:
                yield from dask.compute(*batch)
                batch = []
        if batch:
            yield from dask.compute(*batch)
