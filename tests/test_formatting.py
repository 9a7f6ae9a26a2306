"""Numbers for people (parcelcast.formatting) against definitions outside the project.

Sources: kelvin to degree Celsius, t/degC = T/K - 273.15 (SI Brochure, 9th edition, 2.3.4);
the knot, 1852 m per hour (international nautical mile, SI Brochure table 8); wind direction
is where the wind blows FROM, in degrees clockwise from north, a wind from the north 360 and
a calm 0 (WMO-No. 306 Manual on Codes, code table 0877; recalled from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from parcelcast import formatting


def test_celsius_and_knots_follow_their_definitions():
    assert formatting.celsius(273.15) == pytest.approx(0.0)
    assert formatting.celsius(300.0) == pytest.approx(26.85)
    assert formatting.knots(1852.0 / 3600.0) == pytest.approx(1.0)
    assert formatting.per_hour(1.0 / 3600.0) == pytest.approx(1.0)


@pytest.mark.parametrize("u,v,expected", [(10.0, 0.0, 270.0),   # from the west
                                          (0.0, -10.0, 360.0),  # from the north
                                          (-10.0, 0.0, 90.0),   # from the east
                                          (0.0, 10.0, 180.0),   # from the south
                                          (-5.0, -5.0, 45.0)])  # from the north-east
def test_wind_direction_is_where_the_wind_comes_from(u, v, expected):
    assert float(formatting.wind_direction(u, v)) == pytest.approx(expected)


def test_calm_has_no_direction():
    assert math.isnan(float(formatting.wind_direction(0.0, 0.0)))
    assert formatting.wind_text(0.0, 0.0) == "calm"


@given(st.floats(1.0, 359.0), st.floats(0.5, 80.0))
def test_direction_and_speed_give_back_the_components(direction, speed):
    """Inverse of the WMO definition: u = -s sin(d), v = -s cos(d)."""
    u = -speed * math.sin(math.radians(direction))
    v = -speed * math.cos(math.radians(direction))
    assert float(formatting.wind_direction(u, v)) == pytest.approx(direction, abs=1e-6)


def test_texts_for_people():
    assert formatting.temperature_text(280.0) == "6.9 \u00b0C"
    assert formatting.wind_text(10.0, 0.0) == "270\u00b0 19 kt"
    assert formatting.advection_words(-0.31) == "cold advection of 0.31 K/h"
    assert formatting.advection_words(0.01).startswith("little advection")
    assert formatting.compass(315.0) == "north-west"
    assert formatting.compass(359.0) == "north"
    assert formatting.distance_text(612.0) == "about 610 km"
    assert formatting.position_text(50.0, 355.7) == "50.0\u00b0 N, 4.3\u00b0 W"
    assert formatting.time_text(np.datetime64("2011-10-11T00:00")) == "2011-10-11 00 UTC"


def test_missing_stays_missing():
    for text in (formatting.temperature_text(None), formatting.temperature_text(float("nan")),
                 formatting.wind_text(float("nan"), 1.0), formatting.advection_text(None),
                 formatting.distance_text(None)):
        assert text == formatting.MISSING
