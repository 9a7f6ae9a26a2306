"""Benchmark: 10,000 parcels for 48 h through a 4-D field, against a per-parcel scipy baseline.

Field: 1-degree global grid (181 x 360), 10 pressure levels, 3-hourly for 48 h (17 times);
a jet-like zonal flow with travelling waves and weak vertical motion (max about 45 m/s).
parcelcast: :func:`parcelcast.trajectories.integrate.integrate` (3-D mode, Petterssen and
RK4), all parcels at once, on one thread and on all of numba's threads (the parcels are
shared among threads; the paths are identical bit for bit, checked here too); the one-time
numba start-up is measured separately and printed.  Each run includes loading and preparing
the 17 time slices.  Best of ``--repeats`` runs (the machine may be shared: the load
average is printed before and after, and the CPU time of each run: on a busy machine a
1-thread run's CPU time is close to what it takes on a quiet one).  Throughput in parcel-steps per second (parcels x
time steps; each step evaluates the wind 4 times in both schemes).  Then the cost against
the number of parcels (time per parcel-step, close to constant = linear).
Baseline: ``scipy.interpolate.RegularGridInterpolator`` on (time, level, lat, lon) for u,
v and omega, and ``scipy.integrate.solve_ivp`` (RK45, rtol 1e-6) for one parcel at a time
in (lat, lon, p); run on a subset and scaled to 10,000 parcels.  Both are timed in the same
run.  Run: ``python benchmarks/bench_trajectories.py [--repeats 3] [--no-scaling]``.
Goal (issue 8 item 5b): under 1 s for 10,000 parcels x 48 h on this 2-core machine.
"""

from __future__ import annotations

import argparse
import os
import threading
import time

import numba
import numpy as np

from parcelcast.trajectories import _threads
from parcelcast.trajectories.integrate import FieldSource, integrate
from parcelcast.trajectories.interpolate import GridGeometry

A = 6_371_000.0


def make_field():
    lat = np.arange(-90.0, 90.5, 1.0)
    lon = np.arange(-180.0, 180.0, 1.0)
    lev = np.linspace(100000.0, 10000.0, 10)
    hours = np.arange(0, 49, 3.0)
    la = np.deg2rad(lat)[None, :, None]
    lo = np.deg2rad(lon)[None, None, :]
    sigma = (lev / 1e5)[:, None, None]

    def fields(h):
        ph = 2 * np.pi * h / 96.0
        u = (10 + 25 * (1 - sigma)) * np.cos(la) ** 2 + 8 * np.cos(la) * np.sin(3 * lo - ph)
        v = 8 * np.cos(la) * np.cos(3 * lo - ph) * np.sin(2 * la) ** 2
        w = 0.2 * np.sin(np.pi * sigma) * np.cos(la) * np.sin(2 * lo + ph)
        shape = (lev.size, lat.size, lon.size)
        return tuple(np.ascontiguousarray(np.broadcast_to(a, shape)) for a in (u, v, w))

    return lat, lon, lev, hours, fields


class ThreadCpu:
    """CPU time spent by each thread inside the shared (parallel) part of the wind kernel.

    On a busy machine wall times mostly measure the wait for a CPU; CPU times do not.  With
    ``serial`` = the run's CPU time minus the parallel part's, ``serial + longest thread``
    estimates the run's wall time on an idle machine (printed as an estimate).
    """

    def __init__(self):
        self.per_thread: dict[int, float] = {}
        self._original = _threads.share_parcels
        _threads.share_parcels = self._share

    def _share(self, n, work):
        def timed(lo, hi):
            c0 = time.thread_time()
            work(lo, hi)
            key = threading.get_ident()
            self.per_thread[key] = self.per_thread.get(key, 0.0) + time.thread_time() - c0

        self._original(n, timed)

    def take(self) -> tuple[float, float]:
        """(CPU of all threads in the parallel part, CPU of the busiest thread); reset."""
        values = list(self.per_thread.values()) or [0.0]
        self.per_thread = {}
        return sum(values), max(values)


def _load_text() -> str:
    one, five, _ = os.getloadavg()
    return f"load average {one:.2f} (1 min), {five:.2f} (5 min) on {os.cpu_count()} CPUs"


