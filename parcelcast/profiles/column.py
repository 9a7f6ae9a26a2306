"""A vertical column taken from a canonical analysis at a point and time.

Values are interpolated bilinearly in latitude/longitude
(:func:`parcelcast.sampling.value_at`); the time must match an analysis time
exactly.  Levels below the ground (pressure above the surface pressure) are left
out; when the analysis has surface pressure and 2-m temperature, a ground level is
added (dew point and wind taken from the lowest level above ground, height by the
hypsometric equation).  Also here: the gridded layer-mean temperature advection at
the same point, to compare with the profile's thermal-wind estimate.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import SECONDS_PER_HOUR

from parcelcast.errors import VariableNotFoundError
from parcelcast.profiles.profile import Profile, fill_heights, validate
from parcelcast.io.grib_centre import originating_centre
from parcelcast.thermo import dewpoint_from_specific_humidity, dewpoint_from_vapour_pressure
from parcelcast.thermo.model_humidity import rule_for, vapour_pressure_from_model_rh
from parcelcast.thermo.constants import G0

__all__ = ["column_from_analysis", "gridded_layer_advection"]


def _select(ds, time):
    from parcelcast.selection import select_time

    notes = []
    if "member" in ds.dims:
        ds = ds.isel(member=0)
        notes.append("ensemble input: the first member's column is used")
    ds = select_time(ds, time, default="last")  # the latest analysis, as every command
    return ds, notes


def column_from_analysis(ds, latitude: float, longitude: float, time=None, humidity_over=None) -> Profile:
    """Column of a canonical analysis at (latitude, longitude) and valid ``time``.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical dataset (``design_notes/canonical_dataset.md``) with at least
        ``temperature`` on levels; ``geopotential``, ``relative_humidity`` or
        ``specific_humidity``, ``u``, ``v``, ``surface_pressure``,
        ``near_surface_temperature`` are used when present.
    latitude, longitude : float
        Degrees north / east.
    time : numpy.datetime64, optional
        Valid time (UTC); default the latest analysis time.
    humidity_over : {"water", "ice", "mixed"}, optional
        How the analysis relative humidity is defined; default: from the GRIB originating
        centre (:func:`parcelcast.thermo.model_humidity.rule_for`).  The profile's
        ``humidity_rule`` says which rule was used and why.

    Returns
    -------
    Profile
        Validated, ground first.
    """
    from parcelcast.sampling import value_at

    src = ds.attrs.get("source_files", "analysis")
    if "temperature" not in ds or "level" not in ds["temperature"].dims:
        raise VariableNotFoundError("temperature", src, list(ds.data_vars), "on pressure levels")
    ds, notes = _select(ds, time)
    when = ds["time"].values if "time" in ds.coords else None
    p = np.asarray(ds["level"].values, dtype=np.float64)

    def col(name):
        if name not in ds:
            return None
        da = ds[name]
        if "level" in da.dims:
            da = da.reindex(level=ds["level"])
        return np.asarray(value_at(da, latitude, longitude).values, dtype=np.float64)

    t = col("temperature")
    z = col("geopotential")
    z = z / G0 if z is not None else np.full(p.shape, np.nan)
    rh, q = col("relative_humidity"), col("specific_humidity")
    rule_used = None
    if rh is not None:
        rule, reason = rule_for(originating_centre(ds), humidity_over)
        rule_used = {"rule": rule.name, "meaning": rule.describe(), "chosen": reason}
        with np.errstate(divide="ignore", invalid="ignore"):
            # not capped at 100 %: RH over ice may exceed it; the dew point is capped at T below
            e = vapour_pressure_from_model_rh(t, np.maximum(rh, 0.0), rule)
            td = np.minimum(dewpoint_from_vapour_pressure(e), t)
        notes.append(f"dew point (over water) from the analysis relative humidity, read as "
                     f"{rule.describe()}: {reason}")
    elif q is not None:
        td = np.minimum(dewpoint_from_specific_humidity(q, p), t)
        if humidity_over is not None:
            notes.append(f"humidity over {humidity_over} not used: the analysis gives specific humidity, "
                         "which needs no saturation rule")
    else:
        raise VariableNotFoundError("relative_humidity", src, list(ds.data_vars),
                                    "or specific_humidity: a humidity is needed for parcels")
    u, v = col("u"), col("v")
    u = u if u is not None else np.full(p.shape, np.nan)
    v = v if v is not None else np.full(p.shape, np.nan)
    ps = col("surface_pressure")
    t2 = col("near_surface_temperature")
    if ps is not None and np.isfinite(ps):
        ps = float(ps)
        keep = p < ps
        dropped = int((~keep).sum())
        if dropped:
            notes.append(f"{dropped} level(s) below the ground (surface pressure {ps / 100:.0f} hPa) left out")
        p, t, td, u, v, z = (a[keep] for a in (p, t, td, u, v, z))
        if t2 is not None and np.isfinite(t2) and p.size:
            t2 = float(t2)
            td_sfc = min(td[0], t2)
            zs = fill_heights(np.array([ps, p[0]]), np.array([t2, t[0]]), np.array([td_sfc, td[0]]),
                              np.array([np.nan, z[0]]))[0]
            p, t, td, u, v, z = (np.concatenate([[a0], a]) for a0, a in
                                 ((ps, p), (t2, t), (td_sfc, td), (u[0], u), (v[0], v), (zs, z)))
            notes.append("ground level from surface pressure and 2-m temperature; its dew point and "
                         "wind are those of the lowest level above ground")
    else:
        notes.append("no surface pressure in the analysis: the lowest level is taken as the ground "
                     "(levels below a high station's ground may be extrapolated values)")
    prof = Profile(pressure=p, height=z, temperature=t, dewpoint=td, u=u, v=v, latitude=float(latitude),
                   longitude=float(longitude), time=when,
                   source=f"{src} at {latitude:g},{longitude:g}", rows=None, notes=notes,
                   humidity_rule=rule_used)
    return validate(prof)


def gridded_layer_advection(ds, latitude: float, longitude: float, layers, time=None) -> list[dict]:
    """Gridded layer-mean temperature advection -V.grad T (K/h) at a point.

    For each ``(bottom_hPa, top_hPa)`` in ``layers``: the advection by the analysed
    wind on every analysis level in the layer (:func:`parcelcast.advection.advection`),
    interpolated to the point, averaged in ln p (trapezoid) over the levels of the
    layer.  Both bounds must be analysis levels.

    Returns
    -------
    list of dict
        ``{"bottom_hPa", "top_hPa", "advection_K_per_h"}``.
    """
    from parcelcast.advection import advection
    from parcelcast.layers import layer_mean
    from parcelcast.sampling import value_at

    ds, _ = _select(ds, time)
    out = []
    levels = np.asarray(ds["level"].values, dtype=np.float64)
    for bottom, top in layers:
        pb, pt = bottom * 100.0, top * 100.0
        sel = (levels <= pb + 1e-6) & (levels >= pt - 1e-6)
        lev = levels[sel]
        if lev.size < 2 or not np.isclose(lev.max(), pb) or not np.isclose(lev.min(), pt):
            out.append({"bottom_hPa": bottom, "top_hPa": top, "advection_K_per_h": np.nan})
            continue
        sub = ds.sel(level=lev)
        adv = advection(sub["temperature"], sub["u"], sub["v"])
        mean = layer_mean(value_at(adv, latitude, longitude), pb, pt)  # ln p-weighted
        out.append({"bottom_hPa": bottom, "top_hPa": top, "advection_K_per_h": float(mean) * SECONDS_PER_HOUR})
    return out
