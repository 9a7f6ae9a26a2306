"""The column loops of the parcel code, in plain Python (no numba here).

Used by :mod:`parcelcast.thermo.parcel` and :func:`parcelcast.thermo.moist.pseudoadiabat_lookup`:
the per-level thermodynamic fields that have their own public functions (mixing ratio,
theta_E, LCL) are computed by those numpy functions beforehand; these loops do the rest --
parcel starting points and layer means, the table lookup of the pseudo-adiabat, buoyancy,
LFC/EL, CAPE/CIN and the lifted index.

Written once, run two ways: as they are for a few columns (a one-point question: no
compiler to load), and compiled by :mod:`parcelcast.thermo._parcel_kernel` (numba) for
many.  So they keep to what numba compiles: scalar loops over arrays, ``math`` and scalar
``numpy`` functions, no Python objects.  ``np.log`` and ``np.exp`` rather than ``math``'s:
numba compiles both alike, and run as Python they keep IEEE results (log 0 = -inf, x/0 =
inf or NaN, as numba's ``error_model="numpy"``) where ``math`` would raise; the caller runs
the Python version under ``np.errstate(all="ignore")``.

All arrays are float64 (bool for masks, int64 for level indices), C-contiguous,
columns on the first axis and levels on the last.
"""

from __future__ import annotations

import math

import numpy as np

#: functions the compiled version inlines into their callers
INLINE = ("_upper_index", "_interp_lnp", "_bracket", "_at")

SURFACE, MIXED_LAYER, MOST_UNSTABLE = 0, 1, 2


def _upper_index(p, target):
    """The index j in 1..n-1 of the level pair ``p[j - 1] >= target >= p[j]`` around
    ``target`` when it lies inside the column (p decreasing, at least two levels)."""
    n = p.shape[0]
    j = 0
    for k in range(n):
        if p[k] >= target:
            j += 1
    return min(max(j, 1), n - 1)


def _interp_lnp(p, v, target):
    """Linear-in-ln p value of v at target (p decreasing); NaN outside or next to NaN."""
    if p.shape[0] < 2:
        return np.nan
    j = _upper_index(p, target)
    p0 = p[j - 1]
    p1 = p[j]
    if not (target <= p0 and target >= p1):
        return np.nan
    w = np.log(p0 / target) / np.log(p0 / p1)
    return v[j - 1] + w * (v[j] - v[j - 1])


def interpolate_columns(p, v, target, out):
    """out[c] = :func:`_interp_lnp` of column c (p may have one row for all columns)."""
    same = p.shape[0] == 1
    for c in range(v.shape[0]):
        out[c] = _interp_lnp(p[0] if same else p[c], v[c], target[c])


def _layer_mean(p, f, ok, p_bottom, depth):
    """Pressure-weighted mean of f over [p_bottom - depth, p_bottom] (trapezoid), one column.

    Levels where ``ok`` is False are skipped (f counts as NaN there).
    """
    n = p.shape[0]
    top = p_bottom - depth
    # f at the top of the layer, linear in ln p (NaN if a neighbour is not ok)
    f_top = np.nan
    if n >= 2:
        j = _upper_index(p, top)
        pa = p[j - 1]
        pb = p[j]
        if top <= pa and top >= pb:
            fa = f[j - 1] if ok[j - 1] else np.nan
            fb = f[j] if ok[j] else np.nan
            w = np.log(pa / top) / np.log(pa / pb)
            f_top = fa + w * (fb - fa)
    area = 0.0
    last = -1
    prev_in = False
    for k in range(n):
        inside = ok[k] and p[k] <= p_bottom and p[k] >= top
        if inside:
            if prev_in:
                area += 0.5 * (f[k - 1] + f[k]) * (p[k - 1] - p[k])
            last = k
        prev_in = inside
    lastc = max(last, 0)
    p_last = p[lastc]
    f_last = f[lastc] if ok[lastc] else np.nan
    finite_top = math.isfinite(f_top)
    extra = 0.5 * (f_last + f_top) * (p_last - top) if (finite_top and p_last > top) else 0.0
    span = depth if finite_top else p_bottom - p_last
    return (area + extra) / span


