"""The trend split on real model data: ERA5 ensemble of data assimilation, 850 hPa, 2017-01-01.

File (see ../shared/data/PROVENANCE.md): z and t at 850/500 hPa, 12-hourly
(2017-01-01 00 UTC .. 2017-01-02 12 UTC), 10 members, 3-degree grid (Copernicus C3S).  No winds
and no omega: the wind is geostrophic from z, and the vertical term is not available.

What can be checked without a reference answer: the parts add up (by construction, to
rounding); the observed change equals T(end) - T(start) read straight from the dataset at the
station (second route: scipy bilinear interpolation on the grid); members give their own values;
the Eulerian and Lagrangian advective estimates are compared and their difference printed
(run with ``-s`` to see the table).  Stations: mid-latitude points away from steep terrain
and from the equator (where the geostrophic wind is undefined): southern England, Vienna,
off New York, south-east Australia (Bass Strait).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.interpolate import RegularGridInterpolator

from datasets import data_file

pytestmark = pytest.mark.realdata

FILE = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
START = np.datetime64("2017-01-01T00:00", "ns")
END = np.datetime64("2017-01-02T12:00", "ns")
STATIONS = {"southern England": (52.0, 0.0), "Vienna": (48.2, 16.4),
            "off New York": (40.0, -70.0), "Bass Strait": (-40.0, 146.0)}


@pytest.fixture(scope="module")
def era5():
    path = data_file(FILE)  # skips with a reason naming the file and the folder when absent
    from parcelcast.io.analysis import open_analysis

    return open_analysis(path)


@pytest.fixture(scope="module")
def splits(era5):
    from parcelcast.budget import trend_split

    return {name: trend_split(era5, lat, lon, 850.0, START, END, wind="geostrophic", members=3)
            for name, (lat, lon) in STATIONS.items()}


def _bilinear(da2d, lat, lon):
    f = RegularGridInterpolator((da2d["lat"].values, da2d["lon"].values), da2d.values)
    return float(f([[lat, lon]])[0])


@pytest.mark.parametrize("name", list(STATIONS))
def test_parts_add_up_for_mean_and_members(splits, name):
    e = splits[name]["eulerian"]
    assert e["vertical_K"] is None and e["vertical_available"] is False  # no omega in the file
    assert e["observed_change_K"] == pytest.approx(e["advective_K"] + e["residual_K"], abs=1e-10)
    obs, adv, res = (np.array(e[k]) for k in
                     ("observed_change_members_K", "advective_members_K", "residual_members_K"))
    assert obs.size == adv.size == res.size == 10  # one value per ensemble member
    np.testing.assert_allclose(obs, adv + res, rtol=0, atol=1e-10)
    assert np.std(obs) > 0.0 and np.std(adv) > 0.0  # members differ
    assert e["advective_K"] == pytest.approx(adv.mean(), abs=1e-10)


@pytest.mark.parametrize("name", list(STATIONS))
def test_observed_change_is_the_analysed_change(era5, splits, name):
    # second route: scipy bilinear interpolation of T at both analysis times, per member
    lat, lon = STATIONS[name]
    t = era5["temperature"].sel(level=85_000.0)
    expected = [_bilinear(t.sel(member=m, time=END), lat, lon)
                - _bilinear(t.sel(member=m, time=START), lat, lon) for m in t["member"].values]
    np.testing.assert_allclose(splits[name]["eulerian"]["observed_change_members_K"], expected,
                               rtol=0, atol=1e-9)


def test_eulerian_and_lagrangian_compared(splits):
    print("\n850 hPa, 2017-01-01 00Z to 2017-01-02 12Z, geostrophic wind (member mean / member 0)")
    print(f"{'station':18s} {'observed':>9s} {'Eul adv':>9s} {'Lag adv':>9s} {'Eul-Lag':>9s} "
          f"{'Lag spread':>10s}")
    for name, out in splits.items():
        e, lg = out["eulerian"], out["lagrangian"]
        print(f"{name:18s} {e['observed_change_K']:9.3f} {e['advective_K']:9.3f} "
              f"{lg['advective_K']:9.3f} {out['advective_difference_K']:9.3f} {lg['spread_K']:10.3f}")
        assert lg["reached_start"] == lg["trajectories"] == 30  # 10 members x 3 starts
        assert lg["statuses"] == ["ok"]
        # like with like (issue 13): both parts are means over the same 10 members
        assert out["consistency"]["footing"] == "ensemble mean of 10 members"
        assert lg["advective_K"] == pytest.approx(np.mean(lg["advective_members_K"]), abs=1e-12)
        assert out["advective_difference_K"] == pytest.approx(
            e["advective_K"] - lg["advective_K"], abs=1e-12)
        assert np.isfinite(out["advective_difference_K"])
        assert lg["spread_K"] > 0.0


@pytest.mark.parametrize("name", list(STATIONS))
def test_lagrangian_parts_add_up_for_each_member_followed(splits, name):
    # lagrangian_split's docstring: each analysis member's unperturbed trajectory gives that
    # member's parts, which add up to that member's observed change at the point; the reported
    # parts are their means and add up to the mean observed change.
    e, lg = splits[name]["eulerian"], splits[name]["lagrangian"]
    observed = np.array(e["observed_change_members_K"])
    np.testing.assert_allclose(np.array(lg["non_advective_members_K"]) + lg["advective_members_K"],
                               observed, rtol=0, atol=1e-9)
    assert lg["non_advective_K"] + lg["advective_K"] == pytest.approx(observed.mean(), abs=1e-9)


def test_per_member_lagrangian_values(splits):
    # per-member Lagrangian estimates from the central start of each analysis member
    # (second route: recomputed here from the recorded paths and the per-member observed change)
    print("\nper-member Lagrangian advective part (K), 850 hPa")
    for name, out in splits.items():
        paths = out["lagrangian"]["paths"]
        central = np.flatnonzero(paths["cloud_member"].values == 0)
        last = paths["row_size"].values[central] - 1
        temp = paths["temperature"].values[central]
        non_adv = temp[:, 0] - temp[np.arange(central.size), last]
        obs = np.array(out["eulerian"]["observed_change_members_K"])
        lag_adv = obs - non_adv
        eul_adv = np.array(out["eulerian"]["advective_members_K"])
        print(f"{name:18s} Lagrangian " + " ".join(f"{x:6.2f}" for x in lag_adv))
        print(f"{'':18s} Eulerian   " + " ".join(f"{x:6.2f}" for x in eul_adv))
        assert central.size == 10 and np.all(np.isfinite(lag_adv))
        np.testing.assert_allclose(out["lagrangian"]["advective_members_K"], lag_adv, rtol=0, atol=1e-9)
        # the spread reported covers the member-to-member spread of the non-advective part
        assert out["lagrangian"]["spread_K"] >= 0.5 * np.std(non_adv)


def test_cli_json_on_real_data(capsys):
    from parcelcast.cli import main

    path = data_file(FILE)
    rc = main(["split", str(path), "--at", "52,0", "--level", "850", "--start", "2017-01-01T00:00",
               "--end", "2017-01-02T12:00", "--wind", "geostrophic", "--members", "3", "--json"])
    import json

    out = json.loads(capsys.readouterr().out)
    assert rc == 0
    assert out["vertical_K"] is None
    # JSON numbers are rounded to 4 decimals: the sum can be off by up to 3 half-units
    assert out["observed_change_K"] == pytest.approx(out["advective_K"] + out["residual_K"], abs=1.5e-4)
    assert len(out["advective_members_K"]) == 10
