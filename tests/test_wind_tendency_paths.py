"""A few parcels take the numpy interpolation, many the compiled kernel: same winds, same paths.

Second route for each path: the other path (``interpolate.locate``/``sample_wind``/
``sample_scalar``/``blend``/``tangent``, the readable reference, against
``_kernel.wind_tendency``; DEVELOPERS.md "Why compiled kernels").  Differences are
rounding only: tendencies within 1e-12 of the field's scale, trajectory positions within
1e-9 degree after a day (about 0.1 mm), the same statuses.
"""

from __future__ import annotations

import sys

import numpy as np
import pytest

from datasets import data_file
from parcelcast.trajectories import interpolate
from parcelcast.trajectories.interpolate import CornerCache, GridGeometry, wind_tendency
from parcelcast.trajectories.sphere import to_unit_vector
from parcelcast.units import Q_


def _run_both(monkeypatch, function, numpy_calls=sys.maxsize):
    """``function()`` on the numpy path (for its first ``numpy_calls`` calls), then compiled."""
    with monkeypatch.context() as patch:
        patch.setattr(interpolate, "COMPILED_FROM_PARCELS", sys.maxsize)
        patch.setattr(interpolate, "NUMPY_CALLS", numpy_calls)
        numpy_path = function()
    with monkeypatch.context() as patch:
        patch.setattr(interpolate, "COMPILED_FROM_PARCELS", 0)
        compiled = function()
    return numpy_path, compiled


def _slices(geom, rng, omega):
    shape = (2, geom.nlev, geom.lat.size - int(geom.pad_south) - int(geom.pad_north), geom.lon.size)

    def one():
        u, v, w = 20.0 * rng.normal(size=shape), 15.0 * rng.normal(size=shape), rng.normal(size=shape)
        return geom.prepare({"omega": w} if omega else {}, (u, v))

    return one(), one()


@pytest.mark.parametrize("periodic", [True, False], ids=["global", "regional"])
@pytest.mark.parametrize("omega", [False, True], ids=["isobaric", "3d"])
@pytest.mark.parametrize("wt", [0.0, 0.3, 1.0])
def test_numpy_wind_equals_the_kernel(monkeypatch, periodic, omega, wt):
    rng = np.random.default_rng(11)
    if periodic:  # no pole rows in the input: added by prepare
        geom = GridGeometry.from_coords(np.arange(-88.75, 89.0, 2.5), np.arange(0.0, 360.0, 2.5),
                                        [100000.0, 85000.0, 70000.0, 50000.0])
    else:  # uneven spacing (binary search in the kernel)
        geom = GridGeometry.from_coords(np.cumsum(rng.uniform(0.5, 2.0, 20)) + 20.0,
                                        np.cumsum(rng.uniform(0.5, 2.0, 30)) - 10.0,
                                        [100000.0, 85000.0, 70000.0, 50000.0])
    a, b = _slices(geom, rng, omega)
    n = 40
    lat = rng.uniform(-90.0, 90.0, n) if periodic else rng.uniform(15.0, 60.0, n)  # some outside
    lon = rng.uniform(-200.0, 400.0, n)
    lat[:3] = [90.0, -90.0, 89.9]
    p = rng.uniform(40000.0, 105000.0, n)  # some above the top or below the first level
    x = to_unit_vector(lat, lon)
    member = rng.integers(0, 2, n)

    def call():
        return wind_tendency(geom, x, p, member, a, b, wt, omega=omega, cache=CornerCache().use(n, 0))

    numpy_path, compiled = _run_both(monkeypatch, call)
    scale = 30.0 / geom.radius
    np.testing.assert_allclose(numpy_path[0], compiled[0], rtol=0.0, atol=1e-12 * scale)
    np.testing.assert_allclose(numpy_path[1], compiled[1], rtol=0.0, atol=1e-12)
    for flags_numpy, flags_compiled in zip(numpy_path[2:], compiled[2:]):
        assert np.array_equal(flags_numpy, flags_compiled)
    assert numpy_path[2].any() != periodic and numpy_path[3].any() and numpy_path[4].any()


def test_a_few_parcels_take_numpy_then_the_kernel(monkeypatch):
    """The path chosen: numpy for fewer than COMPILED_FROM_PARCELS parcels, for NUMPY_CALLS calls."""
    seen = []
    monkeypatch.setattr(interpolate, "_numpy_tendency", lambda *a: seen.append("numpy") or "numpy")
    monkeypatch.setattr(interpolate, "_compiled_tendency", lambda *a: seen.append("kernel") or "kernel")
    monkeypatch.setattr(interpolate, "NUMPY_CALLS", 2)
    geom = GridGeometry.from_coords([-90.0, 0.0, 90.0], [0.0, 120.0, 240.0])
    few = CornerCache().use(1, 0)
    for _ in range(3):
        wind_tendency(geom, np.array([[1.0, 0.0, 0.0]]), None, np.zeros(1, int), {}, {}, 0.0, cache=few)
    many = interpolate.COMPILED_FROM_PARCELS
    x = np.tile([1.0, 0.0, 0.0], (many, 1))
    wind_tendency(geom, x, None, np.zeros(many, int), {}, {}, 0.0, cache=CornerCache().use(many, 0))
    assert seen == ["numpy", "numpy", "kernel", "kernel"]


def _compare_tracks(numpy_path, compiled):
    for name in ("lat", "lon", "pressure"):
        np.testing.assert_allclose(numpy_path[name].values, compiled[name].values, rtol=0.0, atol=1e-9,
                                   err_msg=name)
    assert np.array_equal(numpy_path["status"].values, compiled["status"].values)


@pytest.mark.parametrize("numpy_calls", [sys.maxsize, 37], ids=["numpy", "numpy-then-kernel"])
def test_solid_body_tracks_agree_on_both_paths(monkeypatch, numpy_calls):
    from parcelcast.trajectories.analytic import solid_body_dataset
    from parcelcast.trajectories.api import compute_trajectories

    ds = solid_body_dataset(hours=24, step_hours=6, resolution=2.0, alpha=0.7, levels_hpa=(850.0, 500.0))

    def track():
        return compute_trajectories(ds, 80.0, 30.0, Q_(700, "hPa"), Q_(-24, "h"), members=5,
                                    start_time=ds["time"].values[-1])

    numpy_path, compiled = _run_both(monkeypatch, track, numpy_calls)
    _compare_tracks(numpy_path, compiled)


@pytest.mark.realdata
@pytest.mark.parametrize("case", ["gfs-3d", "era5-geostrophic"])
def test_real_data_tracks_agree_on_both_paths(monkeypatch, case):
    from parcelcast.io.analysis import open_analysis
    from parcelcast.trajectories.api import compute_trajectories

    if case == "gfs-3d":
        ds = open_analysis(data_file("gfs-20111008T00-f072-global-2p5deg.grb2"),
                           roles=("u", "v", "temperature", "omega", "surface_pressure"))
        options = dict(mode="3d", steady=True, members=3)
    else:
        ds = open_analysis(data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"))
        options = dict(wind="geostrophic")

    def track():
        return compute_trajectories(ds, 51.0, 12.0, Q_(850, "hPa"), Q_(-24, "h"), **options)

    numpy_path, compiled = _run_both(monkeypatch, track)
    _compare_tracks(numpy_path, compiled)
