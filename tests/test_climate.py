"""The climate run: windows, the station's neighbourhood, the monthly summary, and its
results against the existing split on the whole grid in memory (second route).

Synthetic records: tests/climate_records.py (a drifting wave with a known heating).
"""

from __future__ import annotations

import numpy as np
import pytest

from climate_records import HEATING_K_PER_S, START, wave_record

PARTS = ("observed_change_K", "advective_K", "vertical_K", "residual_K")


@pytest.fixture(scope="module")
def wave_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("climate") / "wave.nc"
    wave_record(omega_pa_s=0.2).to_netcdf(path)
    return path


@pytest.fixture(scope="module")
def wave_in_memory(wave_file):
    from parcelcast.io.analysis import open_analysis

    return open_analysis(wave_file)


def _in_memory_split(ds, lat, lon, level, window, wind="actual"):
    from parcelcast.budget import eulerian_split

    return eulerian_split(ds, lat, lon, level, window.start, window.end, wind)


def test_windows_follow_each_other_from_the_first_analysis():
    from parcelcast.climate import consecutive_windows

    times = START + np.arange(0, 49, 6) * np.timedelta64(1, "h")
    windows = consecutive_windows(times, 18)
    assert [w.start for w in windows] == [START, START + np.timedelta64(18, "h")]
    assert all(a.end == b.start for a, b in zip(windows, windows[1:]))
    assert windows[-1].end <= times[-1]


def test_a_window_longer_than_the_record_is_refused():
    from parcelcast.climate import consecutive_windows
    from parcelcast.errors import ParcelcastError

    times = START + np.arange(0, 13, 6) * np.timedelta64(1, "h")
    with pytest.raises(ParcelcastError, match="does not fit in the record"):
        consecutive_windows(times, 24)


@pytest.mark.parametrize("lat, lon", [(52.0, 1.3), (47.5, 179.0), (-33.0, -178.4), (61.0, -180.0)])
def test_neighbourhood_gives_the_whole_grid_values(wave_in_memory, lat, lon):
    """4 x 4 box (also across the longitude seam) against the split on the whole grid."""
    from parcelcast.budget import eulerian_split
    from parcelcast.climate.neighbourhood import level_neighbourhood, neighbourhood

    box = level_neighbourhood(neighbourhood(wave_in_memory, lat, lon), 850.0)
    assert box.sizes["lat"] == 4 and box.sizes["lon"] == 4 and box.sizes["level"] == 3
    end = START + np.timedelta64(24, "h")
    whole = eulerian_split(wave_in_memory, lat, lon, 850.0, START, end)
    cut = eulerian_split(box, lat, lon, 850.0, START, end)
    for key in PARTS:
        assert cut[key] == pytest.approx(whole[key], abs=1e-12, rel=0)


def test_neighbourhood_stops_at_a_regional_grid_edge(wave_in_memory):
    from parcelcast.budget import eulerian_split
    from parcelcast.climate.neighbourhood import neighbourhood

    regional = wave_in_memory.sel(lat=slice(30, 70), lon=slice(-30, 30))
    box = neighbourhood(regional, 31.0, -29.0)  # in the corner cell
    assert box.sizes["lat"] == 3 and box.sizes["lon"] == 3
    end = START + np.timedelta64(12, "h")
    whole = eulerian_split(regional, 31.0, -29.0, 850.0, START, end)
    cut = eulerian_split(box, 31.0, -29.0, 850.0, START, end)
    assert cut["advective_K"] == pytest.approx(whole["advective_K"], abs=1e-12, rel=0)


@pytest.mark.parametrize("hours, count", [(24, 12), (9, 32)])  # 9 h: ends between analyses
def test_chunked_run_equals_the_in_memory_split_window_by_window(wave_file, wave_in_memory,
                                                                 hours, count):
    """Lazy (dask, 5 times per chunk, 3 windows per task), all windows of a task at once,
    against the existing split of each window on the whole grid in memory."""
    from parcelcast.climate import open_record, station_rows

    lazy = open_record(wave_file, 850.0, time_chunk=5)
    assert lazy["temperature"].chunks[0][0] == 5  # really dask-backed, chunked along time
    rows = list(station_rows(lazy, 50.0, 10.0, 850.0, hours, windows_per_task=3))
    assert len(rows) == count
    for row in rows:
        from parcelcast.climate import Window

        ref = _in_memory_split(wave_in_memory, 50.0, 10.0, 850.0, Window(row["start"], row["end"]))
        for key in PARTS:
            assert row[key] == pytest.approx(ref[key], abs=1e-12, rel=0)
        assert row["missing"] == {}


def test_residual_is_the_known_heating(tmp_path):
    """Without omega the residual of each day is the imposed heating H x 24 h (the wave is
    carried by the wind); fields interpolated linearly in time between 6-hourly analyses leave
    a small error (about 0.002 K a day here, measured)."""
    from parcelcast.climate import climate_split

    path = tmp_path / "wave0.nc"
    wave_record(days=4, omega_pa_s=0.0).to_netcdf(path)
    rows = list(climate_split(path, 45.0, 20.0, 850.0, 24))
    for row in rows:
        assert row["vertical_K"] == pytest.approx(0.0, abs=1e-12)
        assert row["residual_K"] == pytest.approx(HEATING_K_PER_S * 86400.0, abs=0.01)
        assert abs(row["advective_K"]) > 0.1  # the wave really moves past the station


