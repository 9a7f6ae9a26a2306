"""The one writer of NetCDF files: every file parcelcast writes is CF-1.11 through here.

What belongs here: turning a result dataset into a file other people's tools accept
(CF Conventions 1.11, checked by the IOOS compliance-checker in ``tests/test_cf_output.py``):

* global attributes ``Conventions``, ``title``, ``history`` (a dated line naming the parcelcast
  version and the command, prepended to any history the inputs had), ``source``, ``comment``
  (guidance, not an official forecast);
* times as CF-encoded numbers (``seconds since 1970-01-01 00:00:00``, ``standard`` calendar,
  float64), never int64 nanoseconds (CF 1.11 section 4.4);
* no ``_FillValue`` on coordinate variables (CF section 2.5.1); missing data values as NaN
  with ``_FillValue`` NaN; integers as 32-bit or narrower (int64 is refused by CF before 1.9);
  booleans as 0/1 bytes with ``flag_values`` (section 3.5);
* a projected grid's ``crs`` coordinate as a CF grid-mapping variable (section 5.6).

Written atomically (:func:`parcelcast.io.atomic.atomic_path`).  Trajectories get their
chapter-9 layout first (:func:`parcelcast.trajectories.output.to_cf_dsg`).
"""

from __future__ import annotations

import sys
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import xarray as xr

from parcelcast.io.atomic import atomic_path

CONVENTIONS = "CF-1.11"
TIME_UNITS = "seconds since 1970-01-01 00:00:00"
GUIDANCE = "Guidance for trained forecasters, not an official forecast or warning."


def history_line(command: list[str] | None = None) -> str:
    """``2026-03-14T06:00:00Z parcelcast 0.1.0: parcelcast advect ...`` (the CLI's arguments)."""
    from parcelcast import __version__

    words = command if command is not None else _command_line()
    stamp = datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    return f"{stamp} parcelcast {__version__}: {' '.join(words)}"


def _command_line() -> list[str]:
    argv = list(sys.argv)
    if argv and Path(argv[0]).name in ("parcelcast", "__main__.py", "-c"):
        return ["parcelcast", *argv[1:]]
    return ["Python API"]


def prepare(ds: xr.Dataset, title: str) -> tuple[xr.Dataset, dict]:
    """A CF-clean copy of ``ds`` and the NetCDF encoding to write it with (``ds`` unchanged)."""
    from parcelcast import __version__

    out = ds.copy()
    for name in list(out.variables):
        out[name].encoding = {}
    earlier = str(ds.attrs.get("history", "")).strip()
    out.attrs = {k: _attr(v) for k, v in ds.attrs.items() if v is not None}
    out.attrs.update({
        "Conventions": CONVENTIONS,
        "title": title,
        "history": history_line() + (f"\n{earlier}" if earlier else ""),
        "source": f"parcelcast {__version__}",
        "comment": " ".join(dict.fromkeys(  # the input's comment kept, guidance added once
            c for c in (str(ds.attrs.get("comment", "")).strip(), GUIDANCE) if c)),
    })
    _grid_mapping(out)
    encoding: dict[str, dict] = {}
    for name, var in out.variables.items():
        var.attrs = {k: _attr(v) for k, v in var.attrs.items()
                     if k not in ("_FillValue", "missing_value", "units", "calendar")
                     or var.dtype.kind != "M"}
        if var.dtype.kind == "M":
            if name in out.coords:  # CF 4.4: say what the time is
                var.attrs.setdefault("standard_name", "time")
                var.attrs.setdefault("long_name", "valid time (UTC)")
            var.attrs["units_metadata"] = "leap_seconds: none"  # CF 1.11 4.4.1.2: POSIX-like time
        elif _is_temperature(var):  # CF 1.11 3.1.2: a temperature or a difference of them
            var.attrs.setdefault("units_metadata", "temperature: difference"
                                 if _is_difference(var) else "temperature: on_scale")
        encoding[name] = _encoding(name, out, var)
    return out, encoding


