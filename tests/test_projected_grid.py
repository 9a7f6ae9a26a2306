"""Map-projected grids (Lambert conformal, polar stereographic): geometry, winds, advection.

Expected values come by a second route that does not use parcelcast's geometry:
analytic derivatives on the sphere in latitude/longitude, and grid-relative winds
obtained by displacing a point along the wind with ``pyproj.Geod`` and projecting
both ends with ``pyproj`` (so the map factor and the rotation of grid north are
never taken from the code under test).
"""

from __future__ import annotations

import numpy as np
import pyproj
import pytest
import xarray as xr

from parcelcast.constants import EARTH_ANGULAR_VELOCITY, EARTH_RADIUS
from parcelcast.errors import GridError, ParcelcastError
from parcelcast.io.analysis import open_analysis

A = EARTH_RADIUS

PROJECTIONS = {
    "lambert": {"grid_mapping_name": "lambert_conformal_conic", "standard_parallel": [33.0, 45.0],
                "longitude_of_central_meridian": -97.0, "latitude_of_projection_origin": 40.0,
                "earth_radius": A},
    "polar_north": {"grid_mapping_name": "polar_stereographic",
                    "straight_vertical_longitude_from_pole": -30.0, "standard_parallel": 60.0,
                    "latitude_of_projection_origin": 90.0, "earth_radius": A},
    "polar_south": {"grid_mapping_name": "polar_stereographic",
                    "straight_vertical_longitude_from_pole": 150.0, "standard_parallel": -60.0,
                    "latitude_of_projection_origin": -90.0, "earth_radius": A},
}
# grid centres (x0, y0) in projection metres, away from the pole itself
CENTRES = {"lambert": (0.0, 0.0), "polar_north": (0.0, -3.0e6), "polar_south": (0.0, 3.0e6)}


def temperature(lat, lon):
    """Analytic T (K) and its east/north derivatives (K/m) on the sphere of radius A."""
    phi, lam = np.deg2rad(lat), np.deg2rad(lon)
    t = 280.0 - 20.0 * np.sin(phi) + 4.0 * np.cos(phi) * np.sin(2.0 * lam)
    dt_dphi = -20.0 * np.cos(phi) - 4.0 * np.sin(phi) * np.sin(2.0 * lam)
    dt_dlam = 8.0 * np.cos(phi) * np.cos(2.0 * lam)
    return t, dt_dlam / (A * np.cos(phi)), dt_dphi / A


def earth_wind(lat, lon):
    phi, lam = np.deg2rad(lat), np.deg2rad(lon)
    return 12.0 + 6.0 * np.cos(phi), 5.0 * np.sin(lam) + 2.0


def grid_relative(crs, lat, lon, u, v):
    """Grid-relative components by displacing along the wind (pyproj.Geod) and projecting."""
    geod = pyproj.Geod(a=A, b=A)
    to_map = pyproj.Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True)
    speed = np.hypot(u, v)
    azimuth = np.rad2deg(np.arctan2(u, v))  # clockwise from north
    lon2, lat2, _ = geod.fwd(lon, lat, azimuth, np.full(lat.shape, 10.0))
    x1, y1 = to_map.transform(lon, lat)
    x2, y2 = to_map.transform(lon2, lat2)
    length = np.hypot(x2 - x1, y2 - y1)
    return speed * (x2 - x1) / length, speed * (y2 - y1) / length


