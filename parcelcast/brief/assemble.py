"""Everything the morning briefing says, computed by the library from one opened analysis.

What belongs here: :func:`assemble_brief`, which opens the analyses once and gathers the
station's values at each level (the same numbers as ``parcelcast advect --at``), the back
trajectory (as ``parcelcast track``), the trend split over the trajectory window (as
``parcelcast split``) and the profile at the station (as ``parcelcast profile --at``),
each with ``available: false`` and a reason when the data do not allow it.  No drawing
and no writing here (see :mod:`parcelcast.brief.write`); the sentences of the summary
come from :mod:`parcelcast.brief.sentences`.

Values are SI or named with their unit in the key (``temperature_degC``, ``wind_speed_kt``,
``advection_K_per_h``).  Missing values stay None.
"""

from __future__ import annotations

import json
import warnings

import numpy as np

from parcelcast import formatting
from parcelcast.brief.config import BriefConfig
from parcelcast.errors import ParcelcastError, ParcelcastWarning

#: roles the briefing reads (those absent from the files are simply not there)
ROLES = ("temperature", "u", "v", "geopotential", "omega", "relative_humidity",
         "specific_humidity", "surface_pressure", "orography", "near_surface_temperature")
#: read as well for the near-surface level (``[brief] surface = true``)
SURFACE_ROLES = ("near_surface_u", "near_surface_v")


def _number(value, digits: int = 4):
    """A rounded float, or None for missing (NaN stays missing)."""
    if value is None:
        return None
    value = float(value)
    return round(value, digits) if np.isfinite(value) else None


def assemble_brief(config: BriefConfig, ds=None) -> dict:
    """The briefing's content (a dict; keys starting with ``_`` hold arrays for the figures).

    Parameters
    ----------
    config : BriefConfig
    ds : xarray.Dataset, optional
        An already opened canonical analysis (default: open ``config.analyses`` once).
    """
    from parcelcast.cli import DISCLAIMER
    from parcelcast.io.analysis import open_analysis
    from parcelcast.selection import select_time

    caught: list[str] = []
    with warnings.catch_warnings(record=True) as records:
        warnings.simplefilter("always", ParcelcastWarning)
        if ds is None:
            roles = [r for r in ROLES if not (config.wind == "geostrophic" and r in ("u", "v"))]
            roles += list(SURFACE_ROLES) if config.surface and config.wind == "actual" else []
            ds = open_analysis(config.analyses, roles=roles)
        valid_time = select_time(ds[["temperature"]], config.time)["time"].values
        brief = {
            "title": f"Morning briefing for {config.station_name}",
            "station": {"name": config.station_name, "lat": config.lat, "lon": config.lon},
            "valid_time": valid_time,
            "wind": config.wind,
            "area": config.map_area(),
            "source_files": ds.attrs.get("source_files", "").split(";"),
            "analysis_times": [t for t in ds["time"].values],
            "members_in_analysis": int(ds.sizes.get("member", 1)),
            "levels": [level_entry(ds, config, level, valid_time) for level in
                       config.levels_hpa + (["surface"] if config.surface else [])],
        }
        brief["trajectories"] = trajectory_entry(ds, config, valid_time)
        brief["split"] = split_entry(ds, config, valid_time, brief["trajectories"])
        brief["profile"] = profile_entry(ds, config, valid_time)
        caught = [str(r.message) for r in records if issubclass(r.category, ParcelcastWarning)]
    brief["warnings"] = _unique(caught + _missing_warnings(brief))
    brief["cautions"] = cautions(ds, config, brief)
    from parcelcast.brief.sentences import summary_sentences

    brief["summary"] = summary_sentences(brief)
    brief["disclaimer"] = DISCLAIMER
    return brief


def _unique(items: list[str]) -> list[str]:
    return list(dict.fromkeys(items))


