"""Compiled wind evaluation for the trajectory kernel (numba; imported on first use).

One loop over parcels does what :func:`~parcelcast.trajectories.interpolate.locate`,
:func:`~parcelcast.trajectories.interpolate.sample_wind`,
:func:`~parcelcast.trajectories.interpolate.sample_scalar`,
:func:`~parcelcast.trajectories.interpolate.blend` and
:func:`~parcelcast.trajectories.interpolate.tangent` do with whole-array numpy operations,
with the same formulas in the same order (results agree to round-off; the numpy functions
stay the reference and serve the rarely called paths).  The numpy version spends most of
its time in 48 separate ``take`` gathers per wind evaluation and in temporaries; here each
parcel reads its 2 x 2 x 2 corners per field and time once, straight from the arrays, and
a time slice whose weight is 0 is not read at all.

Parcels are independent: the kernel works on a range ``lo:hi`` of them and releases the
GIL, so ``interpolate.wind_tendency`` can share the parcels among threads.  Each parcel's
arithmetic is the same whatever range or thread it falls in, so the results are identical
bit for bit with any number of threads (tested).  Import this module lazily (numba is slow
to import); see ``interpolate.wind_tendency``.
"""

from __future__ import annotations

import math

import numba
import numpy as np


@numba.njit(cache=True, nogil=True, inline="always")
def _cell(coord, spacing, v, hi):
    """Index of the interval of ascending ``coord`` holding ``v``, clipped to [0, hi].

    Same rule as ``interpolate._index``: arithmetic on a uniform coordinate
    (``spacing > 0``) with a guard against rounding at interval edges, else a binary
    search (``searchsorted(side="right") - 1``).
    """
    if spacing > 0.0:
        f = math.floor((v - coord[0]) / spacing)
        if not f >= 0.0:  # also NaN
            idx = 0
        elif f > hi:
            idx = hi
        else:
            idx = int(f)
        if idx > 0 and coord[idx] > v:
            idx -= 1
        if idx < hi and coord[min(idx + 1, coord.size - 1)] <= v:
            idx += 1
        return idx
    lo = 0
    up = coord.size
    while lo < up:
        mid = (lo + up) // 2
        if coord[mid] <= v:
            lo = mid + 1
        else:
            up = mid
    idx = lo - 1
    if idx < 0:
        idx = 0
    elif idx > hi:
        idx = hi
    return idx


@numba.njit(cache=True, nogil=True, inline="always")
def _unit_clip(w):
    """Clip to [0, 1], keeping NaN (as ``np.clip``)."""
    if w < 0.0:
        return 0.0
    if w > 1.0:
        return 1.0
    return w


@numba.njit(cache=True, nogil=True)
def _locate(lo, hi, lat_, lon_, q_p, p, use_p, glat, lat_sp, lon_first, lon_coord, lon_sp, lon_ext,
            periodic, qlev, levels, jj, ii0, ii1, kk, wy_, wx_, wk_, outside, below, above):
    """Cell, weights and flags of parcels ``lo`` to ``hi - 1`` (as ``interpolate.locate``).

    ``lat_``, ``lon_`` in degrees and ``q_p = -ln(p)`` come from numpy (its vectorised
    ``arctan2`` and ``log`` are many times faster than scalar libm calls).
    """
    nl = qlev.size
    ny = glat.size
    nx = lon_coord.size
    vertical = use_p and nl > 1
    ihi = nx - 1 if periodic else nx - 2
    for q_ in range(lo, hi):
        lat = lat_[q_]
        lon = lon_[q_]
        j = _cell(glat, lat_sp, lat, ny - 2)
        wy = (lat - glat[j]) / (glat[j + 1] - glat[j])
        rel = lon - lon_first
        if rel < 0.0 or rel >= 360.0:  # as np.mod(lon - lon_first, 360)
            rel = rel % 360.0
        i0 = _cell(lon_coord, lon_sp, rel, ihi)
        wx = (rel - lon_ext[i0]) / (lon_ext[i0 + 1] - lon_ext[i0])
        i1 = i0 + 1
        if periodic:
            if i1 == nx:
                i1 = 0
            outside[q_] = False
        else:
            outside[q_] = rel > lon_ext[nx - 1] or lat < glat[0] or lat > glat[ny - 1]
        jj[q_] = j
        ii0[q_] = i0
        ii1[q_] = i1
        wy_[q_] = _unit_clip(wy)
        wx_[q_] = _unit_clip(wx)
        # vertical: linear in ln p
        k0 = 0
        wk = 0.0
        if vertical:
            pq = p[q_]
            qq = q_p[q_]
            for lev in range(1, nl - 1):
                if qq >= qlev[lev]:
                    k0 += 1
            wk = _unit_clip((qq - qlev[k0]) / (qlev[k0 + 1] - qlev[k0]))
            below[q_] = pq > levels[0]
            above[q_] = pq < levels[nl - 1]
        else:
            below[q_] = False
            above[q_] = False
        kk[q_] = k0
        wk_[q_] = wk


