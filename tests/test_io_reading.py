"""Reading NetCDF and GRIB into the canonical form (design_notes/canonical_dataset.md)."""

from __future__ import annotations

import hashlib
import shutil

import numpy as np
import pytest

from datasets import G0, TIME, data_file, grib_field, raw_cf, small_atmosphere, write_netcdf
from parcelcast.io.analysis import open_analysis

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ENS = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
ERAI = "erainterim-monthly-jan-jul-uvz.nc"
MISSING = "fields-with-missing-values.grb1"


@pytest.fixture(scope="module")
def gfs():
    return open_analysis(data_file(GFS))


@pytest.fixture(scope="module")
def ens():
    return open_analysis(data_file(ENS))


def _atmosphere():
    return small_atmosphere(seed=5)


def test_netcdf_classic_and_netcdf4_read_the_same(tmp_path):
    lat, lon, t, u, v = _atmosphere()
    a = open_analysis(write_netcdf(raw_cf(lat, lon, t, u, v), tmp_path / "a.nc", "NETCDF4"))
    b = open_analysis(write_netcdf(raw_cf(lat, lon, t, u, v), tmp_path / "b.nc", "NETCDF3_64BIT"))
    for name in ("temperature", "u", "v"):
        np.testing.assert_array_equal(a[name].values, b[name].values)
    assert a["temperature"].dims == ("time", "level", "lat", "lon")
    assert a["level"].values[0] == 85_000.0  # hPa -> Pa by hand: 850 * 100


def test_conventions_normalised(tmp_path):
    # descending latitude, 0..360, degC, Pa, knots: canonical values by hand conversions
    lat, lon, t, u, v = _atmosphere()
    raw = raw_cf(lat, lon, t, u, v, lat_descending=True, lon_0_360=True, temperature_units="degC",
                 level_units="Pa", wind_units="knots")
    ds = open_analysis(write_netcdf(raw, tmp_path / "alt.nc"))
    np.testing.assert_array_equal(ds["lat"].values, lat)
    np.testing.assert_allclose(ds["lon"].values, lon)
    np.testing.assert_allclose(ds["temperature"].values[0, 0], t, rtol=1e-12)
    np.testing.assert_allclose(ds["u"].values[0, 0], u, rtol=1e-12)
    assert ds["temperature"].attrs["units"] == "K"
    assert ds["level"].attrs["units"] == "Pa" and ds["level"].values[0] == 85_000.0


def test_fahrenheit_and_geopotential_height(tmp_path):
    lat, lon, t, u, v = _atmosphere()
    raw = raw_cf(lat, lon, t, u, v)
    # degF = (K - 273.15) * 9/5 + 32 (definition of the Fahrenheit scale)
    raw["t"] = raw["t"].copy(data=(raw["t"].values - 273.15) * 1.8 + 32.0)
    raw["t"].attrs = {"units": "degF", "standard_name": "air_temperature"}
    raw["hgt"] = raw["t"].copy(data=np.full(raw["t"].shape, 1500.0))
    raw["hgt"].attrs = {"units": "gpm", "long_name": "geopotential height"}
    ds = open_analysis(write_netcdf(raw, tmp_path / "f.nc"))
    np.testing.assert_allclose(ds["temperature"].values[0, 0], t, rtol=1e-12)
    # geopotential = g0 * Z, g0 = 9.80665 m s-2 (WMO standard gravity)
    np.testing.assert_allclose(ds["geopotential"].values, 1500.0 * G0, rtol=1e-12)
    assert ds["geopotential"].attrs["units"] == "m2 s-2"


def test_several_files_combined_along_time_by_paths_and_glob(tmp_path):
    lat, lon, t, u, v = _atmosphere()
    t2 = TIME + np.timedelta64(6, "h")
    p1 = write_netcdf(raw_cf(lat, lon, t, u, v, times=(t2,)), tmp_path / "an-2.nc")
    p2 = write_netcdf(raw_cf(lat, lon, t + 1.0, u, v, times=(TIME,)), tmp_path / "an-1.nc")
    for spec in ([p1, p2], str(tmp_path / "an-*.nc")):
        ds = open_analysis(spec)
        np.testing.assert_array_equal(ds["time"].values, [TIME, t2])  # sorted ascending
        np.testing.assert_allclose(ds["temperature"].values[0, 0], t + 1.0)
        assert str(p1) in ds.attrs["source_files"] and str(p2) in ds.attrs["source_files"]


