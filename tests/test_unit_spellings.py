"""Unit spellings found in weather files convert as pint's own unit definitions say.

Expected values are pint's conversions of the canonical spelling (a second route through
the same standard definitions: 1 knot = 1852 m / 3600 s, degF = 5/9 K offset 459.67 F).
"""

from __future__ import annotations

import pint
import pytest

from parcelcast.errors import UnitsError
from parcelcast.units import convert

UREG = pint.UnitRegistry()


@pytest.mark.parametrize("spelling, canonical, kind", [
    ("C", "degC", "temperature"), ("deg C", "degC", "temperature"), ("degrees_C", "degC", "temperature"),
    ("Celsius", "degC", "temperature"), ("F", "degF", "temperature"), ("degK", "K", "temperature"),
    ("kn", "knot", "speed"), ("kts", "knot", "speed"), ("m s**-1", "m/s", "speed"),
    ("millibars", "hPa", "pressure"), ("mb", "hPa", "pressure"), ("dam", "decameter", "height"),
    ("gpm", "m", "height"), ("m2 s-2", "m**2/s**2", "geopotential"),
    ("m**2 s**-2", "m**2/s**2", "geopotential"), ("Pa s**-1", "Pa/s", "pressure_tendency"),
    ("%", "percent", "fraction"), ("(0 - 1)", "dimensionless", "fraction"),
])
def test_spelling_converts_like_its_canonical_unit(spelling, canonical, kind):
    si = {"temperature": "K", "speed": "m/s", "pressure": "Pa", "height": "m",
          "geopotential": "m**2/s**2", "pressure_tendency": "Pa/s", "fraction": "dimensionless"}[kind]
    expected = UREG.Quantity(12.5, canonical).to(si).magnitude
    assert convert(12.5, spelling, kind) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("spelling, kind", [("m", "temperature"), ("K", "speed"), ("", "pressure"),
                                            ("furlongs per fortnight", "temperature")])
def test_impossible_or_missing_units_are_refused(spelling, kind):
    with pytest.raises(UnitsError, match="State the units"):
        convert(1.0, spelling, kind, "quantity", "file.nc variable x")