def parcel_starts(p, t, td, r, the, valid, kinds, p0_ref, kappa, eps, ml_depth, mu_depth,
                  p0, t0, x0, idx):
    """Starting point of each parcel kind in each column.

    p, t, td, r (mixing ratio, NaN where unknown), valid : (ncol, nlev); ``the`` (theta_E)
    likewise when a most-unstable parcel is asked for.  kinds : (nkind,) codes
    SURFACE, MIXED_LAYER, MOST_UNSTABLE.  Outputs (nkind, ncol): p0, t0 (Pa, K), x0 =
    dew point (K) of the starting level, or for the mixed layer the vapour pressure
    (Pa) of the mean mixing ratio (turned into a dew point by the caller), idx = the
    starting level.  NaN p0/t0/x0 where a column has no valid level.
    """
    ncol, nlev = t.shape
    ok_r = np.empty(nlev, dtype=np.bool_)
    theta = np.empty(nlev)
    for c in range(ncol):
        first = -1
        for k in range(nlev):
            if valid[c, k]:
                first = k
                break
        for m in range(kinds.shape[0]):
            if first < 0:
                p0[m, c] = np.nan
                t0[m, c] = np.nan
                x0[m, c] = np.nan
                idx[m, c] = 0
                continue
            p_s = p[c, first]
            kind = kinds[m]
            if kind == MIXED_LAYER:
                for k in range(nlev):
                    theta[k] = t[c, k] * (p0_ref / p[c, k]) ** kappa
                    ok_r[k] = valid[c, k] and math.isfinite(r[c, k])
                th_m = _layer_mean(p[c], theta, valid[c], p_s, ml_depth)
                r_m = _layer_mean(p[c], r[c], ok_r, p_s, ml_depth)
                p0[m, c] = p_s
                t0[m, c] = th_m * (p_s / p0_ref) ** kappa
                x0[m, c] = p_s * r_m / (eps + r_m)
                idx[m, c] = first
            else:
                i = first
                if kind == MOST_UNSTABLE:
                    best = -np.inf
                    i = 0
                    floor = p_s - mu_depth
                    for k in range(nlev):
                        v = the[c, k]
                        if valid[c, k] and math.isfinite(v) and p[c, k] >= floor and v > best:
                            best = v
                            i = k
                p0[m, c] = p[c, i]
                t0[m, c] = t[c, i]
                x0[m, c] = td[c, i]
                idx[m, c] = i


def _bracket(lnp, lnp0, dlnp, nl):
    f = (lnp0 - lnp) / dlnp
    ok = f >= 0 and f <= nl - 1
    if not ok:
        f = 0.0
    i = min(max(math.floor(f), 0.0), nl - 2.0)
    return int(i), f - i, ok


def _at(table, j, i, w):
    return table[j, i] * (1 - w) + table[j, i + 1] * w


def _pseudoadiabat_lookup_column(table, lnp0, dlnp, t_start, p_start, p, clamp, out):
    """Table pseudo-adiabat through (t_start, p_start) at pressures min(p, clamp) -> out."""
    nt, nl = table.shape
    finite = math.isfinite(t_start)
    ts = t_start if finite else 250.0
    i0, w0, ok0 = _bracket(np.log(p_start), lnp0, dlnp, nl)
    # bisection for the curve through (t_start, p_start): temperature grows with the index
    lo = 0
    hi = nt - 1
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if _at(table, mid, i0, w0) > ts:
            hi = mid
        else:
            lo = mid
    t_lo = _at(table, lo, i0, w0)
    t_hi = _at(table, hi, i0, w0)
    a = (ts - t_lo) / (t_hi - t_lo)
    inside = ok0 and a >= -1e-9 and a <= 1 + 1e-9 and finite
    for k in range(p.shape[0]):
        pk = p[k]
        if clamp < pk or math.isnan(clamp):  # numpy.minimum: NaN wins
            pk = clamp
        i, w, ok = _bracket(np.log(pk), lnp0, dlnp, nl)
        if ok and inside:
            out[k] = (1 - a) * _at(table, lo, i, w) + a * _at(table, lo + 1, i, w)
        else:
            out[k] = np.nan


def pseudoadiabat_lookup_columns(table, lnp0, dlnp, t_start, p_start, p, out):
    """Table lookup for each column c: t_start, p_start (ncol,), p (ncol or 1, nlev) -> out (ncol, nlev)."""
    same = p.shape[0] == 1
    for c in range(out.shape[0]):
        _pseudoadiabat_lookup_column(table, lnp0, dlnp, t_start[c], p_start[c], p[0] if same else p[c],
                                     np.inf, out[c])


