"""``parcelcast demo``: build the invented scenario and run the morning job on it, offline."""

from __future__ import annotations

import argparse


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--out", default="parcelcast-demo", metavar="DIR",
                        help="folder for the demo files (default: ./parcelcast-demo)")


def run(args) -> int:
    from pathlib import Path

    import numpy as np

    from parcelcast import demo
    from parcelcast.advection import advection_on_level
    from parcelcast.cli import DISCLAIMER
    from parcelcast.constants import SECONDS_PER_HOUR
    from parcelcast.io.analysis import open_analysis
    from parcelcast.io.atomic import write_text
    from parcelcast.render.maps import advection_map
    from parcelcast.sampling import value_at

    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    analysis_path = out / "demo-analysis.nc"
    demo.write_scenario(analysis_path)
    ds = open_analysis(analysis_path)  # the same path real files take
    station = (demo.STATION_LAT, demo.STATION_LON)
    rows = ["time_utc,level_hPa,temperature_K,u_m_s,v_m_s,advection_K_per_h,"
            "known_diabatic_K_per_h"]
    text = [f"Station {demo.STATION_NAME} ({station[0]:.2f}N, {station[1]:.2f}E), 850 hPa "
            "(invented scenario)",
            f"{'time (UTC)':<17} {'T (K)':>7} {'u':>6} {'v':>6} {'adv K/h':>8} {'diab K/h':>8}"]
    for when in ds["time"].values:
        fields = advection_on_level(ds, 850.0, when)
        at = value_at(fields, *station)
        seconds = (when - demo.START) / np.timedelta64(1, "s")
        _, heating = demo.diurnal_heating(seconds, 850.0)
        stamp = np.datetime_as_string(when, unit="m")
        values = (float(at["temperature"]), float(at["u"]), float(at["v"]),
                  float(at["temperature_advection"]) * SECONDS_PER_HOUR, heating * SECONDS_PER_HOUR)
        rows.append(f"{stamp}Z,850," + ",".join(f"{x:.4f}" for x in values))
        text.append(f"{stamp.replace('T', ' '):<17} {values[0]:7.2f} {values[1]:6.1f} "
                    f"{values[2]:6.1f} {values[3]:8.3f} {values[4]:8.3f}")
    write_text(out / "station-table.csv", "\n".join(rows) + "\n")
    map_time = ds["time"].values[len(ds["time"]) // 2]
    area = [station[0] - 12.0, station[0] + 12.0, station[1] - 20.0, station[1] + 20.0]
    advection_map(advection_on_level(ds, 850.0, map_time), out / "advection-850hPa.png",
                  station=(demo.STATION_NAME, *station), area=area)
    print("\n".join(text))
    print(f"\nwrote {analysis_path}, {out / 'station-table.csv'}, {out / 'advection-850hPa.png'}")
    brief_dir = _briefing(out, ds, area)
    print(f"wrote {out / BRIEF_CONFIG} and the demo's morning briefing in {brief_dir}/ "
          "(brief.html, brief.md, brief.json)")
    print(DISCLAIMER)
    return 0


BRIEF_CONFIG = "demo-brief.toml"


def _briefing(out, ds, area):
    """End with the morning briefing of the demo: its configuration file, then the briefing
    from the already opened analysis (the same as ``parcelcast brief demo-brief.toml``)."""
    from parcelcast import demo
    from parcelcast.brief import assemble_brief, read_config, write_brief
    from parcelcast.io.atomic import write_text
    from parcelcast.render.parallel import FigureWorkers

    write_text(out / BRIEF_CONFIG, "\n".join([
        "# The demo's morning briefing: parcelcast brief demo-brief.toml --out brief",
        "[station]", f'name = "{demo.STATION_NAME}"', f"lat = {demo.STATION_LAT}",
        f"lon = {demo.STATION_LON}", "[data]", 'analyses = ["demo-analysis.nc"]', 'wind = "actual"',
        "[brief]", "levels_hPa = [850, 700]", f"area_lat = [{area[0]}, {area[1]}]",
        f"area_lon = [{area[2]}, {area[3]}]", "trajectory_hours = 24", ""]))
    with FigureWorkers() as workers:
        brief = assemble_brief(read_config(out / BRIEF_CONFIG), ds)
        write_brief(brief, out / "brief", workers)
    print("\nMorning briefing (invented scenario):")
    print("\n".join(f"  {line}" for line in brief["summary"]))
    return out / "brief"
