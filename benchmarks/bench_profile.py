"""Benchmark: CAPE/CIN of three parcels, vectorised kernel against a solve_ivp baseline.

Run: ``python benchmarks/bench_profile.py [--columns 10000] [--baseline-columns 40]``

Measures, in one run:
1. all three parcels (surface, mixed layer, most unstable) of one 100-level profile;
2. the same for 10,000 columns at once (synthetic 100-level columns, and the GFS
   2.5-degree analysis columns when ../shared/data is present);
3. a straightforward baseline: per column and parcel, the pseudo-adiabat integrated by
   scipy ``solve_ivp`` (RK45, rtol 1e-6) from the LCL through the levels, then the
   buoyancy integrated by the trapezoid rule.  The baseline is timed on a subset of
   columns and scaled to the full count.

The kernel is compiled with numba: the first call (compile, or load from numba's on-disk
cache, plus building the pseudo-adiabat table) is a warm-up outside the timings; its time
and the time of a compile from scratch (fresh process, empty cache) are printed.  Single
thread.  Prints times and ratios (goal: at least 20x).  No assertions.
"""

from __future__ import annotations

import argparse
import os
import time
from pathlib import Path

import numpy as np
from scipy.integrate import solve_ivp

from parcelcast.thermo import (
    PARCELS,
    lcl_romps,
    lift_parcel,
    lift_parcels,
    mixing_ratio_from_dewpoint,
    pseudoadiabatic_lapse_rate,
)
from parcelcast.thermo.constants import EPSILON, KAPPA, RD
from parcelcast.thermo.parcel import parcel_start


def synthetic(ncol, nlev=100, seed=0):
    rng = np.random.default_rng(seed)
    p = np.geomspace(100000.0, 10000.0, nlev)
    t0 = rng.uniform(285.0, 305.0, (ncol, 1))
    expo = rng.uniform(0.16, 0.21, (ncol, 1))
    t = np.maximum(t0 * (p / 1e5) ** expo, 205.0)
    dd = rng.uniform(1.0, 12.0, (ncol, 1))
    td = np.minimum(t - dd - 30.0 * (1 - p / 1e5) ** 1.5, t)
    return p, t, td


def baseline_column(p, t, td, parcel):
    """One column, one parcel, the plain way: solve_ivp per parcel, trapezoid integral."""
    p0, t0, td0, idx = (np.asarray(a).item() for a in parcel_start(p, t, td, parcel))
    pl, tl, _ = (float(a) for a in lcl_romps(p0, t0, dewpoint=min(td0, t0)))
    r0 = float(mixing_ratio_from_dewpoint(td0, p0))
    sel = np.arange(p.size) >= idx
    pp, tt, tdd = p[sel], t[sel], td[sel]
    above = pp < pl
    tp = t0 * (pp / p0) ** KAPPA
    if above.any():
        sol = solve_ivp(lambda x, y: pseudoadiabatic_lapse_rate(y, np.exp(x)), [np.log(pl), np.log(pp[above][-1])],
                        [tl], t_eval=np.log(pp[above]), rtol=1e-6, atol=1e-6)
        tp[above] = sol.y[0]
    es = 611.2 * np.exp(17.62 * (tp - 273.15) / (tp - 273.15 + 243.12))
    rp = np.where(above, EPSILON * es / (pp - es), r0)
    re = np.nan_to_num(mixing_ratio_from_dewpoint(tdd, pp))
    b = tp * (1 + rp / EPSILON) / (1 + rp) - tt * (1 + re / EPSILON) / (1 + re)
    x = -np.log(pp)
    seg = 0.5 * (b[:-1] + b[1:]) * np.diff(x)
    return RD * seg[seg > 0].sum(), RD * seg[seg < 0].sum()


