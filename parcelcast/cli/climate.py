"""``parcelcast climate``: the split at a station for every window of a long record, by month."""

from __future__ import annotations

import argparse

from parcelcast.cli._common import add_input_arguments, iso_utc, json_number, lat_lon, print_json


def _level(text: str):
    from parcelcast.climate.level import parse_level
    from parcelcast.errors import ParcelcastError

    try:
        return parse_level(text)
    except ParcelcastError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_input_arguments(parser)
    parser.add_argument("--at", type=lat_lon, metavar="LAT,LON",
                        help="the station; without it, the split maps over the whole area go to "
                        "--out PATH.nc")
    parser.add_argument("--level", type=_level, required=True, metavar="HPA|surface",
                        help="pressure level (hPa), or 'surface' (2-m temperature, 10-m wind)")
    parser.add_argument("--window", type=float, required=True, metavar="HOURS",
                        help="length of each window; windows follow each other from the first analysis")
    parser.add_argument("--wind", choices=("actual", "geostrophic"), default="actual",
                        help="advecting wind (default: actual)")
    parser.add_argument("--scheduler", metavar="ADDRESS",
                        help="run on a dask.distributed cluster (e.g. tcp://host:8786); "
                        "the workers need this parcelcast version and read access to the files")
    parser.add_argument("--time-chunk", type=int, metavar="N",
                        help="analysis times read per chunk (default 8 at a station, 1 for maps)")
    parser.add_argument("--json", action="store_true", help="print JSON")
    parser.add_argument("--out", metavar="PATH.csv|PATH.nc", help="write every window (streamed)")
    parser.add_argument("--plot", metavar="PNG", help="draw the parts' distribution by month")


def run(args) -> int:
    import contextlib

    from parcelcast.cli import DISCLAIMER
    from parcelcast.climate import MonthlySummary, climate_split
    from parcelcast.climate.output import window_writer

    if args.at is None:
        return run_maps(args)
    rows = climate_split(args.files, *args.at, args.level, args.window, args.wind,
                         args.scheduler, dict(args.var), args.time_chunk)
    header = _header(args)
    summary, windows, missing, count = MonthlySummary(), [], {}, 0
    with contextlib.ExitStack() as stack:
        write = stack.enter_context(window_writer(args.out, header)) if args.out else None
        for count, row in enumerate(rows, 1):
            summary.add(row)
            if write is not None:
                write(row)
            doc = window_json(row)
            for part, why in (doc.get("missing") or {}).items():
                missing[(part, why)] = missing.get((part, why), 0) + 1
            if args.json:
                windows.append(doc)
    if args.plot:
        from parcelcast.climate.plot import save_plot

        save_plot(summary.values(), args.plot, title=_title(args))
    result = {**header, "windows": windows,
              "summary": {"by_month": summary.by_month(), "definitions": DEFINITIONS},
              "notes": notes(args), "disclaimer": DISCLAIMER}
    if args.json:
        print_json(result)
    else:
        print_text(result, missing, count)
    return 0


def run_maps(args) -> int:
    """Without --at: the split maps of every window, streamed to a NetCDF file."""
    from parcelcast.cli import DISCLAIMER
    from parcelcast.climate import climate_maps
    from parcelcast.climate.fields import maps_writer
    from parcelcast.errors import ParcelcastError

    if not args.out or not args.out.lower().endswith(".nc"):
        raise ParcelcastError("without --at, give --out PATH.nc for the split maps of every window")
    header = {k: v for k, v in _header(args).items() if k not in ("lat", "lon")}
    windows, skipped = 0, []
    with maps_writer(args.out, header) as write:
        for maps in climate_maps(args.files, args.level, args.window, args.wind, args.scheduler,
                                 dict(args.var), args.time_chunk):
            write(maps)
            if "missing" in maps.attrs:
                skipped.append({"start": maps.attrs["start"] + "Z", "end": maps.attrs["end"] + "Z",
                                "reason": maps.attrs["missing"]})
            else:
                windows += 1
    result = {**header, "out": args.out, "windows_written": windows, "windows_skipped": skipped,
              "disclaimer": DISCLAIMER}
    if args.json:
        print_json(result)
    else:
        print(f"Split maps of {windows} window(s) written to {args.out}"
              + (f"; {len(skipped)} skipped (gaps)" if skipped else "") + f"\n{DISCLAIMER}")
    return 0


DEFINITIONS = {
    "month": "calendar month of the window's start (UTC)",
    "spread_K": "standard deviation of the part over the month's windows (ddof=1)",
    "advective_share": "cov(advective, observed) / var(observed) over the month's windows with "
                       "both: the share of the window-to-window change carried by advection "
                       "(common practice; the non-advective share is 1 minus it)",
}


def _header(args) -> dict:
    surface = args.level == "surface"
    lat, lon = args.at if args.at is not None else (None, None)
    return {"lat": lat, "lon": lon,
            "level": "surface" if surface else f"{args.level:g} hPa",
            "level_hPa": None if surface else args.level,
            "wind": args.wind, "window_h": args.window}


def notes(args) -> list[str]:
    out = ["advective = time integral of -V.grad T (the Eulerian split, parcelcast split)",
           "residual = observed - advective - vertical; where omega is absent it also holds "
           "the vertical-motion term"]
    if args.level == "surface":
        out.append("at the surface the residual holds the diurnal cycle (sunshine, night-time "
                   "cooling) as well as everything else")
    return out


def window_json(row: dict) -> dict:
    """One window for JSON: parts rounded to 4 decimals so that the printed parts add up."""
    parts = {k: json_number(row[k], 4) for k in ("observed_change_K", "advective_K", "vertical_K")}
    residual = json_number(row["residual_K"], 4)
    if residual is not None:
        residual = round(parts["observed_change_K"] - parts["advective_K"]
                         - (parts["vertical_K"] or 0.0), 4)
    return {"start": iso_utc(row["start"]), "end": iso_utc(row["end"]), **parts,
            "residual_K": residual, "missing": row["missing"]}


def _title(args) -> str:
    h = _header(args)
    return f"Split at {h['lat']:g},{h['lon']:g}, {h['level']}, {args.window:g}-h windows"


def print_text(result: dict, missing: dict, count: int) -> None:
    """The monthly table; ``missing`` counts windows by (part, reason) out of ``count``."""
    def f(stat):
        return "   n/a" if stat["mean_K"] is None else f"{stat['mean_K']:+6.2f}"

    lines = [f"Split at {result['lat']:.2f},{result['lon']:.2f}, {result['level']}, "
             f"{result['window_h']:g}-h windows (mean K per window)",
             "  month    windows  observed advective vertical residual  advective share"]
    for m in result["summary"]["by_month"]:
        share = m["advective_share"]
        lines.append(f"  {m['month']}  {m['windows']:7d}    {f(m['observed_change'])}    "
                     f"{f(m['advective'])}   {f(m['vertical'])}   {f(m['residual'])}  "
                     + ("n/a" if share is None else f"{share:.2f}"))
    for (part, why), n in missing.items():
        lines.append(f"  missing {part} in {n} of {count} windows: {why}")
    lines += [f"  note: {note}" for note in result.get("notes", [])]
    lines.append(result["disclaimer"])
    print("\n".join(lines))
