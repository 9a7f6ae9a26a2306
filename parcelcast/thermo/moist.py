"""Pseudo-adiabatic ascent, equivalent and wet-bulb potential temperature.

The pseudo-adiabat is integrated numerically (classical fourth-order Runge-Kutta
in ln p, steps of at most ``max_step`` = 0.02 in ln p) from the implicit
derivative of the pseudo-adiabatic entropy balance per unit mass of dry air

    (c_pd + r_s c_l) dT/T - R_d d ln p_d + d(L_v r_s / T) = 0,   dL_v/dT = c_pv - c_l,

written out in :func:`pseudoadiabatic_lapse_rate`: condensate is removed as it
forms (no loading, no heat capacity), vapour keeps its heat capacity, L_v(T) of
Bolton (1980) eq. (2), saturation over liquid water (WMO-No. 8 Magnus formula) at
all temperatures (no ice phase).  Compared with a tightly-toleranced
``scipy.integrate.solve_ivp`` of the same lapse rate the RK4 error is below
0.001 K from 1000 to 100 hPa; Bolton's (1980) theta_E, itself a fit to pseudo-adiabats,
is conserved along our adiabats to within about 0.2 K from 1000 to 300 hPa (see the tests and
``design_notes/thermodynamics.md``).

:func:`pseudoadiabat_lookup` gives the same curves (within 0.01 K) by bilinear
interpolation in a table built once from :func:`pseudoadiabat`; the parcel kernel
uses it (through the same lookup loop) because it needs no integration per parcel.
"""

from __future__ import annotations

import functools

import numpy as np

from parcelcast.thermo.constants import CPD, CPV, DLV_DT, EPSILON, LV0, RD, T_ZERO_C
from parcelcast.thermo.lcl import lcl_temperature_bolton
from parcelcast.thermo.moisture import mixing_ratio_from_dewpoint

__all__ = [
    "pseudoadiabatic_lapse_rate",
    "pseudoadiabat",
    "pseudoadiabat_lookup",
    "equivalent_potential_temperature",
    "saturation_equivalent_potential_temperature",
    "wet_bulb_potential_temperature",
]

# WMO-No. 8 Magnus constants over water (Pa, -, degC), inlined for speed
_A, _B, _C = 611.2, 17.62, 243.12


def pseudoadiabatic_lapse_rate(temperature, pressure):
    """dT/d(ln p) (K) along a pseudo-adiabat through (T, p); T in K, p in Pa.

    Implicit differentiation of the entropy balance (see the module docstring):
    with r_s = eps e_s / (p - e_s),

    A = (c_pd + r_s c_pv)/T + R_d e_s'/(p - e_s) + L r_sT / T - L r_s / T^2,
    B = -R_d p/(p - e_s) - L r_s p / (T (p - e_s)),  dT/dln p = -B / A,

    where e_s' = de_s/dT and r_sT = dr_s/dT at constant p.  Positive (T falls as p falls).
    """
    t = np.asarray(temperature, dtype=np.float64)
    p = np.asarray(pressure, dtype=np.float64)
    tc = t - T_ZERO_C
    es = _A * np.exp(_B * tc / (_C + tc))
    des = es * _B * _C / (_C + tc) ** 2
    pd = p - es
    rs = EPSILON * es / pd
    rst = EPSILON * des * p / (pd * pd)
    lv = LV0 - DLV_DT * tc
    a = (CPD + rs * CPV) / t + RD * des / pd + lv * rst / t - lv * rs / (t * t)
    b = -RD * p / pd - lv * rs * p / (t * pd)
    return -b / a


def _rk4(t, lnp, h):
    k1 = pseudoadiabatic_lapse_rate(t, np.exp(lnp))
    k2 = pseudoadiabatic_lapse_rate(t + 0.5 * h * k1, np.exp(lnp + 0.5 * h))
    k3 = pseudoadiabatic_lapse_rate(t + 0.5 * h * k2, np.exp(lnp + 0.5 * h))
    k4 = pseudoadiabatic_lapse_rate(t + h * k3, np.exp(lnp + h))
    return t + h / 6.0 * (k1 + 2 * k2 + 2 * k3 + k4)


