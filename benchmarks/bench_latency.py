"""Benchmark: how long a real one-point question takes, against the time Python needs to
import the libraries any tool on this stack needs (the import floor).

Run: ``python benchmarks/bench_latency.py [--repeat 3] [--no-cold]``

Measures, in one run, each as a fresh process:
1. the floor: ``python -c "import pyproj, xarray, cfgrib"``;
2. advect, profile and track on the GFS and ERA5 files of ``../shared/data`` (or
   ``$PARCELCAST_DATA``), the commands of issue 8;
3. each: one warm-up run, then the best of ``--repeat`` runs, as seconds and as a ratio to
   the floor (best of the same number of runs, measured between the commands so that a
   change in the machine's load touches both), in wall-clock and in CPU seconds (user +
   system: a loaded machine stretches the wall clock more than the CPU time);
4. the cold first run: an empty cache folder (no GRIB index or scan, no compiled kernels),
   as after a fresh install, and the first run after the set-up's ``parcelcast prepare``.

Targets (issue 8): advect <= 2.0x, profile <= 2.5x, track (24 h, one parcel) <= 3.0x the
floor.  Prints times and ratios; no assertions.  On a loaded machine the seconds grow but
the ratios stay fair, since floor and commands are measured side by side.
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
FLOOR = [sys.executable, "-c", "import pyproj, xarray, cfgrib"]
CLI = [sys.executable, "-c", "from parcelcast.cli import console; console()"]

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ERA5 = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"

#: name, arguments (file name first), target ratio to the floor
CASES = (
    ("advect GFS 850 hPa point", [GFS, "--level", "850", "--at", "50,5", "--json"], 2.0),
    ("advect ERA5 geostrophic point", [ERA5, "--level", "850", "--at", "51,12", "--wind",
                                       "geostrophic", "--json"], 2.0),
    ("profile GFS column", [GFS, "--at", "50,5", "--json"], 2.5),
    ("track ERA5 24 h back, geostrophic", [ERA5, "--from", "51,12", "--level", "850", "--back", "24",
                                           "--wind", "geostrophic", "--json"], 3.0),
    ("track GFS 24 h back", [GFS, "--from", "51,12", "--level", "850", "--back", "24", "--json"], 3.0),
)


def data_dir() -> Path:
    return Path(os.environ.get("PARCELCAST_DATA") or REPO.parent / "shared" / "data")


def command_of(name: str, args: list[str]) -> list[str]:
    return [*CLI, name.split()[0], str(data_dir() / args[0]), *args[1:]]


def seconds(command: list[str], env: dict) -> tuple[float, float]:
    """Wall-clock and CPU (user + system) seconds of one run of ``command``."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run(command, env=env, capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode != 0:
        raise SystemExit(f"failed ({done.returncode}): {' '.join(command)}\n{done.stderr[-2000:]}")
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return elapsed, cpu


def best(command: list[str], env: dict, repeat: int) -> tuple[float, float]:
    """Best wall-clock and best CPU seconds of ``repeat`` runs."""
    runs = [seconds(command, env) for _ in range(repeat)]
    return min(r[0] for r in runs), min(r[1] for r in runs)


def environment(cache: Path) -> dict:
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env["PYTHONPATH"] = os.pathsep.join(filter(None, [str(REPO), env.get("PYTHONPATH", "")]))
    env["PARCELCAST_CACHE"] = str(cache)  # numba's cache goes under it too (cli/__init__.py)
    return env


def machine() -> str:
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    return (f"{platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
            f"Python {platform.python_version()}, load average {load:.1f} at the start")


def cold_runs(cases, prepared: bool) -> list[tuple[str, float, float]]:
    """First run of each case in a fresh cache folder (optionally after ``prepare``)."""
    rows = []
    for name, args, _ in cases:
        with tempfile.TemporaryDirectory() as folder:
            env = environment(Path(folder))
            if prepared:
                seconds([*CLI, "prepare"], env)
            floor = seconds(FLOOR, env)[0]
            rows.append((name, seconds(command_of(name, args), env)[0], floor))
    return rows


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3, help="timed runs per command (best kept)")
    parser.add_argument("--no-cold", action="store_true", help="skip the cold first runs")
    args = parser.parse_args()
    if not (data_dir() / GFS).is_file():
        raise SystemExit(f"shared data not found in {data_dir()} (set PARCELCAST_DATA)")
    print(f"machine: {machine()}")
    with tempfile.TemporaryDirectory() as folder:
        env = environment(Path(folder))
        seconds([*CLI, "prepare"], env)  # compiled kernels in this run's cache
        seconds(FLOOR, env)  # warm the file-system cache for the floor too
        print(f"\nwarm runs: best of {args.repeat} after a warm-up; floor = best of {args.repeat} "
              "of `python -c 'import pyproj, xarray, cfgrib'` measured just before each command")
        print("(wall: elapsed seconds; cpu: user + system seconds of the process, less touched "
              "by other load)")
        print(f"{'command':<36} {'wall s':>7} {'floor':>6} {'ratio':>6}   {'cpu s':>6} {'floor':>6} "
              f"{'ratio':>6}  {'target':>6}")
        for name, case_args, target in CASES:
            command = command_of(name, case_args)
            seconds(command, env)  # warm-up: GRIB index and scan cached, kernels loaded once
            floor = best(FLOOR, env, args.repeat)
            took = best(command, env, args.repeat)
            wall, cpu = took[0] / floor[0], took[1] / floor[1]
            verdict = "ok" if wall <= target else "OVER"
            print(f"{name:<36} {took[0]:7.2f} {floor[0]:6.2f} {wall:6.2f}   {took[1]:6.2f} {floor[1]:6.2f} "
                  f"{cpu:6.2f}  {target:5.1f}x {verdict}")
    if args.no_cold:
        return
    for prepared, title in ((False, "cold first run, empty cache (fresh install, no set-up step)"),
                            (True, "first run after `parcelcast prepare` (the README set-up)")):
        print(f"\n{title}")
        print(f"{'command':<36} {'seconds':>8} {'floor s':>8} {'ratio':>6}")
        for name, took, floor in cold_runs(CASES, prepared):
            print(f"{name:<36} {took:8.2f} {floor:8.2f} {took / floor:6.2f}")


if __name__ == "__main__":
    main()
