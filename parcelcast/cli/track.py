"""``parcelcast track``: back or forward air-parcel trajectories from a point."""

from __future__ import annotations

import argparse
import math
import sys

from parcelcast.cli._area import add_area_argument
from parcelcast.cli._common import (add_input_arguments, bounded_number, lat_lon, print_json,
                                    require_valid_time, utc_time)


#: longest trajectory beyond the analyses' span (all of it for a single, steady analysis):
#: 10 days (common practice: kinematic trajectories lose their meaning within days)
MAX_STEADY_HOURS = 240.0
#: most trajectories one run computes (members x analysis members x series)
MAX_TRAJECTORIES = 20_000
#: most reported points along one trajectory (span / --every)
MAX_POINTS = 10_000


def _positive_hours(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of hours such as 24; got {text!r}") from None
    if not (value > 0 and math.isfinite(value)):
        raise argparse.ArgumentTypeError(f"hours must be a positive finite number; got {text!r}")
    return value


def _positive_km(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a distance in km such as 50; got {text!r}") from None
    if not value > 0:
        raise argparse.ArgumentTypeError(f"the cloud radius must be positive; got {text!r}")
    return value


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_input_arguments(parser)
    parser.add_argument("--at", "--from", dest="point", type=lat_lon, required=True, metavar="LAT,LON",
                        help="arrival point (with --back) or release point (with --ahead), degrees "
                        "(--from: earlier spelling)")
    parser.add_argument("--level", type=float, required=True, metavar="HPA",
                        help="pressure of the point in hPa, e.g. 850")
    span = parser.add_mutually_exclusive_group(required=True)
    span.add_argument("--back", type=_positive_hours, metavar="HOURS",
                      help="back trajectory: where the air came from, this many hours earlier")
    span.add_argument("--ahead", type=_positive_hours, metavar="HOURS",
                      help="forward trajectory: where the air goes in this many hours")
    parser.add_argument("--time", "--start", dest="start", type=utc_time, metavar="ISO",
                        help="arrival time for --back, release time for --ahead (UTC unless a zone "
                        "is given); default: the last analysis time for --back, the first for "
                        "--ahead (--start: earlier spelling)")
    parser.add_argument("--mode", choices=("isobaric", "3d", "isentropic"), default="isobaric",
                        help="stay on the pressure level, move with omega, or stay on the "
                        "potential-temperature surface (default: isobaric)")
    parser.add_argument("--scheme", choices=("petterssen", "rk4"), default="petterssen",
                        help="time stepping: iterative Petterssen or 4th-order Runge-Kutta")
    parser.add_argument("--members", type=bounded_number(1, 1000, "--members", integer=True),
                        default=1, metavar="N",
                        help="cloud of N starts around the point (on a ring of --cloud-radius, "
                        "+-5 hPa); every member of an ensemble analysis is run as well")
    parser.add_argument("--cloud-radius", type=_positive_km, metavar="KM",
                        help="radius of the ring of cloud starts in km (default: half a grid length)")
    parser.add_argument("--wind", choices=("actual", "geostrophic"), default="actual",
                        help="advecting wind: analysed or geostrophic from geopotential")
    parser.add_argument("--series", type=int, default=1, metavar="N",
                        help="run N arrival (or release) times, --series-step apart, ending (or "
                        "starting) at --start; the JSON's 'series' summarises each")
    parser.add_argument("--series-step", type=_positive_hours, default=6.0, metavar="HOURS",
                        help="spacing of the --series times (default 6 h)")
    parser.add_argument("--every", type=_positive_hours, default=1.0, metavar="HOURS",
                        help="spacing of the reported points (default 1 h)")
    parser.add_argument("--ground", choices=("follow", "stop"), default="follow",
                        help="parcels meeting the ground follow it (flagged) or stop there")
    parser.add_argument("--json", action="store_true", help="print the JSON summary")
    parser.add_argument("--map", metavar="PATH.png",
                        help="draw the trajectories on a map (coastlines, 6-hourly marks, "
                        "colour by pressure)")
    add_area_argument(parser)
    parser.add_argument("--out", metavar="PATH",
                        help="write all trajectories; format from the suffix: .nc (CF DSG), "
                        ".csv (tidy table), .geojson (one line per member, cut at the "
                        "antimeridian), .json (the --json summary); other suffixes are refused")


def _roles(args) -> tuple:
    roles = ["temperature", "surface_pressure", "orography"]
    roles += ["u", "v"] if args.wind == "actual" else ["geopotential"]
    if args.mode == "3d":
        roles += ["omega", "vertical_velocity"]
    if "geopotential" not in roles:
        roles.append("geopotential")
    return tuple(roles)


def run(args) -> int:
    from parcelcast.cli import DISCLAIMER
    from parcelcast.io.analysis import open_analysis
    from parcelcast.progress import note
    from parcelcast.trajectories.api import compute_trajectories
    from parcelcast.trajectories.output import output_format, to_json_dict, write_trajectories
    from parcelcast.units import Q_

    if args.out:
        output_format(args.out)  # an unknown suffix is refused before any computing

    ds = open_analysis(args.files, dict(args.var), roles=_roles(args))
    require_valid_time(ds, "trajectories follow the air through analyses at valid times")
    hours = -args.back if args.back is not None else args.ahead
    if ds.sizes.get("time", 1) == 1:
        note("track: one analysis time only; the flow is treated as steady.")
    _check_ranges(ds, args, hours)
    lat, lon = args.point
    out = compute_trajectories(
        ds, lat, lon, Q_(args.level, "hPa"), Q_(hours, "h"), args.start,
        mode=args.mode, scheme=args.scheme, wind=args.wind, members=args.members,
        output_interval=Q_(args.every, "h"), ground=args.ground,
        cloud_radius=None if args.cloud_radius is None else Q_(args.cloud_radius, "km"),
        start_times=_series(ds, args, hours),
    )
    _refuse_below_ground(out, args)
    if args.out:
        write_trajectories(out, args.out, DISCLAIMER)
    if args.map:
        from pathlib import Path

        from parcelcast.render.trajectory_maps import trajectory_map

        trajectory_map(out, args.map, station=("arrival" if hours < 0 else "release", lat, lon), area=args.area,
                       title=f"{'Back' if hours < 0 else 'Forward'} trajectories at {args.level:g} hPa "
                       f"({args.mode}, {args.wind} wind)",
                       source=", ".join(Path(f).name for f in args.files))
    summary = to_json_dict(out, DISCLAIMER)
    _add_completeness(summary, out)
    if summary["incomplete"]:
        print(f"parcelcast track: warning: {summary['incomplete']}", file=sys.stderr)
    if args.json:
        print_json(summary)
    else:
        _print_text(summary, args.out)
    return 0


def _refuse_below_ground(out, args) -> None:
    """A central start below the ground is refused (there is no air there to follow)."""
    from parcelcast.trajectories.errors import BelowGroundStartError

    central = out["central"].values.astype(bool)
    below = central & (out["status_name"].values == "below_ground_start")
    if below.any():
        raise BelowGroundStartError(
            f"{args.point[0]:g},{args.point[1]:g} at {args.level:g} hPa",
            f"{out.attrs['below_ground_check']}; at {below.sum()} of {central.sum()} start time(s)")


def _add_completeness(summary: dict, out) -> None:
    """``complete``, ``hours_covered``, member statuses counted, for the run and each series entry."""
    from parcelcast.trajectories.completeness import (
        completeness,
        group_completeness,
        incomplete_text,
    )

    info = completeness(out)
    summary.update(info)
    summary.update(_spread_parts(out, 0))
    summary["below_ground_check"] = out.attrs.get("below_ground_check", "")
    summary["incomplete"] = incomplete_text(info)
    for group, item in enumerate(summary["series"]):
        item.update(group_completeness(out, group))
        item.update(_spread_parts(out, group))


def _spread_parts(out, group: int) -> dict:
    """The start cloud's own size and the growth of the spread by the end (km), apart."""
    import numpy as np

    from parcelcast.cli._common import json_number

    growth = out["spread_growth"].values[group]
    last = np.flatnonzero(np.isfinite(growth))
    end = last[-1] if last.size else None
    return {
        "start_spread_km": json_number(out["start_spread"].values[group] / 1000.0, 2),
        "spread_growth_km": None if end is None else json_number(growth[end] / 1000.0, 2),
        "spread_growth_fraction": None if end is None else json_number(
            out["spread_growth_fraction"].values[group, end], 4),
    }


def _check_ranges(ds, args, hours: float) -> None:
    """Bound the request by the data (span of the analyses) and by what one run can hold."""
    import numpy as np

    from parcelcast.errors import UsageError

    option = "--back" if hours < 0 else "--ahead"
    times = ds["time"].values
    span = float((times[-1] - times[0]) / np.timedelta64(1, "h")) if times.size > 1 else 0.0
    limit = span + MAX_STEADY_HOURS  # beyond the data parcels stop (reported as incomplete)
    if abs(hours) > limit:
        where = (f"the analyses' span of {span:g} h ({str(times[0])[:16]} to {str(times[-1])[:16]} "
                 "UTC)" if times.size > 1 else "a single (steady) analysis")
        raise UsageError(f"{option} {abs(hours):g} h is longer than {where} allows: at most "
                         f"{limit:g} h")
    if args.every > abs(hours) or abs(hours) / args.every > MAX_POINTS:
        raise UsageError(f"--every {args.every:g} h gives {abs(hours) / args.every:.3g} points along "
                         f"{abs(hours):g} h; choose between {abs(hours) / MAX_POINTS:.3g} h and "
                         f"{abs(hours):g} h")
    runs = args.members * ds.sizes.get("member", 1) * args.series
    if runs > MAX_TRAJECTORIES:
        raise UsageError(f"--members {args.members} x {ds.sizes.get('member', 1)} analysis "
                         f"member(s) x --series {args.series} = {runs} trajectories; at most "
                         f"{MAX_TRAJECTORIES} in one run")


def _series(ds, args, hours):
    """The --series start times, the --start one first (None for a single time)."""
    import numpy as np

    from parcelcast.errors import UsageError

    if args.series < 1:
        raise UsageError(f"--series must be 1 or more, got {args.series}")
    if args.series == 1:
        return None
    times = ds["time"].values
    start = args.start if args.start is not None else (times[-1] if hours < 0 else times[0])
    step = np.timedelta64(int(round(args.series_step * 3600)), "s")
    sign = -1 if hours < 0 else 1  # back: earlier arrivals; ahead: later releases
    return [np.datetime64(start, "ns") + sign * k * step for k in range(args.series)]


def _print_text(summary: dict, path) -> None:
    from parcelcast import formatting

    a = summary["arrival"]
    if summary["incomplete"]:
        print(summary["incomplete"])
    print(f"{a['direction']} {a['mode']} trajectories, {a['role']} {a['time']} at "
          f"{a['lat']}, {a['lon']}, {a['pressure_hPa']} hPa ({a['scheme']}, {a['wind']} wind)")
    central = summary["members"][0]
    from parcelcast.trajectories.completeness import ENDED_BECAUSE

    print(f"central path ({ENDED_BECAUSE.get(central['status'], central['status'])}):")
    for p in central["points"]:
        t = "" if p["temperature_K"] is None else f"  T {formatting.temperature_text(p['temperature_K'])}"
        print(f"  {p['time']}  {p['lat']:8.3f} {p['lon']:9.3f}  {p['pressure_hPa']:7.1f} hPa{t}")
    n = len(summary["members"])
    if n > 1:
        print(f"{n} members; spread at the end {summary['spread_km']} km: the start cloud's own "
              f"{summary['start_spread_km']} km plus growth {summary['spread_growth_km']} km "
              f"({summary['spread_growth_fraction']} of the distance travelled)")
    for item in summary["series"][1:]:
        end = item["end"]
        covered = "" if item["complete"] else (
            f" (INCOMPLETE: {item['hours_covered']:g} of {item['hours_requested']:g} h)")
        print(f"  also {item['time']}: {item['status']}{covered}, ends {end['lat']}, {end['lon']}, "
              f"{end['pressure_hPa']} hPa, spread {item['spread_km']} km")
    if path:
        print(f"written: {path}")
    print(summary["disclaimer"])
