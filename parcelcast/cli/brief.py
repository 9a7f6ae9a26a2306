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

    config = read_config(args.config)
    out = Path(args.out or f"brief-{Path(args.config).stem}")
    doc = write_brief(assemble_brief(config), out)
    print("\n".join(doc["summary"]))
    print(f"\nbriefing written to {out}/ ({', '.join(FILES.values())} and "
          f"{len(doc['figures'])} figures)")
    print(doc["disclaimer"])
    return 0