def pseudoadiabat(temperature_start, pressure_start, pressure, max_step=0.02):
    """Temperature along the pseudo-adiabat through (T0, p0) at each pressure.

    Parameters
    ----------
    temperature_start : array_like, shape (...)
        Saturated starting temperature T0 (K), e.g. the LCL temperature.
    pressure_start : array_like, shape (...)
        Starting pressure p0 (Pa).
    pressure : array_like, shape (nlev,) or (..., nlev)
        Pressures (Pa) in monotonic order (usually decreasing, upward).  Levels on
        either side of p0 are allowed (descent below p0 follows the same curve).
    max_step : float
        Largest Runge-Kutta step in ln p.

    Returns
    -------
    numpy.ndarray, shape (..., nlev)
        T (K).  NaN where the start or the pressure is NaN.

    Notes
    -----
    The integration marches level by level from p0 to the first level and then
    from each level to the next, so the cost grows with the depth of the column,
    not with the number of levels squared; all columns advance together.
    """
    t0 = np.asarray(temperature_start, dtype=np.float64)
    p0 = np.asarray(pressure_start, dtype=np.float64)
    plev = np.asarray(pressure, dtype=np.float64)
    shape = np.broadcast_shapes(t0.shape, p0.shape, plev.shape[:-1])
    lnp_lev = np.broadcast_to(np.log(plev), shape + plev.shape[-1:])
    t = np.broadcast_to(t0, shape).copy()
    lnp = np.broadcast_to(np.log(p0), shape).copy()
    out = np.empty(shape + plev.shape[-1:])
    for k in range(plev.shape[-1]):
        target = lnp_lev[..., k]
        delta = target - lnp
        span = np.nanmax(np.abs(delta)) if delta.size else 0.0
        n = int(np.ceil(span / max_step)) if np.isfinite(span) and span > 0 else 0
        if n:
            h = delta / n
            for _ in range(n):
                t = _rk4(t, lnp, h)
                lnp = lnp + h
        lnp = target
        out[..., k] = t
    return out


def equivalent_potential_temperature(temperature, dewpoint, pressure):
    """Equivalent potential temperature theta_E (K) of Bolton (1980) eq. (39).

    theta_E = T (1000/p)^(0.2854 (1 - 0.28e-3 r)) exp[(3.376/T_L - 0.00254) r (1 + 0.81e-3 r)]
    with r in g/kg, p in hPa and T_L from Bolton's eq. (15).

    Parameters
    ----------
    temperature, dewpoint : array_like
        T, T_d (K).
    pressure : array_like
        p (Pa).

    References
    ----------
    Bolton, D., 1980: The computation of equivalent potential temperature.
    Mon. Wea. Rev., 108, 1046-1053, eqs. (15) and (39).
    """
    t = np.asarray(temperature, dtype=np.float64)
    td = np.asarray(dewpoint, dtype=np.float64)
    p = np.asarray(pressure, dtype=np.float64)
    r = 1000.0 * mixing_ratio_from_dewpoint(td, p)
    tl = lcl_temperature_bolton(t, dewpoint=td)
    return (
        t
        * (100000.0 / p) ** (0.2854 * (1 - 0.28e-3 * r))
        * np.exp((3.376 / tl - 0.00254) * r * (1 + 0.81e-3 * r))
    )


def saturation_equivalent_potential_temperature(temperature, pressure):
    """theta_E (K) of saturated air at (T K, p Pa): Bolton (1980) eq. (39) with T_d = T_L = T."""
    return equivalent_potential_temperature(temperature, temperature, pressure)


