"""Levels below the ground are missing, with the reason, in every output.

Outside reference: the GFS file's own surface pressure ``sp`` and orography ``orog``,
read with eccodes directly (``datasets.grib_field``), not through parcelcast.  At 20S 67.5W
(the Altiplano) GFS has a surface pressure near 655 hPa, so 850 hPa is below the ground
there; over the North Atlantic (40N 30W) it is air.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr

from datasets import data_file, grib_field
from parcelcast.cli import main

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ERA5 = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
ROLES = ("temperature", "u", "v", "geopotential", "surface_pressure", "orography")


@pytest.fixture(scope="module")
def gfs():
    from parcelcast.io.analysis import open_analysis

    return open_analysis(data_file(GFS), roles=ROLES)


@pytest.fixture(scope="module")
def gfs_850(gfs):
    from parcelcast.advection import advection_on_level

    return advection_on_level(gfs, 850)


def _eccodes_surface_pressure():
    lat, lon, sp = grib_field(data_file(GFS), "sp", 0, "surface")
    return lat, lon, sp


def test_altiplano_is_below_ground_by_the_files_surface_pressure(gfs_850):
    lat, lon, sp = _eccodes_surface_pressure()
    j, i = int(np.flatnonzero(lat == -20.0)[0]), int(np.flatnonzero(lon == 292.5)[0])
    assert 640e2 < sp[j, i] < 670e2  # the figure, ~655 hPa, read independently
    at = gfs_850.sel(lat=-20.0, lon=-67.5)
    assert bool(at["below_ground"]) and np.isnan(float(at["temperature_advection"]))
    assert np.isnan(float(at["temperature"]))


def test_mask_matches_the_surface_pressure_read_independently(gfs_850):
    _, lon, sp = _eccodes_surface_pressure()
    expected = (sp < 850e2)[::-1]  # file is north to south; canonical south to north
    expected = np.roll(expected, -int(np.flatnonzero(lon == 180.0)[0]), axis=1)  # -180..180
    got = gfs_850["below_ground"].squeeze().values
    assert np.array_equal(got, expected)
    counts = json.loads(gfs_850.attrs["missing_by_reason"])
    # pole rows are counted first, so below-ground points away from the poles:
    assert counts["below the ground"] == int(expected[1:-1].sum())
    assert sum(counts.values()) == int(gfs_850["temperature_advection"].isnull().sum())


def test_orography_route_agrees_with_surface_pressure(gfs):
    """Without surface pressure, geopotential below the orography decides; the model's two
    fields describe the same ground, so the masks agree almost everywhere (>= 98%)."""
    from parcelcast.advection import advection_on_level
    from parcelcast.ground import BY_OROGRAPHY

    by_orography = advection_on_level(gfs.drop_vars("surface_pressure"), 850)
    assert by_orography.attrs["below_ground_check"] == BY_OROGRAPHY
    by_sp = advection_on_level(gfs, 850)
    a = by_orography["below_ground"].squeeze().values
    b = by_sp["below_ground"].squeeze().values
    assert a.sum() > 500 and (a == b).mean() >= 0.98


def test_without_surface_fields_it_says_it_cannot_check():
    from parcelcast.advection import advection_on_level
    from parcelcast.ground import NOT_CHECKED
    from parcelcast.io.analysis import open_analysis

    ds = open_analysis(data_file(ERA5), roles=("temperature", "geopotential", "orography"))
    out = advection_on_level(ds, 850, wind="geostrophic")
    assert out.attrs["below_ground_check"] == NOT_CHECKED and "below_ground" not in out


def test_at_answers_null_with_reason_and_sea_point_stays(capsys):
    path = str(data_file(GFS))
    assert main(["advect", path, "--level", "850", "--at", "30,85", "--json"]) == 0
    tibet = json.loads(capsys.readouterr().out)
    assert tibet["advection_K_per_h"] is None and tibet["temperature_K"] is None
    assert "below the ground" in tibet["missing_reason"]
    assert main(["advect", path, "--level", "850", "--at", "40,-30", "--json"]) == 0
    sea = json.loads(capsys.readouterr().out)
    assert sea["advection_K_per_h"] is not None and sea["missing_reason"] is None
    _, _, t = grib_field(data_file(GFS), "t", 850)
    assert 270.0 < sea["temperature_K"] < 300.0 and np.isfinite(t).all()


def test_area_mean_counts_below_ground_points(gfs_850):
    from parcelcast.sampling import area_mean

    adv = gfs_850["temperature_advection"].squeeze()
    mean, info = area_mean(adv, -20.0, -67.5, radius_km=600.0,
                           reasons=[("below the ground", gfs_850["below_ground"].squeeze())])
    assert info["missing"] > 0 and info["missing_by_reason"] == {"below the ground": info["missing"]}
    assert np.isfinite(float(mean))  # the valid points around still give a mean


def test_split_at_a_below_ground_station_is_missing_with_reason(gfs):
    """The split's Eulerian parts at the Altiplano are missing, with the reason (one analysis
    time: a steady window of zero length is refused, so use a two-time copy)."""
    from parcelcast.budget import eulerian_split

    two = xr.concat([gfs, gfs.assign_coords(time=gfs["time"] + np.timedelta64(6, "h"))], "time")
    out = eulerian_split(two, -20.0, -67.5, 850, two.time.values[0], two.time.values[1])
    assert np.isnan(out["advective_K"]) and np.isnan(out["observed_change_K"])
    assert "below the ground" in out["missing_reason"]
    sea = eulerian_split(two, 40.0, -30.0, 850, two.time.values[0], two.time.values[1])
    assert np.isfinite(sea["advective_K"]) and sea["missing_reason"] is None


def test_trajectory_start_below_ground_is_refused(capsys):
    code = main(["track", str(data_file(GFS)), "--from", "30,85", "--level", "850", "--back", "6"])
    assert code == 5 and "below the ground" in capsys.readouterr().err  # nothing to compute


def test_cloud_members_below_ground_are_marked(gfs):
    """A cloud around a point next to the Andes: members over the mountains are marked."""
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.units import Q_

    out = compute_trajectories(gfs, -20.0, -62.5, Q_(850, "hPa"), Q_(-6, "h"), members=9,
                               cloud_radius=Q_(400, "km"))
    names = out["status_name"].values
    assert names[0] != "below_ground_start" and (names == "below_ground_start").any()
    marked = names == "below_ground_start"
    assert (out["row_size"].values[marked] == 1).all()
