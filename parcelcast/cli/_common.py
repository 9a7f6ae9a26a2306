"""Argument parsing shared by the commands (points, times, variable overrides, JSON)."""

from __future__ import annotations

import argparse
import json
import math
import sys


def lat_lon(text: str) -> tuple[float, float]:
    """Parse ``LAT,LON`` in degrees (north and east positive)."""
    try:
        lat_text, lon_text = text.split(",")
        lat, lon = float(lat_text), float(lon_text)
    except ValueError:
        raise argparse.ArgumentTypeError(
            f"expected LAT,LON in degrees such as 52.1,-1.5; got {text!r}"
        ) from None
    if not -90.0 <= lat <= 90.0:
        raise argparse.ArgumentTypeError(f"latitude {lat} is outside -90..90")
    return lat, lon


def pressure_level_or_surface(text: str):
    """Parse ``--level``: a pressure in hPa (float) or ``surface`` (2-m temperature, 10-m wind)."""
    if text.strip().lower() == "surface":
        return "surface"
    try:
        return float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(
            f"expected a pressure level in hPa such as 850, or 'surface'; got {text!r}") from None


def utc_time(text: str):
    """Parse an ISO 8601 time for argparse; a time without a zone is UTC (naive UTC datetime64)."""
    from parcelcast.errors import ParcelcastError
    from parcelcast.times import parse_utc

    try:
        return parse_utc(text)
    except ParcelcastError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def variable_override(text: str) -> tuple[str, str]:
    """Parse ``ROLE=NAME`` for ``--var`` (e.g. ``temperature=TMP_850``)."""
    if "=" not in text:
        raise argparse.ArgumentTypeError(f"expected ROLE=NAME such as temperature=t; got {text!r}")
    role, name = text.split("=", 1)
    return role.strip(), name.strip()


def add_input_arguments(parser: argparse.ArgumentParser) -> None:
    """FILE... and --var, shared by every command that reads analyses."""
    parser.add_argument("files", nargs="+", metavar="FILE",
                        help="analysis files (NetCDF or GRIB); globs allowed; combined along time")
    parser.add_argument("--var", action="append", type=variable_override, default=[],
                        metavar="ROLE=NAME",
                        help="name the file's variable for a role (temperature, u, v, geopotential, "
                        "omega, ...); repeatable")


def iso_utc(value) -> str:
    """Format a numpy/pandas time as ISO 8601 UTC with a trailing Z."""
    import pandas as pd

    return pd.Timestamp(value).strftime("%Y-%m-%dT%H:%M:%SZ")


def json_number(value, digits: int = 6):
    """A float for JSON: rounded, with NaN/inf as null (missing stays missing)."""
    if value is None:
        return None
    value = float(value)
    if not math.isfinite(value):
        return None
    return round(value, digits)


def jsonable(obj, digits: int = 4):
    """Plain JSON values: floats rounded (9 decimals for per-second rates, which are ~1e-5),
    NaN as null, numpy scalars and times converted, keys starting with '_' left out."""
    import numpy as np

    if isinstance(obj, dict):
        return {k: jsonable(v, 9 if str(k).endswith("_per_s") else digits)
                for k, v in obj.items() if not str(k).startswith("_")}
    if isinstance(obj, (list, tuple)):
        return [jsonable(v, digits) for v in obj]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        return json_number(obj, digits)
    if isinstance(obj, np.datetime64):
        return iso_utc(obj)
    return obj


def print_json(obj) -> None:
    json.dump(obj, sys.stdout, indent=2, allow_nan=False)
    sys.stdout.write("\n")
