"""Case reviews: an event window at a station, from a case file (TOML).

A case file names the analyses, the station, the level and the window::

    [case]
    title = "..."
    analyses = ["${PARCELCAST_DATA}/file.grb"]   # relative to this file; globs allowed
    data_dir = "../../../shared/data"           # used for ${PARCELCAST_DATA} when unset
    wind = "geostrophic"                        # or "actual"
    members = 5

    [station]
    name = "..."
    lat = 52.0
    lon = 10.0

    [window]
    start = 2017-01-01T00:00:00Z
    end = 2017-01-02T12:00:00Z
    level_hPa = 850

:func:`build_review` computes the timeline of the split (observed change, advective,
vertical and residual parts accumulated from the start to each analysis time), the
split maps for the whole window, back trajectories arriving at key times, and the
``consistency`` of the two views (:mod:`parcelcast.budget.consistency`).
"""

from __future__ import annotations

import os
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from parcelcast.budget import check_wind
from parcelcast.errors import InputFileError, ParcelcastError
from parcelcast.times import parse_utc


@dataclass
class Case:
    title: str
    analyses: list[str]
    station_name: str
    lat: float
    lon: float
    start: np.datetime64
    end: np.datetime64
    level_hpa: float
    wind: str
    members: int
    source: Path


def read_case(path) -> Case:
    """Read and check a case TOML file; errors name the file and the key."""
    path = Path(path)
    if not path.is_file():
        raise InputFileError(path, "no such case file")
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except UnicodeDecodeError:
        raise InputFileError(path, "not UTF-8 text (TOML files are UTF-8)") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputFileError(path, f"not valid TOML: {exc}") from None
    try:
        case, station, window = (_table(data, key, path) for key in ("case", "station", "window"))
        if not isinstance(case["analyses"], list) or not case["analyses"] or not all(
                isinstance(item, str) for item in case["analyses"]):
            raise InputFileError(path, "[case] analyses must be a non-empty list of file names "
                                 'or patterns, such as analyses = ["a.grb"]')
        if not isinstance(case.get("data_dir", "."), str):
            raise InputFileError(path, "[case] data_dir must be a folder name in quotes")
        data_dir = os.environ.get("PARCELCAST_DATA") or str(
            (path.parent / case.get("data_dir", ".")).resolve())
        analyses = []
        for item in case["analyses"]:
            text = str(item).replace("${PARCELCAST_DATA}", data_dir)
            full = Path(text) if Path(text).is_absolute() else path.parent / text
            analyses.append(str(full))
        start = parse_utc(window["start"], f"{path}: [window] start")
        end = parse_utc(window["end"], f"{path}: [window] end")
        wind = str(case.get("wind", "actual"))
        try:
            check_wind(wind)
        except ParcelcastError as exc:
            raise InputFileError(path, f"[case] {exc}") from None
        return Case(title=str(case.get("title", path.stem)), analyses=analyses,
                    station_name=str(station.get("name", "station")),
                    lat=_number(station, "lat", path, "station", -90.0, 90.0),
                    lon=_number(station, "lon", path, "station", -360.0, 360.0), start=start,
                    end=end, level_hpa=_number(window, "level_hPa", path, "window", 1.0, 1100.0, 850),
                    wind=wind, members=int(_number(case, "members", path, "case", 1, 1000, 5, True)),
                    source=path)
    except KeyError as exc:
        raise ParcelcastError(f"{path}: missing key {exc} (see the case-file format in "
                              "parcelcast/review.py)") from None


def _table(data: dict, key: str, path: Path) -> dict:
    if key not in data:
        raise KeyError(key)
    if not isinstance(data[key], dict):
        raise InputFileError(path, f"[{key}] must be a table (a [{key}] section)")
    return data[key]


def _number(table: dict, key: str, path: Path, section: str, lo, hi, default=None,
            integer: bool = False) -> float:
    """A number from a case-file table, within ``lo..hi``, else an error naming the key."""
    value = table.get(key, default)
    if value is None:
        raise KeyError(key)
    kind = int if integer else (int, float)
    if isinstance(value, bool) or not isinstance(value, kind) or not lo <= value <= hi:
        what = "a whole number" if integer else "a number"
        raise InputFileError(path, f"[{section}] {key} must be {what} in {lo:g}..{hi:g}; "
                             f"found {type(value).__name__} {str(value)[:30]!r}")
    return float(value)


def build_review(case: Case, ds=None) -> dict:
    """Everything a review shows, computed by the library (no drawing here)."""
    from parcelcast.budget import eulerian_split, lagrangian_split, split_fields, trend_split
    from parcelcast.io.analysis import open_analysis

    if ds is None:
        roles = ["temperature", "omega"] + (["u", "v"] if case.wind == "actual" else ["geopotential"])
        roles += ["surface_pressure", "orography"]  # levels below the ground (parcelcast.ground)
        ds = open_analysis(case.analyses, roles=roles)
    times = ds["time"].values
    inside = times[(times > case.start) & (times <= case.end)]
    timeline = [{"time": case.start, "observed_change_K": 0.0, "advective_K": 0.0,
                 "vertical_K": 0.0 if "omega" in ds else None, "residual_K": 0.0}]
    for when in inside:
        part = eulerian_split(ds, case.lat, case.lon, case.level_hpa, case.start, when, case.wind)
        timeline.append({"time": when, **{k: part[k] for k in
                                          ("observed_change_K", "advective_K", "vertical_K", "residual_K")}})
    split = trend_split(ds, case.lat, case.lon, case.level_hpa, case.start, case.end, case.wind,
                        members=case.members)
    whole, lagr = split["eulerian"], split["lagrangian"]
    key_times = [case.end]
    middle = inside[len(inside) // 2] if inside.size > 2 else None
    if middle is not None and middle != case.end:
        key_times.insert(0, middle)
    trajectories = {}
    for when in key_times:
        if when == case.end:
            trajectories[when] = lagr["paths"]
        else:
            trajectories[when] = lagrangian_split(ds, case.lat, case.lon, case.level_hpa, case.start,
                                                  when, 0.0, case.wind, case.members)["paths"]
    fields = split_fields(ds, case.level_hpa, case.start, case.end, case.wind)
    return {"case": case, "timeline": timeline, "eulerian": whole, "lagrangian": lagr,
            "advective_difference_K": split["advective_difference_K"],
            "consistency": split["consistency"],
            "trajectories": trajectories, "fields": fields}