@numba.njit(cache=True, nogil=True)
def _sample(lo, hi, u, v, om, slot, member, jj, ii0, ii1, kk, wy_, wx_, wk_,
            sinlat, coslat, sinlon, coslon, ckey, cval, out):
    """Weighted Cartesian wind and omega of one time slice at located parcels ``lo:hi``.

    As ``interpolate.sample_wind`` / ``sample_scalar``: each corner's value is first
    interpolated between levels k0 and k0 + 1, its east/north wind turned into a vector
    with that corner's trigonometry (``sphere.wind_to_cartesian``), then the four corners
    are weighted.  ``out[:, :3]`` wind, ``out[:, 3]`` omega (0 when ``om`` is empty).

    Corner cache: ``cval[slot, q]`` holds the 4 corners x 2 levels x (u, v, omega) of the
    cell ``ckey[slot, q]`` (flat index of the first corner) that parcel ``q`` was last
    sampled in; the field is read only when the parcel has moved to another cell.
    Successive stages of a step mostly stay in one cell, and the gathers from the large
    fields are what costs.
    """
    nl = u.shape[1]
    ny = u.shape[2]
    nx = u.shape[3]
    has_omega = om.size > 0
    for q_ in range(lo, hi):
        m = member[q_]
        k0 = kk[q_]
        j0 = jj[q_]
        i0 = ii0[q_]
        key = ((m * nl + k0) * ny + j0) * nx + i0
        if ckey[slot, q_] != key:
            k1 = k0 + 1 if nl > 1 else k0
            i1 = ii1[q_]
            for c in range(4):
                j = j0 + (c >> 1)
                i = i1 if c & 1 else i0
                cval[slot, q_, c, 0, 0] = u[m, k0, j, i]
                cval[slot, q_, c, 0, 1] = v[m, k0, j, i]
                cval[slot, q_, c, 1, 0] = u[m, k1, j, i]
                cval[slot, q_, c, 1, 1] = v[m, k1, j, i]
                if has_omega:
                    cval[slot, q_, c, 0, 2] = om[m, k0, j, i]
                    cval[slot, q_, c, 1, 2] = om[m, k1, j, i]
            ckey[slot, q_] = key
        wk = wk_[q_]
        wy = wy_[q_]
        wx = wx_[q_]
        wy1 = 1.0 - wy
        wx1 = 1.0 - wx
        vx = vy = vz = 0.0
        o = 0.0
        for c in range(4):
            j = j0 + (c >> 1)
            i = ii1[q_] if c & 1 else i0
            w = (wy if c >> 1 else wy1) * (wx if c & 1 else wx1)
            a = cval[slot, q_, c, 0, 0]
            b = cval[slot, q_, c, 0, 1]
            if nl > 1:
                a = a + wk * (cval[slot, q_, c, 1, 0] - a)
                b = b + wk * (cval[slot, q_, c, 1, 1] - b)
            sl = sinlat[j]
            cl = coslat[j]
            so = sinlon[i]
            co = coslon[i]
            vx = vx + w * (-a * so - b * sl * co)
            vy = vy + w * (a * co - b * sl * so)
            vz = vz + w * (b * cl)
            if has_omega:
                e = cval[slot, q_, c, 0, 2]
                if nl > 1:
                    e = e + wk * (cval[slot, q_, c, 1, 2] - e)
                o = o + w * e
        out[q_, 0] = vx
        out[q_, 1] = vy
        out[q_, 2] = vz
        out[q_, 3] = o


@numba.njit(cache=True, nogil=True)
def _combine(lo, hi, x, sa, sb, wt, radius, vel, dz):
    """Blend the two slices in time (``interpolate.blend``), then project the wind on the
    tangent plane (``interpolate.tangent``), for parcels ``lo:hi``."""
    for q_ in range(lo, hi):
        if wt <= 0.0:
            tx, ty, tz, to = sa[q_, 0], sa[q_, 1], sa[q_, 2], sa[q_, 3]
        elif wt >= 1.0:
            tx, ty, tz, to = sb[q_, 0], sb[q_, 1], sb[q_, 2], sb[q_, 3]
        else:
            tx = sa[q_, 0] + wt * (sb[q_, 0] - sa[q_, 0])
            ty = sa[q_, 1] + wt * (sb[q_, 1] - sa[q_, 1])
            tz = sa[q_, 2] + wt * (sb[q_, 2] - sa[q_, 2])
            to = sa[q_, 3] + wt * (sb[q_, 3] - sa[q_, 3])
        x0 = x[q_, 0]
        x1 = x[q_, 1]
        x2 = x[q_, 2]
        radial = x0 * tx + x1 * ty + x2 * tz
        vel[q_, 0] = (tx - radial * x0) / radius
        vel[q_, 1] = (ty - radial * x1) / radius
        vel[q_, 2] = (tz - radial * x2) / radius
        dz[q_] = to


