"""Trajectories in analytic flows, against exact solutions computed by a second route.

References are named beside each check.  Positions are compared by great-circle distance
(haversine, checked against pyproj.Geod on a sphere in ``test_distance_second_route``).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr
from scipy.spatial.transform import Rotation

from parcelcast.constants import EARTH_RADIUS
from parcelcast.errors import ParcelcastError, UnitsError
from parcelcast.trajectories.analytic import U0, rotation_axis, solid_body_dataset, solid_body_wind
from parcelcast.trajectories.api import compute_trajectories
from parcelcast.trajectories.errors import StartPointError
from parcelcast.trajectories.sphere import great_circle_distance, to_lat_lon, to_unit_vector
from parcelcast.units import Q_

OMEGA = U0 / EARTH_RADIUS


def _exact(lat0, lon0, alpha, seconds):
    """Exact solid-body position: rotation about the axis by omega t (scipy Rotation, 2nd route)."""
    x0 = to_unit_vector(np.atleast_1d(lat0), np.atleast_1d(lon0))
    rot = Rotation.from_rotvec(np.outer(np.atleast_1d(seconds), rotation_axis(alpha) * OMEGA))
    return to_lat_lon(rot.apply(np.repeat(x0, np.size(seconds), axis=0)))


def test_distance_second_route():
    # haversine against pyproj.Geod on a sphere of the same radius (independent implementation)
    import pyproj
    geod = pyproj.Geod(a=EARTH_RADIUS, b=EARTH_RADIUS)
    rng = np.random.default_rng(1)
    la1, la2 = rng.uniform(-89, 89, (2, 200))
    lo1, lo2 = rng.uniform(-180, 180, (2, 200))
    _, _, d = geod.inv(lo1, la1, lo2, la2)
    np.testing.assert_allclose(great_circle_distance(la1, lo1, la2, lo2), d, rtol=1e-9, atol=1e-3)


def test_williamson_wind_is_a_rotation():
    # Williamson et al. (1992) eqs. 75-76 equal Omega x r with Omega = u0/a (-sin a, 0, cos a)
    lat = np.array([10.0, -50.0, 89.0, 0.0])
    lon = np.array([0.0, 120.0, -70.0, 90.0])
    alpha = 0.9
    u, v = solid_body_wind(lat, lon, alpha)
    x = to_unit_vector(lat, lon)
    vel = np.cross(rotation_axis(alpha) * U0, x)
    la, lo = np.deg2rad(lat), np.deg2rad(lon)
    east = np.stack([-np.sin(lo), np.cos(lo), 0 * lo], -1)
    north = np.stack([-np.sin(la) * np.cos(lo), -np.sin(la) * np.sin(lo), np.cos(la)], -1)
    np.testing.assert_allclose(np.sum(vel * east, -1), u, atol=1e-9)
    np.testing.assert_allclose(np.sum(vel * north, -1), v, atol=1e-9)


@pytest.fixture(scope="module", params=[0.0, np.pi / 2], ids=["axis-pole", "axis-tilted-90"])
def solid_body(request):
    # 1-degree global grid, 6-hourly fields, 72 h (Williamson et al. 1992, test case 1)
    return request.param, solid_body_dataset(hours=72, step_hours=6, resolution=1.0,
                                             alpha=request.param)


@pytest.mark.parametrize("scheme", ["petterssen", "rk4"])
@pytest.mark.parametrize("direction", [1, -1])
def test_solid_body_rotation(solid_body, scheme, direction):
    alpha, ds = solid_body
    # starts include one on the meridian through the rotation axis: with alpha = pi/2 its
    # path crosses the North Pole (60N 90W) and one crossing the South Pole (-60, 90)
    starts = [(40.0, 10.0), (60.0, -90.0), (60.0, 90.0), (-60.0, 90.0), (89.5, 0.0)]
    t0 = ds.time.values[0] if direction > 0 else ds.time.values[-1]
    worst = 0.0
    for lat0, lon0 in starts:
        out = compute_trajectories(ds, lat0, lon0, Q_(500, "hPa"), Q_(72 * direction, "h"), t0,
                                   scheme=scheme, output_interval=Q_(6, "h"))
        assert out.status_name.values[0] == "ok"
        secs = direction * 3600.0 * np.arange(0, 73, 6)
        la, lo = _exact(lat0, lon0, alpha, secs)
        err = great_circle_distance(out.lat.values[0], out.lon.values[0], la, lo)
        travelled = U0 * np.abs(secs) * np.cos(np.arcsin(
            np.dot(to_unit_vector([lat0], [lon0])[0], rotation_axis(alpha))))
        for h in (24, 48, 72):
            k = h // 6
            worst = max(worst, err[k] / travelled[k])
            # "well under 1%": we ask for 0.1 % of the distance travelled
            assert err[k] < 1e-3 * travelled[k], (lat0, lon0, h, err[k], travelled[k])
    print(f"alpha={alpha:.3f} {scheme} dir={direction}: worst relative error {worst:.2e}")
    if alpha > 0:
        # the tilted case really crossed a pole: some recorded latitude passes 85 degrees
        # forward from 60N 90W (backward from 60N 90E) heads north over the pole
        out = compute_trajectories(ds, 60.0, -90.0 * direction, Q_(500, "hPa"),
                                   Q_(72 * direction, "h"), t0,
                                   scheme=scheme, output_interval=Q_(1, "h"))
        assert np.nanmax(np.abs(out.lat.values)) > 89.0


def test_linear_in_time_flow_is_exact():
    # wind = solid body x (1 + h / 48): angle = omega (t + t^2 / (2 * 48 h)) exactly;
    # linear time interpolation of a field linear in time introduces no error
    fac = lambda h: 1.0 + h / 48.0  # noqa: E731
    ds = solid_body_dataset(hours=48, step_hours=12, resolution=2.0, alpha=0.0, time_factor=fac)
    out = compute_trajectories(ds, 30.0, 0.0, Q_(500, "hPa"), Q_(48, "h"), scheme="rk4",
                               output_interval=Q_(12, "h"))
    t = np.arange(0, 49, 12) * 3600.0
    angle = OMEGA * (t + t ** 2 / (2 * 48 * 3600.0))
    expected_lon = np.rad2deg(angle)
    expected_lon = (expected_lon + 180) % 360 - 180
    err = great_circle_distance(out.lat.values[0], out.lon.values[0], 30.0, expected_lon)
    travelled = EARTH_RADIUS * np.cos(np.deg2rad(30)) * angle
    # bilinear interpolation of cos(lat) on the 2-degree grid costs ~ (2 deg)^2 / 8 = 1.5e-4
    assert np.all(err[1:] < 5e-4 * travelled[1:]), err
    # a wrong (steady) time treatment would be off by t^2/(2*48h) * omega: > 20 % at 48 h
    assert angle[-1] / (OMEGA * t[-1]) > 1.2


def _wavy_dataset(periodic=True, hours=48):
    lat = np.arange(-90.0, 90.1, 2.0)
    lon = np.arange(-180.0, 180.0, 2.0)
    la, lo = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    u = (20 + 10 * np.sin(2 * lo)) * np.cos(la)
    v = 8 * np.cos(3 * lo) * np.cos(la) ** 2
    times = np.datetime64("2021-06-01T00", "ns") + np.arange(0, hours + 1, 6).astype("timedelta64[h]")
    shape = (times.size, 1) + u.shape
    dims = ("time", "level", "lat", "lon")
    return xr.Dataset(
        {"u": (dims, np.broadcast_to(u, shape).copy(), {"units": "m s-1"}),
         "v": (dims, np.broadcast_to(v, shape).copy(), {"units": "m s-1"})},
        coords={"time": times, "level": [50000.0], "lat": lat, "lon": lon})


@pytest.mark.parametrize("scheme", ["petterssen", "rk4"])
def test_forward_then_backward_returns(scheme):
    # steady non-uniform flow: integrating back from the end point must return to the start
    # (reversibility of the exact solution; the trapezoidal and RK4 steps are near-symmetric)
    ds = _wavy_dataset()
    lat0, lon0 = np.array([45.0, -20.0, 10.0]), np.array([-30.0, 100.0, 170.0])
    for la0, lo0 in zip(lat0, lon0):
        fwd = compute_trajectories(ds, la0, lo0, Q_(500, "hPa"), Q_(48, "h"), scheme=scheme)
        k = int(fwd.row_size.values[0]) - 1
        la1, lo1 = fwd.lat.values[0, k], fwd.lon.values[0, k]
        back = compute_trajectories(ds, la1, lo1, Q_(500, "hPa"), Q_(-48, "h"),
                                    ds.time.values[-1], scheme=scheme)
        km = int(back.row_size.values[0]) - 1
        err = great_circle_distance(back.lat.values[0, km], back.lon.values[0, km], la0, lo0)
        path = great_circle_distance(la0, lo0, la1, lo1)
        assert path > 1.0e6  # the parcel went somewhere (> 1000 km)
        assert err < 1e-3 * path, (la0, lo0, err)


def test_regional_domain_exit():
    # zonal 30 m/s on a regional grid 30-60N, 20W-20E: the parcel leaves through the east edge
    lat = np.arange(30.0, 60.1, 1.0)
    lon = np.arange(-20.0, 20.1, 1.0)
    times = np.datetime64("2021-01-01T00", "ns") + np.arange(0, 49, 6).astype("timedelta64[h]")
    shape = (times.size, lat.size, lon.size)
    ds = xr.Dataset({"u": (("time", "lat", "lon"), np.full(shape, 30.0)),
                     "v": (("time", "lat", "lon"), np.zeros(shape))},
                    coords={"time": times, "lat": lat, "lon": lon})
    out = compute_trajectories(ds, 45.0, 0.0, Q_(850, "hPa"), Q_(48, "h"))
    assert out.status_name.values[0] == "left_domain"
    n = int(out.row_size.values[0])
    # 20 degrees of longitude at 45N is 1572 km: about 14.6 h at 30 m/s
    assert 14 <= n - 1 <= 15
    assert 19.0 < out.lon.values[0, n - 1] <= 20.0
    assert np.isnan(out.lon.values[0, n:]).all()


def test_left_time_range_and_missing_data():
    ds = _wavy_dataset(hours=12)
    out = compute_trajectories(ds, 45.0, 0.0, Q_(500, "hPa"), Q_(24, "h"))
    assert out.status_name.values[0] == "left_time_range"
    assert int(out.row_size.values[0]) == 13  # 0..12 h kept
    ds2 = _wavy_dataset()
    u = ds2.u.values
    u[:, :, (ds2.lat.values > 40) & (ds2.lat.values < 50), 60:120] = np.nan  # lon -60..-2
    ds2["u"] = (ds2.u.dims, u)
    out = compute_trajectories(ds2, 45.0, -70.0, Q_(500, "hPa"), Q_(48, "h"))
    assert out.status_name.values[0] == "missing_data"
    last = int(out.row_size.values[0]) - 1
    assert out.lon.values[0, last] < -60.0  # stopped before the gap, nothing filled


def _column_dataset(omega=0.0, temp_lapse=True):
    lat = np.arange(-90.0, 90.1, 5.0)
    lon = np.arange(-180.0, 180.0, 5.0)
    levels = np.array([1000.0, 850.0, 700.0, 500.0, 300.0]) * 100.0
    times = np.datetime64("2021-01-01T00", "ns") + np.arange(0, 25, 6).astype("timedelta64[h]")
    shape = (times.size, levels.size, lat.size, lon.size)
    # temperature from a constant lapse in ln p: theta increases upward everywhere
    t = 288.0 * (levels / 1e5) ** 0.12
    dims = ("time", "level", "lat", "lon")
    return xr.Dataset(
        {"u": (dims, np.full(shape, 10.0)), "v": (dims, np.zeros(shape)),
         "omega": (dims, np.full(shape, omega)),
         "temperature": (dims, np.broadcast_to(t[None, :, None, None], shape).copy())},
        coords={"time": times, "level": levels, "lat": lat, "lon": lon})


def test_3d_constant_omega_and_ground():
    # omega = -0.5 Pa/s (ascent): p(t) = p0 - 0.5 t exactly (analytic, constant tendency)
    ds = _column_dataset(omega=-0.5)
    out = compute_trajectories(ds, 20.0, 0.0, Q_(900, "hPa"), Q_(24, "h"), mode="3d",
                               output_interval=Q_(6, "h"))
    p_exact = 90000.0 - 0.5 * np.arange(0, 25, 6) * 3600.0
    np.testing.assert_allclose(out.pressure.values[0], p_exact, rtol=1e-9)
    assert out.status_name.values[0] == "ok"
    # descent into the ground (lowest level 1000 hPa, no surface pressure): follow rule
    ds = _column_dataset(omega=0.5)
    out = compute_trajectories(ds, 20.0, 0.0, Q_(900, "hPa"), Q_(24, "h"), mode="3d",
                               output_interval=Q_(6, "h"))
    assert out.status_name.values[0] == "hit_ground"
    np.testing.assert_allclose(out.pressure.values[0, 2:], 100000.0)
    assert out.on_ground.values[0, 2:].all() and not out.on_ground.values[0, 0]
    assert int(out.row_size.values[0]) == 5  # followed the ground to the end
    stop = compute_trajectories(ds, 20.0, 0.0, Q_(900, "hPa"), Q_(24, "h"), mode="3d",
                                ground="stop", output_interval=Q_(6, "h"))
    assert stop.status_name.values[0] == "hit_ground"
    assert int(stop.row_size.values[0]) < 5


def test_isentropic_keeps_theta():
    # horizontally uniform stratification: the isentropic parcel keeps its pressure and theta
    ds = _column_dataset()
    out = compute_trajectories(ds, 50.0, 0.0, Q_(600, "hPa"), Q_(-24, "h"), mode="isentropic",
                               output_interval=Q_(6, "h"))
    th = out.potential_temperature.values[0]
    np.testing.assert_allclose(th, th[0], rtol=1e-9)
    np.testing.assert_allclose(out.pressure.values[0], 60000.0, rtol=1e-6)
    # 10 m/s westerly for 24 h backwards: 864 km west along the 50N circle
    d = great_circle_distance(50.0, 0.0, out.lat.values[0, -1], out.lon.values[0, -1])
    assert out.lon.values[0, -1] < 0
    assert abs(d - 864e3) < 0.01 * 864e3


def test_units_and_start_errors():
    ds = _wavy_dataset(hours=12)
    with pytest.raises(UnitsError):
        compute_trajectories(ds, 45.0, 0.0, 500.0, Q_(12, "h"))
    with pytest.raises(UnitsError):
        compute_trajectories(ds, 45.0, 0.0, Q_(500, "hPa"), Q_(12, "m"))
    with pytest.raises(StartPointError, match="time"):
        compute_trajectories(ds, 45.0, 0.0, Q_(500, "hPa"), Q_(12, "h"),
                             np.datetime64("2030-01-01T00"))
    with pytest.raises(ParcelcastError, match="mode"):
        compute_trajectories(ds, 45.0, 0.0, Q_(500, "hPa"), Q_(12, "h"), mode="sideways")


def test_ensemble_spread_cloud():
    # a cloud in a deforming flow: spread > 0, grows from 0 h to 48 h, first member central
    ds = _wavy_dataset()
    out = compute_trajectories(ds, 45.0, 30.0, Q_(500, "hPa"), Q_(48, "h"), members=7)
    assert out.central.values[0] == 1 and out.central.values[1:].sum() == 0
    sp = out.spread.values[0]
    radius = 0.5 * EARTH_RADIUS * np.deg2rad(2.0)
    np.testing.assert_allclose(sp[0], radius, rtol=1e-6)  # the cloud starts on its ring
    assert sp[-1] > sp[0]