# --------------------------------------------------------------------------- levels
def level_entry(ds, config: BriefConfig, level, valid_time) -> dict:
    """The station's values on one level (hPa, or ``"surface"``: 2-m temperature and 10-m
    wind): the numbers of ``advect --at`` (member means), with temperature in degC and wind
    as direction and speed in knots.  ``level`` and ``level_hPa`` as in ``advect --json``
    (``level_hPa`` null at the surface)."""
    from parcelcast.advection import advection_on_level
    from parcelcast.sampling import value_at
    from parcelcast.selection import is_surface, level_json, member_mean

    if is_surface(level) and config.wind != "actual":
        return {**level_json(level), "available": False,
                "reason": "the near-surface level uses the analysed 10-m wind ([data] wind = "
                "\"actual\"); the geostrophic wind comes from geopotential on pressure levels"}
    try:
        fields = advection_on_level(ds, level, valid_time, config.wind)
    except ParcelcastError as exc:
        return {**level_json(level), "available": False, "reason": str(exc)}
    at = value_at(fields, config.lat, config.lon)
    temperature = _number(member_mean(at["temperature"]), 3)
    u = _number(member_mean(at["u"]), 3)
    v = _number(member_mean(at["v"]), 3)
    adv = at["temperature_advection"] * 3600.0
    entry = {
        **level_json(level),
        "available": True,
        "temperature_K": temperature,
        "temperature_degC": _number(formatting.celsius(temperature), 2),
        "u_m_s": u,
        "v_m_s": v,
        "wind_direction_deg": _number(formatting.wind_direction(u, v), 1) if None not in (u, v) else None,
        "wind_speed_kt": _number(formatting.knots(np.hypot(u, v)), 1) if None not in (u, v) else None,
        "advection_K_per_h": _number(member_mean(adv), 4),
        "missing_points_in_field": int(fields.attrs["missing_points"]),
        "missing_points_by_reason": json.loads(fields.attrs.get("missing_by_reason", "{}")),
        "missing_points_in_area": _missing_in_area(fields, config.map_area()),
        "_fields": member_mean(fields),
    }
    if "member" in adv.dims:
        entry["advection_spread_K_per_h"] = _number(adv.std("member", skipna=False), 4)
    return entry


def _missing_in_area(fields, area) -> int:
    """Grid points inside the map area without an advection value (any member)."""
    from parcelcast.render.maps import inside

    adv = fields["temperature_advection"]
    if "member" in adv.dims:
        adv = adv.isnull().any("member")
    else:
        adv = adv.isnull()
    flagged = inside(fields, area, np.where(adv.values, 1.0, 0.0))
    return int(np.nansum(flagged))


# --------------------------------------------------------------------------- trajectories
def _window_reason(ds, valid_time, hours: float, what: str) -> str | None:
    """Why ``what`` over ``hours`` before ``valid_time`` cannot be computed, or None."""
    times = ds["time"].values
    if times.size < 2:
        return (f"one analysis time only ({formatting.time_text(times[0])}): {what} needs analyses "
                f"spanning the {hours:g} h before the valid time")
    start = np.datetime64(valid_time, "ns") - np.timedelta64(int(round(hours * 3600)), "s")
    if start < times[0]:
        have = (np.datetime64(valid_time, "ns") - times[0]) / np.timedelta64(1, "h")
        return (f"the analyses start at {formatting.time_text(times[0])}, only {have:g} h before "
                f"the valid time; {what} needs {hours:g} h")
    return None


def trajectory_entry(ds, config: BriefConfig, valid_time) -> dict:
    """Back trajectories arriving at the station at the valid time, on the first level."""
    from parcelcast.sampling import great_circle_km
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.trajectories.completeness import group_completeness
    from parcelcast.units import Q_

    level = config.levels_hpa[0]
    entry = {"available": False, "hours": config.trajectory_hours, "level_hPa": level,
             "origin_lat": None, "origin_lon": None, "origin_pressure_hPa": None, "complete": False}
    reason = _window_reason(ds, valid_time, config.trajectory_hours, "a back trajectory")
    if reason is not None:
        entry["reason"] = reason
        return entry
    try:
        paths = compute_trajectories(
            ds, config.lat, config.lon, Q_(level, "hPa"), Q_(-config.trajectory_hours, "h"),
            np.datetime64(valid_time, "ns"), wind=config.wind, members=config.members)
    except ParcelcastError as exc:
        entry["reason"] = str(exc)
        return entry
    central = int(np.flatnonzero(paths["central"].values)[0])
    last = int(paths["row_size"].values[central]) - 1
    origin_time = paths["time"].values[central, last]
    statuses = paths["status_name"].values
    done = group_completeness(paths, 0)  # as `track --json`: every member covers the hours asked
    lat0, lon0 = float(paths["lat"].values[central, last]), float(paths["lon"].values[central, last])
    t_now = paths["temperature"].values[central, 0] if "temperature" in paths else np.nan
    t_then = paths["temperature"].values[central, last] if "temperature" in paths else np.nan
    distance = float(great_circle_km(config.lat, config.lon, lat0, lon0))
    entry.update({
        "available": True,
        "arrival_time": valid_time,
        "origin_time": origin_time,
        "hours_covered": done["hours_covered"],
        "origin_lat": _number(lat0, 3),
        "origin_lon": _number(((lon0 + 180.0) % 360.0) - 180.0, 3),
        "origin_pressure_hPa": _number(paths["pressure"].values[central, last] / 100.0, 2),
        "origin_temperature_degC": _number(formatting.celsius(t_then), 2),
        "arrival_temperature_degC": _number(formatting.celsius(t_now), 2),
        "temperature_change_K": _number(t_now - t_then, 2),
        "distance_km": _number(distance, 1),
        "bearing_deg": _number(_bearing(config.lat, config.lon, lat0, lon0), 1),
        "central_status": str(statuses[central]),
        "complete": done["complete"],
        "members": done["trajectories"],
        "members_complete": done["trajectories_complete"],
        "member_statuses": done["member_statuses"],
        "spread_km": _number(_last_finite(paths["spread"].values[0]) / 1000.0, 1),
        "spread_fraction": _number(_last_finite(paths["spread_fraction"].values[0]), 3),
        "_paths": paths,
    })
    return entry


