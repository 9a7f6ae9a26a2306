"""Lifted parcels and their buoyancy: LCL, LFC, EL, CAPE, CIN, lifted index.

Kernel on float64 SI arrays, vectorised over any number of columns: levels on
the last axis, shape ``(..., nlev)``, ordered from the surface upward
(pressure decreasing).  Three parcels are defined:

``"surface"``
    The lowest valid level of the column.
``"mixed_layer"``
    Mean potential temperature and mean mixing ratio of the lowest ``ml_depth``
    (default 100 hPa), averaged in pressure, starting at the surface.
``"most_unstable"``
    The level of highest equivalent potential temperature (Bolton 1980) in the
    lowest ``mu_depth`` (default 300 hPa).

The parcel rises along a dry adiabat (Poisson exponent R_m/c_pm of the moist air,
as in Romps 2017) to its exact LCL (Romps 2017) and then along the pseudo-adiabat
of :mod:`parcelcast.thermo.moist`.  Buoyancy uses virtual temperature for parcel
and environment (Doswell and Rasmussen 1994); missing environmental humidity
(NaN dew point) counts as dry air there.  CAPE and CIN are

    CAPE = R_d * integral_{LFC}^{EL} max(Tv_parcel - Tv_env, 0) d(ln p)     (>= 0),
    CIN  = R_d * integral_{origin}^{LFC} min(Tv_parcel - Tv_env, 0) d(ln p)  (<= 0),

with buoyancy linear in ln p between levels and zero crossings located exactly.
LFC is the lowest level at or above the LCL where the parcel becomes buoyant; EL
the highest level where it stops being buoyant (the top level if it never does).
Without an LFC, CAPE = CIN = 0 and LFC/EL are NaN.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from parcelcast.thermo.constants import EPSILON, KAPPA, P0, RD, ROMPS_CVA, ROMPS_CVV, ROMPS_RAIR, ROMPS_RVAP
from parcelcast.thermo.lcl import lcl_romps
from parcelcast.thermo.moist import equivalent_potential_temperature, pseudoadiabat, pseudoadiabat_lookup
from parcelcast.thermo.moisture import mixing_ratio_from_dewpoint
from parcelcast.thermo.saturation import dewpoint_from_vapour_pressure, saturation_vapour_pressure

__all__ = ["PARCELS", "ParcelResult", "lift_parcel", "lift_parcels", "parcel_start", "interpolate_at_pressure"]

PARCELS = ("surface", "mixed_layer", "most_unstable")


@dataclass
class ParcelResult:
    """Indices of one lifted parcel per column (arrays of shape ``(...)``, SI units).

    cape, cin : J/kg (cin <= 0).  lcl_pressure, lfc_pressure, el_pressure, start_pressure :
    Pa.  lcl_temperature, start_temperature, start_dewpoint : K.  lifted_index : K
    (environment minus parcel temperature at 500 hPa; negative = unstable).
    parcel_temperature, buoyancy : (..., nlev), K (buoyancy = Tv_parcel - Tv_env, NaN
    below the parcel's origin).
    """

    cape: np.ndarray
    cin: np.ndarray
    lcl_pressure: np.ndarray
    lcl_temperature: np.ndarray
    lfc_pressure: np.ndarray
    el_pressure: np.ndarray
    lifted_index: np.ndarray
    start_pressure: np.ndarray
    start_temperature: np.ndarray
    start_dewpoint: np.ndarray
    parcel_temperature: np.ndarray
    buoyancy: np.ndarray


def interpolate_at_pressure(pressure, values, target):
    """Linear-in-ln p interpolation of ``values`` at ``target`` pressure, per column.

    Parameters
    ----------
    pressure : (..., nlev) or (nlev,), Pa, decreasing along the last axis.
    values : (..., nlev).
    target : (...) or scalar, Pa.

    Returns
    -------
    (...) array; NaN outside the column's range or where a neighbour is NaN.
    """
    v = np.asarray(values, dtype=np.float64)
    p = np.broadcast_to(np.asarray(pressure, dtype=np.float64), v.shape)
    tgt = np.broadcast_to(np.asarray(target, dtype=np.float64), v.shape[:-1])
    n = v.shape[-1]
    j = np.sum(p >= tgt[..., None], axis=-1)  # first index above the target
    j = np.clip(j, 1, n - 1)
    jj = j[..., None]
    p0 = np.take_along_axis(p, jj - 1, -1)[..., 0]
    p1 = np.take_along_axis(p, jj, -1)[..., 0]
    v0 = np.take_along_axis(v, jj - 1, -1)[..., 0]
    v1 = np.take_along_axis(v, jj, -1)[..., 0]
    with np.errstate(invalid="ignore", divide="ignore"):
        w = np.log(p0 / tgt) / np.log(p0 / p1)
    out = v0 + w * (v1 - v0)
    inside = (tgt <= p0) & (tgt >= p1)
    return np.where(inside, out, np.nan)


def _valid_mask(pressure, temperature, surface_pressure):
    valid = np.isfinite(temperature) & np.isfinite(pressure)
    if surface_pressure is not None:
        valid &= pressure <= np.asarray(surface_pressure, dtype=np.float64)[..., None] * (1 + 1e-9)
    return valid


def _layer_mean(p, f, valid, p_bottom, depth):
    """Pressure-weighted mean of f over [p_bottom - depth, p_bottom], trapezoid, per column."""
    top = p_bottom - depth
    ff = np.where(valid, f, np.nan)
    f_top = interpolate_at_pressure(p, ff, top)
    inside = valid & (p <= p_bottom[..., None]) & (p >= top[..., None])
    # trapezoid over consecutive inside levels, plus the piece down to the interpolated top
    seg = inside[..., :-1] & inside[..., 1:]
    dp = p[..., :-1] - p[..., 1:]
    area = np.where(seg, 0.5 * (ff[..., :-1] + ff[..., 1:]) * dp, 0.0).sum(-1)
    last = np.where(inside, np.arange(p.shape[-1]), -1).max(-1)
    lastc = np.clip(last, 0, None)[..., None]
    p_last = np.take_along_axis(p, lastc, -1)[..., 0]
    f_last = np.take_along_axis(ff, lastc, -1)[..., 0]
    extra = np.where(np.isfinite(f_top) & (p_last > top), 0.5 * (f_last + f_top) * (p_last - top), 0.0)
    span = np.where(np.isfinite(f_top), depth, p_bottom - p_last)
    return (area + extra) / span


def parcel_start(pressure, temperature, dewpoint, parcel="surface", surface_pressure=None,
                 ml_depth=10000.0, mu_depth=30000.0):
    """Starting pressure, temperature and dew point (Pa, K, K) of a parcel, per column.

    Parameters as in :func:`lift_parcel`.  Returns ``(p0, t0, td0, index)`` where
    ``index`` is the level the parcel starts from (shape ``(...)``).
    """
    t = np.asarray(temperature, dtype=np.float64)
    p = np.broadcast_to(np.asarray(pressure, dtype=np.float64), t.shape)
    td = np.broadcast_to(np.asarray(dewpoint, dtype=np.float64), t.shape)
    valid = _valid_mask(p, t, surface_pressure)
    first = np.argmax(valid, axis=-1)
    fi = first[..., None]
    p_s = np.take_along_axis(p, fi, -1)[..., 0]
    t_s = np.take_along_axis(t, fi, -1)[..., 0]
    td_s = np.take_along_axis(td, fi, -1)[..., 0]
    none = ~valid.any(-1)
    if parcel == "surface":
        p0, t0, td0, idx = p_s, t_s, td_s, first
    elif parcel == "mixed_layer":
        theta = t * (P0 / p) ** KAPPA
        r = mixing_ratio_from_dewpoint(td, p)
        th_m = _layer_mean(p, theta, valid, p_s, ml_depth)
        r_m = _layer_mean(p, r, valid & np.isfinite(r), p_s, ml_depth)
        p0 = p_s
        t0 = th_m * (p_s / P0) ** KAPPA
        td0 = dewpoint_from_vapour_pressure(p_s * r_m / (EPSILON + r_m))
        td0 = np.minimum(td0, t0)
        idx = first
    elif parcel == "most_unstable":
        the = equivalent_potential_temperature(t, td, p)
        ok = valid & np.isfinite(the) & (p >= (p_s - mu_depth)[..., None])
        idx = np.argmax(np.where(ok, the, -np.inf), axis=-1)
        ii = idx[..., None]
        p0 = np.take_along_axis(p, ii, -1)[..., 0]
        t0 = np.take_along_axis(t, ii, -1)[..., 0]
        td0 = np.take_along_axis(td, ii, -1)[..., 0]
    else:
        raise ValueError(f"unknown parcel {parcel!r}; valid: {', '.join(PARCELS)}")
    nan = np.nan
    return (np.where(none, nan, p0), np.where(none, nan, t0), np.where(none, nan, td0), idx)


def lift_parcel(pressure, temperature, dewpoint, parcel="surface", surface_pressure=None,
                ml_depth=10000.0, mu_depth=30000.0, method="table", max_step=0.02):
    """Lift a parcel in each column and return its indices (:class:`ParcelResult`).

    Parameters
    ----------
    pressure : array_like, shape (nlev,) or (..., nlev)
        Pressure of the levels (Pa), decreasing along the last axis (surface first).
    temperature : array_like, shape (..., nlev)
        Environmental temperature (K).  NaN levels are skipped.
    dewpoint : array_like, shape (..., nlev)
        Environmental dew point (K); NaN aloft means unknown humidity (taken as dry
        for the virtual temperature; say so to the user).
    parcel : {"surface", "mixed_layer", "most_unstable"}
    surface_pressure : array_like, shape (...), optional
        Levels below ground (p > surface pressure) are ignored.
    ml_depth, mu_depth : float
        Depths (Pa) of the mixed layer and of the search for the most unstable parcel.
    method : {"table", "rk4"}
        Pseudo-adiabat by the tabulated curves (:func:`~parcelcast.thermo.moist.pseudoadiabat_lookup`,
        within 0.01 K of the integration, fast) or by direct RK4 integration.
    max_step : float
        Runge-Kutta step (ln p) of the pseudo-adiabat with ``method="rk4"``.

    Returns
    -------
    ParcelResult

    References
    ----------
    Doswell, C. A. III and E. N. Rasmussen, 1994: The effect of neglecting the
    virtual temperature correction on CAPE calculations. Wea. Forecasting, 9, 625-629.
    Romps, D. M., 2017: J. Atmos. Sci., 74, 3891-3900 (LCL).
    Galway, J. G., 1956: The lifted index as a predictor of latent instability.
    Bull. Amer. Meteor. Soc., 37, 528-529.
    """
    t = np.asarray(temperature, dtype=np.float64)
    p = np.broadcast_to(np.asarray(pressure, dtype=np.float64), t.shape)
    td = np.broadcast_to(np.asarray(dewpoint, dtype=np.float64), t.shape)
    valid = _valid_mask(p, t, surface_pressure)
    p0, t0, td0, idx = parcel_start(p, t, td, parcel, surface_pressure, ml_depth, mu_depth)
    return _lift(p, t, td, valid, p0, t0, td0, idx, method, max_step)


def lift_parcels(pressure, temperature, dewpoint, parcels=PARCELS, surface_pressure=None,
                 ml_depth=10000.0, mu_depth=30000.0, method="table", max_step=0.02):
    """Lift several parcel kinds of the same columns in one vectorised pass.

    Same parameters as :func:`lift_parcel`, with ``parcels`` a sequence of kinds.
    Returns ``{kind: ParcelResult}``.  Faster than one call per kind because the
    kinds share one evaluation of the pseudo-adiabats.
    """
    t = np.asarray(temperature, dtype=np.float64)
    p = np.broadcast_to(np.asarray(pressure, dtype=np.float64), t.shape)
    td = np.broadcast_to(np.asarray(dewpoint, dtype=np.float64), t.shape)
    valid = _valid_mask(p, t, surface_pressure)
    starts = [parcel_start(p, t, td, kind, surface_pressure, ml_depth, mu_depth) for kind in parcels]
    n = len(parcels)
    stack = lambda a: np.broadcast_to(a, (n,) + a.shape)  # noqa: E731
    res = _lift(stack(p), stack(t), stack(td), stack(valid), *(np.stack([s[i] for s in starts]) for i in range(4)),
                method, max_step)
    return {kind: ParcelResult(**{name: getattr(res, name)[i] for name in res.__dataclass_fields__})
            for i, kind in enumerate(parcels)}


def _lift(p, t, td, valid, p0, t0, td0, idx, method, max_step):
    td0 = np.minimum(td0, t0)

    # dry ascent to the exact LCL, then the pseudo-adiabat
    p_lcl, t_lcl, _ = lcl_romps(p0, t0, dewpoint=td0)
    r0 = mixing_ratio_from_dewpoint(td0, p0)
    q0 = r0 / (1 + r0)
    rm = (1 - q0) * ROMPS_RAIR + q0 * ROMPS_RVAP
    cpm = (1 - q0) * (ROMPS_CVA + ROMPS_RAIR) + q0 * (ROMPS_CVV + ROMPS_RVAP)
    t_dry = t0[..., None] * (p / p0[..., None]) ** (rm / cpm)[..., None]
    p_clamped = np.minimum(p, p_lcl[..., None])
    if method == "table":
        t_moist = pseudoadiabat_lookup(t_lcl, p_lcl, p_clamped)
    elif method == "rk4":
        t_moist = pseudoadiabat(t_lcl, p_lcl, p_clamped, max_step=max_step)
    else:
        raise ValueError(f"unknown method {method!r}; valid: table, rk4")
    below = p >= p_lcl[..., None]
    tp = np.where(below, t_dry, t_moist)
    es = saturation_vapour_pressure(tp)
    rs = EPSILON * es / (p - es)
    r_parcel = np.where(below, r0[..., None], rs)
    tv_p = tp * (1 + r_parcel / EPSILON) / (1 + r_parcel)
    r_env = mixing_ratio_from_dewpoint(td, p)
    r_env = np.where(np.isfinite(r_env), r_env, 0.0)
    tv_e = t * (1 + r_env / EPSILON) / (1 + r_env)
    k = np.arange(t.shape[-1])
    above_start = k >= idx[..., None]
    use = valid & above_start
    b = np.where(use, tv_p - tv_e, np.nan)

    # segment integrals in x = ln p (x decreases upward; dx > 0 below)
    x = np.log(p)
    dx = x[..., :-1] - x[..., 1:]
    b0, b1 = b[..., :-1], b[..., 1:]
    seg_ok = np.isfinite(b0) & np.isfinite(b1)
    with np.errstate(invalid="ignore", divide="ignore"):
        cross = (b0 > 0) != (b1 > 0)
        absum = np.abs(b0) + np.abs(b1)
        pos = np.where(cross, np.maximum(b0, b1) ** 2 / (2 * absum), 0.5 * (b0 + b1)) * dx
        pos = np.where((b0 <= 0) & (b1 <= 0), 0.0, pos)
        neg = np.where(cross, -np.minimum(b0, b1) ** 2 / (2 * absum), 0.5 * (b0 + b1)) * dx
        neg = np.where((b0 > 0) & (b1 > 0), 0.0, neg)
        frac = np.where(cross, b0 / (b0 - b1), 0.0)  # position of the crossing in the segment
    pos = np.where(seg_ok, pos, 0.0)
    neg = np.where(seg_ok, neg, 0.0)
    p_lo, p_hi = p[..., :-1], p[..., 1:]
    lcl = p_lcl[..., None]
    cand = seg_ok & (b1 > 0) & (p_hi < lcl) & ((b0 <= 0) | (p_lo >= lcl))
    has_lfc = cand.any(-1)
    s = np.arange(t.shape[-1] - 1)
    lfc_seg = np.argmax(cand, -1)
    ls = lfc_seg[..., None]
    x_cross = np.take_along_axis(x[..., :-1] - frac * dx, ls, -1)[..., 0]
    lfc_p = np.minimum(np.exp(x_cross), p_lcl)
    lfc_p = np.where(has_lfc, lfc_p, np.nan)
    down = seg_ok & (b0 > 0) & (b1 <= 0) & (s >= ls)
    has_down = down.any(-1)
    el_seg_down = (t.shape[-1] - 2) - np.argmax(down[..., ::-1], -1)
    last_ok = np.where(seg_ok, s, -1).max(-1)
    el_seg = np.where(has_down, el_seg_down, last_ok)
    es_ = el_seg[..., None]
    x_el_down = np.take_along_axis(x[..., :-1] - frac * dx, es_, -1)[..., 0]
    x_top = np.take_along_axis(x[..., 1:], np.clip(es_, 0, None), -1)[..., 0]
    el_p = np.where(has_lfc, np.exp(np.where(has_down, x_el_down, x_top)), np.nan)
    in_cape = (s >= ls) & (s <= es_)
    cape = RD * np.where(in_cape, pos, 0.0).sum(-1)
    cin = RD * np.where(s <= ls, neg, 0.0).sum(-1)
    cape = np.where(has_lfc, cape, 0.0)
    cin = np.where(has_lfc, cin, 0.0)
    nostart = ~np.isfinite(p0)
    cape = np.where(nostart, np.nan, cape)
    cin = np.where(nostart, np.nan, cin)

    t500_env = interpolate_at_pressure(p, np.where(valid, t, np.nan), 50000.0)
    t500_par = interpolate_at_pressure(p, tp, 50000.0)
    li = t500_env - t500_par
    return ParcelResult(
        cape=cape, cin=cin, lcl_pressure=p_lcl, lcl_temperature=t_lcl, lfc_pressure=lfc_p,
        el_pressure=el_p, lifted_index=li, start_pressure=p0, start_temperature=t0,
        start_dewpoint=td0, parcel_temperature=np.where(p <= p0[..., None] * (1 + 1e-12), tp, np.nan),
        buoyancy=b,
    )
