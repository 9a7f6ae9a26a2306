"""``parcelcast split``: how much of a temperature change came in on the wind, and how much was made here."""

from __future__ import annotations

import argparse

from parcelcast.cli._common import (add_input_arguments, bounded_number, iso_utc, json_number, jsonable,
                                    lat_lon, pressure_level_or_surface, print_json, utc_time)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_input_arguments(parser)
    parser.add_argument("--at", type=lat_lon, required=True, metavar="LAT,LON", help="the station")
    parser.add_argument("--level", type=pressure_level_or_surface, required=True, metavar="HPA|surface",
                        help="pressure level (hPa), or 'surface': 2-m temperature and 10-m wind")
    parser.add_argument("--start", type=utc_time, required=True, metavar="ISO",
                        help="start of the window (UTC unless a zone is given)")
    parser.add_argument("--end", type=utc_time, required=True, metavar="ISO", help="end of the window")
    parser.add_argument("--obs", metavar="STATION.csv",
                        help="station series for the observed change (time + temperature_K/degC/degF)")
    parser.add_argument("--radius-km", type=float, metavar="R",
                        help="use the mean over this radius around the station instead of the point")
    parser.add_argument("--wind", choices=("actual", "geostrophic"), default="actual",
                        help="advecting wind (default: actual)")
    parser.add_argument("--members", type=bounded_number(1, 1000, "--members", integer=True), default=5,
                        help="trajectories in the cloud of starts for the Lagrangian spread (default 5)")
    parser.add_argument("--guidance", action="store_true",
                        help="add station guidance for the next 6, 12 and 24 h from the latest analysis")
    parser.add_argument("--json", action="store_true", help="print JSON")


def run(args) -> int:
    from parcelcast.budget import trend_split
    from parcelcast.cli import DISCLAIMER
    from parcelcast.io.analysis import open_analysis
    from parcelcast.selection import check_surface_wind, is_surface, roles_at_level

    surface = is_surface(args.level)
    if surface:
        check_surface_wind(args.wind)
        if args.guidance:
            from parcelcast.errors import ParcelcastError

            raise ParcelcastError("--guidance is for pressure levels; it is not offered at the "
                                  "surface level")
    roles = ["temperature", "omega"] + (["u", "v"] if args.wind == "actual" else ["geopotential"])
    roles += ["surface_pressure", "orography"]  # levels below the ground: parcelcast.ground
    if args.guidance:  # the column for the top-temperature guidance
        roles += ["geopotential", "relative_humidity", "specific_humidity", "surface_pressure"]
    ds = open_analysis(args.files, dict(args.var), roles=roles_at_level(sorted(set(roles)), args.level))
    station = None
    if args.obs:
        from parcelcast.io.station import read_station_series

        station = read_station_series(args.obs)
    if surface and "near_surface_u" not in ds.data_vars:  # 2-m temperature only: say what is missing
        from parcelcast.near_surface import observed_only_split

        result = observed_only_split(ds, *args.at, args.start, args.end, station)
    else:
        result = trend_split(ds, *args.at, args.level, args.start, args.end, args.wind,
                             args.radius_km, station, args.members)
    summary = to_json(result, args)
    if args.guidance:
        from parcelcast.budget import station_guidance

        summary["guidance"] = jsonable(station_guidance(ds, *args.at, args.level, wind=args.wind))
    summary["disclaimer"] = DISCLAIMER
    if args.json:
        print_json(summary)
    else:
        print_text(summary)
    return 0


