"""``parcelcast brief``: the morning briefing from a configuration file (HTML, Markdown, JSON)."""

from __future__ import annotations

import argparse


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("config", metavar="CONFIG.toml",
                        help="briefing configuration: [station] name, lat, lon; [data] analyses, "
                        "wind; [brief] levels_hPa, area_lat, area_lon, trajectory_hours "
                        "(see parcelcast/brief/config.py)")
    parser.add_argument("--out", metavar="DIR",
                        help="output folder, replaced as a whole (default: brief-<config name>)")


def run(args) -> int:
    from pathlib import Path

    from parcelcast.brief import assemble_brief, read_config, write_brief
    from parcelcast.brief.write import FILES
    from parcelcast.render.parallel import FigureWorkers

    config = read_config(args.config)
    out = Path(args.out or f"brief-{Path(args.config).stem}")
    with FigureWorkers() as workers:  # they load the drawing libraries while the data are read
        doc = write_brief(assemble_brief(config), out, workers)
    print("\n".join(doc["summary"]))
    print(f"\nbriefing written to {out}/ ({', '.join(FILES.values())} and "
          f"{len(doc['figures'])} figures)")
    print(doc["disclaimer"])
    return 0
