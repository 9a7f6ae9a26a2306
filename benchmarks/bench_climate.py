"""Benchmark: the climate run's throughput and peak memory, against record length.

Synthetic records are generated in a temporary folder under /tmp (never in the
repository) and removed afterwards: a drifting wave with winds and omega, float32,
6-hourly, NetCDF-4 chunked by time and level (whole horizontal slabs).

Cases (each in its own Python process, which reports its own peak RSS from
``resource.getrusage``):

* station path, 1-degree global (181 x 360, 3 levels), 850 hPa, 6-h windows, 30 days and
  120 days of record: peak memory should not grow with the record's length
  (ratio 120 d / 30 d close to 1);
* baseline measured in the same run: the in-memory path (whole record read, then the
  existing split per window) on the 30-day record;
* full-field path (split maps of every window streamed to NetCDF): the same two 1-degree
  records, then 0.25-degree global (721 x 1440, 10 levels, 48 times): peak memory against
  the record's length and size.

Throughput (imports and the compiled kernel's loading excluded): windows per second, and grid points per second (station path: the
record's horizontal points times analysis times covered per second; full-field path:
map points produced per second).  Run: ``python benchmarks/bench_climate.py``
(``--quick`` for small records, a few seconds).  No assertions: this reports.
"""

from __future__ import annotations

import argparse
import json
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

A = 6_371_000.0
STATION = (52.0, 1.0)


# ------------------------------------------------------------------------- synthetic records
def write_record(path: Path, days: float, dlat: float, levels_hpa, step_h: int = 6) -> dict:
    """A drifting wave with omega, written time by time (float32, chunk = one slab)."""
    import netCDF4

    lat = np.arange(-90.0, 90.0 + dlat / 2, dlat)
    lon = np.arange(-180.0, 180.0, dlat)
    levels = np.asarray(levels_hpa, dtype=np.float64)
    ntime = int(days * 24 / step_h) + 1
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    c = 10.0 / (A * np.cos(np.deg2rad(45.0)))
    u = (c * A * np.cos(phi)).astype(np.float32)
    with netCDF4.Dataset(path, "w", format="NETCDF4") as nc:
        for name, values, units in (("time", None, "hours since 2024-01-01 00:00:00"),
                                    ("level", levels, "hPa"), ("lat", lat, "degrees_north"),
                                    ("lon", lon, "degrees_east")):
            nc.createDimension(name, None if values is None else values.size)
            var = nc.createVariable(name, "f8", (name,))
            var.units = units
            if values is not None:
                var[:] = values
        nc["level"].standard_name = "air_pressure"
        dims, chunks = ("time", "level", "lat", "lon"), (1, 1, lat.size, lon.size)
        fields = {}
        for name, std, units in (("t", "air_temperature", "K"), ("u", "eastward_wind", "m s-1"),
                                 ("v", "northward_wind", "m s-1"),
                                 ("w", "lagrangian_tendency_of_air_pressure", "Pa s-1")):
            fields[name] = nc.createVariable(name, "f4", dims, chunksizes=chunks)
            fields[name].setncatts({"standard_name": std, "units": units})
        for k in range(ntime):
            seconds = k * step_h * 3600.0
            wave = np.cos(phi) ** 2 * np.sin(3 * (lam - c * seconds))
            # a slow local change that stays plausible over any record length (an annual course)
            seasonal = 10.0 * np.sin(2.0 * np.pi * seconds / (365.25 * 86400.0))
            nc["time"][k] = k * step_h
            for j, p in enumerate(levels):
                fields["t"][k, j] = 260.0 + 8.0 * wave + (p - 850.0) * 0.01 + seasonal
                fields["u"][k, j] = u
                fields["v"][k, j] = 2.0 * np.sin(lam) * np.cos(phi)
                fields["w"][k, j] = 0.2 * np.sin(2 * lam) * np.cos(phi) * np.cos(seconds / 13751.0)
    return {"path": str(path), "times": ntime, "ny": lat.size, "nx": lon.size,
            "levels": levels.size, "bytes": path.stat().st_size}