def to_json(result: dict, args) -> dict:
    from parcelcast.budget.eulerian import SURFACE_RESIDUAL
    from parcelcast.selection import is_surface, level_json

    euler, lagr = result["eulerian"], result["lagrangian"]
    # Rounded for JSON so that the printed parts add up exactly to the printed change.
    observed = json_number(euler["observed_change_K"], 4)
    advective = json_number(euler["advective_K"], 4)
    vertical = json_number(euler["vertical_K"], 4) if euler["vertical_available"] else None
    residual = None
    if observed is not None and advective is not None:
        residual = round(observed - advective - (vertical or 0.0), 4)
    out = {
        "start": iso_utc(args.start),
        "end": iso_utc(args.end),
        "lat": args.at[0],
        "lon": args.at[1],
        **level_json(args.level),
        "wind": args.wind,
        "observed_change_K": observed,
        "advective_K": advective,
        "vertical_K": vertical,
        "residual_K": residual,
        "residual_holds": euler["residual_note"],
        "observed_source": euler["observed_source"],
        "missing_reason": euler.get("missing_reason"),
        "lagrangian": None if lagr is None else {
            "followed": "the unperturbed trajectory of each analysis member; its spread "
                        "covers the cloud of starts and all members",
            "footing": lagr["footing"],
            "observed_change_K": json_number(lagr["observed_change_K"], 4),
            "non_advective_K": json_number(lagr["non_advective_K"], 4),
            "advective_K": json_number(lagr["advective_K"], 4),
            "spread_K": json_number(lagr["spread_K"], 4),
            "trajectories": lagr["trajectories"],
            "reached_start": lagr["reached_start"],
            "statuses": lagr["statuses"],
            "origin": {"lat": json_number(lagr["origin_lat"], 3), "lon": json_number(lagr["origin_lon"], 3)},
        },
        "consistency": jsonable(result["consistency"]),
        "advective_difference_K": json_number(result["advective_difference_K"], 4),
        "notes": [
            "advective = time integral of -V.grad T of the fields interpolated linearly in time between "
            "analyses (Simpson's rule on each piece between analysis times)",
            "vertical = time integral of omega * static stability"
            + ("" if euler["vertical_available"] else ": not at the surface level (no omega term "
               "for 2-m temperature)" if is_surface(args.level) else ": not available (no omega in "
               "the input)"),
            f"residual = observed - advective - vertical: {euler['residual_note']}",
        ] + ([] if lagr is None else [
            "lagrangian: the analysed change at the point, split following the unperturbed "
            "trajectory of each analysis member (member mean)",
            "advective_difference_K = consistency.eulerian_minus_lagrangian_K",
        ]) + ([f"surface level: 2-m temperature advected by the 10-m wind; {SURFACE_RESIDUAL}"]
              if is_surface(args.level) else []),
    }
    if "not_computed" in euler:
        out["not_computed"] = euler["not_computed"]
    for key in ("observed_change_members_K", "advective_members_K", "residual_members_K"):
        if key in euler:
            out[key] = [json_number(x, 4) for x in euler[key]]
    for key in ("non_advective_members_K", "advective_members_K"):
        if lagr is not None and key in lagr:
            out["lagrangian"][key] = [json_number(x, 4) for x in lagr[key]]
    if "station_gaps" in euler:
        out["station_gaps"] = euler["station_gaps"]
    if "area" in euler:
        out["area"] = euler["area"]
    return out


def consistency_lines(c: dict) -> list[str]:
    """The consistency figure and verdict, the warnings and what the two views mean, as text."""
    from parcelcast.budget.consistency import summary

    return ([f"  {summary(c)}"] + [f"  warning: {w}" for w in c["warnings"]]
            + [f"  note: {c['meaning']}"])


def print_text(s: dict) -> None:
    def f(x):
        return "n/a" if x is None else f"{x:+.2f} K"

    from parcelcast.selection import level_label

    level = s["level_hPa"] if s["level_hPa"] is not None else s["level"]
    lagr = s["lagrangian"] or {"footing": "not computed", "non_advective_K": None,
                               "advective_K": None, "spread_K": None}
    lines = [
        f"Trend split at {s['lat']:.2f},{s['lon']:.2f}, {level_label(level)}, {s['start']} to {s['end']}",
        f"  observed change        {f(s['observed_change_K'])}   ({s['observed_source']})",
        f"  advective (Eulerian)   {f(s['advective_K'])}",
        f"  vertical motion        {f(s['vertical_K'])}",
        f"  residual               {f(s['residual_K'])}   ({s['residual_holds']})",
        f"  Lagrangian ({lagr['footing']}): non-advective "
        f"{f(lagr['non_advective_K'])}, advective "
        f"{f(lagr['advective_K'])}, spread {f(lagr['spread_K'])}",
    ] + (consistency_lines(s["consistency"]) if s["consistency"] else [])
    if s.get("missing_reason"):
        lines.insert(1, f"  missing: {s['missing_reason']}")
    lines += [f"  {part}: {why}" for part, why in s.get("not_computed", {}).items()]
    lines += [f"  note: {note}" for note in s["notes"] if note.startswith("surface level")]
    from parcelcast.formatting import temperature_text

    for item in s.get("guidance", [])[1:]:
        if "lead_h" in item:
            up = "n/a" if item["upstream_K"] is None else temperature_text(item["upstream_K"])
            diurnal = item["with_diurnal_course_K"]
            lines.append(f"  guidance +{item['lead_h']} h: advective extrapolation "
                         f"{temperature_text(item['advective_extrapolation_K'])}, upstream {up}"
                         + ("" if diurnal is None
                            else f", with yesterday's diurnal course {temperature_text(diurnal)}"))
            lines += [f"    warning: {w}" for w in item["warnings"]]
        elif item.get("top_temperature"):
            lines.append(f"  top temperature (mixing down, common practice): "
                         f"{temperature_text(item['top_temperature']['temperature_K'])}")
    lines.append(s["disclaimer"])
    print("\n".join(lines))
