"""The trajectory spread keeps the start cloud's own size apart from its growth.

Analytic reference: solid-body rotation moves every parcel rigidly (a rotation of the
sphere), so distances between parcels are preserved: the spread at every time equals the
start cloud's size and the growth is zero (to the integration error, 0.005% of the distance
on this case per the issue).  The ring of cloud starts lies exactly ``--cloud-radius`` from
the point (great-circle offset), so with one analysis member the start spread is that radius.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from parcelcast.cli import main


@pytest.fixture(scope="module")
def rotation_file(tmp_path_factory):
    from parcelcast.trajectories.analytic import solid_body_dataset

    path = tmp_path_factory.mktemp("spread") / "solid-body.nc"
    ds = solid_body_dataset(hours=24, step_hours=6, resolution=5.0)
    ds.attrs = {}
    ds.to_netcdf(path, engine="netcdf4")
    return path


def test_spread_parts_in_solid_body_rotation():
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.trajectories.analytic import solid_body_dataset
    from parcelcast.units import Q_

    ds = solid_body_dataset(hours=24, step_hours=6, resolution=5.0)
    out = compute_trajectories(ds, 30.0, 20.0, Q_(500, "hPa"), Q_(24, "h"), members=7,
                               cloud_radius=Q_(150, "km"))
    assert float(out["start_spread"].values[0]) == pytest.approx(150e3, rel=1e-9)
    growth = out["spread_growth"].values[0]
    assert np.nanmax(np.abs(growth)) < 1e-3 * 150e3
    np.testing.assert_allclose(out["spread"].values[0], 150e3 + growth, rtol=1e-12)


def test_cloud_radius_option_in_km(rotation_file, capsys):
    args = ["track", str(rotation_file), "--from", "30,20", "--level", "500", "--ahead", "24",
            "--members", "5", "--cloud-radius", "80", "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["start_spread_km"] == pytest.approx(80.0, abs=0.01)
    assert abs(out["spread_growth_km"]) < 0.1
    assert out["spread_km"] == pytest.approx(out["start_spread_km"] + out["spread_growth_km"], abs=0.02)
    assert out["series"][0]["start_spread_km"] == out["start_spread_km"]


def test_cloud_radius_must_be_positive(rotation_file, capsys):
    with pytest.raises(SystemExit) as stop:
        main(["track", str(rotation_file), "--from", "30,20", "--level", "500", "--ahead", "6",
              "--cloud-radius", "-5"])
    assert stop.value.code == 2 and "positive" in capsys.readouterr().err
