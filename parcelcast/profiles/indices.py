"""Sounding indices of one profile: parcels, stability indices, moisture, levels, layers.

:func:`analyse` returns a plain dict (SI and hPa values, names with units) that the
command line writes as JSON and the diagram draws from.  Definitions:

* K index = (T850 - T500) + Td850 - (T700 - Td700) (degC differences; George 1960).
* Total Totals = T850 + Td850 - 2 T500 (Miller 1972).
* Showalter index = T500 - T_parcel(500), parcel lifted from 850 hPa (Showalter 1953).
* Lifted index = T500 - T_parcel(500) of the mixed-layer parcel (lowest 100 hPa;
  Galway 1956 used a mean of the lowest layer), temperatures not virtual.
* Precipitable water = (1/g) integral q dp over levels with humidity (mm = kg m-2), up to
  the profile's ``moisture_top_pressure`` when set (radiosonde ascents: 300 hPa, common
  practice); ``precipitable_water_layer_hPa`` says which layer it covers and
  ``humidity_layer_hPa`` the layer with humidity (above it, air counts as dry for
  CAPE/CIN and the other humidity-dependent values).
* Freezing (0 degC), -10 degC and wet-bulb-zero levels: the highest crossing in the
  column (above it the column stays colder), height above mean sea level (``*_m``) and
  above the ground (``*_above_ground_m``); NaN if the whole column is colder, with the
  reason in ``*_missing_because``; ground-level height if only the ground is warmer.
* ``index_parcels`` names the parcel behind each single-parcel index (LCL: surface,
  lifted index: mixed layer, Showalter: 850 hPa); CAPE, CIN, LFC, EL and
  ``lifted_index_by_parcel_K`` are given for every parcel.
* Lapse rates 850-500 hPa, 700-500 hPa and 0-3 km above ground, K/km (positive when
  temperature falls with height).
* Inversions: layers where temperature rises with height (base, top, strength).
* Mixed-layer depth: height above ground where virtual potential temperature first
  exceeds its lowest-level value by 0.5 K (parcel method; threshold our choice).
"""

from __future__ import annotations

import numpy as np

from parcelcast.profiles.guidance import top_temperature_guidance
from parcelcast.profiles.profile import Profile, value_at_pressure
from parcelcast.profiles.thermal_wind import thermal_wind_advection
from parcelcast.thermo import (
    PARCELS,
    lcl_romps,
    lift_parcels,
    mixing_ratio_from_dewpoint,
    potential_temperature,
    pseudoadiabat,
    specific_humidity_from_dewpoint,
    virtual_temperature,
    wet_bulb_temperature,
)
from parcelcast.thermo.constants import G0, KAPPA, RHO_WATER, T_ZERO_C

__all__ = ["analyse", "crossing_height", "inversions", "precipitable_water", "INDEX_PARCELS"]

#: which parcel each single-parcel index lifts (CAPE, CIN, LFC, EL are given for every parcel).
INDEX_PARCELS = {
    "lcl_hPa": "surface",
    "lifted_index_K": "mixed_layer",
    "showalter_index_K": "850 hPa",
}


def crossing_height(height, values, threshold):
    """Height (m) of the highest crossing of ``threshold`` by ``values`` (warm below, cold above).

    Linear interpolation in height between the two levels around the crossing.  NaN
    when the whole column is at or below the threshold, or still above it at the top
    of the data.
    """
    z = np.asarray(height, dtype=np.float64)
    f = np.asarray(values, dtype=np.float64) - threshold
    ok = np.isfinite(f) & np.isfinite(z)
    z, f = z[ok], f[ok]
    if f.size == 0 or not (f > 0).any():
        return np.nan
    k = int(np.flatnonzero(f > 0).max())
    if k == f.size - 1:
        return np.nan  # warm at the top of the data: level not found in the column
    return float(z[k] + (z[k + 1] - z[k]) * f[k] / (f[k] - f[k + 1]))


def precipitable_water(pressure, dewpoint, top_pressure=None):
    """Precipitable water (mm) = integral of specific humidity dp / (g rho_w), trapezoid.

    Levels without humidity are left out (the integral stops where humidity stops), and
    so are levels above ``top_pressure`` (Pa) when given.
    """
    return _precipitable_water(pressure, dewpoint, top_pressure)[0]