def lift_columns(p, t, r_env, valid, p0, t0, idx, p_lcl, t_lcl, r0, expo, use_table, table, lnp0, dlnp,
                 t_moist, magnus_a, magnus_b, magnus_c, t_zero, eps, rd, p_li,
                 cape, cin, lfc_p, el_p, li, tp_out, b_out):
    """Lift parcels (nkind, ncol) through columns (ncol, nlev); outputs as in ``ParcelResult``.

    Below its LCL a parcel follows T0 (p/p0)^expo with mixing ratio r0; above, the
    pseudo-adiabat, from the table (``use_table``) or given in ``t_moist`` (nkind, ncol,
    nlev, already evaluated at min(p, p_lcl)).  Buoyancy is Tv_parcel - Tv_env (NaN
    below the origin and at invalid levels); segments linear in ln p with exact
    zero crossings.  ``tp_out`` gets the parcel temperature (NaN below the origin).
    """
    nkind, ncol = p0.shape
    nlev = t.shape[1]
    tp = np.empty(nlev)
    x = np.empty(nlev)
    pos = np.empty(max(nlev - 1, 0))
    neg = np.empty(max(nlev - 1, 0))
    frac = np.empty(max(nlev - 1, 0))
    ok = np.empty(max(nlev - 1, 0), dtype=np.bool_)
    t_env = np.empty(nlev)
    for c in range(ncol):
        pc = p[c]
        for k in range(nlev):
            x[k] = np.log(pc[k])
            t_env[k] = t[c, k] if valid[c, k] else np.nan
        for m in range(nkind):
            pl = p_lcl[m, c]
            if use_table:
                _pseudoadiabat_lookup_column(table, lnp0, dlnp, t_lcl[m, c], pl, pc, pl, tp)
            else:
                for k in range(nlev):
                    tp[k] = t_moist[m, c, k]
            b = b_out[m, c]
            for k in range(nlev):
                pk = pc[k]
                if pk >= pl:  # below the LCL: dry ascent
                    tp[k] = t0[m, c] * (pk / p0[m, c]) ** expo[m, c]
                    rp = r0[m, c]
                else:
                    tc = tp[k] - t_zero
                    es = magnus_a * np.exp(magnus_b * tc / (magnus_c + tc))
                    rp = eps * es / (pk - es)
                tv_p = tp[k] * (1 + rp / eps) / (1 + rp)
                re = r_env[c, k]
                if not math.isfinite(re):
                    re = 0.0
                tv_e = t[c, k] * (1 + re / eps) / (1 + re)
                b[k] = tv_p - tv_e if (valid[c, k] and k >= idx[m, c]) else np.nan

            # segment integrals in x = ln p (x decreases upward)
            lfc_seg = -1
            last_ok = -1
            for s in range(nlev - 1):
                b0 = b[s]
                b1 = b[s + 1]
                dx = x[s] - x[s + 1]
                ok[s] = math.isfinite(b0) and math.isfinite(b1)
                cross = (b0 > 0) != (b1 > 0)
                if cross:
                    absum = abs(b0) + abs(b1)
                    hi = b0 if b0 >= b1 else b1
                    lo = b0 if b0 <= b1 else b1
                    if math.isnan(b0) or math.isnan(b1):
                        hi = np.nan
                        lo = np.nan
                    ps_ = hi ** 2 / (2 * absum) * dx
                    ng = -(lo ** 2) / (2 * absum) * dx
                    frac[s] = b0 / (b0 - b1)
                else:
                    ps_ = 0.5 * (b0 + b1) * dx
                    ng = ps_
                    frac[s] = 0.0
                if b0 <= 0 and b1 <= 0:
                    ps_ = 0.0
                if b0 > 0 and b1 > 0:
                    ng = 0.0
                pos[s] = ps_ if ok[s] else 0.0
                neg[s] = ng if ok[s] else 0.0
                if ok[s]:
                    last_ok = s
                    if lfc_seg < 0 and b1 > 0 and pc[s + 1] < pl and (b0 <= 0 or pc[s] >= pl):
                        lfc_seg = s
            if lfc_seg >= 0:
                ls = lfc_seg
                lf = np.exp(x[ls] - frac[ls] * (x[ls] - x[ls + 1]))
                lfc_p[m, c] = lf if lf <= pl else pl
                el_seg = -1
                for s in range(nlev - 2, ls - 1, -1):
                    if ok[s] and b[s] > 0 and b[s + 1] <= 0:
                        el_seg = s
                        break
                if el_seg >= 0:
                    el_p[m, c] = np.exp(x[el_seg] - frac[el_seg] * (x[el_seg] - x[el_seg + 1]))
                else:
                    el_seg = last_ok
                    el_p[m, c] = np.exp(x[el_seg + 1])
                area = 0.0
                for s in range(ls, el_seg + 1):
                    area += pos[s]
                below = 0.0
                for s in range(0, ls + 1):
                    below += neg[s]
                cape[m, c] = rd * area
                cin[m, c] = rd * below
            else:
                lfc_p[m, c] = np.nan
                el_p[m, c] = np.nan
                cape[m, c] = 0.0
                cin[m, c] = 0.0
            if not math.isfinite(p0[m, c]):
                cape[m, c] = np.nan
                cin[m, c] = np.nan
            li[m, c] = _interp_lnp(pc, t_env, p_li) - _interp_lnp(pc, tp, p_li)
            top = p0[m, c] * (1 + 1e-12)
            for k in range(nlev):
                tp_out[m, c, k] = tp[k] if pc[k] <= top else np.nan
