"""Write a climate run's windows as they come: CSV or CF NetCDF, whole or not at all.

Rows are appended to a temporary file beside the target as each block arrives and the
file is renamed onto the target only when the run has finished (``io/atomic.py``); an
interrupted run leaves no partial file behind.
"""

from __future__ import annotations

import contextlib
from pathlib import Path

import numpy as np

from parcelcast.climate.station import PARTS
from parcelcast.errors import ParcelcastError

_LONG_NAMES = {
    "observed_change_K": "local temperature change over the window",
    "advective_K": "time integral of horizontal advection -V.grad T over the window",
    "vertical_K": "time integral of omega * static stability over the window",
    "residual_K": "observed change minus the other parts (diabatic heating and errors)",
}


@contextlib.contextmanager
def window_writer(target, attrs: dict):
    """Yield ``write(row)`` appending one window to ``target`` (``.csv`` or ``.nc``)."""
    from parcelcast.io.atomic import atomic_path

    target = Path(target)
    suffix = target.suffix.lower()
    if suffix not in (".csv", ".nc"):
        raise ParcelcastError(f"--out {target}: expected a .csv or .nc file name")
    with atomic_path(target) as tmp:
        opener = _csv_writer if suffix == ".csv" else _netcdf_writer
        with opener(tmp, attrs) as write:
            yield write


@contextlib.contextmanager
def _csv_writer(path: Path, attrs: dict):
    import csv

    from parcelcast.cli._common import iso_utc

    with open(path, "w", newline="", encoding="utf-8") as handle:
        for key, value in attrs.items():
            handle.write(f"# {key}: {value}\n")
        writer = csv.writer(handle)
        writer.writerow(["start", "end", *PARTS, "missing"])

        def write(row: dict) -> None:
            writer.writerow([iso_utc(row["start"]), iso_utc(row["end"]),
                             *("" if row[p] is None else repr(float(row[p])) for p in PARTS),
                             "; ".join(f"{k}: {v}" for k, v in row["missing"].items())])

        yield write


@contextlib.contextmanager
def _netcdf_writer(path: Path, attrs: dict):
    import netCDF4

    with netCDF4.Dataset(path, "w", format="NETCDF4") as nc:
        time, bounds = define_window_time(nc)
        parts = {}
        for p in PARTS:
            var = nc.createVariable(p.removesuffix("_K"), "f8", ("time",), fill_value=np.nan)
            var.setncatts({"units": "K", "long_name": _LONG_NAMES[p],
                           "cell_methods": "time: sum (integral over the window)"})
            parts[p] = var
        reason = nc.createVariable("missing_reason", str, ("time",))
        reason.long_name = "why a part is missing in this window (empty when none is)"
        nc.setncatts({"Conventions": "CF-1.10", **{k: str(v) for k, v in attrs.items()}})

        def write(row: dict) -> None:
            k = append_window_time(time, bounds, row["start"], row["end"])
            for p in PARTS:
                parts[p][k] = np.nan if row[p] is None else float(row[p])
            reason[k] = "; ".join(f"{a}: {b}" for a, b in row["missing"].items())

        yield write


def define_window_time(nc):
    """The unlimited CF ``time`` (start of each window) and its ``time_bounds`` in ``nc``."""
    nc.createDimension("time", None)
    nc.createDimension("bounds", 2)
    time = nc.createVariable("time", "f8", ("time",))
    time.setncatts({"standard_name": "time", "units": "hours since 1970-01-01 00:00:00",
                    "calendar": "proleptic_gregorian", "bounds": "time_bounds",
                    "long_name": "start of the window (UTC)"})
    return time, nc.createVariable("time_bounds", "f8", ("time", "bounds"))


def append_window_time(time, bounds, start, end) -> int:
    """Append one window's start and bounds; returns its index along ``time``."""
    k = len(time)
    hours = [float((np.datetime64(t, "ns") - np.datetime64("1970-01-01T00:00", "ns"))
                   / np.timedelta64(1, "h")) for t in (start, end)]
    time[k] = hours[0]
    bounds[k, :] = hours
    return k
