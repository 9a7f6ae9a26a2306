"""The trend split: advective and non-advective parts of a temperature change, two ways.

On a pressure level (Holton and Hakim 2013, eq. 3.6 rearranged):

    dT/dt = -V.grad T + omega S_p + Q/c_p,      S_p = R_d T/(c_p p) - dT/dp

*Eulerian* (at the station): the observed local change over [start, end] is split into
the time integral of -V.grad T (horizontal advection), of omega S_p (vertical motion,
only where omega is in the analysis, else "not available", never 0) and the residual
(diabatic heating plus errors), which makes the parts add up exactly.

*Lagrangian* (following the air): an isobaric back trajectory from the station at
``end`` to ``start``.  The change following the parcel, T(station, end) - T(origin,
start), is the non-advective part (omega S_p + Q/c_p integrated along the path); the
advective part is the observed change minus it.  The cloud of starts and the members
of an ensemble analysis give a spread.

Time integrals are exact for fields varying linearly between analysis times
(trapezoid rule over analysis times, with linear interpolation where the window
starts or ends between them).
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import SECONDS_PER_HOUR
from parcelcast.errors import SelectionError



# ------------------------------------------------------------------ time integration
def linear_time_weights(times, start, end) -> np.ndarray:
    """Weights w_i (s) with  sum_i w_i f(t_i) = integral of the piecewise-linear f over [start, end].

    ``times`` ascending datetime64; the window must lie inside them.
    """
    t = (np.asarray(times, dtype="datetime64[ns]") - np.datetime64(start, "ns")) / np.timedelta64(1, "s")
    e = (np.datetime64(end, "ns") - np.datetime64(start, "ns")) / np.timedelta64(1, "s")
    weights = np.zeros(t.size)
    for k in range(t.size - 1):
        a, b = max(t[k], 0.0), min(t[k + 1], e)
        if b <= a:
            continue
        h = t[k + 1] - t[k]
        weights[k] += ((t[k + 1] - a) ** 2 - (t[k + 1] - b) ** 2) / (2.0 * h)
        weights[k + 1] += ((b - t[k]) ** 2 - (a - t[k]) ** 2) / (2.0 * h)
    return weights


def interpolation_weights(times, when) -> np.ndarray:
    """Weights giving the linear interpolation in time at ``when``."""
    t = (np.asarray(times, dtype="datetime64[ns]") - np.datetime64(when, "ns")) / np.timedelta64(1, "s")
    weights = np.zeros(t.size)
    hit = np.flatnonzero(t == 0.0)
    if hit.size:
        weights[hit[0]] = 1.0
        return weights
    k = int(np.searchsorted(t, 0.0) - 1)
    h = t[k + 1] - t[k]
    weights[k] = t[k + 1] / h
    weights[k + 1] = -t[k] / h
    return weights


def _check_window(ds, start, end) -> None:
    source = ds.attrs.get("source_files", "")
    if "time" not in ds.dims:
        raise SelectionError("window", f"{str(start)[:16]} to {str(end)[:16]} UTC",
                             "nothing: the analysis has no time coordinate", source)
    times = ds["time"].values
    if not np.datetime64(end, "ns") > np.datetime64(start, "ns"):
        raise SelectionError("window", f"{str(start)[:16]} to {str(end)[:16]}",
                             "a window whose end is after its start", source)
    if np.datetime64(start, "ns") < times[0] or np.datetime64(end, "ns") > times[-1]:
        raise SelectionError("window", f"{str(start)[:16]} to {str(end)[:16]} UTC",
                             f"analysis times {str(times[0])[:16]} to {str(times[-1])[:16]} UTC", source)


def _bounding_times(ds, start, end):
    """The analysis times from the last one at or before ``start`` to the first at or after ``end``."""
    times = ds["time"].values
    first = int(np.searchsorted(times, np.datetime64(start, "ns"), side="right") - 1)
    last = int(np.searchsorted(times, np.datetime64(end, "ns"), side="left"))
    return ds.isel(time=slice(max(first, 0), last + 1))


def _weighted(da, weights):
    """sum_i w_i da(t_i) over the times that count (a NaN outside the window does not
    reach the result; a NaN inside it does: missing stays missing)."""
    import xarray as xr

    used = np.flatnonzero(weights)
    w = xr.DataArray(weights[used], dims="time", coords={"time": da["time"].values[used]})
    return (da.isel(time=used) * w).sum("time", skipna=False)


# ------------------------------------------------------------------ the gridded parts
WINDS = ("actual", "geostrophic")


def check_wind(wind: str) -> None:
    """Refuse a wind choice other than 'actual' or 'geostrophic' (nothing is assumed)."""
    from parcelcast.errors import ParcelcastError

    if wind not in WINDS:
        raise ParcelcastError(f"wind {wind!r} is not known; choose one of: {', '.join(WINDS)}")


def split_fields(ds, level_hpa: float, start, end, wind: str = "actual"):
    """The split as maps over the analysis area for the window [start, end].

    Returns
    -------
    xarray.Dataset
        ``observed_change``, ``advective``, ``vertical`` (absent without omega) and
        ``residual`` in K over the window, (member,) lat, lon; attrs say how.
    """
    import xarray as xr

    from parcelcast.advection import advection
    from parcelcast.io.analysis import require
    from parcelcast.selection import select_level

    check_wind(wind)
    _check_window(ds, start, end)
    require(ds, "temperature", purpose="the trend split")
    ds = _bounding_times(ds, start, end)  # compute only what the window uses
    temperature = select_level(ds, level_hpa)["temperature"]
    if wind == "actual":
        require(ds, "u", "v", purpose="advection by the actual wind")
        level = select_level(ds, level_hpa)
        u, v = level["u"], level["v"]
    else:
        from parcelcast.geostrophic import geostrophic_wind

        u, v = geostrophic_wind(select_level(ds[["geopotential"]], level_hpa))
    adv = advection(temperature, u, v)
    times = ds["time"].values
    observed = (_weighted(temperature, interpolation_weights(times, end))
                - _weighted(temperature, interpolation_weights(times, start)))
    advective = _weighted(adv, linear_time_weights(times, start, end))
    parts = {"observed_change": observed, "advective": advective}
    vertical = _vertical_term(ds, level_hpa)
    if vertical is not None:
        parts["vertical"] = _weighted(vertical, linear_time_weights(times, start, end))
        parts["residual"] = observed - advective - parts["vertical"]
    else:
        parts["residual"] = observed - advective
    out = xr.Dataset(parts)
    descriptions = {
        "observed_change": "local temperature change over the window",
        "advective": "time integral of horizontal advection -V.grad T",
        "vertical": "time integral of omega * static stability (vertical motion)",
        "residual": "observed change minus the other parts (diabatic heating and errors"
                    + (")" if vertical is not None else "; includes the vertical term: no omega)"),
    }
    for name in out.data_vars:
        out[name].attrs = {"units": "K", "long_name": descriptions[name]}
    out.attrs = {"start": str(start)[:19], "end": str(end)[:19], "level_hPa": level_hpa,
                 "wind": wind, "time_integration": "trapezoid over analysis times (exact for "
                 "piecewise-linear time variation)",
                 "source_files": ds.attrs.get("source_files", "")}
    return out


def _vertical_term(ds, level_hpa: float):
    """omega * S_p (K s-1) on the level, or None when the analysis has no omega."""
    if "omega" not in ds.data_vars or "level" not in ds.dims or ds.sizes["level"] < 2:
        return None
    import xarray as xr

    from parcelcast.selection import select_level
    from parcelcast.thermo import static_stability

    stability = xr.apply_ufunc(
        static_stability, ds["temperature"], ds["level"],
        input_core_dims=[["level"], ["level"]], output_core_dims=[["level"]],
        dask="parallelized", output_dtypes=[np.float64],
        dask_gufunc_kwargs={"allow_rechunk": True},  # dT/dp needs whole columns
    ).transpose(*ds["temperature"].dims)
    term = select_level(xr.Dataset({"w": ds["omega"] * stability}), level_hpa)["w"]
    term.attrs = {"units": "K s-1", "long_name": "omega times static stability"}
    return term


# ------------------------------------------------------------------ at a station
def eulerian_split(ds, lat: float, lon: float, level_hpa: float, start, end,
                   wind: str = "actual", radius_km: float | None = None, station=None) -> dict:
    """The Eulerian split at a point (bilinear) or over a radius around it.

    ``station`` (a :class:`parcelcast.io.station.StationSeries`) replaces the analysed
    observed change by the station's own; the residual then also holds the difference
    between the station and the analysis level (said in ``residual_note``).
    Values are member means where the analysis has members (``*_members_K`` lists each;
    a missing member makes the mean missing).  ``point_observed_change_K`` (and its
    members) is always the analysed change at the point itself, for the Lagrangian view.
    """
    import xarray as xr

    from parcelcast.sampling import value_at

    fields = split_fields(ds, level_hpa, start, end, wind)
    at, area = _at_station(fields, lat, lon, radius_km)
    parts = {name: at[name] for name in at.data_vars}
    result = {"observed_source": "analysis",
              "residual_note": "diabatic heating and errors"
              + ("" if "vertical" in parts else ", and the vertical term (no omega)")}
    point = value_at(fields["observed_change"], lat, lon)
    result.update(_values("point_observed_change_K", point))
    if station is not None:
        observed = station.value_at(end) - station.value_at(start)
        result["observed_source"] = f"station series {station.source}"
        result["station_gaps"] = station.gap_text()
        result["residual_note"] += (", and the difference between the station series and the "
                                    f"{level_hpa:g} hPa analysis")
        parts["observed_change"] = xr.full_like(parts["advective"], observed)
        others = parts["advective"] + (parts["vertical"] if "vertical" in parts else 0.0)
        parts["residual"] = parts["observed_change"] - others
    for name, key in (("observed_change", "observed_change_K"), ("advective", "advective_K"),
                      ("vertical", "vertical_K"), ("residual", "residual_K")):
        if name in parts:
            result.update(_values(key, parts[name]))
        else:
            result[key] = None
    result["vertical_available"] = "vertical" in parts
    if area is not None:
        result["area"] = area
    return result


def _values(key: str, value) -> dict:
    """``{key: member mean}`` plus ``{key_members: [...]}`` when there are members."""
    from parcelcast.selection import member_mean

    out = {key: float(member_mean(value))}
    if "member" in value.dims:
        out[key.replace("_K", "_members_K")] = [float(x) for x in value.values]
    return out


def _at_station(fields, lat, lon, radius_km):
    """The parts at the point, or their area means over one common set of grid points
    (a point missing in any part is left out of every part, so the parts still add up)."""
    from parcelcast.sampling import area_mean, value_at

    if radius_km is None:
        return value_at(fields, lat, lon), None
    import xarray as xr

    valid = None
    for name in fields.data_vars:
        valid = fields[name].notnull() if valid is None else valid & fields[name].notnull()
    means, info = {}, None
    for name in fields.data_vars:
        means[name], info = area_mean(fields[name].where(valid), lat, lon, radius_km=radius_km)
    return xr.Dataset(means), info


def lagrangian_split(ds, lat: float, lon: float, level_hpa: float, start, end,
                     observed_change: float, wind: str = "actual", members: int = 5,
                     scheme: str = "petterssen") -> dict:
    """The Lagrangian split from isobaric back trajectories arriving at ``end``.

    Returns
    -------
    dict
        ``non_advective_K`` and ``advective_K`` (unperturbed trajectory of the first
        analysis member), ``spread_K`` (standard deviation of the non-advective part over
        all trajectories that reached ``start``), ``trajectories`` used and their statuses.
    """
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.units import Q_

    hours = (np.datetime64(end, "ns") - np.datetime64(start, "ns")) / np.timedelta64(1, "h")
    paths = compute_trajectories(ds, lat, lon, Q_(level_hpa, "hPa"), Q_(-float(hours), "h"),
                                 start_time=np.datetime64(end, "ns"), mode="isobaric",
                                 scheme=scheme, wind=wind, members=members)
    last = paths["row_size"].values - 1
    index = np.arange(paths.sizes["trajectory"])
    arrival_t = paths["temperature"].values[:, 0]
    origin_t = paths["temperature"].values[index, last]
    origin_time = paths["time"].values[index, last]
    reached = (paths["status_name"].values == "ok") & (origin_time == np.datetime64(start, "ns"))
    change = np.where(reached, arrival_t - origin_t, np.nan)
    central = int(np.flatnonzero(paths["central"].values)[0])
    non_advective = float(change[central])
    usable = change[np.isfinite(change)]
    return {
        "non_advective_K": non_advective if np.isfinite(non_advective) else None,
        "advective_K": (observed_change - non_advective) if np.isfinite(non_advective) else None,
        "spread_K": float(np.std(usable)) if usable.size > 1 else None,
        "trajectories": int(paths.sizes["trajectory"]),
        "reached_start": int(reached.sum()),
        "statuses": sorted(set(paths["status_name"].values.tolist())),
        "origin_lat": float(paths["lat"].values[central, last[central]]),
        "origin_lon": float(paths["lon"].values[central, last[central]]),
        "paths": paths,
    }


def trend_split(ds, lat: float, lon: float, level_hpa: float, start, end, wind: str = "actual",
                radius_km: float | None = None, station=None, members: int = 5) -> dict:
    """Both views side by side, with their difference as a consistency measure."""
    euler = eulerian_split(ds, lat, lon, level_hpa, start, end, wind, radius_km, station)
    # The Lagrangian split follows the first analysis member's unperturbed trajectory from the
    # point, so it uses that member's analysed change at the point itself (never a station
    # series or an area mean, which are not what the parcel's temperature measures).
    observed = euler.get("point_observed_change_members_K", [euler["point_observed_change_K"]])[0]
    eulerian_advective = euler.get("advective_members_K", [euler["advective_K"]])[0]
    lagr = lagrangian_split(ds, lat, lon, level_hpa, start, end, observed, wind, members)
    lagr["observed_change_K"] = observed
    difference = None
    if lagr["advective_K"] is not None and np.isfinite(eulerian_advective):
        difference = eulerian_advective - lagr["advective_K"]
    return {"eulerian": euler, "lagrangian": lagr, "advective_difference_K": difference}


# ------------------------------------------------------------------ guidance
def station_guidance(ds, lat: float, lon: float, level_hpa: float, leads_h=(6, 12, 24),
                     wind: str = "actual") -> list[dict]:
    """Temperature guidance at the station for the next hours, each with its assumptions.

    (a) advective extrapolation of the present advection; (b) the upstream estimate: the
    temperature found now where a steady-flow back trajectory of the lead time starts;
    (d) where the analyses reach 24 h back, (a) plus the diurnal course: the non-advective
    change (residual and vertical part) of the same hours yesterday; (c) the top temperature
    from the analysis column (common practice).  Each entry says what it assumes.
    """
    from parcelcast.advection import advection_on_level
    from parcelcast.sampling import value_at
    from parcelcast.selection import member_mean, select_time
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.units import Q_

    now = ds["time"].values[-1]
    here = member_mean(value_at(advection_on_level(ds, level_hpa, now, wind), lat, lon))
    t_now = float(here["temperature"])
    adv_now = float(here["temperature_advection"]) * SECONDS_PER_HOUR
    latest = select_time(ds, now).expand_dims("time")
    out = []
    for lead in leads_h:
        paths = compute_trajectories(latest, lat, lon, Q_(level_hpa, "hPa"), Q_(-float(lead), "h"),
                                     mode="isobaric", wind=wind, members=1, steady=True,
                                     analysis_members=False)
        last = int(paths["row_size"].values[0]) - 1
        status = str(paths["status_name"].values[0])
        upstream = float(paths["temperature"].values[0, last]) if status == "ok" else None
        out.append({
            "lead_h": lead,
            "valid": str(now + np.timedelta64(int(round(lead * 60)), "m"))[:16] + "Z",
            "advective_extrapolation_K": t_now + adv_now * lead,
            "upstream_K": upstream,
            "upstream_status": status,
            "with_diurnal_course_K": _with_diurnal_course(ds, lat, lon, level_hpa, now, lead, wind,
                                                          t_now + adv_now * lead),
        })
    out.append(_top_temperature(ds, lat, lon, now))
    return [{"now_K": t_now, "advection_now_K_per_h": adv_now,
             "assumptions": {
                 "advective_extrapolation": "present advection persists unchanged; no diabatic "
                                            "or vertical-motion change",
                 "upstream": "steady flow (the latest analysis); the air keeps its temperature "
                             "along an isobaric path",
                 "with_diurnal_course": "advective extrapolation plus the non-advective change "
                                        "of the same hours yesterday (diurnal persistence); "
                                        "null where the analyses do not reach back far enough"}}] + out


def _with_diurnal_course(ds, lat, lon, level_hpa, now, lead, wind, advective_estimate):
    """Advective extrapolation plus yesterday's non-advective change over the same hours."""
    day = np.timedelta64(24, "h")
    start = now - day
    end = start + np.timedelta64(int(round(lead * 60)), "m")
    if lead > 24 or start < ds["time"].values[0]:
        return None
    split = eulerian_split(ds, lat, lon, level_hpa, start, end, wind)
    non_advective = split["residual_K"] + (split["vertical_K"] or 0.0)
    return advective_estimate + non_advective if np.isfinite(non_advective) else None


def _top_temperature(ds, lat: float, lon: float, now) -> dict:
    """(c) Top-temperature guidance from the analysis column (common practice), if possible."""
    from parcelcast.errors import ParcelcastError
    from parcelcast.profiles import column_from_analysis, top_temperature_guidance

    try:
        column = column_from_analysis(ds, lat, lon, now)
    except ParcelcastError as exc:
        return {"top_temperature": None, "top_temperature_note": f"not available: {exc}"}
    result = top_temperature_guidance(column.pressure, column.temperature)
    return {"top_temperature": result}
