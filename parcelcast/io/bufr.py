"""Radiosonde ascents from WMO TEMP reports encoded in BUFR (decoded with eccodes).

:func:`read_ascents` decodes every ascent of a file as it was reported (one
:class:`Ascent` per message subset, levels in the report's order, SI units through
pint from the units eccodes gives for each element, missing values NaN);
:func:`ascent_profile` turns one ascent into a checked :class:`~parcelcast.profiles.Profile`
(levels below the ground left out, duplicated pressure levels merged, ground first,
wind from direction and speed, geopotential to height); :func:`select_ascent` finds an
ascent by WMO station index or as the nearest to a point.

Elements read (BUFR Table B names as eccodes spells them): ``pressure``,
``nonCoordinateGeopotential`` (m2 s-2) or ``nonCoordinateGeopotentialHeight`` (gpm),
``airTemperature``, ``dewpointTemperature``, ``windDirection``, ``windSpeed``, the
level flags ``verticalSoundingSignificance`` (code table 0 08 001, traditional TEMP) or
``extendedVerticalSoundingSignificance`` (0 08 042, high-resolution reports), and for
high-resolution ascents the balloon's ``latitudeDisplacement``/``longitudeDisplacement``
and ``timePeriod`` since launch.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from parcelcast.errors import InputFileError, ProfileError, SelectionError

__all__ = ["Ascent", "read_ascents", "ascent_profile", "select_ascent", "is_bufr", "MOISTURE_TOP_PRESSURE"]

#: Moisture integrals of radiosonde ascents stop here (Pa): common practice, since
#: humidity sensors report stratospheric dew points that are not real.
MOISTURE_TOP_PRESSURE = 30000.0

#: bit of the surface level in the level-significance flag tables (WMO Manual on Codes,
#: FM 94 BUFR, code tables 0 08 001 (7 bits, bit 1 = 64) and 0 08 042 (18 bits, bit 1 = 131072)).
_SURFACE_BIT = {"verticalSoundingSignificance": 64, "extendedVerticalSoundingSignificance": 131072}

#: per-level elements -> (unit kind, required)
_LEVEL_ELEMENTS = {
    "pressure": ("pressure", True),
    "airTemperature": ("temperature", True),
    "dewpointTemperature": ("temperature", False),
    "windDirection": ("angle", False),
    "windSpeed": ("speed", False),
    "latitudeDisplacement": ("angle", False),
    "longitudeDisplacement": ("angle", False),
    "timePeriod": ("time", False),
}


@dataclass
class Ascent:
    """One radiosonde ascent as reported (levels in report order, SI units, NaN = missing).

    Attributes
    ----------
    station : 5-digit WMO station index (block number x 1000 + station number) as text, or None.
    latitude, longitude : launch position, degrees north / east.
    elevation : station height above mean sea level (m), NaN if not reported.
    time : launch time (numpy.datetime64, UTC).
    pressure : (nlev,) Pa.  height : (nlev,) geopotential height (m).
    temperature, dewpoint : (nlev,) K.  wind_direction : (nlev,) degrees, from.
    wind_speed : (nlev,) m/s.  lat_displacement, lon_displacement : (nlev,) degrees from
    the launch position (NaN when not reported).  elapsed : (nlev,) s since launch.
    significance : (nlev,) level flags as integers (-1 missing); ``significance_table``
    names the element they came from.
    source : file name; message, subset : 1-based position in the file.
    """

    station: str | None
    latitude: float
    longitude: float
    elevation: float
    time: np.datetime64
    pressure: np.ndarray
    height: np.ndarray
    temperature: np.ndarray
    dewpoint: np.ndarray
    wind_direction: np.ndarray
    wind_speed: np.ndarray
    lat_displacement: np.ndarray
    lon_displacement: np.ndarray
    elapsed: np.ndarray
    significance: np.ndarray
    significance_table: str
    source: str
    message: int
    subset: int
    notes: list[str] = field(default_factory=list)

    @property
    def nlev(self) -> int:
        return int(self.pressure.size)

    @property
    def label(self) -> str:
        """How messages name this ascent (station, or message number)."""
        who = f"station {self.station}" if self.station else "ascent without station index"
        return f"{self.source} {who} (message {self.message}, subset {self.subset})"

    def summary(self) -> dict:
        """Station, position, time and number of levels, for ``--list``."""
        finite = self.pressure[np.isfinite(self.pressure)]
        return {"station": self.station, "lat": self.latitude, "lon": self.longitude,
                "elevation_m": self.elevation, "time": self.time, "levels": self.nlev,
                "top_hPa": float(finite.min()) / 100.0 if finite.size else None,
                "message": self.message, "subset": self.subset}


def is_bufr(path) -> bool:
    """True when the file starts with the BUFR indicator section ("BUFR")."""
    try:
        with open(path, "rb") as fh:
            return fh.read(4) == b"BUFR"
    except OSError:
        return False


def _eccodes():
    import pyproj  # noqa: F401  # PROJ before eccodes (DEVELOPERS.md, "GRIB and PROJ")
    import eccodes

    return eccodes


def _defined(ec, h, key) -> bool:
    """Whether a key exists (``codes_is_defined`` does not see ``/subsetNumber=k/`` keys)."""
    try:
        ec.codes_get_size(h, key)
    except ec.KeyValueNotFoundError:
        return False
    return True


def _get(ec, h, key):
    """Values of a key as float64 (NaN where eccodes reports missing), or None if absent."""
    if not _defined(ec, h, key):
        return None
    vals = np.asarray(ec.codes_get_array(h, key))
    if vals.dtype.kind in "iu":
        out = vals.astype(np.float64)
        out[vals == ec.CODES_MISSING_LONG] = np.nan
    else:
        out = vals.astype(np.float64)
        out[vals == ec.CODES_MISSING_DOUBLE] = np.nan
    return out


def _converted(ec, h, prefix, key, kind, source):
    from parcelcast.units import convert

    vals = _get(ec, h, prefix + key)
    if vals is None:
        return None
    units = ec.codes_get(h, prefix + key + "->units")
    return convert(vals, units, kind, quantity=f"BUFR element {key}", source=source)


def _scalar(ec, h, prefix, key, kind, source):
    vals = _converted(ec, h, prefix, key, kind, source)
    return float(vals[0]) if vals is not None and vals.size else np.nan


def _decode_subset(ec, h, prefix, source, message, subset) -> Ascent:
    where = f"message {message}, subset {subset}"
    levels = {}
    for key, (kind, required) in _LEVEL_ELEMENTS.items():
        levels[key] = _converted(ec, h, prefix, key, kind, source)
        if levels[key] is None and required:
            raise InputFileError(source, f"{where}: no '{key}' element; this does not look like a "
                                 "radiosonde (TEMP) report")
    n = levels["pressure"].size
    nan = np.full(n, np.nan)
    z = _converted(ec, h, prefix, "nonCoordinateGeopotential", "geopotential", source)
    if z is not None:
        from parcelcast.constants import STANDARD_GRAVITY

        height = z / STANDARD_GRAVITY  # geopotential height (m)
    else:
        height = _converted(ec, h, prefix, "nonCoordinateGeopotentialHeight", "height", source)
    levels["height"] = height if height is not None else nan.copy()
    table = next((k for k in _SURFACE_BIT if _defined(ec, h, prefix + k)), "")
    flags = _get(ec, h, prefix + table) if table else None
    levels["significance"] = np.where(np.isfinite(flags), flags, -1).astype(np.int64) if flags is not None \
        else np.full(n, -1, dtype=np.int64)
    for key, vals in levels.items():
        if vals is None:
            levels[key] = nan.copy()
        elif vals.size != n:
            raise InputFileError(source, f"{where}: element '{key}' has {vals.size} values for {n} "
                                 "pressure levels; the report's level sequence cannot be decoded")

    def ints(key):
        v = _get(ec, h, prefix + key)
        return None if v is None or not np.isfinite(v[0]) else int(v[0])

    block, number = ints("blockNumber"), ints("stationNumber")
    station = f"{block * 1000 + number:05d}" if block is not None and number is not None else None
    parts = [ints(k) for k in ("year", "month", "day", "hour", "minute")]
    if any(x is None for x in parts):
        raise InputFileError(source, f"{where}: the launch time (year, month, day, hour, minute) is incomplete")
    second = ints("second") or 0
    stamp = f"{parts[0]:04d}-{parts[1]:02d}-{parts[2]:02d}T{parts[3]:02d}:{parts[4]:02d}"
    try:
        when = np.datetime64(stamp, "s") + np.timedelta64(second, "s")
    except ValueError:
        raise InputFileError(source, f"{where}: the launch time {stamp} is not a date") from None
    lat = _scalar(ec, h, prefix, "latitude", "angle", source)
    lon = _scalar(ec, h, prefix, "longitude", "angle", source)
    if not (np.isfinite(lat) and np.isfinite(lon)):
        raise InputFileError(source, f"{where}: the station position (latitude, longitude) is missing")
    elevation = _scalar(ec, h, prefix, "heightOfStationGroundAboveMeanSeaLevel", "height", source)
    if not np.isfinite(elevation):
        elevation = _scalar(ec, h, prefix, "heightOfStation", "height", source)
    return Ascent(station=station, latitude=lat, longitude=lon, elevation=elevation, time=when,
                  pressure=levels["pressure"], height=levels["height"],
                  temperature=levels["airTemperature"], dewpoint=levels["dewpointTemperature"],
                  wind_direction=levels["windDirection"], wind_speed=levels["windSpeed"],
                  lat_displacement=levels["latitudeDisplacement"],
                  lon_displacement=levels["longitudeDisplacement"], elapsed=levels["timePeriod"],
                  significance=levels["significance"], significance_table=table, source=source,
                  message=message, subset=subset)


def read_ascents(path) -> list[Ascent]:
    """Every radiosonde ascent of a BUFR file, in file order (one per message subset).

    Raises
    ------
    InputFileError
        The file cannot be read, holds no BUFR message, or a message is not a TEMP report.
    """
    path = Path(path)
    source = str(path)
    ec = _eccodes()
    try:
        fh = open(path, "rb")
    except OSError as exc:
        raise InputFileError(path, f"cannot read: {exc.strerror or exc}") from None
    ascents = []
    with fh:
        message = 0
        while True:
            try:
                h = ec.codes_bufr_new_from_file(fh)
            except ec.GribInternalError as exc:
                raise InputFileError(path, f"BUFR message {message + 1} cannot be read ({exc}); the file may be "
                                     f"truncated or damaged ({message} complete message(s) before it)") from None
            if h is None:
                break
            message += 1
            try:
                ec.codes_set(h, "unpack", 1)
                nsub = int(ec.codes_get(h, "numberOfSubsets"))
                for k in range(1, nsub + 1):
                    ascents.append(_decode_subset(ec, h, f"/subsetNumber={k}/", source, message, k))
            except ec.GribInternalError as exc:
                raise InputFileError(path, f"BUFR message {message} does not decode ({exc})") from None
            finally:
                ec.codes_release(h)
    if not ascents:
        raise InputFileError(path, "no BUFR message found")
    return ascents


def select_ascent(ascents: list[Ascent], station: str | None = None, at=None):
    """The ascent of a WMO station index, or the one nearest to ``at`` = (lat, lon).

    Returns
    -------
    (Ascent, distance_km or None)
    """
    if station is not None:
        wanted = f"{int(station):05d}" if str(station).isdigit() else str(station)
        found = [a for a in ascents if a.station == wanted]
        if not found:
            have = ", ".join(sorted({a.station or "?" for a in ascents}))
            raise SelectionError("station", wanted, have, ascents[0].source)
        if len(found) > 1:
            times = ", ".join(str(a.time) for a in found)
            raise SelectionError("one ascent of station", wanted, f"{len(found)} ascents ({times}); "
                                 "split the file or use --list", ascents[0].source)
        return found[0], None
    if at is not None:
        from parcelcast.sampling import great_circle_km

        lat, lon = at
        dist = np.array([float(great_circle_km(lat, lon, a.latitude, a.longitude)) for a in ascents])
        k = int(np.argmin(dist))
        return ascents[k], float(dist[k])
    if len(ascents) == 1:
        return ascents[0], None
    have = ", ".join(a.station or "?" for a in ascents)
    raise SelectionError("ascent", "(none chosen)", f"{len(ascents)} ascents, stations {have}; "
                         "choose one with --station WMO_ID or --at LAT,LON", ascents[0].source)


def _merge_duplicates(ascent: Ascent, order: np.ndarray, notes: list[str]):
    """Index groups of levels with the same pressure (first finite value of each element wins)."""
    p = ascent.pressure[order]
    groups = np.split(order, np.flatnonzero(np.diff(p) != 0) + 1)
    dup = [g for g in groups if g.size > 1]
    if dup:
        conflicts = []
        for g in dup:
            for name in ("temperature", "dewpoint", "height", "wind_direction", "wind_speed"):
                vals = getattr(ascent, name)[g]
                vals = vals[np.isfinite(vals)]
                if vals.size > 1 and np.ptp(vals) > 0:
                    conflicts.append(f"{ascent.pressure[g[0]] / 100:g} hPa {name}")
        msg = (f"{len(dup)} pressure level(s) reported more than once were merged "
               f"({', '.join(f'{ascent.pressure[g[0]] / 100:g}' for g in dup[:6])} hPa)")
        if conflicts:
            msg += "; where the reports differ the first is kept: " + ", ".join(conflicts[:6])
        notes.append(msg)
    return groups


def _first_finite(values: np.ndarray, groups) -> np.ndarray:
    out = np.full(len(groups), np.nan)
    for i, g in enumerate(groups):
        v = values[g]
        v = v[np.isfinite(v)]
        if v.size:
            out[i] = v[0]
    return out


def ascent_profile(ascent: Ascent):
    """A checked profile (ground first) from one ascent.

    Steps, each said in the profile's notes when it changes anything: levels without
    pressure dropped; levels below the surface level (standard levels that TEMP reports
    carry with extrapolated heights and no temperature) left out; duplicated pressure
    levels merged; levels ordered by decreasing pressure; levels with neither temperature
    nor wind dropped; u = -s sin(d), v = -s cos(d) from direction d (from, degrees) and
    speed s; the ground's height from the station elevation when the surface level has
    none; the balloon's drift reported (the profile stays at the launch position).
    Moisture integrals stop at :data:`MOISTURE_TOP_PRESSURE`.
    """
    from parcelcast.profiles.profile import Profile, validate

    notes = list(ascent.notes)
    p = ascent.pressure
    has_p = np.isfinite(p)
    if (~has_p).any():
        notes.append(f"{int((~has_p).sum())} level(s) without pressure left out")
    surface_bit = _SURFACE_BIT.get(ascent.significance_table, 0)
    is_surface = has_p & (ascent.significance >= 0) & ((ascent.significance & surface_bit) != 0)
    if is_surface.any():
        p_sfc = float(p[is_surface].max())
    else:
        with_t = has_p & np.isfinite(ascent.temperature)
        if not with_t.any():
            raise ProfileError(f"{ascent.label}: no level has both pressure and temperature; "
                               "the ascent cannot be analysed.")
        p_sfc = float(p[with_t].max())
        notes.append(f"no level flagged as the surface: the lowest level with temperature "
                     f"({p_sfc / 100:g} hPa) is taken as the ground")
    below = has_p & (p > p_sfc)
    if below.any():
        notes.append(f"{int(below.sum())} level(s) below the ground (surface {p_sfc / 100:g} hPa: "
                     "extrapolated standard levels) left out")
    keep = np.flatnonzero(has_p & ~below)
    order = keep[np.argsort(-p[keep], kind="stable")]
    if not np.array_equal(order, keep):
        notes.append("levels were put in order of decreasing pressure")
    groups = _merge_duplicates(ascent, order, notes)
    merged = {name: _first_finite(getattr(ascent, name), groups)
              for name in ("pressure", "temperature", "dewpoint", "height", "wind_direction", "wind_speed",
                           "lat_displacement", "lon_displacement")}
    has_wind = np.isfinite(merged["wind_direction"]) & np.isfinite(merged["wind_speed"])
    useful = np.isfinite(merged["temperature"]) | has_wind
    if (~useful).any():
        notes.append(f"{int((~useful).sum())} level(s) with neither temperature nor wind left out")
    m = {k: v[useful] for k, v in merged.items()}
    rows = np.array([int(g[0]) + 1 for g, u in zip(groups, useful) if u])
    if m["pressure"].size and not np.isfinite(m["height"][0]) and np.isfinite(ascent.elevation):
        m["height"][0] = ascent.elevation
        notes.append("height of the ground level from the station elevation")
    d = np.deg2rad(m["wind_direction"])
    s = m["wind_speed"]
    notes.extend(_drift_notes(ascent, m))
    top_t = m["pressure"][np.isfinite(m["temperature"])]
    if top_t.size and top_t.min() > 50000.0:
        notes.append(f"the ascent stops low ({top_t.min() / 100:.0f} hPa): indices that need "
                     "higher levels are missing")
    notes.append(f"precipitable water counts levels up to {MOISTURE_TOP_PRESSURE / 100:.0f} hPa only "
                 "(common practice for radiosondes: dew points reported higher up are not reliable)")
    prof = Profile(pressure=m["pressure"], height=m["height"], temperature=m["temperature"],
                   dewpoint=m["dewpoint"], u=-s * np.sin(d), v=-s * np.cos(d),
                   latitude=ascent.latitude, longitude=ascent.longitude, time=ascent.time,
                   source=ascent.label, rows=rows, notes=notes, station=ascent.station,
                   moisture_top_pressure=MOISTURE_TOP_PRESSURE)
    names = {"pressure": "pressure", "temperature": "airTemperature", "dewpoint": "dewpointTemperature",
             "u": "windSpeed/windDirection", "v": "windSpeed/windDirection", "height": "geopotential"}
    return validate(prof, names)


def _drift_notes(ascent: Ascent, m: dict) -> list[str]:
    ok = np.isfinite(m["lat_displacement"]) & np.isfinite(m["lon_displacement"])
    if not ok.any():
        return []
    from parcelcast.sampling import great_circle_km

    k = int(np.flatnonzero(ok)[-1])
    lat = ascent.latitude + m["lat_displacement"][k]
    lon = ascent.longitude + m["lon_displacement"][k]
    km = float(great_circle_km(ascent.latitude, ascent.longitude, lat, lon))
    return [f"the balloon drifted {km:.1f} km (to {lat:.3f},{lon:.3f}) by {m['pressure'][k] / 100:.0f} hPa; "
            "the profile is analysed at the launch position"]