def _precipitable_water(pressure, dewpoint, top_pressure=None):
    """Precipitable water (mm) and the (bottom, top) pressures (Pa) of the levels it used."""
    p = np.asarray(pressure, dtype=np.float64)
    q = specific_humidity_from_dewpoint(dewpoint, p)
    ok = np.isfinite(q)
    if top_pressure is not None:
        ok &= p >= top_pressure
    pk, qk = p[ok], q[ok]
    if pk.size < 2:
        return np.nan, (np.nan, np.nan)
    pw = float(np.sum(0.5 * (qk[:-1] + qk[1:]) * (pk[:-1] - pk[1:])) / G0 / RHO_WATER * 1000.0)
    return pw, (float(pk.max()), float(pk.min()))


def _layer_hPa(bottom, top):
    return {"bottom": bottom / 100.0, "top": top / 100.0}


def inversions(pressure, height, temperature, min_strength=0.0):
    """Layers where temperature rises with height: list of dicts (base/top hPa and m, strength K)."""
    p, z, t = (np.asarray(a, dtype=np.float64) for a in (pressure, height, temperature))
    ok = np.isfinite(t)
    p, z, t = p[ok], z[ok], t[ok]
    rising = np.diff(t) > 0
    out = []
    k = 0
    n = rising.size
    while k < n:
        if rising[k]:
            j = k
            while j + 1 < n and rising[j + 1]:
                j += 1
            strength = t[j + 1] - t[k]
            if strength > min_strength:
                out.append({"base_hPa": p[k] / 100, "top_hPa": p[j + 1] / 100, "base_m": z[k],
                            "top_m": z[j + 1], "strength_K": strength})
            k = j + 1
        else:
            k += 1
    return out


def _level(key, z, values, threshold) -> dict:
    """A crossing level above sea level and above the ground, and why it is missing."""
    amsl = crossing_height(z, values, threshold)
    out = {f"{key}_m": amsl, f"{key}_above_ground_m": amsl - z[0]}
    if np.isnan(amsl):
        ok = np.isfinite(values)
        colder = not (values[ok] > threshold).any()
        out[f"{key}_missing_because"] = (
            f"the whole column is at or below {threshold - T_ZERO_C:g} degC: the level is below the ground"
            if colder else f"the column is above {threshold - T_ZERO_C:g} degC up to the top of the data")
    return out


def _lift_on_temperature_levels(p, t, td):
    """Parcels lifted through the levels that have a temperature (observed ascents carry
    wind-only levels); per-level arrays are put back on all levels, NaN on the others."""
    has_t = np.isfinite(t)
    parcels = lift_parcels(p[has_t], t[has_t], td[has_t], PARCELS)
    if has_t.all():
        return parcels
    for r in parcels.values():
        for name in ("parcel_temperature", "buoyancy"):
            full = np.full(p.shape, np.nan)
            full[has_t] = getattr(r, name)
            setattr(r, name, full)
    return parcels


def _lapse(z_bot, z_top, t_bot, t_top):
    return float(-(t_top - t_bot) / (z_top - z_bot) * 1000.0)