def write(ds: xr.Dataset, path, title: str) -> Path:
    """Write ``ds`` to ``path`` as CF-1.11 NetCDF-4, atomically; returns the path."""
    out, encoding = prepare(ds, title)
    with atomic_path(path) as tmp:
        out.to_netcdf(tmp, engine="netcdf4", encoding=encoding)
    return Path(path)


def _is_coordinate(name: str, ds: xr.Dataset) -> bool:
    return name in ds.coords


def _encoding(name: str, ds: xr.Dataset, var: xr.Variable) -> dict:
    kind = var.dtype.kind
    has_missing = kind in "fM" and bool(np.isnan(var.values.astype("float64") if kind == "f"
                                                 else np.isnat(var.values)).any())
    # CF 2.5.1: coordinate variables carry no fill value; auxiliary coordinates of a DSG file
    # (2-D time/lat/lon padded past the end of a trajectory) keep NaN as missing
    fill = None if (_is_coordinate(name, ds) and not has_missing) else np.nan
    if kind == "M":
        return {"units": TIME_UNITS, "calendar": "standard", "dtype": "float64", "_FillValue": fill}
    if kind == "f":
        enc = {"_FillValue": fill, "dtype": "float64" if var.dtype.itemsize >= 8 else "float32"}
        if var.ndim >= 2:
            enc["zlib"] = True
        return enc
    if kind == "b":
        var.attrs.setdefault("flag_values", np.array([0, 1], dtype=np.int8))
        var.attrs.setdefault("flag_meanings", "false true")
        return {"dtype": "int8", "_FillValue": None}
    if kind in "iu":
        values = var.values
        fits = values.size == 0 or (values.min() >= np.iinfo(np.int32).min
                                    and values.max() <= np.iinfo(np.int32).max)
        target = var.dtype if var.dtype.itemsize <= 4 else ("int32" if fits else "float64")
        enc = {"dtype": target}
        if "_FillValue" not in var.attrs:
            enc["_FillValue"] = None
        return enc
    return {}


def _is_temperature(var: xr.Variable) -> bool:
    units = str(var.attrs.get("units", "")).split(" ")[0]
    return units in ("K", "degC", "degF", "kelvin", "celsius") and var.dtype.kind == "f"


def _is_difference(var: xr.Variable) -> bool:
    """Rates, changes, tendencies and spreads of temperature are differences, not temperatures."""
    name = str(var.attrs.get("standard_name", "")) + " " + str(var.attrs.get("long_name", ""))
    units = str(var.attrs.get("units", ""))
    return " " in units.strip() or any(word in name for word in (
        "tendency", "change", "difference", "anomaly", "spread", "advect", "residual", "budget"))


def _attr(value):
    """Attribute values NetCDF and CF accept: bool -> int8, int64 -> int32, None dropped."""
    if isinstance(value, (bool, np.bool_)):
        return np.int8(value)
    if isinstance(value, (np.integer, int)) and not isinstance(value, bool):
        return np.int32(value) if abs(int(value)) < 2**31 else np.float64(value)
    if isinstance(value, np.ndarray) and value.dtype.kind in "iu" and value.dtype.itemsize > 4:
        return value.astype(np.int32)
    return value


def _grid_mapping(out: xr.Dataset) -> None:
    """A projected grid's ``crs`` (with ``crs_wkt``) as a CF grid-mapping variable (CF 5.6)."""
    if "crs" not in out.variables or "crs_wkt" not in out["crs"].attrs:
        return
    import pyproj

    out["crs"].attrs.update(pyproj.CRS.from_wkt(out["crs"].attrs["crs_wkt"]).to_cf())
    for name in out.data_vars:
        if {"y", "x"} <= set(out[name].dims):
            out[name].attrs["grid_mapping"] = "crs"
