"""Read a profile from a CSV file whose header names each quantity and its unit.

Header names are ``<quantity>_<unit>``, in any column order, e.g.
``pressure_hPa, height_m, temperature_degC, dewpoint_degC, wind_direction_deg,
wind_speed_kt``.  Quantities understood:

==========================  ==================================================
quantity                    examples of headers
==========================  ==================================================
pressure                    ``pressure_hPa``, ``pressure_Pa``, ``pressure_mb``
height (above sea level)    ``height_m``, ``height_ft``, ``height_km``
temperature                 ``temperature_degC``, ``temperature_K``, ``temperature_degF``
dewpoint                    ``dewpoint_degC``, ``dewpoint_K``
relative_humidity           ``relative_humidity_percent``, ``relative_humidity_fraction``
wind_direction (from)       ``wind_direction_deg``
wind_speed                  ``wind_speed_kt``, ``wind_speed_m_s``, ``wind_speed_km_h``
u, v                        ``u_m_s``, ``v_kt``
latitude, longitude, time   ``latitude_deg``, ``longitude_deg``, ``time_utc`` (optional,
                            first row used)
==========================  ==================================================

Units go through pint (:mod:`parcelcast.units`); ``_`` between two unit words means
"per" (``m_s`` = m/s).  Empty cells and ``NaN``/``NA`` are missing.  Lines starting
with ``#`` are comments.  Unknown columns are ignored and listed in the notes.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from parcelcast.errors import InputFileError, ProfileError, UnitsError
from parcelcast.profiles.profile import Profile, validate
from parcelcast.units import convert

__all__ = ["read_profile_csv", "QUANTITIES"]

#: quantity -> kind of :data:`parcelcast.units.QUANTITY_KINDS`
QUANTITIES = {
    "pressure": "pressure",
    "height": "height",
    "temperature": "temperature",
    "dewpoint": "temperature",
    "dew_point": "temperature",
    "relative_humidity": "fraction",
    "wind_direction": "angle",
    "wind_speed": "speed",
    "u": "speed",
    "v": "speed",
    "latitude": "angle",
    "longitude": "angle",
    "lat": "angle",
    "lon": "angle",
}

_PER_UNITS = {"m_s": "m/s", "km_h": "km/h", "m_per_s": "m/s", "km_per_h": "km/h", "mi_h": "mph"}
_MISSING = {"", "nan", "na", "n/a", "missing", "null", "none"}


def _split_header(name: str):
    key = name.strip()
    low = key.lower()
    if low in ("time", "time_utc", "valid_time", "time_iso"):
        return "time", None
    for q in sorted(QUANTITIES, key=len, reverse=True):
        if low.startswith(q + "_") and len(low) > len(q) + 1:
            unit = key[len(q) + 1:]
            return q, _PER_UNITS.get(unit.lower(), unit)
        if low == q:
            return q, ""
    return None, None


def _number(text: str, line: int, column: str, source: str) -> float:
    t = text.strip()
    if t.lower() in _MISSING:
        return np.nan
    try:
        value = float(t)
    except ValueError:
        raise ProfileError(f"{source}: row {line}, column {column}: {t[:20]!r} is not a number.") from None
    if not np.isfinite(value):
        raise ProfileError(f"{source}: row {line}, column {column}: {t[:20]!r} is not a finite "
                           "number (leave the cell empty, or write NaN, for a missing value).")
    return value


def read_profile_csv(path, latitude=None, longitude=None, time=None) -> Profile:
    """Read and validate a profile CSV file.

    Parameters
    ----------
    path : str or Path
        CSV file (comma-separated, one header line naming quantity and unit per column).
    latitude, longitude : float, optional
        Position (degrees north/east) when the file does not carry it (options
        ``--lat``/``--lon``); these override the file.
    time : numpy.datetime64, optional
        Valid time (UTC), overriding any ``time`` column.

    Returns
    -------
    Profile
        Validated, ground first, SI units, with notes.

    Raises
    ------
    InputFileError
        The file cannot be read.
    UnitsError
        A column's unit is missing or unfit for its quantity.
    ProfileError
        A value or the ordering is wrong (the message names the row and column).
    """
    path = Path(path)
    source = str(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputFileError(path, "not UTF-8 text; save the profile CSV as UTF-8") from None
    except OSError as exc:
        raise InputFileError(path, f"cannot read: {exc.strerror or exc}") from None
    lines = [(i + 1, ln) for i, ln in enumerate(text.splitlines()) if ln.strip() and not ln.lstrip().startswith("#")]
    if len(lines) < 2:
        raise ProfileError(f"{source}: needs a header line and at least two data rows.")
    reader = list(csv.reader([ln for _, ln in lines]))
    header, body = reader[0], reader[1:]
    line_numbers = [n for n, _ in lines[1:]]
    columns: dict[str, tuple[int, str, str]] = {}
    ignored = []
    for j, name in enumerate(header):
        q, unit = _split_header(name)
        if q is None:
            ignored.append(name.strip())
            continue
        q = {"dew_point": "dewpoint", "lat": "latitude", "lon": "longitude"}.get(q, q)
        if q in columns:
            raise ProfileError(f"{source}: column {name.strip()!r} repeats quantity '{q}' "
                               f"(already given by {columns[q][2]!r}).")
        if q != "time" and unit == "":
            raise UnitsError(q, None, f"a unit in the header, such as {q}_{_example_unit(q)}", source)
        columns[q] = (j, unit, name.strip())
    for need in ("pressure", "temperature"):
        if need not in columns:
            raise ProfileError(
                f"{source}: no {need} column; header has {', '.join(h.strip() for h in header)}. "
                f"Name it like {need}_{_example_unit(need)}.")
    if "dewpoint" not in columns and "relative_humidity" not in columns:
        raise ProfileError(f"{source}: no humidity column; give dewpoint_degC (or _K) or "
                           "relative_humidity_percent.")
    for k, row in enumerate(body):
        if len(row) != len(header):
            raise ProfileError(f"{source}: row {line_numbers[k]} has {len(row)} fields; the header has {len(header)}.")

    def col(q):
        j, unit, name = columns[q]
        raw = np.array([_number(r[j], line_numbers[k], name, source) for k, r in enumerate(body)])
        if unit is not None and unit != "" and QUANTITIES.get(q) == "fraction" and unit.lower() in ("percent", "%", "pct"):
            return raw / 100.0
        return convert(raw, unit, QUANTITIES[q], quantity=f"column {name}", source=source)

    n = len(body)
    nan = np.full(n, np.nan)
    p = col("pressure")
    _check_ground_pressure(p, line_numbers, columns["pressure"][2], source)
    t = col("temperature")
    notes = []
    if "dewpoint" in columns:
        td = col("dewpoint")
    else:
        from parcelcast.thermo import dewpoint_from_relative_humidity

        rh = col("relative_humidity")
        bad = np.flatnonzero(np.isfinite(rh) & ((rh < 0) | (rh > 1.05)))
        if bad.size:
            j, _, name = columns["relative_humidity"]
            raise ProfileError(f"{source}: row {line_numbers[bad[0]]}, column {name}: relative humidity "
                               f"{rh[bad[0]] * 100:g} % is outside 0-105 %.")
        td = dewpoint_from_relative_humidity(t, np.minimum(rh, 1.0))
        notes.append("dew point derived from relative humidity (WMO-No. 8 Magnus formula, over water)")
    if "u" in columns and "v" in columns:
        u, v = col("u"), col("v")
    elif "wind_direction" in columns and "wind_speed" in columns:
        d = np.deg2rad(col("wind_direction"))
        s = col("wind_speed")
        if np.any(s < 0):
            j, _, name = columns["wind_speed"]
            raise ProfileError(f"{source}: row {line_numbers[int(np.argmax(s < 0))]}, column {name}: negative wind speed.")
        u, v = -s * np.sin(d), -s * np.cos(d)
    else:
        u, v = nan.copy(), nan.copy()
        notes.append("no wind columns (give wind_direction_deg with wind_speed_kt, or u_m_s and v_m_s)")
    z = col("height") if "height" in columns else nan.copy()
    lat = latitude
    lon = longitude
    if lat is None and "latitude" in columns:
        lat = float(col("latitude")[0])
    if lon is None and "longitude" in columns:
        lon = float(col("longitude")[0])
    when = time
    if when is None and "time" in columns:
        from parcelcast.times import parse_utc

        when = parse_utc(body[0][columns["time"][0]], f"{path}: column time")
    rows = np.array(line_numbers)
    if n >= 2 and np.isfinite(p[0]) and np.isfinite(p[-1]) and p[0] < p[-1]:
        order = slice(None, None, -1)
        p, z, t, td, u, v, rows = (a[order] for a in (p, z, t, td, u, v, rows))
        notes.append("rows were ordered top first; reversed to ground first")
    if ignored:
        notes.append(f"columns ignored (quantity not recognised): {', '.join(ignored)}")
    prof = Profile(pressure=p, height=z, temperature=t, dewpoint=td, u=u, v=v, latitude=lat,
                   longitude=lon, time=when, source=source, rows=rows, notes=notes)
    return validate(prof, {q: name for q, (_, _, name) in columns.items()})


#: a sounding starts at the ground: the highest stations are near 5 km, about 530 hPa (common
#: practice: ICAO standard atmosphere, 5 km = 540 hPa); a lowest level above 300 hPa means the
#: numbers are not in the header's unit (hPa numbers under a ``pressure_Pa`` header)
LOWEST_GROUND_PRESSURE_PA = 30_000.0


def _check_ground_pressure(p, line_numbers, name: str, source: str) -> None:
    finite = np.flatnonzero(np.isfinite(p))
    if finite.size and np.nanmax(p) < LOWEST_GROUND_PRESSURE_PA:
        k = int(finite[np.argmax(p[finite])])
        raise ProfileError(
            f"{source}: row {line_numbers[k]}, column {name}: the highest pressure is "
            f"{p[k] / 100:g} hPa after conversion; a profile starts near the ground (above "
            f"{LOWEST_GROUND_PRESSURE_PA / 100:g} hPa). Check the unit in the header (hPa numbers "
            "under a _Pa header?).")


def _example_unit(q: str) -> str:
    return {"pressure": "hPa", "height": "m", "temperature": "degC", "dewpoint": "degC",
            "relative_humidity": "percent", "wind_direction": "deg", "wind_speed": "kt",
            "u": "m_s", "v": "m_s"}.get(q, "unit")
