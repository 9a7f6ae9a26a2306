"""`parcelcast track --series`: several arrival times in one run (issue 3, item 4).

Second route: in the solid-body rotation of Williamson et al. (1992, test case 1, axis
along the pole) a parcel on the equator moves west-to-east at u0 = 2 pi a / 12 days (the
paper's value, recalled from memory), so
a 12-h back trajectory arriving at (0, 0) starts 180/12 = 15 degrees of longitude to the
west, whatever the arrival time.
"""

from __future__ import annotations

import json

import pytest

from parcelcast.cli import main
from parcelcast.trajectories.analytic import solid_body_dataset


def test_series_of_arrival_times(tmp_path, capsys):
    path = tmp_path / "rotation.nc"
    solid_body_dataset(hours=48, step_hours=6, resolution=2.0).to_netcdf(path)
    args = ["track", str(path), "--from", "0,0", "--level", "500", "--back", "12",
            "--series", "3", "--series-step", "6", "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    series = out["series"]
    assert [item["time"] for item in series] == [
        "2020-01-03T00:00:00Z", "2020-01-02T18:00:00Z", "2020-01-02T12:00:00Z"]
    assert out["arrival"]["time"] == series[0]["time"]  # the --start arrival leads
    for item in series:
        assert item["status"] == "ok"
        assert item["end"]["lon"] == pytest.approx(-15.0, abs=0.05)
        assert item["end"]["lat"] == pytest.approx(0.0, abs=0.05)


def test_series_must_be_positive(tmp_path, capsys):
    path = tmp_path / "rotation.nc"
    solid_body_dataset(hours=24, step_hours=6, resolution=5.0).to_netcdf(path)
    assert main(["track", str(path), "--from", "0,0", "--level", "500", "--back", "6",
                 "--series", "0"]) == 2
    assert "--series" in capsys.readouterr().err
