"""Every NetCDF file parcelcast writes is CF-clean (issue 10 item 3 / brief item 4).

Outside reference: the IOOS compliance-checker (PyPI ``compliance-checker``), run offline
(it carries the CF standard-name table; the test blocks network connections to prove it)
against CF 1.8 and CF 1.11: no failing high-priority check.  Chapter 9 (discrete sampling
geometries) is checked here where the checker does not look (CF 1.11 sections 9.1-9.3):
time increasing along each trajectory, per-trajectory variables only on the trajectory
dimension, padding missing, all coordinates listed.
"""

from __future__ import annotations

import json
import socket

import numpy as np
import pytest
import xarray as xr

from datasets import data_file
from parcelcast import demo
from parcelcast.cli import main
from parcelcast.io import cf_netcdf

import compliance_checker  # noqa: F401,E402  (test extra: a broken install fails, never skips)
pytestmark = pytest.mark.filterwarnings("ignore::DeprecationWarning")  # the checker's own


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    """Every kind of NetCDF file parcelcast writes, from the demo scenario."""
    folder = tmp_path_factory.mktemp("cf")
    analysis = folder / "demo-analysis.nc"
    demo.write_scenario(analysis)
    files = {"demo analysis": analysis}
    common = [str(analysis), "--level", "850"]
    files["advection fields"] = folder / "adv.nc"
    assert main(["advect", *common, "--out", str(files["advection fields"])]) == 0
    files["back trajectories"] = folder / "back.nc"  # from the western edge: some leave early
    assert main(["track", *common, "--from", "51.5,-33", "--back", "12", "--members", "5",
                 "--out", str(files["back trajectories"])]) == 0
    files["forward trajectories"] = folder / "ahead.nc"
    assert main(["track", *common, "--from", "51.5,2", "--ahead", "6", "--series", "2",
                 "--series-step", "3", "--out", str(files["forward trajectories"])]) == 0
    from parcelcast.budget import split_fields
    from parcelcast.io.analysis import open_analysis

    maps = split_fields(open_analysis(analysis), 850.0, np.datetime64("2026-03-14T06:00"),
                        np.datetime64("2026-03-15T03:00"))
    files["split maps"] = cf_netcdf.write(maps, folder / "split.nc", "split maps")
    return files


@pytest.fixture()
def offline(monkeypatch):
    def refuse(*args, **kwargs):
        raise OSError("network access during the compliance check")

    monkeypatch.setattr(socket.socket, "connect", refuse)


def _failing(path, spec, tmp_path):
    from compliance_checker.runner import CheckSuite, ComplianceChecker

    CheckSuite().load_all_available_checkers()
    report = tmp_path / "report.json"
    ComplianceChecker.run_checker(str(path), [spec], 0, "normal", output_filename=str(report),
                                  output_format="json")
    result = next(iter(json.loads(report.read_text()).values()))
    return [(c["name"], c["msgs"]) for c in result["high_priorities"]
            if c["value"][0] < c["value"][1]]


@pytest.mark.parametrize("spec", ["cf:1.8", "cf:1.11"])
@pytest.mark.parametrize("kind", ["demo analysis", "advection fields", "back trajectories",
                                  "forward trajectories", "split maps"])
def test_no_high_priority_finding(written, offline, tmp_path, kind, spec):
    assert _failing(written[kind], spec, tmp_path) == []


@pytest.mark.realdata
def test_ensemble_fields_from_grib(offline, tmp_path):
    grib = data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1")  # a member dimension
    out = tmp_path / "ens.nc"
    assert main(["advect", str(grib), "--level", "850", "--wind", "geostrophic", "--out", str(out)]) == 0
    assert _failing(out, "cf:1.11", tmp_path) == []


@pytest.mark.parametrize("kind", ["demo analysis", "advection fields", "back trajectories",
                                  "split maps"])
def test_global_attributes_and_encoding(written, kind):
    raw = xr.open_dataset(written[kind], decode_cf=False)
    assert raw.attrs["Conventions"] == "CF-1.11" and raw.attrs["title"]
    assert "parcelcast" in raw.attrs["history"] and "not an official forecast" in raw.attrs["comment"]
    for name, var in raw.variables.items():
        assert var.dtype != np.int64, name  # CF before 1.9 has no 64-bit integers
        if name in raw.dims:  # a coordinate variable (CF 2.5.1): no fill value
            assert "_FillValue" not in var.attrs, name
    for name, var in raw.variables.items():
        if "since" in str(var.attrs.get("units", "")):  # every time: CF-encoded numbers
            assert var.dtype == np.float64 and var.attrs["units"].startswith("seconds since 1970")
    if kind != "split maps":  # the maps cover a window, not one time
        assert "time" in raw.variables


def test_trajectories_meet_chapter_9(written):
    for kind in ("back trajectories", "forward trajectories"):
        path = written[kind]
        ds = xr.open_dataset(path)
        raw = xr.open_dataset(path, decode_cf=False)
        assert ds.attrs["featureType"] == "trajectory"
        assert ds["trajectory_id"].attrs["cf_role"] == "trajectory_id"
        assert set(ds.dims) == {"trajectory", "obs"}
        for name, var in ds.variables.items():
            assert var.dims in (("trajectory",), ("trajectory", "obs")), (name, var.dims)
            if var.dims == ("trajectory", "obs") and name not in ("time", "lat", "lon", "pressure"):
                listed = set(raw[name].attrs["coordinates"].split())
                assert {"time", "lat", "lon", "pressure"} <= listed, (name, listed)
        times = ds["time"].values
        valid = ~np.isnat(times)
        for k in range(ds.sizes["trajectory"]):
            n = int(valid[k].sum())
            assert valid[k, :n].all() and not valid[k, n:].any()  # points first, then padding
            assert n == int(ds["row_size"].values[k])
            assert (np.diff(times[k, :n]) > np.timedelta64(0)).all()  # time increases
            padding = ~valid[k]
            for name in ("lat", "lon", "pressure", "on_ground", "temperature"):
                assert np.isnan(ds[name].values[k][padding]).all(), name  # missing, not 0
        assert raw["on_ground"].attrs["_FillValue"] == -1


def test_back_trajectory_ends_at_the_arrival_point(written):
    ds = xr.open_dataset(written["back trajectories"])
    central = int(np.flatnonzero(ds["central"].values)[0])
    n = int(ds["row_size"].values[central])
    assert ds["lat"].values[central, n - 1] == pytest.approx(51.5)
    assert ds["lon"].values[central, n - 1] == pytest.approx(-33.0)
    assert "left_domain" in set(ds["status_name"].values)  # the padding case is exercised


def test_trajectory_file_keeps_every_variable(written):
    """Nothing is dropped on the way to the chapter-9 layout (per-group values go on each
    trajectory of the group)."""
    from parcelcast.io.analysis import open_analysis
    from parcelcast.trajectories.api import compute_trajectories
    from parcelcast.trajectories.output import to_cf_dsg
    from parcelcast.units import Q_

    ds = open_analysis(written["demo analysis"])
    out = compute_trajectories(ds, 51.5, 2.0, Q_(850, "hPa"), Q_(-6, "h"), None, members=3)
    cf = to_cf_dsg(out)
    assert set(out.variables) - set(out.dims) <= set(cf.variables)
    group = out["start_group"].values
    for name, var in out.variables.items():
        if var.dims == ("start_group",):
            np.testing.assert_array_equal(cf[name].values, var.values[group])
