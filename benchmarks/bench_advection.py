"""Benchmark: temperature advection of one level on a 0.25-degree global grid (721 x 1440).

Prints times and two ratios, all measured in this run on this machine:

* against a memory-streaming floor: read the three input arrays once and write one
  output (two additions done in cache-sized row blocks, so each array crosses
  memory once) -- no advection code can beat this;
* against a straightforward ``numpy.gradient`` implementation with the spherical metric.

Goal (issue 2): within 3x of the floor and at least 4x faster than numpy.gradient.
Run: ``python benchmarks/bench_advection.py``.  No assertions: this reports.
"""

from __future__ import annotations

import time

import numpy as np

from parcelcast.advection import advection_array
from parcelcast.constants import EARTH_RADIUS
from parcelcast.grid import LatLonGrid
from parcelcast.grid._advection_kernel import warm_up

NY, NX = 721, 1440
REPEATS = 15


def best_of(func, *args) -> float:
    times = []
    for _ in range(REPEATS):
        start = time.perf_counter()
        func(*args)
        times.append(time.perf_counter() - start)
    return min(times)


def streaming_floor(t, u, v, out, rows: int = 32) -> None:
    buffer = np.empty((rows, t.shape[1]))
    for j0 in range(0, t.shape[0], rows):
        j1 = min(t.shape[0], j0 + rows)
        block = buffer[: j1 - j0]
        np.add(t[j0:j1], u[j0:j1], out=block)
        np.add(block, v[j0:j1], out=out[j0:j1])


def numpy_gradient_baseline(t, u, v, lat, lon):
    dlon = np.deg2rad(lon[1] - lon[0])
    dlat = np.deg2rad(lat[1] - lat[0])
    dtdx = np.gradient(t, dlon, axis=1) / (EARTH_RADIUS * np.cos(np.deg2rad(lat)))[:, None]
    dtdy = np.gradient(t, dlat, axis=0) / EARTH_RADIUS
    return -(u * dtdx + v * dtdy)


def main() -> None:
    rng = np.random.default_rng(1)
    lat = np.linspace(-90.0, 90.0, NY)
    lon = np.arange(NX) * 0.25
    grid = LatLonGrid(lat, lon, periodic_lon=True)
    t = 250.0 + 30.0 * rng.random((NY, NX))
    u = 20.0 * rng.standard_normal((NY, NX))
    v = 20.0 * rng.standard_normal((NY, NX))
    out = np.empty_like(t)
    warm_up()
    advection_array(t, u, v, grid)

    floor = best_of(streaming_floor, t, u, v, out)
    ours = best_of(advection_array, t, u, v, grid)
    baseline = best_of(numpy_gradient_baseline, t, u, v, lat, lon)
    print(f"grid {NY} x {NX} float64, best of {REPEATS}")
    print(f"  memory-streaming floor   {floor * 1e3:8.2f} ms")
    print(f"  parcelcast advection     {ours * 1e3:8.2f} ms")
    print(f"  numpy.gradient baseline  {baseline * 1e3:8.2f} ms")
    print(f"ratio parcelcast / floor            = {ours / floor:5.2f}  (goal <= 3)")
    print(f"ratio numpy.gradient / parcelcast   = {baseline / ours:5.2f}  (goal >= 4)")


if __name__ == "__main__":
    main()
