"""The climate run on real data (../shared/data, see PROVENANCE.md).

* ERA5 hourly 2-m temperature, March 2019, UK (no wind): the observed change of each day at a
  grid point equals T(end) - T(start) read with eccodes directly (second route, not through
  cfgrib or parcelcast); the advective part is missing with a reason.
* ERA5 ensemble, 850 hPa, geostrophic wind: every 12-h window equals the existing split on the
  whole grid in memory.
"""

from __future__ import annotations

import numpy as np
import pytest

from datasets import data_file

pytestmark = pytest.mark.realdata

T2M = "era5-t2m-2019-03-hourly-uk.grb1"
ENS = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"


def _t2m_at_grid_point(path, lat, lon) -> dict:
    """valid time -> t2m (K) at one grid point, message by message with eccodes."""
    import pyproj  # noqa: F401  (PROJ before eccodes, see DEVELOPERS.md)
    import eccodes

    out = {}
    with open(path, "rb") as handle:
        while (gid := eccodes.codes_grib_new_from_file(handle)) is not None:
            try:
                lats = eccodes.codes_get_array(gid, "distinctLatitudes")
                lons = eccodes.codes_get_array(gid, "distinctLongitudes")
                values = eccodes.codes_get_array(gid, "values").reshape(lats.size, lons.size)
                j = int(np.argmin(np.abs(lats - lat)))
                i = int(np.argmin(np.abs(((lons - lon + 180) % 360) - 180)))
                when = f"{eccodes.codes_get(gid, 'validityDate')}{eccodes.codes_get(gid, 'validityTime'):04d}"
                out[np.datetime64(f"{when[:4]}-{when[4:6]}-{when[6:8]}T{when[8:10]}:{when[10:]}", "ns")] = \
                    float(values[j, i])
            finally:
                eccodes.codes_release(gid)
    return out


def test_surface_observed_change_by_day_without_wind():
    from parcelcast.climate import climate_split

    path = data_file(T2M)
    rows = list(climate_split(path, 52.0, -1.0, "surface", 24))
    assert len(rows) == 30  # 744 hourly analyses: 30 whole days from 1 March 00 UTC
    reference = _t2m_at_grid_point(path, 52.0, -1.0)
    for row in rows:
        expected = reference[row["end"]] - reference[row["start"]]
        assert row["observed_change_K"] == pytest.approx(expected, abs=1e-9)
        assert row["advective_K"] is None and "10-m" in row["missing"]["advective_K"]
        assert row["vertical_K"] is None and row["residual_K"] is None
    changes = np.array([r["observed_change_K"] for r in rows])
    assert changes.std() > 0.5  # real day-to-day changes of several kelvin


def test_geostrophic_850_equals_the_split_on_the_whole_grid():
    from parcelcast.budget import eulerian_split
    from parcelcast.climate import climate_split
    from parcelcast.io.analysis import open_analysis

    path = data_file(ENS)
    whole = open_analysis(path)
    rows = list(climate_split(path, 48.2, 16.4, 850.0, 12, wind="geostrophic"))
    assert len(rows) == 3
    for row in rows:
        ref = eulerian_split(whole, 48.2, 16.4, 850.0, row["start"], row["end"], "geostrophic")
        for key in ("observed_change_K", "advective_K", "residual_K"):
            assert row[key] == pytest.approx(ref[key], abs=1e-12, rel=0)
        assert row["vertical_K"] is None and row["missing"] == {"vertical_K": "no omega in the input"}
