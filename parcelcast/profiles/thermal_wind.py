"""Layer-mean temperature advection implied by the thermal wind of a single profile.

Assumptions (state them to the user): the winds are geostrophic (no friction, no
curvature, no ageostrophic part), the temperature gradient is uniform through each
layer, and the Coriolis parameter is that of the profile's latitude.  Then the
thermal wind of a layer from p_b (bottom) to p_t (top),

    V_T = V(p_t) - V(p_b) = (R_d / f) ln(p_b / p_t) k x grad <T>,

gives grad <T> = (f / (R_d ln(p_b/p_t))) (v_T, -u_T), and the layer-mean advection

    -<V> . grad <T> = (f / (R_d ln(p_b/p_t))) (<v> u_T - <u> v_T)   (K/s),

positive (warm advection) when the wind veers with height in the northern
hemisphere, negative (cold) when it backs; the sign of f carries this to the
southern hemisphere.  <V> is the layer-mean wind, averaged in ln p over the
profile's levels in the layer.  Within 5 degrees of the equator the result is NaN.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import SECONDS_PER_HOUR
from parcelcast.geostrophic import EQUATORIAL_BAND_DEG
from parcelcast.grid.latlon import coriolis_parameter
from parcelcast.profiles.profile import value_at_pressure
from parcelcast.thermo.constants import RD

__all__ = ["DEFAULT_LAYERS_HPA", "coriolis_parameter", "layer_advection", "thermal_wind_advection"]

#: layer boundaries (hPa) used by default: 1000-850, 850-700, 700-500, 500-300.
DEFAULT_LAYERS_HPA = (1000.0, 850.0, 700.0, 500.0, 300.0)
#: |latitude| below which the geostrophic relation is not used (degrees): the same band as
#: the gridded geostrophic wind, so the two estimates are masked alike.
EQUATORIAL_LIMIT = EQUATORIAL_BAND_DEG


def layer_advection(p_bottom, p_top, u_bottom, v_bottom, u_top, v_top, coriolis, u_mean=None, v_mean=None):
    """Thermal-wind layer-mean temperature advection (K/s), vectorised.

    Parameters
    ----------
    p_bottom, p_top : array_like
        Layer bounds (Pa), p_bottom > p_top.
    u_bottom, v_bottom, u_top, v_top : array_like
        Wind components (m/s) at the bounds.
    coriolis : array_like
        f (s-1).
    u_mean, v_mean : array_like, optional
        Layer-mean wind (m/s); by default the mean of the two bounds.

    Returns
    -------
    numpy.ndarray
        -<V>.grad<T> (K/s), positive = warm advection.

    References
    ----------
    Holton, J. R. and G. J. Hakim, 2013: An Introduction to Dynamic Meteorology,
    5th ed., section 3.4 (thermal wind, veering and backing).
    """
    ub, vb, ut, vt = (np.asarray(a, dtype=np.float64) for a in (u_bottom, v_bottom, u_top, v_top))
    um = 0.5 * (ub + ut) if u_mean is None else np.asarray(u_mean, dtype=np.float64)
    vm = 0.5 * (vb + vt) if v_mean is None else np.asarray(v_mean, dtype=np.float64)
    uT, vT = ut - ub, vt - vb
    f = np.asarray(coriolis, dtype=np.float64)
    depth = np.log(np.asarray(p_bottom, dtype=np.float64) / np.asarray(p_top, dtype=np.float64))
    return f / (RD * depth) * (vm * uT - um * vT)


def _mean_lnp(p, values, bottom, top):
    ok = np.isfinite(values)
    inside = ok & (p < bottom) & (p > top)
    ps = np.concatenate([[bottom], p[inside], [top]])
    vs = np.concatenate([[value_at_pressure(p, values, bottom)], values[inside], [value_at_pressure(p, values, top)]])
    x = np.log(ps)
    return float(np.sum(0.5 * (vs[:-1] + vs[1:]) * (x[:-1] - x[1:])) / (x[0] - x[-1]))


def thermal_wind_advection(pressure, u, v, latitude, layers_hpa=DEFAULT_LAYERS_HPA, surface_pressure=None):
    """Thermal-wind advection of each layer of one profile.

    Parameters
    ----------
    pressure : (nlev,) Pa, decreasing.
    u, v : (nlev,) m/s (NaN where unknown).
    latitude : float or None
        Degrees north; None or within 5 degrees of the equator gives NaN advection.
    layers_hpa : sequence of float
        Boundaries (hPa), decreasing.  Layers whose bottom is below ground
        (above ``surface_pressure``, default the lowest level) or outside the winds
        are left out.

    Returns
    -------
    list of dict
        ``{"bottom_hPa", "top_hPa", "advection_K_per_h"}`` per layer (bottom first),
        plus ``"advection_K_per_s"``, and ``"missing_because"`` when f cannot be used.
    """
    p = np.asarray(pressure, dtype=np.float64)
    u = np.asarray(u, dtype=np.float64)
    v = np.asarray(v, dtype=np.float64)
    psfc = float(p[0]) if surface_pressure is None else float(surface_pressure)
    have = np.isfinite(u) & np.isfinite(v)
    if have.sum() < 2:
        return []
    ptop_wind = p[have].min()
    pbot_wind = p[have].max()
    if latitude is None or abs(float(latitude)) < EQUATORIAL_LIMIT:
        f = np.nan
    else:
        f = float(coriolis_parameter(latitude))
    out = []
    bounds = [b * 100.0 for b in layers_hpa]
    for pb, pt in zip(bounds[:-1], bounds[1:]):
        if pb > psfc + 1e-6 or pb > pbot_wind + 1e-6 or pt < ptop_wind - 1e-6:
            continue
        ub, vb = value_at_pressure(p, u, pb), value_at_pressure(p, v, pb)
        ut, vt = value_at_pressure(p, u, pt), value_at_pressure(p, v, pt)
        um, vm = _mean_lnp(p, u, pb, pt), _mean_lnp(p, v, pb, pt)
        adv = float(layer_advection(pb, pt, ub, vb, ut, vt, f, um, vm))
        layer = {"bottom_hPa": pb / 100.0, "top_hPa": pt / 100.0,
                 "advection_K_per_h": adv * SECONDS_PER_HOUR, "advection_K_per_s": adv}
        if not np.isfinite(f):
            layer["missing_because"] = (f"no latitude, or within {EQUATORIAL_LIMIT:g} degrees of the equator "
                                        "(the geostrophic relation is not used there)")
        out.append(layer)
    return out
