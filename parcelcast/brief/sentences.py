"""The briefing's summary: a few plain sentences a person can read aloud.

Built only from the numbers :func:`parcelcast.brief.assemble.assemble_brief` gathered, with
the words and units of :mod:`parcelcast.formatting` (degC, knots, K/h, compass points).
"""

from __future__ import annotations

from parcelcast import formatting
from parcelcast.brief.assemble import entry_level
from parcelcast.selection import level_phrase


def level_sentence(level: dict) -> str:
    """``"At 850 hPa: cold advection of 0.31 K/h; 6.9 °C, wind 250° 30 kt."``"""
    if not level.get("available"):
        return f"At {level_phrase(entry_level(level))} nothing could be computed: {level['reason']}."
    wind = formatting.MISSING
    if level["wind_speed_kt"] is not None:
        wind = ("calm" if round(level["wind_speed_kt"]) == 0 else
                f"{level['wind_direction_deg']:03.0f}\u00b0 {level['wind_speed_kt']:.0f} kt")
    words = formatting.advection_words(level["advection_K_per_h"])
    return (f"At {level_phrase(entry_level(level))}: {words}; temperature "
            f"{formatting.temperature_text(level['temperature_K'])}, wind {wind}.")


def trajectory_sentence(traj: dict) -> str:
    """Where the arriving air came from, how far, and how warm it was there."""
    if not traj["available"]:
        return f"No back trajectory: {traj['reason']}."
    change = traj["temperature_change_K"]
    ago = f"{traj['hours_covered']:g} h"
    if change is None:
        then = "its temperature there is not available"
    elif abs(change) < 0.5:
        then = f"at about the same temperature {ago} ago"
    else:
        then = (f"where it was {abs(change):.0f} \u00b0C {'colder' if change > 0 else 'warmer'} "
                f"{ago} ago")
    where = (f"from {formatting.distance_text(traj['distance_km'])} "
             f"{formatting.compass(traj['bearing_deg'])}" if traj["distance_km"] >= 10 else
             "from close to the station")
    text = (f"The air arriving at {formatting.hour_text(traj['arrival_time'])} at "
            f"{traj['level_hPa']:g} hPa came {where} ({formatting.position_text(traj['origin_lat'], traj['origin_lon'])}, "
            f"{traj['origin_pressure_hPa']:.0f} hPa), {then}.")
    if not traj["complete"]:
        text += (f" The path covers only {ago} of the {traj['hours']:g} h asked for "
                 f"({traj['central_status'].replace('_', ' ')}).")
    return text


def split_sentence(split: dict) -> str:
    """How the change over the window splits into advected and locally made parts."""
    if not split["available"]:
        return f"No split of the change: {split['reason']}."
    observed, advective = split["observed_change_K"], split["advective_K"]
    if observed is None or advective is None:
        return (f"The split of the change at {split['level_hPa']:g} hPa is not available "
                "(missing values).")
    rest = split["residual_K"] + (split["vertical_K"] or 0.0)
    text = (f"Since {formatting.time_text(split['start'])} the {split['level_hPa']:g} hPa temperature "
            f"changed by {formatting.difference_text(observed)}: "
            f"{formatting.difference_text(advective)} carried in by the wind and "
            f"{formatting.difference_text(rest)} from other causes "
            f"({'rising or sinking air, ' if split['vertical_available'] else ''}heating or cooling "
            "on the spot, and errors).")
    lagrangian = split["lagrangian"]["advective_K"]
    consistency = split.get("consistency") or {}
    if lagrangian is not None and consistency.get("consistent") is False:  # the split's own verdict
        text += (f" Following the air instead, {formatting.difference_text(lagrangian)} was carried in: "
                 f"the two views differ by {abs(consistency['eulerian_minus_lagrangian_K']):.1f} K, "
                 "more than the split accepts, so read it with care.")
    return text


def profile_sentence(profile: dict) -> str:
    """Stability and moisture at the station in one sentence."""
    if not profile["available"]:
        return f"No profile: {profile['reason']}."
    cape = profile["cape_surface_J_per_kg"]
    parts = [f"surface-based CAPE {formatting.MISSING if cape is None else f'{cape:.0f} J/kg'}"]
    if profile["lcl_hPa"] is not None:
        parts.append(f"cloud base (LCL) near {profile['lcl_hPa']:.0f} hPa")
    if profile["freezing_level_m"] is not None:
        parts.append(f"freezing level {profile['freezing_level_m']:.0f} m")
    if profile["precipitable_water_mm"] is not None:
        parts.append(f"precipitable water {profile['precipitable_water_mm']:.0f} mm")
    text = "; ".join(parts)
    return f"Profile at the station: {text}."


def summary_sentences(brief: dict) -> list[str]:
    """The summary, in reading order: levels, origin of the air, the split, the profile."""
    out = [level_sentence(level) for level in brief["levels"]]
    out.append(trajectory_sentence(brief["trajectories"]))
    if brief["split"]["available"] or brief["trajectories"]["available"]:
        out.append(split_sentence(brief["split"]))
    if brief["profile"]["available"]:
        out.append(profile_sentence(brief["profile"]))
    return out