def wet_bulb_potential_temperature(temperature, dewpoint, pressure):
    """Wet-bulb potential temperature theta_W (K).

    Lift the air dry-adiabatically to its LCL (Bolton 1980 eq. 15 temperature),
    then follow :func:`pseudoadiabat` to 1000 hPa (Normand's construction).

    References
    ----------
    Bolton (1980); WMO-No. 8 Annex 4.B; AMS Glossary, "wet-bulb potential temperature".
    """
    t = np.asarray(temperature, dtype=np.float64)
    td = np.asarray(dewpoint, dtype=np.float64)
    p = np.asarray(pressure, dtype=np.float64)
    tl = lcl_temperature_bolton(t, dewpoint=td)
    r = mixing_ratio_from_dewpoint(td, p)
    kappa_m = RD / CPD * (1 - 0.28 * r)  # Bolton's kappa(1 - 0.28 r), eq. (24) with r in kg/kg
    pl = p * (tl / t) ** (1 / kappa_m)
    return pseudoadiabat(tl, pl, np.array([100000.0]))[..., 0]


# --- tabulated pseudo-adiabats, for many parcels at once --------------------------
#: grid of the table: temperature at 1000 hPa (K) and ln p (p in Pa)
_TABLE_T1000 = np.arange(180.0, 330.0 + 1e-9, 0.2)
_TABLE_DLNP = 0.01
_TABLE_LNP = np.arange(np.log(110000.0), np.log(400.0) - 1e-9, -_TABLE_DLNP)


@functools.lru_cache(maxsize=1)
def _table():
    """Pseudo-adiabats on the grid (n_curves, n_lnp), built by :func:`pseudoadiabat` (RK4)
    once per installation: kept in the cache folder (``cache.cached_array``, about 0.1 s to
    build, a few ms to read), under a hash of this module and the constants."""
    from pathlib import Path

    from parcelcast.cache import cached_array
    from parcelcast.thermo import constants

    def build():
        return pseudoadiabat(_TABLE_T1000, 100000.0, np.exp(_TABLE_LNP), max_step=0.01)

    sources = [Path(__file__), Path(constants.__file__), Path(constants.__file__).parents[1] / "constants.py"]
    return cached_array("pseudoadiabats", sources, build, (_TABLE_T1000.size, _TABLE_LNP.size))


def pseudoadiabat_lookup(temperature_start, pressure_start, pressure):
    """Like :func:`pseudoadiabat`, by bilinear interpolation in a table of pseudo-adiabats.

    The table (built once and kept in the cache folder, about 0.1 s) holds the curves through
    180-330 K at 1000 hPa every 0.2 K, on ln p steps of 0.01 from 1100 to 4 hPa,
    integrated by :func:`pseudoadiabat`.  Interpolation error is below 0.01 K
    (tested); points outside the table give NaN.  The lookup (bisection for the curve
    through the start, then bilinear interpolation) is a loop shared with the parcel code
    (:mod:`parcelcast.thermo._parcel_loops`; compiled for many curves, see
    :func:`parcelcast.thermo.parcel.column_loops`).

    Parameters and returns as in :func:`pseudoadiabat`.
    """
    from parcelcast.thermo.parcel import column_loops

    t0 = np.asarray(temperature_start, dtype=np.float64)
    p0 = np.asarray(pressure_start, dtype=np.float64)
    plev = np.asarray(pressure, dtype=np.float64)
    shape = np.broadcast_shapes(t0.shape, p0.shape)
    nlev = plev.shape[-1]
    # fresh C-contiguous copies: one compiled signature whatever the caller passes (views, read-only arrays)
    flat = lambda a: np.array(np.broadcast_to(a, shape), order="C").reshape(-1)  # noqa: E731
    p2 = np.array(plev.reshape(1, nlev) if plev.ndim == 1 else np.broadcast_to(plev, shape + (nlev,)),
                  order="C").reshape(-1, nlev)
    out = np.empty((int(np.prod(shape)), nlev))
    loops = column_loops(out.shape[0])
    loops.pseudoadiabat_lookup_columns(_table(), _TABLE_LNP[0], _TABLE_DLNP, flat(t0), flat(p0), p2, out)
    return out.reshape(shape + (nlev,))
