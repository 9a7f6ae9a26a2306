"""The near-surface level (``--level surface``): 2-m temperature advected by the 10-m wind.

Checks, each against a route outside the code under test:

* GFS 2.5-degree file (../shared/data, PROVENANCE.md): ``advect --level surface --at`` against
  a centred difference written here on the raw values read with eccodes (2t at 2 m, 10u/10v at
  10 m above ground), spherical metric d/dx = 1/(a cos lat) d/dlon, d/dy = 1/a d/dlat
  (Holton & Hakim 2013, sec. 2.5);
* ERA5 hourly 2-m temperature (no wind): the observed change in ``split`` against the raw
  eccodes values; the split says what it cannot compute;
* a NetCDF file with CF standard names and height coordinates (CF 1.10 sec. 5.7, scalar
  coordinate variables; standard name ``height``): fields linear in latitude, whose advection
  and split follow by hand (stated beside each check); a decoy wind at 100 m must not be taken.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr

from datasets import A, data_file, grib_field
from parcelcast.cli import main

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ERA5_T2M = "era5-t2m-2019-03-hourly-uk.grb1"


def run_json(capsys, *argv):
    rc = main([*map(str, argv), "--json"])
    out = capsys.readouterr()
    assert rc == 0, out.err
    return json.loads(out.out)


# ------------------------------------------------------------------------- GFS, real data
@pytest.fixture(scope="module")
def gfs_raw():
    path = data_file(GFS)
    lat, lon, t = grib_field(path, "2t", 2, "heightAboveGround")
    _, _, u = grib_field(path, "10u", 10, "heightAboveGround")
    _, _, v = grib_field(path, "10v", 10, "heightAboveGround")
    return path, lat, lon, t, u, v


def centred_advection_k_per_h(lat, lon, t, u, v, plat, plon):
    """-(u dT/dx + v dT/dy) at a grid point, centred differences on the stored grid (K/h)."""
    j = int(np.flatnonzero(np.isclose(lat, plat))[0])
    i = int(np.flatnonzero(np.isclose(lon, plon % 360.0))[0])
    nx = lon.size
    east, west = (i + 1) % nx, (i - 1) % nx  # global grid: longitude wraps
    dlon = np.deg2rad(2.5)
    dtdx = (t[j, east] - t[j, west]) / (2 * dlon) / (A * np.cos(np.deg2rad(lat[j])))
    dtdy = (t[j - 1] - t[j + 1])[i] / np.deg2rad(lat[j - 1] - lat[j + 1]) / A  # lat stored N->S
    return -(u[j, i] * dtdx + v[j, i] * dtdy) * 3600.0, t[j, i], u[j, i], v[j, i]


@pytest.mark.realdata
@pytest.mark.parametrize("plat, plon", [(50.0, 5.0), (-35.0, 140.0), (60.0, -2.5)])
def test_gfs_surface_advection_matches_a_centred_difference_on_raw_values(gfs_raw, capsys, plat, plon):
    path, lat, lon, t, u, v = gfs_raw
    want, t_want, u_want, v_want = centred_advection_k_per_h(lat, lon, t, u, v, plat, plon)
    got = run_json(capsys, "advect", path, "--level", "surface", f"--at={plat},{plon}")
    assert got["level"] == "surface" and got["level_hPa"] is None
    # JSON rounding: 3 decimals for T and wind, 4 for advection (K/h)
    assert got["temperature_K"] == pytest.approx(t_want, abs=6e-4)
    assert got["u_m_s"] == pytest.approx(u_want, abs=6e-4)
    assert got["v_m_s"] == pytest.approx(v_want, abs=6e-4)
    assert got["advection_K_per_h"] == pytest.approx(want, abs=6e-5)
    assert abs(want) > 1e-3  # a real signal, not a trivially zero one


@pytest.mark.realdata
def test_gfs_pressure_level_json_keeps_its_level(gfs_raw, capsys):
    got = run_json(capsys, "advect", gfs_raw[0], "--level", "850", "--at", "50,5")
    assert got["level"] == "850 hPa" and got["level_hPa"] == 850.0


@pytest.mark.realdata
def test_geostrophic_wind_is_refused_at_the_surface(gfs_raw, capsys):
    rc = main(["advect", str(gfs_raw[0]), "--level", "surface", "--wind", "geostrophic", "--at", "50,5"])
    err = capsys.readouterr().err
    assert rc == 2 and "10-m wind" in err


# ------------------------------------------------------------------- ERA5 2-m temperature
def _raw_t2m(path, date: int, hour: int, plat: float, plon: float) -> float:
    """t2m at a grid point and valid time, read message by message with eccodes."""
    import pyproj  # noqa: F401  (PROJ before eccodes: DEVELOPERS.md)
    import eccodes

    with open(path, "rb") as handle:
        while (gid := eccodes.codes_grib_new_from_file(handle)) is not None:
            try:
                if (eccodes.codes_get(gid, "validityDate") == date
                        and eccodes.codes_get(gid, "validityTime") == hour * 100):
                    ni, nj = eccodes.codes_get(gid, "Ni"), eccodes.codes_get(gid, "Nj")
                    values = eccodes.codes_get_array(gid, "values").reshape(nj, ni)
                    lats = eccodes.codes_get_array(gid, "distinctLatitudes")
                    lons = eccodes.codes_get_array(gid, "distinctLongitudes")
                    if eccodes.codes_get(gid, "jScansPositively") == 0:
                        lats = np.sort(lats)[::-1]
                    lons = np.where(lons > 180.0, lons - 360.0, lons)
                    j = int(np.flatnonzero(np.isclose(lats, plat))[0])
                    i = int(np.flatnonzero(np.isclose(lons, plon))[0])
                    return float(values[j, i])
            finally:
                eccodes.codes_release(gid)
    raise LookupError(f"no t2m at {date} {hour} UTC in {path}")


@pytest.mark.realdata
def test_era5_surface_split_observed_change_and_what_it_cannot_compute(capsys):
    path = data_file(ERA5_T2M)
    got = run_json(capsys, "split", path, "--level", "surface", "--at", "52,-1",
                   "--start", "2019-03-10T06", "--end", "2019-03-10T15")
    want = _raw_t2m(path, 20190310, 15, 52.0, -1.0) - _raw_t2m(path, 20190310, 6, 52.0, -1.0)
    assert got["observed_change_K"] == pytest.approx(want, abs=6e-5)  # JSON: 4 decimals
    assert got["level"] == "surface" and got["level_hPa"] is None
    for part in ("advective_K", "vertical_K", "residual_K", "lagrangian"):
        assert got[part] is None, part
    assert set(got["not_computed"]) == {"advective", "vertical", "residual", "lagrangian"}
    assert "no 10-m wind" in got["not_computed"]["advective"]
    assert any("diurnal cycle" in note for note in got["notes"])


# ----------------------------------------------- NetCDF: CF standard names with heights
B = 1.0e-5  # K per metre northward decrease of the 2-m temperature (1 K per 100 km)
V10 = 5.0  # m/s southerly 10-m wind
HEATING = 2.0  # K: uniform warming between the two analysis times (the "diurnal" part)


def _cf_surface_file(path):
    """2-m T linear in latitude (T = 290 - B a lat), uniform 10-m wind, two times 6 h apart;
    also a pressure-level T and a decoy 100-m wind that must not be used."""
    lat = np.arange(40.0, 60.1, 1.0)
    lon = np.arange(-10.0, 10.1, 1.0)
    times = np.array(["2024-05-01T06", "2024-05-01T12"], dtype="datetime64[ns]")
    phi = np.deg2rad(lat)[None, :, None]
    shape = (2, lat.size, lon.size)
    t2 = 290.0 - B * A * phi + HEATING * np.arange(2.0)[:, None, None] + 0 * np.empty(shape)
    ds = xr.Dataset(
        {
            "screen_temp": (("time", "lat", "lon"), t2 - 273.15,
                            {"standard_name": "air_temperature", "units": "degC",
                             "coordinates": "h2"}),
            "wind_e": (("time", "lat", "lon"), np.zeros(shape),
                       {"standard_name": "eastward_wind", "units": "m s-1", "coordinates": "h10"}),
            "wind_n": (("time", "lat", "lon"), np.full(shape, V10),
                       {"standard_name": "northward_wind", "units": "m s-1", "coordinates": "h10"}),
            "wind_n_hub": (("time", "lat", "lon"), np.full(shape, 3 * V10),
                           {"standard_name": "northward_wind", "units": "m s-1",
                            "coordinates": "h100"}),
            "ta": (("time", "plev", "lat", "lon"), t2[:, None] - 10.0,
                   {"standard_name": "air_temperature", "units": "K"}),
        },
        coords={"time": times, "plev": ("plev", [85000.0], {"units": "Pa", "standard_name": "air_pressure"}),
                "lat": ("lat", lat, {"units": "degrees_north", "standard_name": "latitude"}),
                "lon": ("lon", lon, {"units": "degrees_east", "standard_name": "longitude"})},
    )
    for name, height in (("h2", 2.0), ("h10", 10.0), ("h100", 100.0)):
        ds[name] = ((), height, {"standard_name": "height", "units": "m", "positive": "up"})
    ds.to_netcdf(path, engine="netcdf4")
    return path


def test_cf_height_coordinates_pick_the_2m_temperature_and_10m_wind(tmp_path, capsys):
    path = _cf_surface_file(tmp_path / "surface.nc")
    got = run_json(capsys, "advect", path, "--level", "surface", "--at", "50,0")
    # by hand: -v dT/dy = -V10 * (-B) = +V10 B (K/s); the 100-m wind would give three times that
    assert got["advection_K_per_h"] == pytest.approx(V10 * B * 3600.0, abs=6e-5)
    assert got["temperature_K"] == pytest.approx(290.0 - B * A * np.deg2rad(50.0) + HEATING, abs=6e-4)
    from parcelcast.io.analysis import open_analysis

    ds = open_analysis(path)  # each field under its own role: the decoy 100-m wind is none
    np.testing.assert_allclose(ds["near_surface_v"].values, V10)
    np.testing.assert_allclose(ds["temperature"].isel(level=0).values,
                               ds["near_surface_temperature"].values - 10.0, atol=1e-9)


def test_surface_split_with_wind_adds_up_and_names_the_diurnal_cycle(tmp_path, capsys):
    path = _cf_surface_file(tmp_path / "surface.nc")
    got = run_json(capsys, "split", path, "--level", "surface", "--at", "50,0",
                   "--start", "2024-05-01T06", "--end", "2024-05-01T12", "--members", "1")
    window = 6 * 3600.0
    # by hand: observed = HEATING; advective = V10 B x 6 h (steady, uniform); residual = the rest
    assert got["observed_change_K"] == pytest.approx(HEATING, abs=6e-5)
    assert got["advective_K"] == pytest.approx(V10 * B * window, abs=1e-4)
    assert got["residual_K"] == pytest.approx(HEATING - V10 * B * window, abs=2e-4)
    assert got["vertical_K"] is None
    # following the air: it comes from V10 x 6 h further south, where it was warmer by B V10 dt
    assert got["lagrangian"]["advective_K"] == pytest.approx(V10 * B * window, abs=2e-3)
    assert any("diurnal cycle" in note and "sunshine" in note for note in got["notes"])
    assert got["level"] == "surface" and got["level_hPa"] is None


def test_surface_fields_written_to_netcdf_say_their_level(tmp_path, capsys):
    path = _cf_surface_file(tmp_path / "surface.nc")
    out = tmp_path / "adv.nc"
    run_json(capsys, "advect", path, "--level", "surface", "--out", out)
    written = xr.open_dataset(out)
    assert written.attrs["level"] == "surface" and "level" not in written.coords
    assert written["temperature"].attrs["long_name"] == "air temperature at 2 m"
    # by hand, as above: +V10 B K/s at every interior point
    np.testing.assert_allclose(written["temperature_advection"].values[1:-1, 1:-1], V10 * B, rtol=1e-9)