def _last_finite(values) -> float:
    finite = np.asarray(values, dtype=np.float64)
    finite = finite[np.isfinite(finite)]
    return float(finite[-1]) if finite.size else np.nan


def _bearing(lat1, lon1, lat2, lon2) -> float:
    """Initial great-circle bearing (degrees from north) from point 1 towards point 2."""
    p1, p2 = np.deg2rad(lat1), np.deg2rad(lat2)
    dl = np.deg2rad(lon2 - lon1)
    x = np.sin(dl) * np.cos(p2)
    y = np.cos(p1) * np.sin(p2) - np.sin(p1) * np.cos(p2) * np.cos(dl)
    return float(np.mod(np.rad2deg(np.arctan2(x, y)), 360.0))


# --------------------------------------------------------------------------- split
def split_entry(ds, config: BriefConfig, valid_time, trajectories: dict) -> dict:
    """The trend split at the station over the trajectory window (as ``parcelcast split``)."""
    from parcelcast.budget import trend_split

    level = config.levels_hpa[0]
    hours = config.trajectory_hours
    end = np.datetime64(valid_time, "ns")
    start = end - np.timedelta64(int(round(hours * 3600)), "s")
    entry = {"available": False, "level_hPa": level, "start": start, "end": end}
    reason = _window_reason(ds, valid_time, hours, "the split of the change")
    if reason is not None:
        entry["reason"] = reason
        return entry
    # the brief's own back trajectories are the split's (same point, level, window, wind)
    paths = trajectories.get("_paths")
    try:
        result = trend_split(ds, config.lat, config.lon, level, start, end, config.wind,
                             members=config.members, paths=paths)
    except ParcelcastError as exc:
        entry["reason"] = str(exc)
        return entry
    euler, lagr = result["eulerian"], result["lagrangian"]
    observed, advective = _number(euler["observed_change_K"]), _number(euler["advective_K"])
    vertical = _number(euler["vertical_K"]) if euler["vertical_available"] else None
    residual = None
    if observed is not None and advective is not None:
        residual = round(observed - advective - (vertical or 0.0), 4)  # as `split --json`
    entry.update({
        "available": True,
        "observed_change_K": observed,
        "advective_K": advective,
        "vertical_K": vertical,
        "vertical_available": bool(euler["vertical_available"]),
        "residual_K": residual,
        "residual_note": euler["residual_note"],
        "lagrangian": {
            "non_advective_K": _number(lagr["non_advective_K"]),
            "advective_K": _number(lagr["advective_K"]),
            "spread_K": _number(lagr["spread_K"]),
            "reached_start": lagr["reached_start"],
            "trajectories": lagr["trajectories"],
        },
        "advective_difference_K": _number(result["advective_difference_K"]),
    })
    consistency = result.get("consistency")
    if consistency is not None:
        entry["consistency"] = consistency
    return entry


