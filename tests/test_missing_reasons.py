"""Counts of missing points say why: pole rows, the equatorial band of the geostrophic wind,
below the ground, missing in the file (and neighbours of a missing point).

Outside references: the GFS file's grid (PROVENANCE.md: latitudes 90 to -90 every 2.5 deg,
144 longitudes) gives 2 pole rows of 144 points and, within 10 deg of the equator (the band
``parcelcast.geostrophic.EQUATORIAL_BAND_DEG``, common practice), the 7 rows -7.5..7.5;
its own surface pressure ``sp`` (read with eccodes) gives the below-ground points.  The
second-order centred stencil (5-point cross) gives the neighbours of a missing point.
"""

from __future__ import annotations

import json

import numpy as np
import xarray as xr

from datasets import canonical, data_file, grib_field
from parcelcast.cli import main
from parcelcast.ground import BELOW_GROUND
from parcelcast.missing import EQUATORIAL_BAND, MISSING_IN_FILE, OTHER, POLE_ROWS

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"


def test_gfs_geostrophic_missing_points_by_reason(capsys):
    assert main(["advect", str(data_file(GFS)), "--level", "850", "--wind", "geostrophic",
                 "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    counts = out["missing_points_by_reason"]
    lat, _, sp = grib_field(data_file(GFS), "sp", 0, "surface")
    assert counts[POLE_ROWS] == 2 * 144
    band = np.abs(lat) < 10.0
    assert counts[EQUATORIAL_BAND] == int(band.sum()) * 144 == 7 * 144
    below_elsewhere = (sp < 850e2) & ~band[:, None] & (np.abs(lat) < 90.0)[:, None]
    assert counts[BELOW_GROUND] == int(below_elsewhere.sum())
    assert sum(counts.values()) == out["missing_points_in_field"]


def test_missing_in_the_file_and_its_neighbours():
    from parcelcast.advection import advection_on_level

    lat = np.arange(20.0, 60.01, 2.0)
    lon = np.arange(0.0, 40.01, 2.0)
    ds = canonical(lat, lon, 280.0 + 0.1 * lat[:, None] + 0.0 * lon, 5.0, 5.0)
    ds["temperature"].values[0, 0, 5, 5] = np.nan
    counts = json.loads(advection_on_level(ds, 850.0).attrs["missing_by_reason"])
    assert counts == {MISSING_IN_FILE: 1, OTHER: 4}


def test_geostrophic_winds_carry_cf_names(tmp_path):
    path = tmp_path / "geo.nc"
    assert main(["advect", str(data_file(GFS)), "--level", "500", "--wind", "geostrophic",
                 "--out", str(path)]) == 0
    with xr.open_dataset(path) as out:
        assert out["u"].attrs["standard_name"] == "geostrophic_eastward_wind"
        assert out["v"].attrs["standard_name"] == "geostrophic_northward_wind"
        assert json.loads(out.attrs["missing_by_reason"])[POLE_ROWS] == 288