def test_variable_override(tmp_path):
    lat, lon, t, u, v = _atmosphere()
    raw = raw_cf(lat, lon, t, u, v, names=("field_a", "u", "v"))
    raw["field_a"].attrs.pop("standard_name")
    path = write_netcdf(raw, tmp_path / "o.nc")
    assert "temperature" not in open_analysis(path).data_vars
    ds = open_analysis(path, {"temperature": "field_a"})
    np.testing.assert_allclose(ds["temperature"].values[0, 0], t)
    assert "field_a" in ds["temperature"].attrs["source"]


@pytest.mark.realdata
def test_gfs_grib2_canonical(gfs):
    assert {"temperature", "u", "v", "geopotential", "omega"} <= set(gfs.data_vars)
    assert gfs["temperature"].dims == ("time", "level", "lat", "lon")
    # PROVENANCE.md: 26 isobaric levels 1000-10 hPa, 2.5 deg, valid 2011-10-11 00 UTC
    assert gfs.sizes["level"] == 26 and gfs["level"].values[0] == 100_000.0
    assert gfs["level"].values[-1] == 1_000.0
    assert gfs["time"].values[0] == np.datetime64("2011-10-11T00:00")
    assert gfs["lat"].values[0] == -90.0 and gfs["lon"].values[0] == -180.0
    # second route: the 850 hPa temperature read with eccodes directly, lat descending, 0..357.5
    lat, lon, values = grib_field(data_file(GFS), "t", 850)
    j = int(np.flatnonzero(lat == 50.0)[0])
    i = int(np.flatnonzero(lon == 357.5)[0])
    got = gfs["temperature"].sel(level=85_000.0, lat=50.0, lon=-2.5).values
    assert float(got.squeeze()) == pytest.approx(values[j, i], abs=1e-9)


@pytest.mark.realdata
def test_era5_ensemble_member_dimension_kept(ens):
    # PROVENANCE.md: 10 members, z and t at 850 and 500 hPa, 4 times, 3 deg
    assert ens["temperature"].dims == ("member", "time", "level", "lat", "lon")
    assert ens.sizes == {"member": 10, "time": 4, "level": 2, "lat": 61, "lon": 120}
    assert ens["geopotential"].attrs["units"] == "m2 s-2"
    spread = ens["temperature"].std("member")
    assert float(spread.max()) > 0.0  # members really differ


@pytest.mark.realdata
def test_erainterim_monthly_dims_and_levels():
    ds = open_analysis(data_file(ERAI))
    assert ds["u"].dims == ("month", "level", "lat", "lon")  # climatological month kept
    np.testing.assert_array_equal(ds["level"].values, [85_000.0, 50_000.0, 20_000.0])
    assert np.all(np.diff(ds["lat"].values) > 0)  # file stores latitude descending


@pytest.mark.realdata
def test_missing_values_stay_nan_and_are_counted():
    # PROVENANCE.md: 21,699 of 32,760 points missing over the two times (91 x 180 x 2 = 32,760)
    path = data_file(MISSING)
    ds = open_analysis(path)
    t2m = ds["near_surface_temperature"]
    assert t2m.size == 32_760
    per_time = [int(n) for n in t2m.isnull().sum(["lat", "lon"]).values]
    assert sum(per_time) == 21_699
    assert "near_surface_temperature: 21699" in ds.attrs["missing_values"]
    print("missing per time:", per_time)


@pytest.mark.realdata
def test_grib_input_folder_untouched(tmp_path):
    # a copy of a small GRIB file in its own folder: opening it writes nothing beside it
    src = data_file(MISSING)
    folder = tmp_path / "input"
    folder.mkdir()
    copy = folder / src.name
    shutil.copy2(src, copy)
    digest = hashlib.sha256(copy.read_bytes()).hexdigest()
    mtime = copy.stat().st_mtime_ns
    open_analysis(copy)
    open_analysis(copy)  # second time through the index cache
    assert sorted(p.name for p in folder.iterdir()) == [src.name]  # no .idx next to the file
    assert hashlib.sha256(copy.read_bytes()).hexdigest() == digest
    assert copy.stat().st_mtime_ns == mtime


@pytest.mark.realdata
def test_shared_data_folder_unchanged(shared_data, gfs):
    # the module fixture has opened the GFS file already; opening again changes nothing
    before = {p.name: p.stat().st_mtime_ns for p in shared_data.iterdir()}
    open_analysis(data_file(GFS))
    after = {p.name: p.stat().st_mtime_ns for p in shared_data.iterdir()}
    assert after == before
