"""Benchmark: 10,000 parcels for 48 h through a 4-D field, against a per-parcel scipy baseline.

Field: 1-degree global grid (181 x 360), 10 pressure levels, 3-hourly for 48 h (17 times);
a jet-like zonal flow with travelling waves and weak vertical motion (max about 45 m/s).
parcelcast: :func:`parcelcast.trajectories.integrate.integrate` (3-D mode, Petterssen and
RK4), all parcels at once, one core (the compiled wind kernel is single-threaded); the
one-time numba start-up is measured separately and printed.  Each run includes loading and
preparing the 17 time slices.  Baseline: ``scipy.interpolate.RegularGridInterpolator`` on
(time, level, lat, lon) for u, v and omega, and ``scipy.integrate.solve_ivp`` (RK45,
rtol 1e-6) for one parcel at a time in (lat, lon, p); run on a subset and scaled to
10,000 parcels.  Both are timed in the same run.  Run: ``python benchmarks/bench_trajectories.py``.
"""

from __future__ import annotations

import time

import numpy as np

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


def main(n=10_000, n_base=20):
    lat, lon, lev, hours, fields = make_field()
    t_build = time.perf_counter()
    data = [fields(h) for h in hours]  # (u, v, omega) each (10, 181, 360) per time
    t_build = time.perf_counter() - t_build
    geom = GridGeometry.from_coords(lat, lon, lev)

    def loader(ti):
        u, v, w = data[ti]
        return geom.prepare({"omega": w[None]}, (u[None], v[None]))

    rng = np.random.default_rng(42)
    plat = rng.uniform(-80, 80, n)
    plon = rng.uniform(-180, 180, n)
    pp = rng.uniform(30000.0, 90000.0, n)
    times = hours * 3600.0
    # one-time start-up, not timed below: numba import and compilation of the wind kernel
    # (or loading it from numba's on-disk cache), on the same argument types as the runs
    t_warm = time.perf_counter()
    for scheme in ("petterssen", "rk4"):
        integrate(FieldSource(geom, times[:2], loader), plat[:10], plon[:10], pp[:10], 0.0,
                  3 * 3600.0, mode="3d", scheme=scheme, output_interval=3 * 3600.0)
    t_warm = time.perf_counter() - t_warm
    results = {}
    for scheme in ("petterssen", "rk4"):
        src = FieldSource(geom, times, loader)
        t0 = time.perf_counter()
        res = integrate(src, plat, plon, pp, 0.0, 48 * 3600.0, mode="3d", scheme=scheme,
                        output_interval=3 * 3600.0)
        results[scheme] = (time.perf_counter() - t0, res)

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

    for scheme, (el, res) in results.items():
        d = great_circle_distance(res.lat[:n_base, -1], res.lon[:n_base, -1],
                                  base_end[:, 0], base_end[:, 1])
        print(f"parcelcast {scheme:10s}: {el:.2f} s for {n} parcels, {res.n_steps} steps of "
              f"<= {res.dt:.0f} s; speed-up x{t_base / el:.0f}; end-point difference from "
              f"baseline: median {np.median(d) / 1e3:.2f} km, max {d.max() / 1e3:.2f} km; "
              f"status ok {np.mean(res.status == 0):.3f}")


if __name__ == "__main__":
    main()
