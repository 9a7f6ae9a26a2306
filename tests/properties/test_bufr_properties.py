"""Property tests (hypothesis) of the ascent-to-profile step: the order in which a report
lists its levels, and levels repeated with part of their data (a standard level that is
also a wind level), do not change the profile."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from datasets import data_file

pytestmark = pytest.mark.slow

ARRAYS = ("pressure", "height", "temperature", "dewpoint", "wind_direction", "wind_speed",
          "lat_displacement", "lon_displacement", "elapsed", "significance")


@pytest.fixture(scope="module")
def ascent():
    from parcelcast.io.bufr import read_ascents

    return read_ascents(data_file("temp-20081208T12-7stations.bufr"))[4]  # 91408, 77 levels


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.randoms(use_true_random=False), st.lists(st.integers(0, 76), max_size=6))
def test_order_and_partial_repeats_do_not_change_the_profile(ascent, rng, repeats):
    from parcelcast.io.bufr import ascent_profile

    ref = ascent_profile(ascent)
    order = list(range(ascent.nlev)) + repeats
    rng.shuffle(order)
    order = np.array(order)
    arrays = {n: getattr(ascent, n)[order].copy() for n in ARRAYS}
    first = {}
    for i, k in enumerate(order):  # a repeated level keeps only its pressure in all but its first listing
        if k in first and first[k] < i:
            for n in ("temperature", "dewpoint", "height", "wind_direction", "wind_speed"):
                arrays[n][i] = np.nan
        first.setdefault(k, i)
    prof = ascent_profile(dataclasses.replace(ascent, **arrays))
    for n in ("pressure", "temperature", "dewpoint", "u", "v", "height"):
        np.testing.assert_allclose(getattr(prof, n), getattr(ref, n), rtol=0, atol=1e-9, err_msg=n)
