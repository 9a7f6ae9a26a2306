"""``parcelcast prepare``: compile the numba kernels once, into the cache folder (and parse
pint's unit definitions once, kept there too).

Compiling takes several seconds on a first run after installing (numba keeps the result);
the README's set-up command runs this so that the first real question does not pay it.
Each kernel's ``warm_up`` compiles the signatures the commands use, and no others.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
import time

#: the compiled kernels, each with a ``warm_up()``
KERNELS = (
    ("advection", "parcelcast.grid._advection_kernel"),
    ("trajectories", "parcelcast.trajectories._kernel"),
    ("parcel lifting", "parcelcast.thermo._parcel_kernel"),
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--json", action="store_true", help="print the seconds per kernel as JSON")


def run(args) -> int:
    from parcelcast.cli._common import print_json
    from parcelcast.progress import progress

    from parcelcast.units import registry

    seconds = {}
    start = time.perf_counter()
    registry()  # pint's parsed unit definitions, cached beside the kernels
    seconds["unit definitions"] = round(time.perf_counter() - start, 2)
    with progress("compiling kernels", total=len(KERNELS)) as step:
        for name, module in KERNELS:
            start = time.perf_counter()
            importlib.import_module(module).warm_up()
            seconds[name] = round(time.perf_counter() - start, 2)
            step()
    folder = os.environ.get("NUMBA_CACHE_DIR", "numba's default folder")
    if args.json:
        print_json({"seconds": seconds, "cache": folder})
    else:
        for name, value in seconds.items():
            print(f"  {name:<15} {value:6.2f} s")
        print(f"kernels compiled into {folder}", file=sys.stderr)
    return 0
