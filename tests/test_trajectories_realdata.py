"""Trajectories on real model data from ../shared/data (skipped with a reason when absent).

Files (see PROVENANCE.md there): ERA5 ensemble of data assimilation, z and t at 850/500 hPa,
12-hourly, 10 members, 3 deg (Copernicus C3S); NCEP GFS 72-h forecast, 2.5 deg, one time.
Values are real model fields, not observations.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest

from parcelcast.trajectories.ensemble import path_length
from parcelcast.trajectories.sphere import great_circle_distance
from parcelcast.units import Q_

pytestmark = pytest.mark.realdata

DATA = Path(os.environ.get("PARCELCAST_DATA", Path(__file__).resolve().parents[2] / "shared" / "data"))
ERA5 = DATA / "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
GFS = DATA / "gfs-20111008T00-f072-global-2p5deg.grb2"


def _need(path):
    if not path.exists():
        pytest.skip(f"real data file {path.name} not found in {DATA} (set PARCELCAST_DATA)")


@pytest.fixture(scope="module")
def era5():
    _need(ERA5)
    from parcelcast.io.analysis import open_analysis

    return open_analysis(ERA5)


@pytest.fixture(scope="module")
def gfs():
    _need(GFS)
    from parcelcast.io.analysis import open_analysis

    return open_analysis(GFS, roles=("u", "v", "temperature", "geopotential", "omega",
                                     "surface_pressure"))


# mid-latitude arrival points away from the geostrophic mask near the equator
POINTS = [(52.0, 0.0), (45.0, -100.0), (-40.0, 150.0), (65.0, 30.0)]


@pytest.mark.parametrize("level", [850, 500])
def test_era5_ensemble_back_trajectories(era5, level):
    from parcelcast.trajectories.api import compute_trajectories

    for lat, lon in POINTS:
        out = compute_trajectories(era5, lat, lon, Q_(level, "hPa"), Q_(-24, "h"),
                                   wind="geostrophic", output_interval=Q_(12, "h"))
        assert out.sizes["trajectory"] == 10  # one per analysis member
        assert (out.status_name.values == "ok").all()
        # arrival at the last analysis time, 2017-01-02 12 UTC, then back 24 h
        assert str(out.time.values[0, 0])[:16] == "2017-01-02T12:00"
        assert str(out.time.values[0, -1])[:16] == "2017-01-01T12:00"
        travelled = path_length(out.lat.values, out.lon.values)[:, -1]
        mean_speed = travelled / 86400.0
        # plausible: geostrophic speeds at 850/500 hPa lie between calm and jet-core values;
        # 100 m/s exceeds the strongest 500-hPa winds in reanalyses (Holton & Hakim 2013
        # ch. 1 give jet maxima of order 50-100 m/s near 200 hPa, less below; from memory)
        assert (mean_speed > 0.5).all() and (mean_speed < 100.0).all(), mean_speed
        sp = out.spread.values[0] / 1000.0
        frac = out.spread_fraction.values[0]
        print(f"ERA5 EDA {level} hPa {lat},{lon}: travelled {travelled[0] / 1e3:.0f} km, "
              f"spread 12 h {sp[1]:.1f} km, 24 h {sp[2]:.1f} km ({frac[2]:.3f} of travel)")
        # spread grows with time from zero at the common arrival point
        assert sp[0] == 0.0 and 0.0 < sp[1] < sp[2]
        # analysis-ensemble spread stays below typical trajectory position errors of
        # 15-20 % of the distance travelled (Stohl 1998, Atmos. Environ. 32, 947; from memory)
        assert frac[2] < 0.2


def test_era5_cloud_and_members(era5):
    from parcelcast.trajectories.api import compute_trajectories

    out = compute_trajectories(era5, 52.0, 0.0, Q_(850, "hPa"), Q_(-24, "h"), wind="geostrophic",
                               members=3, analysis_members=False)
    assert out.sizes["trajectory"] == 3
    assert list(out.cloud_member.values) == [0, 1, 2]
    # cloud starts: half a grid length (1.5 deg = 167 km) from the point, pressure clipped
    d = great_circle_distance(52.0, 0.0, out.lat.values[:, 0], out.lon.values[:, 0])
    np.testing.assert_allclose(d[1:], 0.5 * 6371e3 * np.deg2rad(3.0), rtol=1e-6)
    assert out.pressure.values[1, 0] == 85000.0  # +5 hPa clipped to the lowest level
    assert out.pressure.values[2, 0] == 84500.0


def test_gfs_steady_flow(gfs):
    from parcelcast.trajectories.api import compute_trajectories

    # first hour of an isobaric trajectory moves at the wind at the start point, which we
    # read from the file by xarray's own linear interpolation (second route)
    lat, lon = 50.0, -30.0
    out = compute_trajectories(gfs, lat, lon, Q_(500, "hPa"), Q_(1, "h"))
    assert out.attrs["steady_flow"] == 1 and out.status_name.values[0] == "ok"
    u = float(gfs.u.sel(level=50000.0).isel(time=0).interp(lat=lat, lon=lon))
    v = float(gfs.v.sel(level=50000.0).isel(time=0).interp(lat=lat, lon=lon))
    moved = great_circle_distance(lat, lon, out.lat.values[0, -1], out.lon.values[0, -1])
    # the wind changes along a 1-h path (~100 km, under half a 2.5-deg cell): allow 5 %
    assert abs(moved - np.hypot(u, v) * 3600.0) < 0.05 * np.hypot(u, v) * 3600.0

    # 24 h forward then back in the steady 3-D flow (omega from the file) returns home
    for lat, lon in [(50.0, -30.0), (35.0, 140.0), (-45.0, 60.0)]:
        fwd = compute_trajectories(gfs, lat, lon, Q_(500, "hPa"), Q_(24, "h"), mode="3d",
                                   scheme="rk4")
        assert fwd.status_name.values[0] == "ok"
        k = int(fwd.row_size.values[0]) - 1
        la1, lo1, p1 = (fwd[n].values[0, k] for n in ("lat", "lon", "pressure"))
        assert 10000.0 < p1 < 100000.0
        back = compute_trajectories(gfs, la1, lo1, Q_(p1, "Pa"), Q_(-24, "h"), mode="3d",
                                    scheme="rk4")
        kb = int(back.row_size.values[0]) - 1
        err = great_circle_distance(back.lat.values[0, kb], back.lon.values[0, kb], lat, lon)
        travelled = path_length(fwd.lat.values[0], fwd.lon.values[0])[k]
        speed = travelled / 86400.0
        print(f"GFS 3-D {lat},{lon}: {travelled / 1e3:.0f} km, p end {p1 / 100:.0f} hPa, "
              f"return error {err / 1e3:.2f} km, dp {abs(back.pressure.values[0, kb] - 50000) / 100:.2f} hPa")
        assert 0.5 < speed < 100.0
        assert err < 0.01 * travelled
        assert abs(back.pressure.values[0, kb] - 50000.0) < 500.0
