"""The vertical profile object and its validation.

A :class:`Profile` holds one column on levels ordered from the ground upward
(pressure strictly decreasing), in SI units: pressure (Pa), height above mean sea
level (m), temperature and dew point (K), wind components (m/s).  Missing values
are NaN.  :func:`validate` rejects what cannot be a profile (with the row that
breaks it) and records what is allowed but worth saying (``notes``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from parcelcast.errors import ProfileError
from parcelcast.io.roles import PLAUSIBLE_RANGE
from parcelcast.thermo import mixing_ratio_from_dewpoint, potential_temperature, virtual_temperature
from parcelcast.thermo.constants import G0, RD

__all__ = ["Profile", "validate", "fill_heights"]

#: plausible ranges (SI).  Observed extremes of the troposphere/lower stratosphere
#: (common meteorological practice): T 150-350 K, winds below 150 m/s, p 1-1100 hPa.
_RANGES = {
    "pressure": (100.0, 110000.0),
    "temperature": PLAUSIBLE_RANGE["temperature"],
    "dewpoint": (120.0, 350.0),
    "u": PLAUSIBLE_RANGE["u"],
    "v": PLAUSIBLE_RANGE["v"],
    "height": (-500.0, 60000.0),
}


@dataclass
class Profile:
    """One vertical column, ground first.

    Attributes
    ----------
    pressure : (nlev,) Pa, strictly decreasing.
    height : (nlev,) m above mean sea level (geopotential height).
    temperature, dewpoint : (nlev,) K; dewpoint NaN where humidity is unknown.
    u, v : (nlev,) m/s eastward / northward; NaN where unknown.
    latitude, longitude : degrees north / east, or None.
    time : numpy.datetime64 (UTC) or None.
    source : where the column came from (file, or analysis and point).
    rows : (nlev,) the row number in the source (1-based line of a CSV file), for messages.
    notes : things the user should know (missing humidity aloft, superadiabatic layers...).
    station : WMO station index of an observed ascent, or None.
    moisture_top_pressure : Pa; moisture integrals (precipitable water) stop here, or None
        for the whole column (radiosonde ascents: 300 hPa, common practice).
    humidity_rule : for a column from an analysis's relative humidity, the rule it was read
        with (``{"rule", "meaning", "chosen"}``, :mod:`parcelcast.thermo.model_humidity`).
    """

    pressure: np.ndarray
    height: np.ndarray
    temperature: np.ndarray
    dewpoint: np.ndarray
    u: np.ndarray
    v: np.ndarray
    latitude: float | None = None
    longitude: float | None = None
    time: object = None
    source: str = ""
    rows: np.ndarray | None = None
    notes: list[str] = field(default_factory=list)
    station: str | None = None
    moisture_top_pressure: float | None = None
    humidity_rule: dict | None = None

    @property
    def nlev(self) -> int:
        return int(self.pressure.size)


def _row(profile: Profile, k: int) -> int:
    return int(profile.rows[k]) if profile.rows is not None else k + 1


def fill_heights(pressure, temperature, dewpoint, height=None, base_height=0.0):
    """Fill missing heights (m) by the hypsometric equation from the nearest known level below.

    Where no height is known at all, heights are relative to ``base_height`` at the
    lowest level.  Uses the virtual temperature averaged between levels.
    """
    p = np.asarray(pressure, dtype=np.float64)
    t = np.asarray(temperature, dtype=np.float64)
    r = mixing_ratio_from_dewpoint(dewpoint, p)
    tv = virtual_temperature(t, np.where(np.isfinite(r), r, 0.0))
    tv = np.where(np.isfinite(tv), tv, np.nan)
    # interpolate missing Tv in ln p so thickness exists everywhere
    lnp = np.log(p)
    ok = np.isfinite(tv)
    if ok.sum() >= 1:
        tv = np.interp(-lnp, -lnp[ok], tv[ok])
    dz = RD * 0.5 * (tv[:-1] + tv[1:]) / G0 * (lnp[:-1] - lnp[1:])
    zh = np.concatenate([[0.0], np.cumsum(dz)])
    z = np.full(p.shape, np.nan) if height is None else np.asarray(height, dtype=np.float64).copy()
    known = np.isfinite(z)
    if not known.any():
        return zh + base_height
    idx = np.where(known, np.arange(p.size), -1)
    anchor = np.maximum.accumulate(idx)
    first = int(np.argmax(known))
    anchor = np.where(anchor < 0, first, anchor)
    filled = z[anchor] + zh - zh[anchor]
    return np.where(known, z, filled)


def validate(profile: Profile, column_names: dict[str, str] | None = None) -> Profile:
    """Check a profile; raise :class:`ProfileError` naming the row, or add notes.

    Rejected: pressure missing, not strictly decreasing upward, or duplicated;
    values outside plausible ranges; dew point above temperature (by more than
    0.1 K); fewer than two levels with temperature.
    Allowed and noted: humidity missing aloft; levels without temperature (used
    for wind only); superadiabatic layers (lapse rate of theta negative by more
    than 0.1 K between levels); levels with dew point slightly above temperature
    (clipped).

    Parameters
    ----------
    column_names : dict, optional
        ``{"pressure": "pressure_hPa", ...}``: the source's names for messages.

    Returns
    -------
    Profile
        A checked copy (saturation clipping, filled heights, notes); the argument is unchanged.
    """
    profile = dataclasses.replace(profile, notes=list(profile.notes))
    names = {"pressure": "pressure", "temperature": "temperature", "dewpoint": "dewpoint",
             "u": "u", "v": "v", "height": "height"}
    names.update(column_names or {})
    p = profile.pressure
    if p.size < 2:
        raise ProfileError(f"{profile.source}: a profile needs at least two levels; found {p.size}.")
    for k in np.flatnonzero(~np.isfinite(p)):
        raise ProfileError(f"{profile.source}: row {_row(profile, k)}: {names['pressure']} is missing; "
                           "every level needs a pressure.")
    for key in ("pressure", "temperature", "dewpoint", "u", "v", "height"):
        vals = getattr(profile, key)
        lo, hi = _RANGES[key]
        bad = np.flatnonzero(np.isfinite(vals) & ((vals < lo) | (vals > hi)))
        if bad.size:
            k = int(bad[0])
            raise ProfileError(
                f"{profile.source}: row {_row(profile, k)}, column {names[key]}: value out of the "
                f"plausible range {lo:g}..{hi:g} (SI units) after conversion; check the unit in the header."
            )
    dp = np.diff(p)
    dup = np.flatnonzero(dp == 0)
    if dup.size:
        k = int(dup[0]) + 1
        raise ProfileError(f"{profile.source}: row {_row(profile, k)}, column {names['pressure']}: "
                           f"duplicated level {p[k] / 100:g} hPa (also at row {_row(profile, k - 1)}).")
    up = np.flatnonzero(dp > 0)
    if up.size:
        k = int(up[0]) + 1
        raise ProfileError(
            f"{profile.source}: row {_row(profile, k)}, column {names['pressure']}: pressure "
            f"{p[k] / 100:g} hPa is not below the previous level's {p[k - 1] / 100:g} hPa; pressure "
            "must decrease strictly upward.")
    t, td = profile.temperature, profile.dewpoint
    wet = np.flatnonzero(td > t + 0.1)
    if wet.size:
        k = int(wet[0])
        raise ProfileError(
            f"{profile.source}: row {_row(profile, k)}, column {names['dewpoint']}: dew point "
            f"{td[k] - 273.15:.1f} degC is above the temperature {t[k] - 273.15:.1f} degC.")
    slight = td > t
    if slight.any():
        profile.dewpoint = np.where(slight, t, td)
        profile.notes.append(f"{int(slight.sum())} level(s) with dew point up to 0.1 K above "
                             "temperature were set to saturation")
    has_t = np.isfinite(t)
    if has_t.sum() < 2:
        raise ProfileError(f"{profile.source}: fewer than two levels have a temperature.")
    if not has_t[0]:
        raise ProfileError(f"{profile.source}: row {_row(profile, 0)}, column {names['temperature']}: "
                           "the lowest level has no temperature.")
    if (~has_t).any():
        profile.notes.append(f"{int((~has_t).sum())} level(s) without temperature are used for wind only")
    has_td = np.isfinite(td) & has_t
    if not has_td[0]:
        raise ProfileError(f"{profile.source}: row {_row(profile, 0)}, column {names['dewpoint']}: "
                           "the lowest level has no humidity; parcels cannot be lifted.")
    if (has_t & ~has_td).any():
        top = p[has_td].min()
        gaps = has_t & ~has_td & (p > top)
        msg = f"humidity missing above {top / 100:.0f} hPa"
        if gaps.any():
            msg += f" and on {int(gaps.sum())} level(s) below it"
        profile.notes.append(msg + "; taken as dry air for virtual temperature, and precipitable "
                             "water counts only levels with humidity")
    theta = potential_temperature(t, p)
    tt = theta[has_t]
    drop = np.flatnonzero(np.diff(tt) < -0.1)
    if drop.size:
        pk = p[has_t]
        layers = ", ".join(f"{pk[i] / 100:.0f}-{pk[i + 1] / 100:.0f} hPa" for i in drop[:5])
        profile.notes.append(f"superadiabatic layer(s) (flagged, not rejected): {layers}")
    if not np.isfinite(profile.height).all():
        none_known = not np.isfinite(profile.height).any()
        profile.height = fill_heights(p, t, profile.dewpoint, profile.height)
        if none_known:
            profile.notes.append("heights computed by the hypsometric equation above the lowest level")
        else:
            profile.notes.append("missing heights filled by the hypsometric equation")
    return profile


def value_at_pressure(p, values, target):
    """Value at pressure ``target`` (Pa), linear in ln p between finite levels; NaN outside."""
    ok = np.isfinite(values) & np.isfinite(p)
    if ok.sum() < 2:
        return np.nan
    lnp = -np.log(p[ok])
    x = -np.log(target)
    if x < lnp.min() - 1e-9 or x > lnp.max() + 1e-9:
        return np.nan
    return float(np.interp(x, lnp, values[ok]))
