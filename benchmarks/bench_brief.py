"""The morning briefing against one ``advect --at`` call on the same file (issue 9: at most 3x).

Both run as the user runs them (a fresh ``parcelcast`` process each: start-up, opening the
file, computing, writing), alternately, ``--repeat`` times; the ratio of the medians is printed,
of the wall-clock times and of the CPU times (user + system, the process and the workers it
waited for: steadier than the wall clock when the machine is shared; the briefing draws its
figures in parallel, so its CPU time exceeds its wall time on an idle machine).
The real files are looked for in ``PARCELCAST_DATA`` or ``../shared/data``.

    python benchmarks/bench_brief.py [--repeat 3]
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CASES = (  # file, wind, levels
    ("gfs-20111008T00-f072-global-2p5deg.grb2", "actual", (850, 700)),
    ("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1", "geostrophic", (850, 500)),
)
COMMAND = [sys.executable, "-c", "from parcelcast.cli import console; console()"]


def _cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def _timed(argv) -> tuple[float, float]:
    """Wall-clock and CPU seconds of one run."""
    start, cpu = time.perf_counter(), _cpu()
    subprocess.run(COMMAND + argv, check=True, capture_output=True)
    return time.perf_counter() - start, _cpu() - cpu


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    data = Path(os.environ.get("PARCELCAST_DATA", Path(__file__).resolve().parents[2] / "shared" / "data"))
    for name, wind, levels in CASES:
        path = data / name
        if not path.is_file():
            print(f"{name}: not found in {data}, skipped")
            continue
        with tempfile.TemporaryDirectory() as tmp:
            config = Path(tmp) / "brief.toml"
            config.write_text(f'[station]\nname = "Harbour Point"\nlat = 50.0\nlon = 5.0\n'
                              f'[data]\nanalyses = ["{path}"]\nwind = "{wind}"\n'
                              f"[brief]\nlevels_hPa = {list(levels)}\narea_lat = [40.0, 60.0]\n"
                              "area_lon = [-10.0, 20.0]\ntrajectory_hours = 24\n")
            advect, brief = [], []
            for _ in range(args.repeat):
                advect.append(_timed(["advect", str(path), "--level", "850", "--wind", wind,
                                      "--at", "50,5", "--json"]))
                brief.append(_timed(["brief", str(config), "--out", str(Path(tmp) / "out")]))
        a, b = (statistics.median(t for t, _ in runs) for runs in (advect, brief))
        ca, cb = (statistics.median(c for _, c in runs) for runs in (advect, brief))
        print(f"{name}: advect --at {a:.2f} s, brief {b:.2f} s (medians of {args.repeat}): "
              f"brief / advect = {b / a:.2f} (issue 9 asks for at most 3); "
              f"CPU {ca:.2f} s and {cb:.2f} s: {cb / ca:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
