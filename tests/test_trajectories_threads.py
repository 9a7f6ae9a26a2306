"""Trajectories shared among threads give the same paths, bit for bit, as one thread.

The check is exact equality (second route: the same integration on one thread); parcels are
independent, so the number of threads must not change a single bit of any output.
"""

from __future__ import annotations

import numba
import numpy as np
import pytest

from parcelcast.trajectories import _threads
from parcelcast.trajectories.integrate import FieldSource, integrate
from parcelcast.trajectories.interpolate import GridGeometry

N_PARCELS = 2_000  # enough for two threads (MIN_PARCELS_PER_THREAD each)


def _flow():
    """A 5-degree global flow, 4 levels, 6-hourly for 24 h: waves moving east, weak omega."""
    lat = np.arange(-90.0, 90.1, 5.0)
    lon = np.arange(-180.0, 180.0, 5.0)
    lev = np.array([100000.0, 85000.0, 50000.0, 25000.0])
    hours = np.arange(0.0, 25.0, 6.0)
    la = np.deg2rad(lat)[None, :, None]
    lo = np.deg2rad(lon)[None, None, :]
    sigma = (lev / 1e5)[:, None, None]
    geom = GridGeometry.from_coords(lat, lon, lev)
    shape = (lev.size, lat.size, lon.size)

    def loader(ti):
        ph = 2 * np.pi * hours[ti] / 48.0
        u = (10 + 25 * (1 - sigma)) * np.cos(la) ** 2 + 8 * np.cos(la) * np.sin(3 * lo - ph)
        v = 8 * np.cos(la) * np.cos(3 * lo - ph) * np.sin(2 * la) ** 2
        w = 0.3 * np.sin(np.pi * sigma) * np.cos(la) * np.sin(2 * lo + ph)
        u, v, w = (np.ascontiguousarray(np.broadcast_to(a, shape))[None] for a in (u, v, w))
        return geom.prepare({"omega": w}, (u, v))

    return geom, hours * 3600.0, loader


def _run(threads, scheme):
    geom, times, loader = _flow()
    rng = np.random.default_rng(5)
    lat = rng.uniform(-85.0, 85.0, N_PARCELS)
    lon = rng.uniform(-180.0, 180.0, N_PARCELS)
    p = rng.uniform(30000.0, 99000.0, N_PARCELS)
    before = numba.get_num_threads()
    numba.set_num_threads(threads)
    try:
        assert _threads.thread_count(N_PARCELS) == threads  # the run really is shared
        return integrate(FieldSource(geom, times, loader), lat, lon, p, 0.0, 24 * 3600.0,
                         mode="3d", scheme=scheme, output_interval=6 * 3600.0)
    finally:
        numba.set_num_threads(before)


@pytest.mark.skipif(numba.config.NUMBA_NUM_THREADS < 2, reason="needs 2 numba threads (2 cores)")
@pytest.mark.parametrize("scheme", ["petterssen", "rk4"])
def test_two_threads_give_the_paths_of_one_thread_bit_for_bit(scheme):
    one, two = _run(1, scheme), _run(2, scheme)
    for name in ("lat", "lon", "pressure", "on_ground", "status", "n_valid", "times"):
        np.testing.assert_array_equal(getattr(two, name), getattr(one, name), err_msg=name)
    assert (one.dt, one.n_steps) == (two.dt, two.n_steps)
    assert np.isfinite(one.lat[:, -1]).mean() > 0.5  # a real run: most parcels reach the end


def test_ranges_cover_every_parcel_once():
    seen = np.zeros(1_234, dtype=int)

    def work(lo, hi):
        seen[lo:hi] += 1

    before = numba.get_num_threads()
    numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)
    try:
        _threads.share_parcels(seen.size, work)
    finally:
        numba.set_num_threads(before)
    np.testing.assert_array_equal(seen, 1)
