"""Numbers for people: the one place that turns SI values into what a forecaster reads.

What belongs here: unit conversions for display (kelvin -> degC, m/s -> knots, K/s -> K/h,
Pa -> hPa), the meteorological wind direction, compass words, and the short strings used
in text output, tables, maps and pages.  Files keep SI units (K, m/s, K/s); only people
see these forms.  A missing value (None or NaN) is shown as "not available", never as a number.

Conversion factors come from the project's pint registry (:mod:`parcelcast.units`), so
they are the same ones used to read the files.
"""

from __future__ import annotations

import functools
import math

import numpy as np

MISSING = "not available"
DEGREE_CELSIUS = "\u00b0C"

_COMPASS = ("north", "north-north-east", "north-east", "east-north-east", "east",
            "east-south-east", "south-east", "south-south-east", "south", "south-south-west",
            "south-west", "west-south-west", "west", "west-north-west", "north-west",
            "north-north-west")


@functools.lru_cache(maxsize=None)
def _factor(source: str, target: str) -> float:
    from parcelcast.units import Q_

    return float(Q_(1.0, source).to(target).magnitude)


def _missing(value) -> bool:
    return value is None or not math.isfinite(float(value))


def celsius(kelvin):
    """Temperature in degC from kelvin (float or array; None stays None)."""
    if kelvin is None:
        return None
    from parcelcast.units import Q_

    return Q_(np.asarray(kelvin, dtype=np.float64), "K").to("degC").magnitude


def knots(metres_per_second):
    """Speed in knots from m/s (1 kt = 1852 m / 3600 s)."""
    if metres_per_second is None:
        return None
    return np.asarray(metres_per_second, dtype=np.float64) * _factor("m/s", "knot")


def per_hour(per_second):
    """A rate per hour (e.g. K/h) from a rate per second (K/s)."""
    if per_second is None:
        return None
    return np.asarray(per_second, dtype=np.float64) * _factor("1/s", "1/h")


def wind_direction(u, v):
    """Meteorological wind direction (degrees, where the wind comes FROM, 0..360, 360 = north).

    ``u`` eastward and ``v`` northward components (any consistent units).  A calm wind
    (u = v = 0) has no direction: NaN.  WMO convention: a wind from the west is 270.
    """
    u = np.asarray(u, dtype=np.float64)
    v = np.asarray(v, dtype=np.float64)
    direction = np.mod(np.rad2deg(np.arctan2(-u, -v)), 360.0)
    direction = np.where(direction < 0.5, 360.0, direction)  # north is 360, not 0
    return np.where((u == 0) & (v == 0), np.nan, direction)


def compass(bearing_deg) -> str:
    """Sixteen-point compass word for a bearing in degrees (0 = north, 90 = east)."""
    if _missing(bearing_deg):
        return MISSING
    return _COMPASS[int(math.floor((float(bearing_deg) % 360.0) / 22.5 + 0.5)) % 16]


def temperature_text(kelvin, digits: int = 1) -> str:
    """``"-3.2 °C"`` from kelvin."""
    if _missing(kelvin):
        return MISSING
    return f"{float(celsius(kelvin)):.{digits}f} {DEGREE_CELSIUS}"


def difference_text(kelvin_difference, digits: int = 1) -> str:
    """A temperature difference (K and degC steps are equal) with its sign: ``"+1.4 K"``."""
    if _missing(kelvin_difference):
        return MISSING
    return f"{float(kelvin_difference):+.{digits}f} K"


def wind_text(u, v) -> str:
    """``"250° 35 kt"`` (direction the wind comes from, speed in knots) from u, v in m/s."""
    if _missing(u) or _missing(v):
        return MISSING
    speed = float(knots(math.hypot(float(u), float(v))))
    if round(speed) == 0:
        return "calm"
    return f"{float(wind_direction(u, v)):03.0f}\u00b0 {speed:.0f} kt"


def advection_text(k_per_h, digits: int = 2) -> str:
    """``"+0.32 K/h"`` (positive = warm advection) from a rate in K/h (see :func:`per_hour`)."""
    if _missing(k_per_h):
        return MISSING
    return f"{float(k_per_h):+.{digits}f} K/h"


def advection_words(k_per_h) -> str:
    """``"warm advection of 0.32 K/h"`` / ``"cold advection of ..."`` / ``"little advection"``.

    Below 0.05 K/h (about 1 K a day) the text says "little advection" (common practice:
    such rates are within the noise of the analysed gradients).
    """
    if _missing(k_per_h):
        return "advection not available"
    value = float(k_per_h)
    if abs(value) < 0.05:
        return f"little advection ({value:+.2f} K/h)"
    kind = "warm" if value > 0 else "cold"
    return f"{kind} advection of {abs(value):.2f} K/h"


def pressure_text(pascal) -> str:
    """``"850 hPa"`` from Pa."""
    if _missing(pascal):
        return MISSING
    return f"{float(pascal) * _factor('Pa', 'hPa'):.0f} hPa"


def time_text(value) -> str:
    """``"2011-10-11 00 UTC"`` (minutes shown only when not on the hour)."""
    if value is None:
        return MISSING
    import pandas as pd

    stamp = pd.Timestamp(value)
    if pd.isna(stamp):
        return MISSING
    return stamp.strftime("%Y-%m-%d %H UTC" if stamp.minute == 0 else "%Y-%m-%d %H:%M UTC")


def hour_text(value) -> str:
    """``"06 UTC"`` (the hour of a time, for sentences)."""
    import pandas as pd

    stamp = pd.Timestamp(value)
    return stamp.strftime("%H UTC" if stamp.minute == 0 else "%H:%M UTC")


def distance_text(km) -> str:
    """``"about 600 km"``: rounded to two significant figures (a trajectory is not exact)."""
    if _missing(km):
        return MISSING
    km = float(km)
    if km < 10:
        return "less than 10 km"
    rounded = round(km, -int(math.floor(math.log10(km))) + 1)
    return f"about {rounded:.0f} km"


def position_text(lat, lon) -> str:
    """``"52.3° N, 4.1° W"`` from degrees north / east."""
    if _missing(lat) or _missing(lon):
        return MISSING
    lat, lon = float(lat), ((float(lon) + 180.0) % 360.0) - 180.0
    return (f"{abs(lat):.1f}\u00b0 {'N' if lat >= 0 else 'S'}, "
            f"{abs(lon):.1f}\u00b0 {'E' if lon >= 0 else 'W'}")
