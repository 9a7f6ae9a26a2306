"""The split over a whole record (a season, a decade), in bounded memory, locally or on a
dask.distributed cluster.

Modules, one job each:

* :mod:`~parcelcast.climate.windows`: consecutive windows of a record and blocks of them;
* :mod:`~parcelcast.climate.level`: pressure level or the near-surface level (all surface handling);
* :mod:`~parcelcast.climate.neighbourhood`: the 4 x 4 points and the levels a station needs, cut lazily;
* :mod:`~parcelcast.climate.station`: the split at the station for each window of a block (one task);
* :mod:`~parcelcast.climate.run`: lazy opening, tasks, results in time order;
* :mod:`~parcelcast.climate.scheduler`: local threads or a dask.distributed scheduler;
* :mod:`~parcelcast.climate.summary`: monthly count, mean, spread and advective share;
* :mod:`~parcelcast.climate.output`: streamed CSV / NetCDF;
* :mod:`~parcelcast.climate.plot`: the parts' distribution by month.
"""

from __future__ import annotations

from parcelcast.climate.level import SURFACE, parse_level
from parcelcast.climate.run import open_record, station_rows
from parcelcast.climate.summary import MonthlySummary
from parcelcast.climate.windows import Window, consecutive_windows

__all__ = ["SURFACE", "MonthlySummary", "Window", "climate_split", "consecutive_windows",
           "open_record", "parse_level", "station_rows"]


def climate_split(paths, lat: float, lon: float, level, window_hours: float, wind: str = "actual",
                  scheduler: str | None = None, overrides: dict | None = None, time_chunk: int = 24):
    """The split at a station for every window of the record in ``paths`` (rows, in time order).

    ``scheduler``: address of a dask.distributed scheduler (``tcp://host:8786``), None for
    this machine.  See :func:`parcelcast.climate.run.station_rows` for the rows.
    """
    from parcelcast.budget import check_wind

    check_wind(wind)
    level = parse_level(level)
    ds = open_record(paths, level, wind, overrides, time_chunk)
    return station_rows(ds, lat, lon, level, window_hours, wind, scheduler)
