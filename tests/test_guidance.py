"""Station guidance on the invented demo atmosphere, whose heating is known exactly.

The demo's diabatic heating H(t) repeats every 24 h (`parcelcast.demo.diurnal_heating`), so
"yesterday's non-advective change over the same hours" must equal H(now + lead) - H(now):
a check of the diurnal-course guidance against the formula that built the atmosphere.
Tolerance: the Eulerian residual of 3-hourly fields carries the time-interpolation error, measured at
about 0.04 K over a day in `case_studies/demo` (0.41 vs 0.38 K); 0.08 K allows twice that.
"""

from __future__ import annotations

import numpy as np
import pytest

from parcelcast import budget, demo
from parcelcast.io.analysis import open_analysis


@pytest.fixture(scope="module")
def guidance(tmp_path_factory):
    path = tmp_path_factory.mktemp("demo") / "demo.nc"
    demo.write_scenario(path)
    ds = open_analysis(path)
    return ds, budget.station_guidance(ds, demo.STATION_LAT, demo.STATION_LON, 850.0,
                                       leads_h=(6, 12, 24))


def test_diurnal_course_repeats_the_known_heating(guidance):
    ds, items = guidance
    now = ds["time"].values[-1]
    seconds_now = (now - demo.START) / np.timedelta64(1, "s")
    for item in items[1:4]:
        lead = item["lead_h"]
        expected = (demo.diurnal_heating(seconds_now + lead * 3600.0, 850.0)[0]
                    - demo.diurnal_heating(seconds_now, 850.0)[0])
        added = item["with_diurnal_course_K"] - item["advective_extrapolation_K"]
        assert added == pytest.approx(expected, abs=0.08), lead


def test_each_guidance_says_what_it_assumes(guidance):
    _, items = guidance
    assumptions = items[0]["assumptions"]
    assert set(assumptions) == {"advective_extrapolation", "upstream", "with_diurnal_course"}
    assert items[0]["now_K"] == pytest.approx(float(
        open_analysis_value(guidance[0])), abs=1e-9)
    assert items[-1]["top_temperature"] is not None  # the demo column has humidity


def open_analysis_value(ds):
    """Temperature at the station now, by a second route: bilinear by hand on the grid."""
    t = ds["temperature"].isel(time=-1).sel(level=85000.0)
    lat, lon = t["lat"].values, t["lon"].values
    j = np.searchsorted(lat, demo.STATION_LAT) - 1
    i = np.searchsorted(lon, demo.STATION_LON) - 1
    wy = (demo.STATION_LAT - lat[j]) / (lat[j + 1] - lat[j])
    wx = (demo.STATION_LON - lon[i]) / (lon[i + 1] - lon[i])
    v = t.values
    return ((1 - wy) * (1 - wx) * v[j, i] + (1 - wy) * wx * v[j, i + 1]
            + wy * (1 - wx) * v[j + 1, i] + wy * wx * v[j + 1, i + 1])