# ------------------------------------------------------------------------------ child cases
def child(case: str, path: str, out: str) -> None:
    """Run one case in this process and print its figures as one JSON line."""
    import resource

    import dask.array  # noqa: F401  (imports and the compiled kernel's loading are not timed)
    import netCDF4  # noqa: F401
    import xarray  # noqa: F401

    from parcelcast.climate import climate_maps, climate_split
    from parcelcast.grid._advection_kernel import warm_up

    warm_up()
    start = time.perf_counter()
    if case == "station":
        windows = sum(1 for _ in climate_split(path, *STATION, 850.0, 6))
    elif case == "in-memory":
        from parcelcast.budget import eulerian_split
        from parcelcast.climate import consecutive_windows
        from parcelcast.io.analysis import open_analysis

        ds = open_analysis(path, roles=["temperature", "u", "v", "omega"]).load()
        windows = 0
        for w in consecutive_windows(ds["time"].values, 6):
            eulerian_split(ds, *STATION, 850.0, w.start, w.end)
            windows += 1
    else:  # maps
        from parcelcast.climate.fields import maps_writer

        windows = 0
        with maps_writer(out, {"benchmark": "bench_climate"}) as write:
            for maps in climate_maps(path, 850.0, 6):
                write(maps)
                windows += 1
    elapsed = time.perf_counter() - start
    peak_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # KiB on Linux
    print(json.dumps({"case": case, "windows": windows, "seconds": elapsed,
                      "peak_rss_MB": peak_kib / 1024.0}))


def run_child(case: str, record: dict, out: Path) -> dict:
    done = subprocess.run([sys.executable, __file__, "--child", case, record["path"], str(out)],
                          capture_output=True, text=True, check=False)
    if done.returncode != 0:
        raise RuntimeError(f"{case} failed:\n{done.stderr[-3000:]}")
    return {**json.loads(done.stdout.strip().splitlines()[-1]), **record}


def report(name: str, r: dict, points_per_window: float | None = None) -> None:
    wps = r["windows"] / r["seconds"]
    points = (r["windows"] * points_per_window if points_per_window
              else r["times"] * r["ny"] * r["nx"]) / r["seconds"]
    print(f"{name:38s} {r['times']:5d} times  {r['bytes'] / 1e6:8.0f} MB file  "
          f"{r['windows']:4d} windows  {r['seconds']:7.1f} s  {wps:7.2f} windows/s  "
          f"{points:10.3g} points/s  peak {r['peak_rss_MB']:7.0f} MB")


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--quick", action="store_true", help="small records (seconds)")
    parser.add_argument("--child", nargs=3, metavar=("CASE", "PATH", "OUT"), help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.child:
        child(*args.child)
        return
    short, long_, fine = ((3, 12, 0.25 * 8) if args.quick else (30, 120, 0.25))
    fine_levels = (1000, 925, 850, 700, 600, 500, 400, 300, 250, 200)
    folder = Path(tempfile.mkdtemp(prefix="parcelcast-bench-climate-", dir="/tmp"))
    try:
        print(f"records in {folder} (removed afterwards)")
        rec = {d: write_record(folder / f"global-1deg-{d}d.nc", d, 1.0, (925, 850, 700))
               for d in (short, long_)}
        r_short = run_child("station", rec[short], folder / "x")
        r_long = run_child("station", rec[long_], folder / "x")
        r_mem = run_child("in-memory", rec[short], folder / "x")
        print("station path (850 hPa, 6-h windows, 4 x 4 neighbourhood, lazy):")
        report(f"  1-deg global, {short} days", r_short)
        report(f"  1-deg global, {long_} days", r_long)
        report(f"  baseline: in memory, {short} days", r_mem)
        print(f"  peak memory {long_} d / {short} d: {r_long['peak_rss_MB'] / r_short['peak_rss_MB']:.2f}"
              f" (record {rec[long_]['bytes'] / rec[short]['bytes']:.1f}x longer); "
              f"in-memory / lazy at {short} d: {r_mem['peak_rss_MB'] / r_short['peak_rss_MB']:.2f}; "
              f"throughput lazy / in-memory: "
              f"{(r_short['windows'] / r_short['seconds']) / (r_mem['windows'] / r_mem['seconds']):.2f}")
        maps = {d: run_child("maps", rec[d], folder / "maps.nc") for d in (short, long_)}
        print("full-field path (split maps of every 6-h window streamed to NetCDF, 850 hPa, omega):")
        for d in (short, long_):
            report(f"  1-deg global, {d} days", maps[d], points_per_window=rec[d]["ny"] * rec[d]["nx"])
        print(f"  peak memory {long_} d / {short} d: "
              f"{maps[long_]['peak_rss_MB'] / maps[short]['peak_rss_MB']:.2f}")
        for path in rec.values():
            Path(path["path"]).unlink()
        big = write_record(folder / "global-quarter-deg.nc", 47 * 6 / 24, fine, fine_levels)
        r_big = run_child("maps", big, folder / "maps.nc")
        report(f"  {fine:g}-deg global, {len(fine_levels)} levels", r_big,
               points_per_window=big["ny"] * big["nx"])
        print(f"  peak memory / record size: {r_big['peak_rss_MB'] * 1e6 / big['bytes']:.3f}")
    finally:
        shutil.rmtree(folder, ignore_errors=True)


if __name__ == "__main__":
    main()