def write_projected(path, name, spacing=25e3, n=(81, 61), winds="grid"):
    crs = pyproj.CRS.from_cf(PROJECTIONS[name])
    x0, y0 = CENTRES[name]
    x = x0 + spacing * (np.arange(n[0]) - n[0] // 2)
    y = y0 + spacing * (np.arange(n[1]) - n[1] // 2)
    xx, yy = np.meshgrid(x, y)
    lon, lat = pyproj.Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True).transform(xx, yy)
    t, _, _ = temperature(lat, lon)
    u, v = earth_wind(lat, lon)
    if winds == "grid":
        u, v = grid_relative(crs, lat, lon, u, v)
        names = ("grid_eastward_wind", "grid_northward_wind")
    else:
        names = ("eastward_wind", "northward_wind")
    dims = ("y", "x")
    attrs = {"grid_mapping": "projection"}
    ds = xr.Dataset(
        {
            "T": (dims, t, {"units": "K", "standard_name": "air_temperature", **attrs}),
            "U": (dims, u, {"units": "m s-1", "standard_name": names[0], **attrs}),
            "V": (dims, v, {"units": "m s-1", "standard_name": names[1], **attrs}),
            "projection": ((), 0, PROJECTIONS[name]),
        },
        coords={
            "x": ("x", x / 1000.0, {"units": "km", "standard_name": "projection_x_coordinate"}),
            "y": ("y", y / 1000.0, {"units": "km", "standard_name": "projection_y_coordinate"}),
            "latitude": (dims, lat, {"units": "degrees_north", "standard_name": "latitude"}),
            "longitude": (dims, lon, {"units": "degrees_east", "standard_name": "longitude"}),
            "time": ((), np.datetime64("2026-03-14T00:00", "ns")),
            "pressure": ((), 850.0, {"units": "hPa", "standard_name": "air_pressure"}),
        },
    )
    ds.to_netcdf(path)
    return lat, lon


@pytest.mark.parametrize("name", sorted(PROJECTIONS))
def test_derivatives_match_the_sphere(name):
    """East/north derivatives on the projected grid equal analytic ones (second-order error)."""
    from parcelcast.grid.projected import ProjectedGrid

    crs = pyproj.CRS.from_cf(PROJECTIONS[name])
    x0, y0 = CENTRES[name]
    errors = []
    for spacing in (50e3, 25e3):
        x = x0 + spacing * np.arange(-30, 31)
        y = y0 + spacing * np.arange(-24, 25)
        grid = ProjectedGrid(x, y, crs.to_wkt())
        lat, lon = grid.latitude_field(), grid.longitude_field()
        t, dtdx, dtdy = temperature(lat, lon)
        scale = np.abs(np.hypot(dtdx, dtdy)).max()
        errors.append(max(np.abs(grid.ddx(t) - dtdx)[1:-1, 1:-1].max(),
                          np.abs(grid.ddy(t) - dtdy)[1:-1, 1:-1].max()) / scale)
    assert errors[1] < 1e-3
    assert errors[0] / errors[1] > 3.0  # halving the spacing: error / ~4 (second order)


@pytest.mark.parametrize("name", sorted(PROJECTIONS))
def test_advection_from_a_projected_file_with_grid_relative_winds(tmp_path, name):
    path = tmp_path / f"{name}.nc"
    write_projected(path, name)
    ds = open_analysis(path)
    assert ds["u"].attrs["comment"].startswith("rotated")
    from parcelcast.advection import advection

    adv = advection(ds["temperature"], ds["u"], ds["v"]).isel(time=0, level=0).values
    lat, lon = ds["lat"].values, ds["lon"].values
    _, dtdx, dtdy = temperature(lat, lon)
    u, v = earth_wind(lat, lon)
    expected = -(u * dtdx + v * dtdy)
    inner = (slice(1, -1), slice(1, -1))
    # winds rotated to east/north agree with the analytic earth-relative wind
    assert np.abs(ds["u"].values[0, 0] - u).max() < 1e-3
    assert np.abs(ds["v"].values[0, 0] - v).max() < 1e-3
    assert np.abs(adv[inner] - expected[inner]).max() < 2e-3 * np.abs(expected).max()


def test_earth_relative_winds_are_not_rotated(tmp_path):
    path = tmp_path / "earth.nc"
    lat, lon = write_projected(path, "lambert", winds="earth")
    ds = open_analysis(path)
    u, v = earth_wind(lat, lon)
    assert np.allclose(ds["u"].values[0, 0], u) and np.allclose(ds["v"].values[0, 0], v)


def test_value_at_and_area_mean_on_a_projected_grid(tmp_path):
    from parcelcast.sampling import area_mean, value_at

    path = tmp_path / "lcc.nc"
    write_projected(path, "lambert")
    ds = open_analysis(path)
    t_point = float(value_at(ds["temperature"], 41.3, -95.2).isel(time=0, level=0))
    assert t_point == pytest.approx(temperature(41.3, -95.2)[0], abs=0.01)  # bilinear, 25 km grid
    mean, info = area_mean(ds["temperature"].isel(time=0, level=0), 41.3, -95.2, radius_km=200.0)
    assert info["points"] > 100 and info["missing"] == 0
    assert abs(float(mean) - temperature(41.3, -95.2)[0]) < 0.5
    with pytest.raises(ParcelcastError, match="projected grid"):
        value_at(ds["temperature"], 10.0, 60.0)


def test_geostrophic_wind_on_a_projected_grid():
    """Phi = -f0 U a phi-like field: u_g = -(1/f) dPhi/dy (Holton and Hakim 2013, eq. 3.2)."""
    from parcelcast.geostrophic import geostrophic_wind_array
    from parcelcast.grid.projected import ProjectedGrid

    crs = pyproj.CRS.from_cf(PROJECTIONS["lambert"])
    grid = ProjectedGrid(25e3 * np.arange(-30, 31), 25e3 * np.arange(-24, 25), crs.to_wkt())
    lat = grid.latitude_field()
    # Phi = -2 Omega a U sin(lat)^2 / 2 gives u_g = U cos(lat) exactly, v_g = 0
    u0 = 20.0
    phi = -EARTH_ANGULAR_VELOCITY * A * u0 * np.sin(np.deg2rad(lat)) ** 2
    u_g, v_g = geostrophic_wind_array(phi, grid)
    inner = (slice(1, -1), slice(1, -1))
    assert np.abs(u_g - u0 * np.cos(np.deg2rad(lat)))[inner].max() < 0.02
    assert np.abs(v_g)[inner].max() < 0.02


def test_projected_grid_without_grid_mapping_is_refused(tmp_path):
    path = tmp_path / "nomap.nc"
    write_projected(path, "lambert")
    ds = xr.open_dataset(path).load()
    for name in ("T", "U", "V"):
        del ds[name].attrs["grid_mapping"]
    ds.to_netcdf(tmp_path / "nomap2.nc")
    with pytest.raises(GridError, match="grid_mapping"):
        open_analysis(tmp_path / "nomap2.nc")


def test_undeclared_wind_orientation_is_refused(tmp_path):
    path = tmp_path / "lcc.nc"
    write_projected(path, "lambert")
    ds = xr.open_dataset(path).load()
    for name in ("U", "V"):
        del ds[name].attrs["standard_name"]
    ds.to_netcdf(tmp_path / "undeclared.nc")
    with pytest.raises(ParcelcastError, match="grid_eastward_wind"):
        open_analysis(tmp_path / "undeclared.nc")


def _write_grib_polar(path, relative: bool):
    """A GRIB2 polar-stereographic file made with eccodes' own sample (eccodes computes
    the latitudes/longitudes cfgrib reports, independently of parcelcast)."""
    import eccodes

    shape = (25, 30)
    with open(path, "wb") as handle:
        for category, number in ((0, 0), (2, 2), (2, 3)):
            gid = eccodes.codes_grib_new_from_samples("polar_stereographic_pl_grib2")
            for key, value in (("Nx", shape[1]), ("Ny", shape[0]), ("LaDInDegrees", 60.0),
                               ("orientationOfTheGridInDegrees", 330.0), ("DxInMetres", 50000.0),
                               ("DyInMetres", 50000.0), ("latitudeOfFirstGridPointInDegrees", 50.0),
                               ("longitudeOfFirstGridPointInDegrees", 300.0), ("level", 850),
                               ("parameterCategory", category), ("parameterNumber", number),
                               ("resolutionAndComponentFlags", 8 if relative else 0)):
                eccodes.codes_set(gid, key, value)
            value = 270.0 if category == 0 else (6.0 if number == 2 else 3.0)
            eccodes.codes_set_values(gid, np.full(shape[0] * shape[1], value))
            eccodes.codes_write(gid, handle)
            eccodes.codes_release(gid)


@pytest.mark.parametrize("relative", [True, False])
def test_grib_polar_stereographic_winds(tmp_path, relative):
    path = tmp_path / "ps.grb2"
    _write_grib_polar(path, relative)
    ds = open_analysis(path)
    assert ds.sizes["x"] == 30 and ds.sizes["y"] == 25
    lat, lon = ds["lat"].values, ds["lon"].values
    if relative:
        # the grid-relative wind (6, 3) seen from east/north, by the displacement route
        crs = pyproj.CRS.from_wkt(ds["crs"].attrs["crs_wkt"])
        u, v = ds["u"].values[0, 0], ds["v"].values[0, 0]
        ug, vg = grid_relative(crs, lat, lon, u, v)
        assert np.abs(ug - 6.0).max() < 1e-3 and np.abs(vg - 3.0).max() < 1e-3
    else:
        assert np.allclose(ds["u"].values, 6.0) and np.allclose(ds["v"].values, 3.0)


def test_split_on_a_projected_grid(tmp_path, capsys):
    """Both views on a projected grid (trajectories run on a bilinear lat-lon copy).

    The file holds a steady flow and a uniform +1 K step (so +1 K is observed, and the
    residual is what held the field steady against its advection): the Eulerian advective part is
    6 h x the advection at the station (trapezoid of a constant), and following the air
    the advective part is T(origin) - T(station), equal to it to second order along a
    short, nearly straight path (0.03 K allowed, about 10 % of the value).
    """
    import json

    from parcelcast.cli import main

    write_projected(tmp_path / "a.nc", "lambert")
    later = xr.open_dataset(tmp_path / "a.nc").load()
    later["time"] = np.datetime64("2026-03-14T06:00", "ns")
    later["T"] = later["T"] + 1.0  # uniform 1 K warming: not advection
    later.to_netcdf(tmp_path / "b.nc")
    args = ["split", str(tmp_path / "a.nc"), str(tmp_path / "b.nc"), "--at", "41,-95",
            "--level", "850", "--start", "2026-03-14T00", "--end", "2026-03-14T06", "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["observed_change_K"] == pytest.approx(1.0, abs=2e-4)
    assert out["observed_change_K"] == pytest.approx(out["advective_K"] + out["residual_K"], abs=2e-4)
    assert out["lagrangian"]["statuses"] == ["ok"]
    assert out["lagrangian"]["advective_K"] == pytest.approx(out["advective_K"], abs=0.03)


def test_trajectory_on_a_polar_stereographic_grid(tmp_path, capsys):
    """Solid-body rotation about the polar axis (Williamson et al. 1992, case 1, alpha = 0):
    every parcel turns east at angular speed u0 / a, so a 12-h back trajectory arriving at
    (60 N, 30 W) starts at (60 N, 30 W - 15 deg) with u0 = 2 pi a / 12 days (the paper's value,
    recalled from memory); 0.1 deg allowed for the bilinear regridding of a 50 km grid."""
    import json

    from parcelcast.cli import main

    crs = pyproj.CRS.from_cf(PROJECTIONS["polar_north"])
    x = 50e3 * np.arange(-40, 41)
    y = -3.0e6 + 50e3 * np.arange(-30, 31)
    xx, yy = np.meshgrid(x, y)
    lon, lat = pyproj.Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True).transform(xx, yy)
    u0 = 2.0 * np.pi * A / (12 * 86400.0)
    u, v = u0 * np.cos(np.deg2rad(lat)), np.zeros_like(lat)
    dims = ("y", "x")
    ds = xr.Dataset(
        {"T": (dims, 250.0 + 0.0 * lat, {"units": "K", "standard_name": "air_temperature",
                                         "grid_mapping": "projection"}),
         "U": (dims, u, {"units": "m s-1", "standard_name": "eastward_wind", "grid_mapping": "projection"}),
         "V": (dims, v, {"units": "m s-1", "standard_name": "northward_wind", "grid_mapping": "projection"}),
         "projection": ((), 0, PROJECTIONS["polar_north"])},
        coords={"x": ("x", x, {"units": "m", "standard_name": "projection_x_coordinate"}),
                "y": ("y", y, {"units": "m", "standard_name": "projection_y_coordinate"}),
                "latitude": (dims, lat, {"units": "degrees_north", "standard_name": "latitude"}),
                "longitude": (dims, lon, {"units": "degrees_east", "standard_name": "longitude"}),
                "time": ((), np.datetime64("2026-03-14T12:00", "ns")),
                "pressure": ((), 500.0, {"units": "hPa", "standard_name": "air_pressure"})})
    ds.to_netcdf(tmp_path / "ps.nc")
    assert main(["track", str(tmp_path / "ps.nc"), "--from", "60,-30", "--level", "500",
                 "--back", "12", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    origin = out["members"][0]["points"][0]
    assert out["members"][0]["status"] == "ok"
    assert origin["lat"] == pytest.approx(60.0, abs=0.1)
    assert origin["lon"] == pytest.approx(-45.0, abs=0.1)
    assert "bilinear" in out["notes"][0]
