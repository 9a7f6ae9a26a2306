"""Lifted parcels and their buoyancy: LCL, LFC, EL, CAPE, CIN, lifted index.

Float64 SI arrays, any number of columns: levels on the last axis, shape
``(..., nlev)``, ordered from the surface upward (pressure decreasing).  The
per-level fields come from the public numpy functions (mixing ratio, theta_E,
LCL); the loops over levels are :mod:`parcelcast.thermo._parcel_loops`, run as plain
Python for a few columns and compiled with numba (:mod:`parcelcast.thermo._parcel_kernel`,
imported on first use) for ``COMPILED_FROM_COLUMNS`` columns or more: one source, the
same answers to round-off (tested).  Three parcels are defined:

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

import functools
import types
from dataclasses import dataclass

import numpy as np

from parcelcast.thermo.constants import (
    EPSILON,
    KAPPA,
    P0,
    RD,
    ROMPS_CVA,
    ROMPS_CVV,
    ROMPS_RAIR,
    ROMPS_RVAP,
    T_ZERO_C,
)
from parcelcast.thermo.lcl import lcl_romps
from parcelcast.thermo.moist import _TABLE_DLNP, _TABLE_LNP, _table, equivalent_potential_temperature, pseudoadiabat
from parcelcast.thermo.moisture import mixing_ratio_from_dewpoint
from parcelcast.thermo.saturation import _MAGNUS, dewpoint_from_vapour_pressure

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


#: from this many columns on, the compiled loops; below, plain Python: loading the compiled
#: ones (numba's start and its cache) takes about 0.6 s once per process, the Python loops
#: about 0.5 ms per column of 26 levels and three parcels
COMPILED_FROM_COLUMNS = 200


def column_loops(ncol: int):
    """The column loops for ``ncol`` columns: the compiled ones (numba) for many, else
    :mod:`~parcelcast.thermo._parcel_loops` run by the interpreter with numba's arithmetic
    (see :func:`_interpreted`).  Either way a namespace of the same functions."""
    if ncol >= COMPILED_FROM_COLUMNS:
        from parcelcast.thermo import _parcel_kernel

        return _parcel_kernel
    return _interpreted()


@functools.lru_cache(maxsize=1)
def _interpreted():
    """The public loops of ``_parcel_loops`` as Python, each called with its float arguments
    made numpy scalars and floating-point warnings silenced, so that the arithmetic is
    numba's ``error_model="numpy"`` (x/0 gives inf or NaN, log 0 gives -inf, no warning)."""
    from parcelcast.thermo import _parcel_loops

    def ieee(loop):
        def run(*args):
            with np.errstate(all="ignore"):
                return loop(*(np.float64(a) if isinstance(a, float) else a for a in args))

        return run

    return types.SimpleNamespace(**{name: ieee(getattr(_parcel_loops, name)) for name in
                                    ("interpolate_columns", "parcel_starts", "pseudoadiabat_lookup_columns",
                                     "lift_columns")})


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
    p = np.asarray(pressure, dtype=np.float64)
    lead, n = v.shape[:-1], v.shape[-1]
    # fresh C-contiguous copies: one compiled signature whatever the caller passes (views, read-only arrays)
    p2 = np.array(p.reshape(1, n) if p.ndim == 1 else np.broadcast_to(p, v.shape), order="C").reshape(-1, n)
    tgt = np.array(np.broadcast_to(np.asarray(target, dtype=np.float64), lead), order="C").reshape(-1)
    out = np.empty(tgt.size)
    column_loops(tgt.size).interpolate_columns(p2, np.array(v, order="C").reshape(-1, n), tgt, out)
    return out.reshape(lead)


def _valid_mask(pressure, temperature, surface_pressure):
    valid = np.isfinite(temperature) & np.isfinite(pressure)
    if surface_pressure is not None:
        valid &= pressure <= np.asarray(surface_pressure, dtype=np.float64)[..., None] * (1 + 1e-9)
    return valid


_KIND_CODES = {"surface": 0, "mixed_layer": 1, "most_unstable": 2}


@dataclass
class _Columns:
    """A batch of columns flattened to (ncol, nlev), C-contiguous float64, and the per-level fields."""

    lead: tuple
    p: np.ndarray
    t: np.ndarray
    td: np.ndarray
    r: np.ndarray
    valid: np.ndarray


def _columns(pressure, temperature, dewpoint, surface_pressure):
    t = np.asarray(temperature, dtype=np.float64)
    p = np.broadcast_to(np.asarray(pressure, dtype=np.float64), t.shape)
    td = np.broadcast_to(np.asarray(dewpoint, dtype=np.float64), t.shape)
    valid = _valid_mask(p, t, surface_pressure)
    lead, n = t.shape[:-1], t.shape[-1]
    # fresh C-contiguous copies: one compiled signature whatever the caller passes (views, read-only arrays)
    flat = lambda a: np.array(a, order="C").reshape(-1, n)  # noqa: E731
    p, t, td, valid = flat(p), flat(t), flat(td), flat(valid)
    return _Columns(lead=lead, p=p, t=t, td=td,
                    r=mixing_ratio_from_dewpoint(td, p), valid=valid)