@numba.njit(cache=True, nogil=True)
def wind_tendency(lo, hi, x, lat, lon, q, p, member, use_p, glat, lat_sp, lon_first, lon_coord, lon_sp,
                  lon_ext, periodic, qlev, levels, sinlat, coslat, sinlon, coslon,
                  ua, va, oa, ub, vb, ob, wt, radius, ckey, cval,
                  vel, dz, outside, below, above):
    """Wind tendency of parcels ``lo:hi`` at unit positions ``x`` (n, 3) and pressure ``p`` (n,).

    ``lat``, ``lon`` (degrees, ``sphere.to_lat_lon(x)``) and ``q = -ln(p)`` are given.

    Fills ``vel`` (n, 3): time-blended Cartesian wind projected on the tangent plane,
    divided by ``radius`` (s-1); ``dz`` (n,): time-blended omega (Pa s-1; 0 when ``oa``
    is empty); and the flags ``outside`` (regional grid left), ``below`` / ``above``
    (pressure beyond the first / last level).  Only rows ``lo:hi`` are read and written.

    Geometry (see ``interpolate._kernel_geometry``): ``glat`` latitudes with pole rows,
    ``lon_first`` the first longitude, ``lon_coord`` the longitudes relative to it that
    are searched (``lon_ext`` the same with 360 appended on a periodic grid), ``lat_sp`` /
    ``lon_sp`` uniform spacings (0: not uniform), ``qlev = -ln(levels)``, and the sines and
    cosines of the grid latitudes and longitudes.  Fields are float64 ``(nm, nl, ny, nx)``;
    ``wt`` is the weight of the ``b`` slice (a slice of weight 0 is not read).
    ``use_p`` False: no vertical interpolation, as ``locate(..., pressure=None)``.
    ``ckey`` (2, n) int64 and ``cval`` (2, n, 4, 2, 3) are the corner cache of the
    slices ``a`` (slot 0) and ``b`` (slot 1); see ``_sample``.

    Three passes (locate, gather per slice, combine): short loop bodies keep several
    independent memory reads in flight.
    """
    n = x.shape[0]
    jj = np.empty(n, dtype=np.intp)
    ii0 = np.empty(n, dtype=np.intp)
    ii1 = np.empty(n, dtype=np.intp)
    kk = np.empty(n, dtype=np.intp)
    wy = np.empty(n)
    wx = np.empty(n)
    wk = np.empty(n)
    sa = np.empty((n, 4))  # a slice is read below only where it was sampled (its weight > 0)
    sb = np.empty((n, 4))
    _locate(lo, hi, lat, lon, q, p, use_p, glat, lat_sp, lon_first, lon_coord, lon_sp, lon_ext,
            periodic, qlev, levels, jj, ii0, ii1, kk, wy, wx, wk, outside, below, above)
    if wt < 1.0:
        _sample(lo, hi, ua, va, oa, 0, member, jj, ii0, ii1, kk, wy, wx, wk,
                sinlat, coslat, sinlon, coslon, ckey, cval, sa)
    if wt > 0.0:
        _sample(lo, hi, ub, vb, ob, 1, member, jj, ii0, ii1, kk, wy, wx, wk,
                sinlat, coslat, sinlon, coslon, ckey, cval, sb)
    _combine(lo, hi, x, sa, sb, wt, radius, vel, dz)


def warm_up() -> None:
    """Compile (or load from the cache) once, e.g. before timing."""
    x = np.array([[1.0, 0.0, 0.0]])
    g = np.array([-90.0, 0.0, 90.0])
    lon = np.array([0.0, 120.0, 240.0])
    f = np.zeros((1, 2, 3, 3))
    lev = np.array([1e5, 5e4])
    flag = np.empty(1, dtype=np.bool_)
    wind_tendency(0, 1, x, np.zeros(1), np.zeros(1), -np.log(np.array([7e4])), np.array([7e4]),
                  np.zeros(1, dtype=np.intp), True, g, 90.0, 0.0, lon,
                  120.0, np.append(lon, 360.0), True, -np.log(lev), lev, g, g, lon, lon,
                  f, f, f, f, f, f, 0.5, 1.0, np.full((2, 1), -1, dtype=np.int64),
                  np.empty((2, 1, 4, 2, 3)), np.empty((1, 3)), np.empty(1), flag, flag.copy(),
                  flag.copy())