# --------------------------------------------------------------------------- profile
def profile_entry(ds, config: BriefConfig, valid_time) -> dict:
    """The analysis column at the station: stability, moisture and thermal-wind layers."""
    from parcelcast.profiles import analyse, column_from_analysis, gridded_layer_advection

    entry = {"available": False}
    if ds.sizes.get("level", 1) < 4:
        entry["reason"] = (f"the analyses hold {ds.sizes.get('level', 1)} pressure level(s); "
                           "a profile needs at least 4")
        return entry
    if "relative_humidity" not in ds and "specific_humidity" not in ds:
        entry["reason"] = "no humidity in the analyses: dew points, CAPE and the LCL need it"
        return entry
    try:
        profile = column_from_analysis(ds, config.lat, config.lon, valid_time)
        result = analyse(profile)
        gridded = None
        if {"temperature", "u", "v"} <= set(ds.data_vars):  # as `profile --at`
            gridded = gridded_layer_advection(ds, config.lat, config.lon,
                                              [(x["bottom_hPa"], x["top_hPa"]) for x in result["layers"]],
                                              valid_time)
    except ParcelcastError as exc:
        entry["reason"] = str(exc)
        return entry
    g = result.get("top_temperature_guidance") or {}
    entry.update({
        "available": True,
        "levels": int(profile.nlev),
        "cape_surface_J_per_kg": _number(result["cape_J_per_kg"]["surface"], 0),
        "cin_surface_J_per_kg": _number(result["cin_J_per_kg"]["surface"], 0),
        "cape_most_unstable_J_per_kg": _number(result["cape_J_per_kg"]["most_unstable"], 0),
        "lcl_hPa": _number(result["lcl_hPa"], 0),
        "lifted_index_K": _number(result["lifted_index_K"], 1),
        "precipitable_water_mm": _number(result["precipitable_water_mm"], 1),
        "freezing_level_m": _number(result["freezing_level_m"], 0),
        "top_temperature_degC": _number(formatting.celsius(g.get("temperature_K")), 1),
        "layers": [{"bottom_hPa": _number(lay["bottom_hPa"], 0), "top_hPa": _number(lay["top_hPa"], 0),
                    "advection_K_per_h": _number(lay["advection_K_per_h"], 3)}
                   for lay in result.get("layers", [])],
        "gridded_layers": None if gridded is None else [
            {"bottom_hPa": _number(g["bottom_hPa"], 0), "top_hPa": _number(g["top_hPa"], 0),
             "advection_K_per_h": _number(g["advection_K_per_h"], 3)} for g in gridded],
        "notes": list(profile.notes),
        "_profile": profile,
        "_result": result,
    })
    return entry


# --------------------------------------------------------------------------- cautions
def entry_level(entry: dict):
    """A level entry's level as the library takes it: hPa, or ``"surface"``."""
    from parcelcast.selection import SURFACE

    return SURFACE if entry["level_hPa"] is None else entry["level_hPa"]


def level_name(entry: dict) -> str:
    """A level entry's level for people: ``"850 hPa"``, or the surface (2-m temperature,
    10-m wind)."""
    from parcelcast.selection import level_label

    return level_label(entry_level(entry))


def _missing_warnings(brief: dict) -> list[str]:
    out = []
    for lev in brief["levels"]:
        if lev.get("available") and lev["missing_points_in_area"]:
            out.append(f"{level_name(lev)}: {lev['missing_points_in_area']} grid points in the "
                       "map area have no advection value (below the ground, or missing in the file); "
                       "they are grey on the map")
        if lev.get("available") and lev["advection_K_per_h"] is None:
            out.append(f"{level_name(lev)}: no advection value at the station (missing data "
                       "around it)")
        if not lev.get("available"):
            out.append(f"{level_name(lev)}: {lev['reason']}")
    traj = brief["trajectories"]
    if traj["available"] and not traj["complete"]:
        out.append(f"the central back trajectory did not cover the full {traj['hours']:g} h "
                   f"(status {traj['central_status']})")
    return out


def cautions(ds, config: BriefConfig, brief: dict) -> list[str]:
    """What a forecaster should keep in mind reading these numbers (plain sentences)."""
    out = ["The numbers come from model analyses or forecasts, not from observations at the station."]
    if config.wind == "geostrophic":
        out.append("Winds are geostrophic (from the geopotential): flow across the isobars near the "
                   "ground and in strongly curved flow is missed.")
    spacing = _grid_spacing_deg(ds)
    if spacing is not None and spacing >= 1.0:
        out.append(f"The grid is coarse ({spacing:g} degrees, about {spacing * 111:.0f} km): features "
                   "smaller than a few hundred kilometres are not resolved.")
    if "surface_pressure" in ds:
        from parcelcast.sampling import value_at
        from parcelcast.selection import member_mean, select_time

        ps = value_at(select_time(ds[["surface_pressure"]], brief["valid_time"])["surface_pressure"],
                      config.lat, config.lon)
        ps_hpa = float(member_mean(ps)) / 100.0
        for level in config.levels_hpa:
            if np.isfinite(ps_hpa) and level > ps_hpa:
                out.append(f"{level:g} hPa is below the ground at the station (surface pressure "
                           f"{ps_hpa:.0f} hPa): its values there are extrapolated.")
    traj = brief["trajectories"]
    if traj["available"] and traj.get("spread_fraction") is not None and traj["spread_fraction"] > 0.3:
        out.append(f"The trajectory members spread {formatting.distance_text(traj['spread_km'])} "
                   f"({traj['spread_fraction']:.0%} of the distance travelled): the origin is uncertain.")
    if brief["members_in_analysis"] > 1:
        out.append(f"Values are means over the {brief['members_in_analysis']} members of the ensemble "
                   "analysis.")
    return out


def _grid_spacing_deg(ds) -> float | None:
    if "lat" not in ds.dims or ds.sizes["lat"] < 2:
        return None
    return float(np.round(np.abs(np.diff(ds["lat"].values)).max(), 3))
