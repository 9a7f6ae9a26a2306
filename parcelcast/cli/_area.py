"""The ``--area LAT0,LAT1,LON0,LON1`` option of the commands that draw maps."""

from __future__ import annotations

import argparse


def map_area(text: str) -> list[float]:
    """Parse ``LAT0,LAT1,LON0,LON1`` (degrees north / east) for argparse."""
    from parcelcast.errors import ParcelcastError
    from parcelcast.render.maps import check_area

    try:
        values = [float(x) for x in text.split(",")]
    except ValueError:
        values = []
    if len(values) != 4:
        raise argparse.ArgumentTypeError(
            f"expected LAT0,LAT1,LON0,LON1 in degrees such as 40,60,-10,20; got {text!r}")
    try:
        return check_area(values)
    except ParcelcastError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def add_area_argument(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--area", type=map_area, metavar="LAT0,LAT1,LON0,LON1",
                        help="map area in degrees (south, north, west, east), e.g. 40,60,-10,20; "
                        "default: the whole grid (advect) or the paths' extent (track)")
