"""Station guidance for the next hours from the latest analyses, each with its assumptions."""

from __future__ import annotations

import numpy as np

from parcelcast.budget.consistency import summary
from parcelcast.budget.trend import trend_split
from parcelcast.constants import SECONDS_PER_HOUR


def station_guidance(ds, lat: float, lon: float, level_hpa: float, leads_h=(6, 12, 24),
                     wind: str = "actual") -> list[dict]:
    """Temperature guidance at the station for the next hours, each with its assumptions.

    (a) advective extrapolation of the present advection; (b) the upstream estimate: the
    temperature found now where a steady-flow back trajectory of the lead time starts;
    (d) where the analyses reach 24 h back, (a) plus the diurnal course: the non-advective
    change (residual and vertical part) of the same hours yesterday; (c) the top temperature
    from the analysis column (common practice).  Each entry says what it assumes.  (d) is
    built on a split, so its entry carries that split's ``consistency`` (both views, see
    :mod:`parcelcast.budget.consistency`) and ``warnings`` saying when it is inconsistent.
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
        diurnal, built_on = _with_diurnal_course(ds, lat, lon, level_hpa, now, lead, wind,
                                                 t_now + adv_now * lead)
        out.append({
            "lead_h": lead,
            "valid": str(now + np.timedelta64(int(round(lead * 60)), "m"))[:16] + "Z",
            "advective_extrapolation_K": t_now + adv_now * lead,
            "upstream_K": upstream,
            "upstream_status": status,
            "with_diurnal_course_K": diurnal,
            "diurnal_course_split": built_on,
            "warnings": _warnings(built_on),
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
    """Advective extrapolation plus yesterday's non-advective change over the same hours,
    and the split it is built on (window and consistency); ``(None, None)`` where the
    analyses do not reach back far enough."""
    day = np.timedelta64(24, "h")
    start = now - day
    end = start + np.timedelta64(int(round(lead * 60)), "m")
    if lead > 24 or start < ds["time"].values[0]:
        return None, None
    # one unperturbed trajectory per analysis member is all the consistency figure needs
    split = trend_split(ds, lat, lon, level_hpa, start, end, wind, members=1)
    euler = split["eulerian"]
    non_advective = euler["residual_K"] + (euler["vertical_K"] or 0.0)
    built_on = {"start": start, "end": end, "residual_holds": euler["residual_note"],
                "consistency": split["consistency"]}
    value = advective_estimate + non_advective if np.isfinite(non_advective) else None
    return value, built_on


def _warnings(built_on) -> list[str]:
    """Say when the diurnal-course guidance rests on a split whose two views disagree."""
    if built_on is None or built_on["consistency"]["consistent"] is not False:
        return []
    return ["the diurnal-course guidance is built on an inconsistent split: "
            + summary(built_on["consistency"])]


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
