"""Property tests (hypothesis) of the climate run: windows tile the record, and the station's
4 x 4 neighbourhood with all windows of a block at once gives the existing split of each
window on the whole grid (second route: :func:`parcelcast.budget.eulerian_split`)."""

from __future__ import annotations

import functools
import tempfile
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from climate_records import START, wave_record

pytestmark = pytest.mark.slow


@functools.cache
def _wave():
    from parcelcast.io.analysis import open_analysis

    path = Path(tempfile.mkdtemp(prefix="parcelcast-climate-prop-")) / "wave.nc"
    wave_record(days=3, dlat=10.0, dlon=10.0, omega_pa_s=0.3).to_netcdf(path)
    return open_analysis(path).load()


@settings(max_examples=40, deadline=None)
@given(hours=st.floats(0.5, 200.0), steps=st.integers(2, 60))
def test_windows_tile_the_record_from_its_start(hours, steps):
    from parcelcast.climate import consecutive_windows
    from parcelcast.errors import ParcelcastError

    times = START + np.arange(steps) * np.timedelta64(6, "h")
    span_h = 6.0 * (steps - 1)
    if hours > span_h:
        with pytest.raises(ParcelcastError):
            consecutive_windows(times, hours)
        return
    windows = consecutive_windows(times, hours)
    assert windows[0].start == times[0] and windows[-1].end <= times[-1]
    assert all(a.end == b.start for a, b in zip(windows, windows[1:]))
    assert len(windows) == int(span_h * 3600e9 // round(hours * 3600e9))


@settings(max_examples=8, deadline=None)
@given(lat=st.floats(-84.0, 84.0), lon=st.floats(-180.0, 179.99),
       first=st.integers(0, 3), length_h=st.sampled_from([6.0, 9.0, 12.0, 24.0]))
def test_block_of_windows_at_the_station_equals_the_split(lat, lon, first, length_h):
    from parcelcast.budget import eulerian_split
    from parcelcast.climate.neighbourhood import level_neighbourhood, neighbourhood
    from parcelcast.climate.station import block_parts
    from parcelcast.climate.windows import Window

    ds = _wave()
    step = np.timedelta64(int(length_h * 60), "m")
    start = START + first * np.timedelta64(3, "h")
    windows = [Window(start + k * step, start + (k + 1) * step) for k in range(2)]
    box = level_neighbourhood(neighbourhood(ds, lat, lon), 850.0)
    parts = block_parts(box, lat, lon, 850.0, "actual", windows)
    for k, w in enumerate(windows):
        ref = eulerian_split(ds, lat, lon, 850.0, w.start, w.end)
        for key in ("observed_change_K", "advective_K", "vertical_K", "residual_K"):
            assert parts[key][k] == pytest.approx(ref[key], abs=1e-11, rel=0, nan_ok=True)
