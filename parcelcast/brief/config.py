"""The briefing's configuration file (TOML), read and checked key by key.

::

    [station]
    name = "Harbour Point"          # shown on every map and in the text
    lat = 50.0                      # degrees north
    lon = 5.0                       # degrees east
    [data]
    analyses = ["analyses/*.grb2"]  # paths or globs (relative to this file), combined along time
    wind = "actual"                 # or "geostrophic"
    [brief]
    levels_hPa = [850, 700]
    area_lat = [40.0, 60.0]         # map area, degrees
    area_lon = [-10.0, 20.0]
    trajectory_hours = 24
    members = 5                     # optional: trajectories in the cloud of starts
    time = 2017-01-02T12:00:00Z     # optional: valid time (default: the latest analysis)
    surface = true                  # optional: also the 2-m temperature and 10-m wind

``${PARCELCAST_DATA}`` in a path is replaced by that environment variable.  An unknown key
is an error that lists the valid ones; a value of the wrong type or out of range is an
error naming the key and what was expected.
"""

from __future__ import annotations

import datetime as _dt
import math
import os
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from parcelcast.errors import InputFileError, ParcelcastError

#: table -> key -> (required, one-line description); the only keys accepted
KEYS: dict[str, dict[str, tuple[bool, str]]] = {
    "station": {"name": (True, "text"), "lat": (True, "degrees north, -90..90"),
                "lon": (True, "degrees east, -180..360")},
    "data": {"analyses": (True, "list of paths or globs"),
             "wind": (False, '"actual" or "geostrophic"')},
    "brief": {"levels_hPa": (False, "list of pressure levels in hPa, 100..1050"),
              "area_lat": (False, "[south, north] in degrees"),
              "area_lon": (False, "[west, east] in degrees"),
              "trajectory_hours": (False, "hours of back trajectory, 1..240"),
              "members": (False, "trajectories in the cloud of starts, 1..50"),
              "time": (False, "valid time, UTC (default: the latest analysis)"),
              "surface": (False, "true: also the near-surface level (2-m temperature, 10-m wind)")},
}


class BriefConfigError(ParcelcastError):
    """A briefing configuration that cannot be used; names the file and the key."""


@dataclass
class BriefConfig:
    station_name: str
    lat: float
    lon: float
    analyses: list[str]
    wind: str = "actual"
    levels_hpa: list[float] = field(default_factory=lambda: [850.0, 700.0])
    area: list[float] | None = None  # [lat_min, lat_max, lon_min, lon_max]
    trajectory_hours: float = 24.0
    members: int = 5
    time: np.datetime64 | None = None
    surface: bool = False  # also the near-surface level, after the pressure levels
    source: Path | None = None

    def map_area(self) -> list[float]:
        """The configured area, or 20 x 30 degrees around the station."""
        if self.area is not None:
            return list(self.area)
        return [max(-90.0, self.lat - 10.0), min(90.0, self.lat + 10.0), self.lon - 15.0, self.lon + 15.0]


def valid_keys_text() -> str:
    return "; ".join(f"[{table}] " + ", ".join(keys) for table, keys in KEYS.items())


def read_config(path) -> BriefConfig:
    """Read and check a briefing configuration; errors name the file and the key."""
    path = Path(path)
    if not path.is_file():
        raise InputFileError(path, "no such briefing configuration file")
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputFileError(path, f"not valid TOML: {exc}") from None
    return config_from_dict(data, path)


