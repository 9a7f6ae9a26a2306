"""The split over a whole record (a season, a decade), in bounded memory, locally or on a
dask.distributed cluster.

Modules, one job each:

* :mod:`~parcelcast.climate.windows`: consecutive windows of a record and blocks of them;
* :mod:`~parcelcast.climate.level`: pressure level or the near-surface level (all surface handling);
* :mod:`~parcelcast.climate.neighbourhood`: the 4 x 4 points and the levels a station needs, cut lazily;
* :mod:`~parcelcast.climate.station`: the split at the station for each window of a block (one task);
* :mod:`~parcelcast.climate.fields`: the split maps over the whole area, window by window, streamed;
* :mod:`~parcelcast.climate.run`: lazy opening, tasks, results in time order;
* :mod:`~parcelcast.climate.scheduler`: local threads or a dask.distributed scheduler;
* :mod:`~parcelcast.climate.summary`: monthly count, mean, spread and advective share;
* :mod:`~parcelcast.climate.output`: streamed CSV / NetCDF;
* :mod:`~parcelcast.climate.plot`: the parts' distribution by month.
"""

from __future__ import annotations

import importlib

from parcelcast.climate.level import SURFACE, parse_level

__all__ = ["SURFACE", "MonthlySummary", "Window", "climate_maps", "climate_split", "consecutive_windows",
           "open_record", "parse_level", "station_rows"]

#: public names imported on first use (the command line parses its options without numpy)
_LAZY = {"MonthlySummary": "summary", "Window": "windows", "consecutive_windows": "windows",
         "open_record": "run", "station_rows": "run"}


def __getattr__(name: str):
    if name in _LAZY:
        return getattr(importlib.import_module(f"parcelcast.climate.{_LAZY[name]}"), name)
    raise AttributeError(f"module 'parcelcast.climate' has no attribute {name!r}")


def climate_split(paths, lat: float, lon: float, level, window_hours: float, wind: str = "actual",
                  scheduler: str | None = None, overrides: dict | None = None,
                  time_chunk: int | None = None):
    """The split at a station for every window of the record in ``paths`` (rows, in time order).

    ``scheduler``: address of a dask.distributed scheduler (``tcp://host:8786``), None for
    this machine.  See :func:`parcelcast.climate.run.station_rows` for the rows.
    """
    from parcelcast.budget import check_wind
    from parcelcast.climate.run import STATION_TIME_CHUNK, open_record, station_rows

    check_wind(wind)
    level = parse_level(level)
    ds = open_record(paths, level, wind, overrides, time_chunk or STATION_TIME_CHUNK)
    return station_rows(ds, lat, lon, level, window_hours, wind, scheduler)


def climate_maps(paths, level, window_hours: float, wind: str = "actual",
                 scheduler: str | None = None, overrides: dict | None = None,
                 time_chunk: int | None = None):
    """The split maps over the whole area for every window of the record (time order); see
    :func:`parcelcast.climate.fields.field_windows`."""
    from parcelcast.budget import check_wind
    from parcelcast.climate.fields import field_windows
    from parcelcast.climate.run import MAPS_TIME_CHUNK, open_record

    check_wind(wind)
    level = parse_level(level)
    ds = open_record(paths, level, wind, overrides, time_chunk or MAPS_TIME_CHUNK)
    return field_windows(ds, level, window_hours, wind, scheduler)