def _starts(cols, kinds, ml_depth, mu_depth):
    """Starting (p0, t0, td0, idx) of each kind, arrays (nkind, ncol); see :func:`parcel_start`."""
    for kind in kinds:
        if kind not in _KIND_CODES:
            raise ValueError(f"unknown parcel {kind!r}; valid: {', '.join(PARCELS)}")
    codes = np.array([_KIND_CODES[k] for k in kinds], dtype=np.int64)
    if "most_unstable" in kinds:
        the = equivalent_potential_temperature(cols.t, cols.td, cols.p)
    else:
        the = np.empty((1, 1))
    shape = (len(kinds), cols.t.shape[0])
    p0, t0, x0 = np.empty(shape), np.empty(shape), np.empty(shape)
    idx = np.empty(shape, dtype=np.int64)
    column_loops(cols.t.shape[0]).parcel_starts(cols.p, cols.t, cols.td, cols.r, the, cols.valid, codes, P0,
                                                KAPPA, EPSILON, float(ml_depth), float(mu_depth), p0, t0, x0, idx)
    td0 = x0
    for m, kind in enumerate(kinds):
        if kind == "mixed_layer":  # x0 holds the vapour pressure of the mean mixing ratio
            td0[m] = np.minimum(dewpoint_from_vapour_pressure(x0[m]), t0[m])
    return p0, t0, td0, idx


def parcel_start(pressure, temperature, dewpoint, parcel="surface", surface_pressure=None,
                 ml_depth=10000.0, mu_depth=30000.0):
    """Starting pressure, temperature and dew point (Pa, K, K) of a parcel, per column.

    Parameters as in :func:`lift_parcel`.  Returns ``(p0, t0, td0, index)`` where
    ``index`` is the level the parcel starts from (shape ``(...)``).  The mixed-layer
    means are trapezoid integrals in pressure, with the top of the layer interpolated
    linearly in ln p.
    """
    cols = _columns(pressure, temperature, dewpoint, surface_pressure)
    return tuple(a[0].reshape(cols.lead) for a in _starts(cols, (parcel,), ml_depth, mu_depth))


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

    Notes
    -----
    The column loops run as Python for fewer than ``COMPILED_FROM_COLUMNS`` columns, else
    compiled with numba (:mod:`parcelcast.thermo._parcel_kernel`, compiled or loaded from
    the cache on the first such call); the same source, the same answers to round-off.

    References
    ----------
    Doswell, C. A. III and E. N. Rasmussen, 1994: The effect of neglecting the
    virtual temperature correction on CAPE calculations. Wea. Forecasting, 9, 625-629.
    Romps, D. M., 2017: J. Atmos. Sci., 74, 3891-3900 (LCL).
    Galway, J. G., 1956: The lifted index as a predictor of latent instability.
    Bull. Amer. Meteor. Soc., 37, 528-529.
    """
    return lift_parcels(pressure, temperature, dewpoint, (parcel,), surface_pressure, ml_depth, mu_depth,
                        method, max_step)[parcel]


def lift_parcels(pressure, temperature, dewpoint, parcels=PARCELS, surface_pressure=None,
                 ml_depth=10000.0, mu_depth=30000.0, method="table", max_step=0.02):
    """Lift several parcel kinds of the same columns in one pass.

    Same parameters as :func:`lift_parcel`, with ``parcels`` a sequence of kinds.
    Returns ``{kind: ParcelResult}``.  Faster than one call per kind because the
    kinds share the per-level fields and one pass of the compiled loops.
    """
    if method not in ("table", "rk4"):
        raise ValueError(f"unknown method {method!r}; valid: table, rk4")
    parcels = tuple(parcels)
    cols = _columns(pressure, temperature, dewpoint, surface_pressure)
    p0, t0, td0, idx = _starts(cols, parcels, ml_depth, mu_depth)
    res = _lift(cols, p0, t0, td0, idx, method, max_step)
    lead, nlev = cols.lead, cols.t.shape[1]
    res = {name: a.reshape((len(parcels),) + lead + ((nlev,) if a.ndim == 3 else ())) for name, a in res.items()}
    return {kind: ParcelResult(**{name: a[i, ...] for name, a in res.items()}) for i, kind in enumerate(parcels)}


def _lift(cols, p0, t0, td0, idx, method, max_step):
    """Lift parcels (nkind, ncol) through the columns; the fields of ParcelResult as (nkind, ncol[, nlev])."""
    td0 = np.minimum(td0, t0)
    # dry ascent to the exact LCL, then the pseudo-adiabat
    p_lcl, t_lcl, _ = lcl_romps(p0, t0, dewpoint=td0)
    r0 = mixing_ratio_from_dewpoint(td0, p0)
    q0 = r0 / (1 + r0)
    rm = (1 - q0) * ROMPS_RAIR + q0 * ROMPS_RVAP
    cpm = (1 - q0) * (ROMPS_CVA + ROMPS_RAIR) + q0 * (ROMPS_CVV + ROMPS_RVAP)
    expo = rm / cpm
    shape = p0.shape
    full = shape + (cols.t.shape[1],)
    if method == "rk4":
        t_moist = pseudoadiabat(t_lcl, p_lcl, np.minimum(cols.p, p_lcl[..., None]), max_step=max_step)
    else:
        t_moist = np.empty((1, 1, 1))
    out = {name: np.empty(shape) for name in ("cape", "cin", "lfc_pressure", "el_pressure", "lifted_index")}
    tp, b = np.empty(full), np.empty(full)
    a, bb, c = _MAGNUS[("wmo", "water")]
    loops = column_loops(cols.t.shape[0])
    loops.lift_columns(cols.p, cols.t, cols.r, cols.valid, p0, t0, idx, p_lcl, t_lcl, r0, expo,
                       method == "table", _table(), _TABLE_LNP[0], _TABLE_DLNP, t_moist, a, bb, c, T_ZERO_C,
                       EPSILON, RD, 50000.0, out["cape"], out["cin"], out["lfc_pressure"],
                       out["el_pressure"], out["lifted_index"], tp, b)
    out.update(lcl_pressure=p_lcl, lcl_temperature=t_lcl, start_pressure=p0, start_temperature=t0,
               start_dewpoint=td0, parcel_temperature=tp, buoyancy=b)
    return out