def config_from_dict(data: dict, path: Path) -> BriefConfig:
    """Check the tables and keys of a parsed configuration (see :data:`KEYS`)."""
    _check_keys(data, path)
    station, sources, brief = data["station"], data["data"], data.get("brief", {})
    where = str(path)
    config = BriefConfig(
        station_name=_text(station["name"], where, "[station] name"),
        lat=_number(station["lat"], where, "[station] lat", -90.0, 90.0),
        lon=_number(station["lon"], where, "[station] lon", -180.0, 360.0),
        analyses=_paths(sources["analyses"], path),
        source=path,
    )
    if "wind" in sources:
        if sources["wind"] not in ("actual", "geostrophic"):
            raise BriefConfigError(f"{where}: [data] wind must be \"actual\" or \"geostrophic\"; "
                                   f"got {sources['wind']!r}")
        config.wind = sources["wind"]
    if "levels_hPa" in brief:
        levels = brief["levels_hPa"]
        if not isinstance(levels, list) or not levels:
            raise BriefConfigError(f"{where}: [brief] levels_hPa must be a non-empty list of "
                                   f"pressures in hPa such as [850, 700]; got {levels!r}")
        config.levels_hpa = [_number(x, where, "[brief] levels_hPa", 100.0, 1050.0) for x in levels]
        if len(set(config.levels_hpa)) != len(config.levels_hpa):
            raise BriefConfigError(f"{where}: [brief] levels_hPa lists a level twice: {levels!r}")
    if ("area_lat" in brief) != ("area_lon" in brief):
        raise BriefConfigError(f"{where}: [brief] area_lat and area_lon go together; give both or neither")
    if "area_lat" in brief:
        south, north = _pair(brief["area_lat"], where, "[brief] area_lat", -90.0, 90.0)
        west, east = _pair(brief["area_lon"], where, "[brief] area_lon", -360.0, 360.0)
        if east - west > 360.0:
            raise BriefConfigError(f"{where}: [brief] area_lon spans more than 360 degrees: {[west, east]}")
        config.area = [south, north, west, east]
    if "trajectory_hours" in brief:
        config.trajectory_hours = _number(brief["trajectory_hours"], where, "[brief] trajectory_hours",
                                          1.0, 240.0)
    if "members" in brief:
        members = brief["members"]
        if isinstance(members, bool) or not isinstance(members, int) or not 1 <= members <= 50:
            raise BriefConfigError(f"{where}: [brief] members must be a whole number 1..50; got {members!r}")
        config.members = members
    if "time" in brief:
        config.time = _time(brief["time"], where)
    if "surface" in brief:
        if not isinstance(brief["surface"], bool):
            raise BriefConfigError(f"{where}: [brief] surface must be true or false; got {brief['surface']!r}")
        config.surface = brief["surface"]
    return config


def _check_keys(data: dict, path: Path) -> None:
    unknown = [f"[{t}]" for t in data if t not in KEYS]
    for table, keys in KEYS.items():
        content = data.get(table)
        if content is None:
            if any(required for required, _ in keys.values()):
                raise BriefConfigError(f"{path}: missing table [{table}] (valid keys: {valid_keys_text()})")
            continue
        if not isinstance(content, dict):
            raise BriefConfigError(f"{path}: [{table}] must be a table of keys; got {content!r}")
        unknown += [f"[{table}] {k}" for k in content if k not in keys]
        for key, (required, meaning) in keys.items():
            if required and key not in content:
                raise BriefConfigError(f"{path}: missing key [{table}] {key} ({meaning})")
    if unknown:
        raise BriefConfigError(f"{path}: unknown key(s) {', '.join(unknown)}; valid keys: {valid_keys_text()}")


def _text(value, where: str, key: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise BriefConfigError(f"{where}: {key} must be a non-empty text; got {value!r}")
    return value.strip()


def _number(value, where: str, key: str, low: float, high: float) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise BriefConfigError(f"{where}: {key} must be a number in {low:g}..{high:g}; got {value!r}")
    if not low <= float(value) <= high:
        raise BriefConfigError(f"{where}: {key} = {value!r} is outside {low:g}..{high:g}")
    return float(value)


def _pair(value, where: str, key: str, low: float, high: float) -> tuple[float, float]:
    if not isinstance(value, list) or len(value) != 2:
        raise BriefConfigError(f"{where}: {key} must be two numbers [first, second]; got {value!r}")
    first, second = (_number(v, where, key, low, high) for v in value)
    if not first < second:
        raise BriefConfigError(f"{where}: {key} must increase ([south, north] / [west, east]); got {value!r}")
    return first, second


def _paths(value, config_path: Path) -> list[str]:
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, list) or not value or not all(isinstance(v, str) for v in value):
        raise BriefConfigError(f"{config_path}: [data] analyses must be a list of paths or globs; "
                               f"got {value!r}")
    data_dir = os.environ.get("PARCELCAST_DATA", "")
    out = []
    for item in value:
        if "${PARCELCAST_DATA}" in item and not data_dir:
            raise BriefConfigError(f"{config_path}: [data] analyses uses ${{PARCELCAST_DATA}}, "
                                   "which is not set")
        text = item.replace("${PARCELCAST_DATA}", data_dir)
        full = Path(text).expanduser()
        out.append(str(full if full.is_absolute() else config_path.parent / full))
    return out


def _time(value, where: str) -> np.datetime64:
    from parcelcast.times import parse_utc

    if isinstance(value, (_dt.datetime, _dt.date)) or isinstance(value, str):
        return parse_utc(value, f"{where}: [brief] time")
    raise BriefConfigError(f"{where}: [brief] time must be a UTC date-time such as "
                           f"2017-01-02T12:00:00Z; got {value!r}")
