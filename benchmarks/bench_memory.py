"""Benchmark: peak memory of a one-level question on a large NetCDF file (issue 8: at most 700 MB).

Writes a synthetic 0.25-degree global file (t, u, v; 10 levels x 4 times; float32; about
500 MB) into a temporary folder, runs ``parcelcast advect FILE --level 850 --at 50,5 --json``
in a fresh process and reports its peak resident memory (the child's ``ru_maxrss``) beside
the file's size, and the same for the full-field map question (``--out`` NetCDF of the
level).  The file is deleted afterwards.

    python benchmarks/bench_memory.py
"""

from __future__ import annotations

import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

COMMAND = [sys.executable, "-c", "from parcelcast.cli import console; console()"]
LEVELS_HPA = (1000, 925, 850, 700, 600, 500, 400, 300, 250, 200)
GOAL_MB = 700.0


def write_file(path: Path) -> None:
    """A smooth synthetic atmosphere on the 0.25-degree global grid, one level at a time."""
    import netCDF4

    lat = np.linspace(90.0, -90.0, 721)
    lon = np.arange(0.0, 360.0, 0.25)
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    with netCDF4.Dataset(path, "w") as nc:
        for name, values, attrs in (
                ("time", np.arange(4) * 6.0, {"units": "hours since 2026-03-14 00:00"}),
                ("level", np.array(LEVELS_HPA, float), {"units": "hPa", "standard_name": "air_pressure"}),
                ("lat", lat, {"units": "degrees_north", "standard_name": "latitude"}),
                ("lon", lon, {"units": "degrees_east", "standard_name": "longitude"})):
            nc.createDimension(name, values.size)
            var = nc.createVariable(name, "f8", (name,))
            var.setncatts(attrs)
            var[:] = values
        dims = ("time", "level", "lat", "lon")
        fields = {name: nc.createVariable(name, "f4", dims, chunksizes=(1, 1, 721, 1440))
                  for name in ("t", "u", "v")}
        fields["t"].setncatts({"units": "K", "standard_name": "air_temperature"})
        fields["u"].setncatts({"units": "m s-1", "standard_name": "eastward_wind"})
        fields["v"].setncatts({"units": "m s-1", "standard_name": "northward_wind"})
        for k in range(4):
            for j, p in enumerate(LEVELS_HPA):
                wave = np.cos(3.0 * (lam - 0.1 * k)) * np.cos(phi)
                fields["t"][k, j] = 288.0 - 40.0 * np.sin(phi) ** 2 - 0.06 * (1000.0 - p) + 3.0 * wave
                fields["u"][k, j] = 15.0 * np.cos(phi)
                fields["v"][k, j] = 5.0 * np.sin(lam) * np.cos(phi)


_WRAPPER = ("import resource, subprocess, sys; "
            "subprocess.run(sys.argv[1:], check=True, capture_output=True); "
            "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")


def peak_of(argv) -> tuple[float, float]:
    """Peak resident memory (MB) and wall seconds of one fresh ``parcelcast`` process, run
    by a small wrapper process of its own (``ru_maxrss`` of children is the largest child
    so far, so each question gets a wrapper that has no other child)."""
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", _WRAPPER, *COMMAND, *argv], check=True,
                          capture_output=True, text=True)
    return int(done.stdout.split()[-1]) / 1024.0, time.perf_counter() - start


def main() -> int:
    with tempfile.TemporaryDirectory(prefix="parcelcast-bench-memory-") as tmp:
        path = Path(tmp) / "global-025deg-10lev-4times.nc"
        write_file(path)
        size_mb = path.stat().st_size / 1e6
        print(f"file: 0.25-degree global, t u v, {len(LEVELS_HPA)} levels x 4 times, float32, "
              f"{size_mb:.0f} MB (synthetic, in {tmp}, removed afterwards)")
        point, point_s = peak_of(["advect", str(path), "--level", "850", "--at", "50,5", "--json"])
        print(f"advect --level 850 --at 50,5 --json: peak {point:.0f} MB in {point_s:.2f} s; "
              f"ratio peak / file = {point / size_mb:.2f} (goal: peak <= {GOAL_MB:.0f} MB)")
        field, field_s = peak_of(["advect", str(path), "--level", "850",
                                  "--out", str(Path(tmp) / "adv850.nc")])
        print(f"advect --level 850 --out FIELD.nc (the whole level): peak {field:.0f} MB in "
              f"{field_s:.2f} s; ratio peak / file = {field / size_mb:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