def main(n=10_000, n_base=20):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--no-scaling", action="store_true", help="skip the parcel-count series")
    args = ap.parse_args()
    print(f"before: {_load_text()}")
    lat, lon, lev, hours, fields = make_field()
    t_build = time.perf_counter()
    data = [fields(h) for h in hours]  # (u, v, omega) each (10, 181, 360) per time
    t_build = time.perf_counter() - t_build
    geom = GridGeometry.from_coords(lat, lon, lev)

    def loader(ti):
        u, v, w = data[ti]
        return geom.prepare({"omega": w[None]}, (u[None], v[None]))

    rng = np.random.default_rng(42)
    plat = rng.uniform(-80, 80, 3 * n)
    plon = rng.uniform(-180, 180, 3 * n)
    pp = rng.uniform(30000.0, 90000.0, 3 * n)
    times = hours * 3600.0

    cpu_meter = ThreadCpu()

    def run(scheme, count, threads):
        numba.set_num_threads(threads)
        src = FieldSource(geom, times, loader)
        cpu_meter.take()
        t0, c0 = time.perf_counter(), time.process_time()
        res = integrate(src, plat[:count], plon[:count], pp[:count], 0.0, 48 * 3600.0, mode="3d",
                        scheme=scheme, output_interval=3 * 3600.0)
        el, cpu = time.perf_counter() - t0, time.process_time() - c0
        parallel, longest = cpu_meter.take()
        return el, res, {"cpu": cpu, "idle_estimate": cpu - parallel + longest}

    def best(scheme, count, threads):
        """(best wall time, a result, CPU figures of that run)."""
        runs = [run(scheme, count, threads) for _ in range(args.repeats)]
        el, _, cpu = min(runs, key=lambda r: r[0])
        return el, runs[0][1], cpu

    # one-time start-up, not timed below: numba import and compilation of the wind kernel
    # (or loading it from numba's on-disk cache), on the same argument types as the runs
    t_warm = time.perf_counter()
    for scheme in ("petterssen", "rk4"):
        integrate(FieldSource(geom, times[:2], loader), plat[:10], plon[:10], pp[:10], 0.0,
                  3 * 3600.0, mode="3d", scheme=scheme, output_interval=3 * 3600.0)
    t_warm = time.perf_counter() - t_warm
    all_threads = numba.config.NUMBA_NUM_THREADS
    results = {}
    for scheme in ("petterssen", "rk4"):
        for threads in sorted({1, all_threads}):
            results[scheme, threads] = best(scheme, n, threads)

    # baseline: RegularGridInterpolator + solve_ivp per parcel
    from scipy.integrate import solve_ivp
    from scipy.interpolate import RegularGridInterpolator

    t0 = time.perf_counter()
    stack = [np.stack([d[k] for d in data]) for k in range(3)]  # (17, 10, 181, 360)
    # the interpolator needs ascending axes: use -ln p (ascending) and extend lon by wrap
    lon_ext = np.append(lon, 180.0)
    grids = (times, -np.log(lev), lat, lon_ext)
    itp = [RegularGridInterpolator(grids, np.concatenate([f, f[..., :1]], axis=-1)) for f in stack]
    t_setup = time.perf_counter() - t0

    def rhs(t, y):
        la_, lo_, p_ = y
        lo_w = (lo_ + 180.0) % 360.0 - 180.0
        pt = np.array([[t, -np.log(min(max(p_, lev[-1]), lev[0])), min(max(la_, -89.99), 89.99), lo_w]])
        u = itp[0](pt)[0]
        v = itp[1](pt)[0]
        w = itp[2](pt)[0]
        return [np.rad2deg(v / A), np.rad2deg(u / (A * np.cos(np.deg2rad(la_)))), w]

    t0 = time.perf_counter()
    base_end = []
    for k in range(n_base):
        sol = solve_ivp(rhs, (0.0, 48 * 3600.0), [plat[k], plon[k], pp[k]], rtol=1e-6, atol=1e-6)
        base_end.append(sol.y[:, -1])
    t_base = (time.perf_counter() - t0) * n / n_base + t_setup
    base_end = np.array(base_end)

    print(f"field: 1-deg global, 10 levels, 17 times (built in {t_build:.2f} s, not timed below)")
    print(f"start-up (numba import, kernel compile or cache load; once per process, not timed "
          f"below): {t_warm:.2f} s")
    print(f"baseline (RegularGridInterpolator + solve_ivp RK45, {n_base} parcels scaled to {n}): "
          f"{t_base:.1f} s (setup {t_setup:.2f} s)")
    from parcelcast.trajectories.sphere import great_circle_distance

    for (scheme, threads), (el, res, cpu) in results.items():
        d = great_circle_distance(res.lat[:n_base, -1], res.lon[:n_base, -1],
                                  base_end[:, 0], base_end[:, 1])
        steps = n * res.n_steps
        print(f"parcelcast {scheme:10s} {threads} thread{'s' if threads > 1 else ' '}: {el:.2f} s "
              f"for {n} parcels x 48 h (goal < 1 s; CPU {cpu['cpu']:.2f} s, idle-machine estimate "
              f"{cpu['idle_estimate']:.2f} s), {res.n_steps} steps of "
              f"<= {res.dt:.0f} s, "
              f"{steps / el / 1e6:.2f} M parcel-steps/s; speed-up x{t_base / el:.0f} over the "
              f"baseline; end points vs baseline: median {np.median(d) / 1e3:.2f} km, max "
              f"{d.max() / 1e3:.2f} km; status ok {np.mean(res.status == 0):.3f}")
    for scheme in ("petterssen", "rk4"):
        one, many = results[scheme, 1], results[scheme, all_threads]
        same = all(np.array_equal(getattr(one[1], k), getattr(many[1], k), equal_nan=True)
                   for k in ("lat", "lon", "pressure", "status"))
        print(f"{scheme}: {all_threads} threads / 1 thread speed-up x{one[0] / many[0]:.2f}; "
              f"paths identical bit for bit: {same}")

    if not args.no_scaling:
        print(f"cost against the number of parcels (petterssen, {all_threads} threads, best of "
              f"{args.repeats}; constant us per parcel-step = linear):")
        for count in (1_000, 3_000, 10_000, 30_000):
            el, res, cpu = best("petterssen", count, all_threads)
            steps = count * res.n_steps
            print(f"  {count:6d} parcels  {el:6.2f} s  {el / steps * 1e6:6.3f} us per parcel-step "
                  f"(CPU {cpu['cpu'] / steps * 1e6:6.3f} us, idle-machine estimate "
                  f"{cpu['idle_estimate'] / steps * 1e6:6.3f} us)")
    print(f"after: {_load_text()}")


if __name__ == "__main__":
    main()