def analyse(profile: Profile, advective_change=0.0, mixing_top_pressure=None) -> dict:
    """All indices of a profile as a JSON-ready dict (units in the key names).

    Parameters
    ----------
    profile : Profile
        A validated profile.
    advective_change : float
        Advected temperature change (K) expected by the afternoon, for the
        top-temperature guidance.
    mixing_top_pressure : float, optional
        Top of the expected mixed layer (Pa) for the guidance.

    Returns
    -------
    dict
        Keys include ``lcl_hPa``, ``lcl_temperature_K``, ``cape_J_per_kg`` and
        ``cin_J_per_kg`` (each ``{"surface", "mixed_layer", "most_unstable"}``),
        ``lifted_index_K``, ``precipitable_water_mm``, ``freezing_level_m``,
        ``layers`` and many more; NaN for what cannot be computed.
    """
    p, z, t, td = profile.pressure, profile.height, profile.temperature, profile.dewpoint
    res = {}
    parcels = _lift_on_temperature_levels(p, t, td)
    per = lambda attr, scale=1.0: {k: float(getattr(r, attr)) * scale for k, r in parcels.items()}  # noqa: E731
    res["cape_J_per_kg"] = per("cape")
    res["cin_J_per_kg"] = {k: v + 0.0 for k, v in per("cin").items()}  # + 0.0: no "-0" when there is none
    res["lcl_pressure_hPa"] = per("lcl_pressure", 0.01)
    res["lfc_hPa"] = per("lfc_pressure", 0.01)
    res["el_hPa"] = per("el_pressure", 0.01)
    res["lifted_index_by_parcel_K"] = per("lifted_index")
    res["parcel_start_hPa"] = per("start_pressure", 0.01)
    sfc = parcels["surface"]
    res["lcl_hPa"] = float(sfc.lcl_pressure) / 100.0
    res["lcl_temperature_K"] = float(sfc.lcl_temperature)
    res["lcl_height_m"] = value_at_pressure(p, z, float(sfc.lcl_pressure))
    res["lifted_index_K"] = float(parcels["mixed_layer"].lifted_index)
    res["index_parcels"] = dict(INDEX_PARCELS)

    t850, t700, t500 = (value_at_pressure(p, t, x) for x in (85000.0, 70000.0, 50000.0))
    td850, td700 = value_at_pressure(p, td, 85000.0), value_at_pressure(p, td, 70000.0)
    res["k_index_K"] = (t850 - t500) + (td850 - T_ZERO_C) - (t700 - td700)
    res["total_totals_K"] = (t850 - T_ZERO_C) + (td850 - T_ZERO_C) - 2 * (t500 - T_ZERO_C)
    if np.isfinite(t850) and np.isfinite(td850) and np.isfinite(t500):
        pl, tl, _ = lcl_romps(85000.0, t850, dewpoint=min(td850, t850))
        if pl >= 50000.0:
            tp500 = float(pseudoadiabat(tl, pl, np.array([50000.0]))[0])
        else:
            tp500 = t850 * (50000.0 / 85000.0) ** KAPPA
        res["showalter_index_K"] = t500 - tp500
    else:
        res["showalter_index_K"] = np.nan
    pw, (pw_bottom, pw_top) = _precipitable_water(p, td, profile.moisture_top_pressure)
    res["precipitable_water_mm"] = pw
    res["precipitable_water_layer_hPa"] = _layer_hPa(pw_bottom, pw_top)
    wet = np.isfinite(td) & np.isfinite(t)
    res["humidity_layer_hPa"] = _layer_hPa(float(p[wet].max()), float(p[wet].min()))
    tw = wet_bulb_temperature(t, td, p)
    for key, values, threshold in (("freezing_level", t, T_ZERO_C), ("minus10_level", t, T_ZERO_C - 10.0),
                                   ("wet_bulb_zero", tw, T_ZERO_C)):
        res.update(_level(key, z, values, threshold))
    z850, z700, z500 = (value_at_pressure(p, z, x) for x in (85000.0, 70000.0, 50000.0))
    res["lapse_rate_850_500_K_per_km"] = _lapse(z850, z500, t850, t500)
    res["lapse_rate_700_500_K_per_km"] = _lapse(z700, z500, t700, t500)
    ok = np.isfinite(t)
    z3 = z[0] + 3000.0
    t3 = float(np.interp(z3, z[ok], t[ok])) if z[ok].max() >= z3 else np.nan
    res["lapse_rate_0_3km_K_per_km"] = _lapse(z[0], z3, t[0], t3)
    res["inversions"] = inversions(p, z, t)
    r = mixing_ratio_from_dewpoint(td, p)
    thv = virtual_temperature(potential_temperature(t, p), np.where(np.isfinite(r), r, 0.0))
    above = np.flatnonzero(np.isfinite(thv) & (thv > thv[0] + 0.5))
    if above.size:
        k = int(above[0])
        f0, f1 = thv[k - 1] - thv[0] - 0.5, thv[k] - thv[0] - 0.5
        zk = z[k - 1] + (z[k] - z[k - 1]) * (-f0) / (f1 - f0)
        res["mixed_layer_depth_m"] = float(zk - z[0])
    else:
        res["mixed_layer_depth_m"] = np.nan
    res["top_temperature_guidance"] = top_temperature_guidance(p[ok], t[ok], mixing_top_pressure, advective_change)
    res["layers"] = thermal_wind_advection(p, profile.u, profile.v, profile.latitude)
    res["_parcels"] = parcels  # arrays for the diagram; dropped from JSON
    return res