def time_kernel(p, t, td, repeat=3):
    """Best and median of ``repeat`` timed calls (seconds)."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        lift_parcels(p, t, td, PARCELS)
        times.append(time.perf_counter() - t0)
    return min(times), float(np.median(times))


def cold_compile_time():
    """Seconds for a fresh numba compile of the parcel kernels (new process, empty cache dir)."""
    import subprocess
    import sys
    import tempfile

    code = ("import time, numpy as np; from parcelcast.thermo.moist import _table; _table(); "
            "t0 = time.perf_counter(); from parcelcast.thermo._parcel_kernel import warm_up; warm_up(); "
            "print(time.perf_counter() - t0)")
    with tempfile.TemporaryDirectory() as cache:
        env = dict(os.environ, NUMBA_CACHE_DIR=cache)
        out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True)
    return float(out.stdout.split()[-1])


def time_baseline(p, t, td, ncols):
    t0 = time.perf_counter()
    for i in range(ncols):
        for kind in PARCELS:
            baseline_column(p, t[i], td[i], kind)
    return time.perf_counter() - t0


def gfs_columns(n):
    folder = Path(os.environ.get("PARCELCAST_DATA") or Path(__file__).resolve().parents[1].parent / "shared" / "data")
    path = folder / "gfs-20111008T00-f072-global-2p5deg.grb2"
    if not path.is_file():
        return None
    from parcelcast.io.analysis import open_analysis
    from parcelcast.thermo import dewpoint_from_relative_humidity

    ds = open_analysis([path]).isel(time=0)
    p = ds["level"].values.astype(float)
    t = ds["temperature"].transpose("lat", "lon", "level").values.reshape(-1, p.size)[:n]
    rh = ds["relative_humidity"].transpose("lat", "lon", "level").values.reshape(-1, p.size)[:n]
    ps = ds["surface_pressure"].values.reshape(-1)[:n]
    with np.errstate(divide="ignore", invalid="ignore"):
        td = np.minimum(dewpoint_from_relative_humidity(t, np.clip(rh, 0, 1)), t)
    return p, t, td, ps


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--columns", type=int, default=10000)
    ap.add_argument("--baseline-columns", type=int, default=40)
    ap.add_argument("--no-compile-time", action="store_true", help="skip timing a fresh numba compile")
    args = ap.parse_args()

    p, t, td = synthetic(max(args.columns, args.baseline_columns))
    # warm-up, not timed below: builds the pseudo-adiabat table (about 0.1 s) and compiles the
    # numba kernels or loads them from their on-disk cache
    from parcelcast.thermo import _parcel_kernel

    t0 = time.perf_counter()
    lift_parcels(p, t[:2], td[:2])
    first = time.perf_counter() - t0
    hits = sum(sum(getattr(_parcel_kernel, name).stats.cache_hits.values())
               for name in ("parcel_starts", "lift_columns"))
    print(f"warm-up (excluded from the timings): first call {first:.2f} s "
          f"({'kernels loaded from the numba cache' if hits else 'kernels compiled'}, pseudo-adiabat table built)")

    one, one_median = time_kernel(p, t[0], td[0], repeat=5)
    base_one = time_baseline(p, t, td, 1)
    print(f"one 100-level profile, 3 parcels: plain-Python loops (the path one column takes, "
          f"no compiler to load) {one * 1e3:.2f} ms (best of 5; median "
          f"{one_median * 1e3:.2f} ms), solve_ivp baseline {base_one * 1e3:.1f} ms, ratio {base_one / one:.0f}x "
          f"(on the median {base_one / one_median:.0f}x)")

    many, _ = time_kernel(p, t[: args.columns], td[: args.columns], repeat=1)
    nb = args.baseline_columns
    base = time_baseline(p, t, td, nb) * args.columns / nb
    print(f"{args.columns} columns x 100 levels, 3 parcels: kernel {many:.2f} s "
          f"({many / args.columns * 1e6:.0f} us/column), baseline (timed on {nb} columns, scaled) "
          f"{base:.1f} s, ratio {base / many:.0f}x")

    # agreement of the two on the baseline subset (sanity)
    k = lift_parcel(p, t[:nb], td[:nb], "surface")
    b = np.array([baseline_column(p, t[i], td[i], "surface") for i in range(nb)])
    print(f"  surface CAPE kernel vs baseline on {nb} columns: median |diff| "
          f"{np.median(np.abs(k.cape - b[:, 0])):.1f} J/kg (baseline integrates all positive area)")

    g = gfs_columns(args.columns)
    if g is None:
        print("GFS file not found: analysis-column benchmark skipped")
    else:
        gp, gt, gtd, gps = g
        t0 = time.perf_counter()
        lift_parcels(gp, gt, gtd, PARCELS, surface_pressure=gps)
        gk = time.perf_counter() - t0
        print(f"GFS analysis: {gt.shape[0]} columns x {gp.size} levels, 3 parcels: kernel {gk:.2f} s")

    if not args.no_compile_time:  # last, so that the compiling process does not disturb the timings
        print(f"numba compile of the parcel kernels from scratch (fresh process, empty cache, not in the "
              f"timings above): {cold_compile_time():.1f} s")


if __name__ == "__main__":
    main()
