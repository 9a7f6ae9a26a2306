"""``parcelcast review``: a case review (timeline, trajectories, split maps) from a case TOML."""

from __future__ import annotations

import argparse


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("case", metavar="CASE.toml", help="case file (see parcelcast/review.py)")
    parser.add_argument("--out", metavar="DIR", help="output folder (default: review-<case name>)")


def review_document(case, review: dict, disclaimer: str) -> dict:
    """review.json: the split over the case window, in the layout of ``split --json``
    (``start``, ``end``, ``lat``, ``lon``, ``level_hPa``; ``lagrangian.origin`` as {lat, lon})."""
    from parcelcast.cli._common import iso_utc

    lagrangian = {k: v for k, v in review["lagrangian"].items()
                  if k not in ("paths", "origin_lat", "origin_lon")}
    lagrangian["origin"] = {"lat": review["lagrangian"].get("origin_lat"),
                            "lon": review["lagrangian"].get("origin_lon")}
    return {
        "title": case.title,
        "station": {"name": case.station_name, "lat": case.lat, "lon": case.lon},
        "start": iso_utc(case.start), "end": iso_utc(case.end),
        "lat": case.lat, "lon": case.lon, "level_hPa": case.level_hpa, "wind": case.wind,
        **review["eulerian"],
        "lagrangian": lagrangian,
        "advective_difference_K": review["advective_difference_K"],
        "consistency": review.get("consistency"),
        "disclaimer": disclaimer,
    }


def run(args) -> int:
    import csv
    import io
    import json
    from pathlib import Path

    from parcelcast.cli import DISCLAIMER
    from parcelcast.cli._common import jsonable
    from parcelcast.schemas import stamp
    from parcelcast.io import cf_netcdf
    from parcelcast.io.atomic import add_inputs, atomic_folder, write_text
    from parcelcast.render.review_figures import split_maps_figure, timeline_figure, trajectories_figure
    from parcelcast.report import html_page, markdown
    from parcelcast.review import build_review, read_case

    case = read_case(args.case)
    add_inputs(case.analyses)
    review = build_review(case)
    target = Path(args.out or f"review-{case.source.parent.name}")
    with atomic_folder(target) as out:  # the folder appears whole, or stays as it was
        timeline_figure(review, out / "timeline.png")
        split_maps_figure(review, out / "split-maps.png")
        trajectories_figure(review, out / "trajectories.png")
        buffer = io.StringIO()
        writer = csv.writer(buffer)
        writer.writerow(["time_utc", "observed_change_K", "advective_K", "vertical_K", "residual_K"])
        for row in review["timeline"]:
            writer.writerow([str(row["time"])[:19] + "Z"] + [
                "" if row[k] is None else f"{row[k]:.4f}"
                for k in ("observed_change_K", "advective_K", "vertical_K", "residual_K")])
        write_text(out / "timeline.csv", buffer.getvalue())
        cf_netcdf.write(review["fields"], out / "split-fields.nc",
                        f"parcelcast case review split maps: {case.title}")
        write_text(out / "review.json",
                   json.dumps(stamp(jsonable(review_document(case, review, DISCLAIMER))), indent=2,
                              allow_nan=False) + "\n")
        write_text(out / "report.md", markdown(review))
        write_text(out / "report.html", html_page(review))
    print(f"case review written to {target}/ (report.md, report.html, figures, timeline.csv)")
    print(DISCLAIMER)
    return 0