def test_missing_values_and_gaps_stay_missing_with_a_reason(tmp_path):
    from parcelcast.climate import climate_split

    raw = wave_record(days=4)
    raw["t"][5, :, 27:29, 40:42] = np.nan  # around 45 N, 20 E at 30 h
    raw = raw.drop_isel(time=[12])  # no analysis at 72 h
    path = tmp_path / "holes.nc"
    raw.to_netcdf(path)
    rows = list(climate_split(path, 45.0, 20.0, 850.0, 24))
    assert rows[0]["missing"] == {}
    assert rows[1]["advective_K"] is None and "NaN" in rows[1]["missing"]["advective_K"]
    assert rows[2]["observed_change_K"] is None and "gap" in rows[2]["missing"]["observed_change_K"]
    assert rows[3]["observed_change_K"] is None  # 72 h is its start: the gap bounds it too


def test_monthly_summary_share_is_the_regression_slope():
    """Second route: numpy.polyfit of the advective part on the observed change."""
    from parcelcast.climate import MonthlySummary

    rng = np.random.default_rng(3)
    observed = rng.normal(0, 2, 40)
    advective = 0.6 * observed + rng.normal(0, 0.5, 40)
    summary = MonthlySummary()
    for k, (o, a) in enumerate(zip(observed, advective)):
        start = np.datetime64("2024-02-01T00", "ns") + k * np.timedelta64(24, "h")
        summary.add({"start": start, "observed_change_K": o, "advective_K": a,
                     "vertical_K": None, "residual_K": o - a})
    months = summary.by_month()
    assert [m["month"] for m in months] == ["2024-02", "2024-03"]
    feb = months[0]
    assert feb["windows"] == 29 and feb["vertical"]["count"] == 0 and feb["vertical"]["mean_K"] is None
    slope = np.polyfit(observed[:29], advective[:29], 1)[0]
    assert feb["advective_share"] == pytest.approx(slope, rel=1e-10)
    non_advective = np.polyfit(observed[:29], observed[:29] - advective[:29], 1)[0]
    assert feb["advective_share"] + non_advective == pytest.approx(1.0, rel=1e-10)
    assert feb["advective"]["spread_K"] == pytest.approx(np.std(advective[:29], ddof=1))


def test_split_maps_equal_the_in_memory_split_fields(wave_file, wave_in_memory, tmp_path):
    """Whole-area maps, window by window from lazy input, and as written to NetCDF."""
    import xarray as xr

    from parcelcast.budget import split_fields
    from parcelcast.climate import climate_maps
    from parcelcast.climate.fields import maps_writer

    out = tmp_path / "maps.nc"
    with maps_writer(out, {"level": "850 hPa"}) as write:
        for k, maps in enumerate(climate_maps(wave_file, 850.0, 72, time_chunk=4)):
            ref = split_fields(wave_in_memory, 850.0, maps.attrs["start"], maps.attrs["end"])
            for name in ("observed_change", "advective", "vertical", "residual"):
                np.testing.assert_allclose(maps[name].values, ref[name].values, atol=1e-12, rtol=0)
            write(maps)
    assert k == 3
    with xr.open_dataset(out) as written:
        assert written.sizes["time"] == 4 and written["advective"].dims == ("time", "lat", "lon")
        np.testing.assert_allclose(written["residual"].values[-1], ref["residual"].values,
                                   atol=1e-5, rtol=0)  # stored as float32


def test_below_the_ground_is_missing_as_in_the_split(tmp_path, wave_in_memory):
    """Surface pressure 800 hPa around 45 N 20 E: 850 hPa is below the ground there (the split
    masks it, parcelcast.ground); 1000 hPa elsewhere."""
    import xarray as xr

    from parcelcast.budget import eulerian_split
    from parcelcast.climate import climate_split
    from parcelcast.io.analysis import open_analysis

    raw = wave_record(days=2)
    sp = xr.full_like(raw["t"].isel(plev=0, drop=True), 100_000.0)
    sp.loc[{"lat": slice(40, 50), "lon": slice(15, 25)}] = 80_000.0
    raw["sp"] = sp.assign_attrs(units="Pa", standard_name="surface_air_pressure")
    path = tmp_path / "mountain.nc"
    raw.to_netcdf(path)
    whole = open_analysis(path)
    for lat, lon, masked in ((45.0, 20.0, True), (47.0, 26.0, True), (45.0, 40.0, False)):
        rows = list(climate_split(path, lat, lon, 850.0, 24))
        for row in rows:
            ref = eulerian_split(whole, lat, lon, 850.0, row["start"], row["end"])
            if masked:  # a corner (45 N 25 E) lies in the mountain for the second station
                assert np.isnan(ref["advective_K"]) and row["advective_K"] is None
                assert row["missing"]["observed_change_K"].startswith("below the ground")
            else:
                assert row["advective_K"] == pytest.approx(ref["advective_K"], abs=1e-12)
                assert row["missing"] == {}
