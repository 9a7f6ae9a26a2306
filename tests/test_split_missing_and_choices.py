"""The trend split keeps missing values missing and refuses choices it does not know.

Expected values: the parts must add up (the definition of the residual), a NaN member
must give a NaN mean (the project's rule: missing values are never filled), and a
chunked computation must equal the in-memory one (same arithmetic, second route).
The atmosphere is the invented demo scenario (`parcelcast.demo`), used here only as a
realistic field with a known structure.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from parcelcast import budget, demo
from parcelcast.errors import ParcelcastError, SelectionError
from parcelcast.io.analysis import open_analysis

START = np.datetime64("2026-03-14T06:00", "ns")
END = np.datetime64("2026-03-14T21:00", "ns")


@pytest.fixture(scope="module")
def demo_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("demo") / "demo.nc"
    demo.write_scenario(path, resolution_deg=2.0)
    return path


@pytest.fixture(scope="module")
def analysis(demo_file):
    return open_analysis(demo_file)


def test_a_missing_member_makes_the_member_mean_missing(analysis):
    ensemble = xr.concat([analysis, analysis], dim="member").transpose("member", ...)
    broken = ensemble["temperature"].copy()
    broken[1, 2] = np.nan  # member 1, one analysis time inside the window, everywhere
    ensemble["temperature"] = broken
    result = budget.eulerian_split(ensemble, demo.STATION_LAT, demo.STATION_LON, 850.0, START, END)
    members = result["advective_members_K"]
    assert np.isfinite(members[0]) and np.isnan(members[1])
    assert np.isnan(result["advective_K"])  # not the mean of the one member left


def test_area_mean_parts_still_add_up_with_a_missing_point(analysis):
    broken = analysis.copy()
    temperature = broken["temperature"].copy()
    j = int(np.abs(analysis["lat"].values - demo.STATION_LAT).argmin())
    i = int(np.abs(analysis["lon"].values - demo.STATION_LON).argmin())
    temperature[3, :, j, i + 1] = np.nan  # one grid point, one time, inside the radius
    broken["temperature"] = temperature
    result = budget.eulerian_split(broken, demo.STATION_LAT, demo.STATION_LON, 850.0, START, END,
                                   radius_km=400.0)
    parts = result["advective_K"] + result["vertical_K"] + result["residual_K"]
    assert parts == pytest.approx(result["observed_change_K"], abs=1e-12)
    assert 0 < result["area"]["missing"] <= result["area"]["points"]


def test_unknown_wind_choice_is_refused(analysis):
    with pytest.raises(ParcelcastError, match="geostrophic"):
        budget.split_fields(analysis, 850.0, START, END, wind="Actual")


def test_a_dataset_without_time_is_refused_clearly(analysis):
    timeless = analysis.isel(time=0, drop=True)
    with pytest.raises(SelectionError, match="no time coordinate"):
        budget.split_fields(timeless, 850.0, START, END)


def test_level_chunked_input_gives_the_same_split(demo_file, analysis):
    chunked = open_analysis(demo_file, chunks={"time": 1, "level": 1})
    lazy = budget.split_fields(chunked, 850.0, START, END)
    eager = budget.split_fields(analysis, 850.0, START, END)
    for name in eager.data_vars:
        np.testing.assert_allclose(lazy[name].values, eager[name].values, rtol=1e-12, atol=1e-12)


def test_case_file_errors_name_the_file(tmp_path, demo_file):
    from parcelcast.review import read_case

    def case_text(wind: str, start: str) -> str:
        return (f'[case]\nanalyses = ["{demo_file}"]\nwind = "{wind}"\n'
                '[station]\nlat = 51.5\nlon = 2.0\n'
                f'[window]\nstart = "{start}"\nend = 2026-03-14T21:00:00Z\n')

    bad_wind = tmp_path / "wind.toml"
    bad_wind.write_text(case_text("Actual", "2026-03-14T06:00Z"))
    with pytest.raises(ParcelcastError, match="wind 'Actual'"):
        read_case(bad_wind)
    bad_date = tmp_path / "date.toml"
    bad_date.write_text(case_text("actual", "soon"))
    with pytest.raises(ParcelcastError, match="date.toml"):
        read_case(bad_date)


def test_temperature_advection_in_degf_is_converted():
    """1 degF = 5/9 K as a difference (pint's definitions); the result stays in K s-1."""
    from parcelcast.advection import advection

    lat, lon = np.arange(30.0, 60.0), np.arange(0.0, 30.0)
    values = np.tile(lon, (lat.size, 1)) * 0.5
    coords = {"lat": lat, "lon": lon}
    wind = xr.DataArray(np.full(values.shape, 10.0), dims=("lat", "lon"), coords=coords,
                        attrs={"units": "m s-1"})
    calm = xr.zeros_like(wind)
    results = {}
    for units in ("K", "degF"):
        t = xr.DataArray(values, dims=("lat", "lon"), coords=coords,
                         attrs={"units": units, "standard_name": "air_temperature"})
        results[units] = advection(t, wind, calm)
    assert results["degF"].attrs["units"] == "K s-1"
    np.testing.assert_allclose(results["degF"].values, results["K"].values * 5.0 / 9.0, rtol=1e-12)


def test_missing_values_outside_the_window_do_not_reach_it(analysis):
    """Only analysis times that bound the window enter it; a gap elsewhere changes nothing."""
    gappy = analysis.copy()
    temperature = gappy["temperature"].copy()
    temperature[-1] = np.nan  # the last analysis time, well after END
    gappy["temperature"] = temperature
    whole = budget.eulerian_split(analysis, demo.STATION_LAT, demo.STATION_LON, 850.0, START, END)
    gap = budget.eulerian_split(gappy, demo.STATION_LAT, demo.STATION_LON, 850.0, START, END)
    for key in ("observed_change_K", "advective_K", "vertical_K", "residual_K"):
        assert gap[key] == pytest.approx(whole[key], abs=1e-12)
