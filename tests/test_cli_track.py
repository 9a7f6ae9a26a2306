"""``parcelcast track``: the --json contract and the three output formats."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from parcelcast.cli import main
from datasets import write_solid_body_netcdf

DATA = Path(os.environ.get("PARCELCAST_DATA", Path(__file__).resolve().parents[2] / "shared" / "data"))
ERA5 = DATA / "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"


@pytest.fixture(scope="module")
def nc_file(tmp_path_factory):
    return write_solid_body_netcdf(tmp_path_factory.mktemp("nc") / "solid.nc")


def _run(argv, capsys):
    code = main(argv)
    return code, capsys.readouterr()


def _check_contract(obj, backward=True):
    assert set(obj) >= {"arrival", "members", "spread_km", "disclaimer"}
    assert obj["disclaimer"]
    first = obj["members"][0]
    assert first["cloud_member"] == 0 and first["analysis_member"] == 0
    for m in obj["members"]:
        assert m["status"] in ("ok", "left_domain", "left_time_range", "hit_ground", "missing_data")
        times = [p["time"] for p in m["points"]]
        assert times == sorted(times)  # time order along the path
        for p in m["points"]:
            assert set(p) >= {"time", "lat", "lon", "pressure_hPa", "temperature_K"}
    pts = first["points"]
    end = pts[-1] if backward else pts[0]
    assert (end["lat"], end["lon"]) == (obj["arrival"]["lat"], obj["arrival"]["lon"])


def test_json_on_netcdf_back(nc_file, capsys):
    code, cap = _run(["track", str(nc_file), "--from", "40,10", "--level", "850", "--back", "24",
                      "--members", "3", "--json"], capsys)
    assert code == 0, cap.err
    obj = json.loads(cap.out)
    _check_contract(obj)
    assert obj["arrival"]["time"] == "2020-01-02T00:00:00Z"
    assert len(obj["members"]) == 3 and len(obj["members"][0]["points"]) == 25
    assert obj["members"][0]["points"][0]["temperature_K"] == 250.0
    # solid-body rotation along the 40N circle: 24 h back = 30 degrees of longitude west
    assert abs(obj["members"][0]["points"][0]["lon"] - (10.0 - 30.0)) < 0.05


def test_json_on_grib_ensemble(capsys):
    if not ERA5.exists():
        pytest.skip(f"real data file {ERA5.name} not found in {DATA} (set PARCELCAST_DATA)")
    code, cap = _run(["track", str(ERA5), "--from", "52,0", "--level", "500", "--ahead", "24",
                      "--start", "2017-01-01T00:00", "--wind", "geostrophic", "--json",
                      "--scheme", "rk4"], capsys)
    assert code == 0, cap.err
    obj = json.loads(cap.out)
    _check_contract(obj, backward=False)
    assert len(obj["members"]) == 10 and obj["arrival"]["role"] == "release"
    assert obj["members"][0]["points"][0]["time"] == "2017-01-01T00:00:00Z"
    assert obj["spread_km"] > 0


@pytest.mark.parametrize("suffix", [".nc", ".csv", ".geojson"])
def test_outputs_open_in_standard_tools(nc_file, tmp_path, suffix, capsys):
    out = tmp_path / f"paths{suffix}"
    code, cap = _run(["track", str(nc_file), "--from", "60,-90", "--level", "500", "--ahead", "12",
                      "--members", "2", "--out", str(out)], capsys)
    assert code == 0, cap.err
    if suffix == ".nc":
        ds = xr.open_dataset(out)
        assert ds.attrs["featureType"] == "trajectory"
        assert ds.trajectory_id.attrs["cf_role"] == "trajectory_id"
        assert ds.sizes["trajectory"] == 2 and ds.lat.attrs["units"] == "degrees_north"
        assert np.issubdtype(ds.time.dtype, np.datetime64)
        ds.close()
    elif suffix == ".csv":
        df = pd.read_csv(out)
        assert {"trajectory", "time", "lat", "lon", "pressure_hPa", "status"} <= set(df.columns)
        assert len(df) == 2 * 13
    else:
        gj = json.loads(out.read_text())
        assert gj["type"] == "FeatureCollection" and len(gj["features"]) == 2
        line = gj["features"][0]["geometry"]
        assert line["type"] == "LineString" and len(line["coordinates"]) == 13
        assert line["coordinates"][0] == [-90.0, 60.0]  # [lon, lat] per RFC 7946


def test_bad_suffix_and_errors(nc_file, tmp_path, capsys):
    out = tmp_path / "paths.xyz"
    code, cap = _run(["track", str(nc_file), "--from", "40,10", "--level", "850", "--back", "6",
                      "--out", str(out)], capsys)
    assert code == 2 and ".geojson" in cap.err and not out.exists()  # usage
    assert list(tmp_path.iterdir()) == []  # nothing half-written
    code, cap = _run(["track", str(nc_file), "--from", "40,10", "--level", "850", "--back", "6",
                      "--start", "1999-01-01"], capsys)
    assert code == 5 and "time" in cap.err  # nothing to compute (errors.EXIT_STATUS)
    code, cap = _run(["track", str(nc_file), "--from", "40,10", "--level", "850", "--back", "6",
                      "--mode", "3d"], capsys)
    assert code == 4 and "omega" in cap.err  # missing quantity


def test_help_is_light():
    # parcelcast track --help must not import xarray/dask/matplotlib
    code = ("import sys; from parcelcast.cli import build_parser; build_parser('track'); "
            "print(any(m in sys.modules for m in ('xarray', 'dask', 'matplotlib')))")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert res.stdout.strip() == "False"
