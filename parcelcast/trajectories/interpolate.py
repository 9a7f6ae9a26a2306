"""Interpolation on a canonical latitude-longitude-pressure grid, vectorised over parcels.

What belongs here: the grid geometry the trajectory kernel needs (:class:`GridGeometry`),
preparation of one analysis time for interpolation (pole rows), locating parcels in the
grid (:func:`locate`), and sampling fields at the located points.

Scheme (one time slice):

* bilinear in longitude and latitude (degrees) between the four surrounding grid points;
  on a global grid longitude wraps (periodic) and the rows at +-90 degrees are part of the
  grid, so a parcel between the last latitude row and a pole is interpolated like any other;
* linear in log-pressure between the two surrounding levels (constant beyond the first and
  last level; the caller decides what a parcel beyond them means);
* winds are turned into 3-D Cartesian vectors at each grid corner *before* the horizontal
  weighting, which equals bilinear interpolation of Cartesian wind fields and stays smooth
  across the poles, where east/north components are discontinuous.

Time interpolation (linear between two slices) is applied by the caller with
:func:`blend`.  Arrays are float64 with dimensions ``(member, level, lat, lon)``
(a 2-D field has a level axis of length 1).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from parcelcast.constants import EARTH_RADIUS
from parcelcast.trajectories.errors import TrajectoryGridError
from parcelcast.trajectories.sphere import cartesian_to_wind, to_lat_lon, wind_to_cartesian

#: status codes shared by the kernel (order = precedence is not implied); the last is set
#: by the caller for a start that lies below the ground (it is not integrated)
OK, LEFT_DOMAIN, LEFT_TIME_RANGE, HIT_GROUND, MISSING_DATA, BELOW_GROUND_START = 0, 1, 2, 3, 4, 5
STATUS_NAMES = ("ok", "left_domain", "left_time_range", "hit_ground", "missing_data",
                "below_ground_start")


@dataclass(frozen=True)
class GridGeometry:
    """Geometry of a latitude-longitude(-pressure) analysis grid, as the kernel uses it.

    Build it with :meth:`from_coords`.  On a global grid (``periodic_lon``) rows at the
    poles are always present after :meth:`prepare` (added when the input lacks them).

    Attributes
    ----------
    lat : ndarray, shape (ny,)
        Latitudes in degrees north, ascending, *including* pole rows that
        :meth:`prepare` adds (``pad_south``/``pad_north``).
    lon : ndarray, shape (nx,)
        Longitudes in degrees east, ascending.
    levels : ndarray, shape (nl,), or None
        Pressure levels in Pa, descending (surface first); None for a single-level input.
    periodic_lon : bool
        True when longitude wraps (global grid).
    radius : float
        The Earth's radius (m) of the analysis: winds become angular velocities with it.
    """

    lat: np.ndarray
    lon: np.ndarray
    levels: np.ndarray | None
    periodic_lon: bool
    pad_south: bool = False
    pad_north: bool = False
    radius: float = EARTH_RADIUS  # the Earth's radius (m) of the analysis (parcelcast.grid.earth)
    _cache: dict = field(default_factory=dict, compare=False, repr=False)

    @classmethod
    def from_coords(cls, lat, lon, levels=None, periodic_lon: bool | None = None,
                    radius: float = EARTH_RADIUS) -> GridGeometry:
        """Check canonical coordinates and derive the geometry.

        Parameters
        ----------
        lat : array_like, shape (ny,)
            Degrees north, strictly ascending.
        lon : array_like, shape (nx,)
            Degrees east, strictly ascending, spanning less than 360 degrees.
        levels : array_like, shape (nl,), optional
            Pressure in Pa, strictly descending.
        periodic_lon : bool, optional
            Whether longitude wraps.  When None it is declared periodic if the spacing is
            uniform and ``nx * spacing`` equals 360 degrees (within 1e-6 degree).
        radius : float
            The Earth's radius (m) the analysis declares (:mod:`parcelcast.grid.earth`).
        """
        lat = np.asarray(lat, dtype=np.float64)
        lon = np.asarray(lon, dtype=np.float64)
        if lat.ndim != 1 or lat.size < 2 or np.any(np.diff(lat) <= 0):
            raise TrajectoryGridError("latitude must be 1-D and strictly ascending (canonical form)")
        if lon.ndim != 1 or lon.size < 2 or np.any(np.diff(lon) <= 0):
            raise TrajectoryGridError("longitude must be 1-D and strictly ascending (canonical form)")
        if lat[0] < -90 - 1e-9 or lat[-1] > 90 + 1e-9:
            raise TrajectoryGridError(f"latitudes outside -90..90: {lat[0]}..{lat[-1]}")
        dlon = np.diff(lon)
        uniform = np.allclose(dlon, dlon[0], rtol=0, atol=1e-6)
        looks_global = uniform and abs(dlon[0] * lon.size - 360.0) < 1e-6
        if periodic_lon is None:
            periodic_lon = bool(looks_global)
        if periodic_lon and not looks_global:
            raise TrajectoryGridError(
                "periodic longitude declared but the longitudes do not cover 360 degrees uniformly"
            )
        if lon[-1] - lon[0] >= 360.0:
            raise TrajectoryGridError("longitudes span 360 degrees or more (duplicated column?)")
        if levels is not None:
            levels = np.asarray(levels, dtype=np.float64)
            if levels.ndim != 1 or np.any(np.diff(levels) >= 0) or np.any(levels <= 0):
                raise TrajectoryGridError("levels must be positive pressures in Pa, strictly descending")
        pad_s = pad_n = False
        if periodic_lon:
            pad_s = lat[0] > -90 + 1e-9
            pad_n = lat[-1] < 90 - 1e-9
            lat = np.concatenate([[-90.0] if pad_s else [], lat, [90.0] if pad_n else []])
        return cls(lat, lon, levels, bool(periodic_lon), bool(pad_s), bool(pad_n), float(radius))

    @property
    def nlev(self) -> int:
        return 1 if self.levels is None else self.levels.size

    @property
    def grid_length(self) -> float:
        """Smallest grid spacing in metres, measured at the equator: ``a * min(dlat, dlon)``."""
        d = min(np.min(np.diff(self.lat)), np.min(np.diff(self.lon)))
        return float(self.radius * np.deg2rad(d))

    @property
    def min_dlogp(self) -> float:
        """Smallest spacing of the levels in ln(p) (inf for one level)."""
        if self.levels is None or self.levels.size < 2:
            return np.inf
        return float(np.min(-np.diff(np.log(self.levels))))

    def _trig(self):
        if "trig" not in self._cache:
            lat = np.deg2rad(self.lat)
            lon = np.deg2rad(self.lon)
            self._cache["trig"] = (np.sin(lat), np.cos(lat), np.sin(lon), np.cos(lon))
        return self._cache["trig"]

    # ------------------------------------------------------------------ preparation
    def prepare(self, scalars: dict, wind: tuple | None = None) -> dict:
        """Make one analysis time ready for interpolation.

        On a global grid, missing pole rows are added and existing pole rows are replaced
        by one value per level: the mean over longitude (for the wind, the mean of the
        Cartesian wind vectors, re-expressed as east/north components at each longitude of
        the pole row, so the pole carries a single well-defined vector).

        Parameters
        ----------
        scalars : dict of str -> ndarray, shape (nm, nl, ny_in, nx)
            Scalar fields on the input latitudes (without added pole rows).
        wind : tuple of two ndarrays, optional
            ``(u, v)`` with the same shape, m s-1, earth-relative.

        Returns
        -------
        dict
            The same names (and ``"u"``, ``"v"`` when ``wind`` is given), float64,
            C-contiguous, on :attr:`lat`.
        """
        out = {}
        for name, arr in scalars.items():
            out[name] = self._pad_scalar(np.asarray(arr, dtype=np.float64))
        if wind is not None:
            u, v = (np.asarray(a, dtype=np.float64) for a in wind)
            out["u"], out["v"] = self._pad_wind(u, v)
        return out

    def _pad_scalar(self, a):
        if not self.periodic_lon:
            return np.ascontiguousarray(a)
        if self.pad_south or self.pad_north:
            parts = []
            if self.pad_south:
                parts.append(np.repeat(np.nanmean(a[..., :1, :], -1, keepdims=True), a.shape[-1], -1))
            parts.append(a)
            if self.pad_north:
                parts.append(np.repeat(np.nanmean(a[..., -1:, :], -1, keepdims=True), a.shape[-1], -1))
            # row means of the nearest row stand for the pole (only when the input lacks it)
            a = np.concatenate(parts, axis=-2)
        else:
            rows = [np.mean(a[..., j, :], axis=-1, keepdims=True) for j in (0, -1)]
            if all(np.array_equal(np.broadcast_to(r, a[..., j, :].shape), a[..., j, :], equal_nan=True)
                   for r, j in zip(rows, (0, -1))):
                return np.ascontiguousarray(a)  # pole rows already uniform: no copy
            a = np.array(a, dtype=np.float64, copy=True)
        for j in (0, -1):
            a[..., j, :] = np.mean(a[..., j, :], axis=-1, keepdims=True)
        return np.ascontiguousarray(a)

    def _pad_wind(self, u, v):
        if not self.periodic_lon:
            return np.ascontiguousarray(u), np.ascontiguousarray(v)
        sinlat, coslat, sinlon, coslon = self._trig()

        def pole_row(uj, vj, sl):
            # uj, vj: (..., nx) on one row; mean Cartesian vector re-expressed at lat = +-90
            sla = np.sin(np.deg2rad(sl))
            cla = np.cos(np.deg2rad(sl))
            vx, vy, vz = wind_to_cartesian(uj, vj, sla, cla, sinlon, coslon)
            mx, my, mz = (np.mean(c, axis=-1, keepdims=True) for c in (vx, vy, vz))
            pole = 90.0 if sl > 0 else -90.0
            sp, cp = np.sin(np.deg2rad(pole)), 0.0
            return cartesian_to_wind(mx, my, mz, sp, cp, sinlon, coslon)

        lat_in = self.lat[int(self.pad_south): self.lat.size - int(self.pad_north)]
        rows_u, rows_v = [], []
        if self.pad_south:
            pu, pv = pole_row(u[..., 0, :], v[..., 0, :], lat_in[0])
            rows_u.append(pu[..., None, :])
            rows_v.append(pv[..., None, :])
        rows_u.append(u)
        rows_v.append(v)
        if self.pad_north:
            pu, pv = pole_row(u[..., -1, :], v[..., -1, :], lat_in[-1])
            rows_u.append(pu[..., None, :])
            rows_v.append(pv[..., None, :])
        if len(rows_u) > 1:
            u = np.concatenate(rows_u, axis=-2)
            v = np.concatenate(rows_v, axis=-2)
        else:
            new = [pole_row(u[..., j, :], v[..., j, :], self.lat[j]) for j in (0, -1)]
            if all(np.allclose(pu, u[..., j, :], rtol=0, atol=1e-9, equal_nan=True)
                   and np.allclose(pv, v[..., j, :], rtol=0, atol=1e-9, equal_nan=True)
                   for (pu, pv), j in zip(new, (0, -1))):
                return np.ascontiguousarray(u), np.ascontiguousarray(v)  # already one vector
            u, v = u.copy(), v.copy()
        for j in (0, -1):
            pu, pv = pole_row(u[..., j, :], v[..., j, :], self.lat[j])
            u[..., j, :], v[..., j, :] = pu, pv
        return np.ascontiguousarray(u), np.ascontiguousarray(v)


@dataclass
class Location:
    """Where parcels sit in the grid: corner indices and weights (see :func:`locate`)."""

    hidx: tuple          # 4 arrays (n,): flat lat*lon index of the corners
    wh: tuple            # 4 arrays (n,): bilinear weights
    k0: np.ndarray       # (n,) lower level index (towards the surface)
    k1: np.ndarray       # (n,) upper level index
    wk: np.ndarray       # (n,) weight of level k1
    member: np.ndarray   # (n,) member index
    trig: tuple          # corner trigonometry (sinlat_j, coslat_j, sinlat_j1, coslat_j1, sinlon_i0, coslon_i0, sinlon_i1, coslon_i1)
    outside: np.ndarray  # (n,) bool: horizontally outside a regional grid
    below: np.ndarray    # (n,) bool: pressure greater than the first (lowest) level
    above: np.ndarray    # (n,) bool: pressure less than the last (top) level


def locate(geom: GridGeometry, lat, lon, pressure=None, member=None) -> Location:
    """Locate parcels in the grid.

    Parameters
    ----------
    geom : GridGeometry
    lat, lon : ndarray, shape (n,)
        Degrees north / east (any longitude range; reduced modulo 360).
    pressure : ndarray, shape (n,), optional
        Pa.  Ignored for single-level grids.
    member : ndarray of int, shape (n,), optional
        Ensemble member index (0 when absent).
    """
    n = lat.shape[0]
    ny, nx = geom.lat.size, geom.lon.size
    glat, glon = geom.lat, geom.lon
    j = _index(geom, "lat", glat, lat, 0.0, ny - 2)
    wy = (lat - glat[j]) / (glat[j + 1] - glat[j])
    rel = np.mod(lon - glon[0], 360.0)
    if geom.periodic_lon:
        ext = _lon_ext(geom)
        i0 = _index(geom, "lonp", ext[:-1], rel, glon[0] * 0.0, nx - 1)
        wx = (rel - ext[i0]) / (ext[i0 + 1] - ext[i0])
        i1 = i0 + 1
        i1[i1 == nx] = 0
        outside = np.zeros(n, dtype=bool)
    else:
        ext = glon - glon[0]
        i0 = _index(geom, "lonr", ext, rel, 0.0, nx - 2)
        wx = (rel - ext[i0]) / (ext[i0 + 1] - ext[i0])
        i1 = i0 + 1
        outside = (rel > ext[-1]) | (lat < glat[0]) | (lat > glat[-1])
    wy = np.clip(wy, 0.0, 1.0)
    wx = np.clip(wx, 0.0, 1.0)
    r0 = j * nx
    r1 = r0 + nx
    hidx = (r0 + i0, r0 + i1, r1 + i0, r1 + i1)
    wy1 = 1.0 - wy
    wx1 = 1.0 - wx
    wh = (wy1 * wx1, wy1 * wx, wy * wx1, wy * wx)
    sinlat, coslat, sinlon, coslon = geom._trig()
    trig = (sinlat.take(j), coslat.take(j), sinlat.take(j + 1), coslat.take(j + 1),
            sinlon.take(i0), coslon.take(i0), sinlon.take(i1), coslon.take(i1))
    nl = geom.nlev
    if nl > 1 and pressure is not None:
        q = -np.log(pressure)
        qlev = _qlev(geom)
        # few levels: counting the interior levels at or under q beats a binary search
        k0 = (q[:, None] >= qlev[None, 1:-1]).sum(axis=1) if nl <= 32 else np.clip(
            np.searchsorted(qlev, q, side="right") - 1, 0, nl - 2)
        wk = np.clip((q - qlev[k0]) / (qlev[k0 + 1] - qlev[k0]), 0.0, 1.0)
        k1 = k0 + 1
        below = pressure > geom.levels[0]
        above = pressure < geom.levels[-1]
    else:
        k0 = k1 = np.zeros(n, dtype=np.intp)
        wk = np.zeros(n)
        below = above = np.zeros(n, dtype=bool)
    m = np.zeros(n, dtype=np.intp) if member is None else np.asarray(member, dtype=np.intp)
    return Location(hidx, wh, k0, k1, wk, m, trig, outside, below, above)


def _uniform_spacing(geom, key, coord) -> float:
    """Spacing of ``coord`` when uniform within 1e-9 degree, else 0 (cached by ``key``)."""
    spacing = geom._cache.get(("uniform", key))
    if spacing is None:
        d = np.diff(coord)
        spacing = float(d[0]) if d.size and np.allclose(d, d[0], rtol=0, atol=1e-9) else 0.0
        geom._cache[("uniform", key)] = spacing
    return spacing


def _lon_ext(geom):
    """Longitudes relative to the first one; with 360 appended on a periodic grid."""
    ext = geom._cache.get("lonext")
    if ext is None:
        ext = geom._cache["lonext"] = np.append(geom.lon - geom.lon[0], 360.0)
    return ext


def _qlev(geom):
    """``-ln(levels)`` (ascending), cached."""
    qlev = geom._cache.get("qlev")
    if qlev is None:
        qlev = geom._cache["qlev"] = -np.log(geom.levels)
    return qlev


def _index(geom, key, coord, values, _unused, hi):
    """Index of the grid interval holding each value, clipped to [0, hi].

    Uniform coordinates (spacing equal within 1e-9 degree) use arithmetic; others a
    binary search.  ``coord`` is ascending.
    """
    spacing = _uniform_spacing(geom, key, coord)
    if spacing > 0:
        idx = np.floor((values - coord[0]) / spacing).astype(np.intp)
        # guard against rounding at interval edges
        np.clip(idx, 0, hi, out=idx)
        idx -= (coord.take(idx) > values) & (idx > 0)
        idx += (idx < hi) & (coord.take(np.minimum(idx + 1, coord.size - 1)) <= values)
        return idx
    return np.clip(np.searchsorted(coord, values, side="right") - 1, 0, hi)


def _corner_values(loc: Location, arr: np.ndarray) -> list:
    """Values at the 4 horizontal corners after vertical interpolation, list of (n,)."""
    nm, nl, ny, nx = arr.shape
    flat = arr.reshape(-1)
    plane = ny * nx
    if nl == 1:
        base = loc.member * plane
        return [flat.take(base + h) for h in loc.hidx]
    b0 = (loc.member * nl + loc.k0) * plane
    b1 = b0 + plane  # k1 = k0 + 1
    out = []
    wk = loc.wk
    for h in loc.hidx:
        a = flat.take(b0 + h)
        out.append(a + wk * (flat.take(b1 + h) - a))
    return out


def sample_scalar(loc: Location, arr: np.ndarray) -> np.ndarray:
    """Interpolate a scalar field (one time) at located parcels; shape (n,).

    ``arr`` has shape ``(nm, nl, ny, nx)`` (``nl == 1`` for a 2-D field).
    NaN at any corner that carries weight gives NaN (missing stays missing).
    """
    c = _corner_values(loc, arr)
    w = loc.wh
    return w[0] * c[0] + w[1] * c[1] + w[2] * c[2] + w[3] * c[3]


def sample_wind(loc: Location, u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Interpolate the wind (one time) as a 3-D Cartesian vector, m s-1, shape (n, 3).

    Each corner's east/north wind is turned into a Cartesian vector with that corner's
    latitude and longitude, and the four vectors are weighted bilinearly.  The result is
    not yet projected on the tangent plane (see :func:`tangent`).
    """
    cu = _corner_values(loc, u)
    cv = _corner_values(loc, v)
    slj, clj, slj1, clj1, sli0, cli0, sli1, cli1 = loc.trig
    corners = ((slj, clj, sli0, cli0), (slj, clj, sli1, cli1),
               (slj1, clj1, sli0, cli0), (slj1, clj1, sli1, cli1))
    vx = vy = vz = 0.0
    for c in range(4):
        sl, cl, so, co = corners[c]
        w = loc.wh[c]
        ax, ay, az = wind_to_cartesian(cu[c], cv[c], sl, cl, so, co)
        vx = vx + w * ax
        vy = vy + w * ay
        vz = vz + w * az
    return np.stack([vx, vy, vz], axis=-1)


def sample_column(loc: Location, arr: np.ndarray) -> np.ndarray:
    """Interpolate every level of a 3-D field horizontally; shape (n, nl)."""
    nm, nl, ny, nx = arr.shape
    flat = arr.reshape(-1)
    plane = ny * nx
    out = np.empty((loc.member.size, nl))
    for k in range(nl):
        base = (loc.member * nl + k) * plane
        out[:, k] = sum(w * flat.take(base + h) for w, h in zip(loc.wh, loc.hidx))
    return out


def tangent(x: np.ndarray, vec: np.ndarray) -> np.ndarray:
    """Remove the radial part of ``vec`` (n, 3) at unit positions ``x`` (n, 3)."""
    radial = np.einsum("ij,ij->i", x, vec)
    return vec - radial[:, None] * x


def blend(a, b, wt: float):
    """Linear time interpolation ``(1 - wt) a + wt b`` (skips work at wt = 0 or 1)."""
    if wt <= 0.0:
        return a
    if wt >= 1.0:
        return b
    return a + wt * (b - a)


def _kernel_geometry(geom: GridGeometry) -> tuple:
    """Geometry arguments of the compiled kernel (``_kernel.wind_tendency``), cached."""
    args = geom._cache.get("kernel")
    if args is None:
        if geom.periodic_lon:
            ext = _lon_ext(geom)
            coord, key = ext[:-1], "lonp"
        else:
            ext = coord = geom.lon - geom.lon[0]
            key = "lonr"
        lev = geom.levels if geom.levels is not None else np.ones(1)
        sinlat, coslat, sinlon, coslon = geom._trig()
        args = geom._cache["kernel"] = (
            geom.lat, _uniform_spacing(geom, "lat", geom.lat), float(geom.lon[0]),
            np.ascontiguousarray(coord), _uniform_spacing(geom, key, coord), ext,
            geom.periodic_lon, -np.log(lev) if geom.levels is None else _qlev(geom), lev,
            sinlat, coslat, sinlon, coslon)
    return args


_NO_FIELD = np.empty((0, 0, 0, 0))


class CornerCache:
    """Grid-corner values of the cell each parcel was last sampled in (compiled path), and
    the number of :func:`wind_tendency` calls made with it (which path they take).

    One per run of :func:`wind_tendency` calls on the same parcels (same number, same
    order) and the same pair of time slices; :meth:`use` starts the corners afresh when the
    number or ``tag`` (naming the pair, e.g. the analysis interval) changes.  The caller must
    give a new tag if the parcels change but their number does not (``integrate`` never does:
    its active set only shrinks).  Cached values are exact copies of the fields.
    """

    def __init__(self):
        self.tag = None
        self.omega = None
        self.calls = 0
        self.key = np.full((2, 0), -1, dtype=np.int64)
        self.val = np.empty((2, 0, 4, 2, 3))

    def use(self, n: int, tag) -> CornerCache:
        if tag != self.tag or self.key.shape[1] != n:
            self.tag = tag
            self.key = np.full((2, n), -1, dtype=np.int64)
            self.val = np.empty((2, n, 4, 2, 3))
        return self


#: Which path :func:`wind_tendency` takes.  The compiled kernel costs about 0.7 s to load
#: (numba's start and its cache, once per process), then some 10 us a call; the numpy
#: functions above cost about 0.1 ms a call for a few parcels and nothing to load.  So a run
#: of fewer than ``COMPILED_FROM_PARCELS`` parcels takes numpy for its first
#: ``NUMPY_CALLS`` calls (a day's trajectory on a 2.5-degree grid needs a few hundred) and
#: the kernel after; the two agree to round-off (``tests/test_wind_tendency_paths.py``).
COMPILED_FROM_PARCELS = 64
NUMPY_CALLS = 4000


def wind_tendency(geom: GridGeometry, x, pressure, member, a: dict, b: dict, wt: float,
                  omega: bool = False, radius: float | None = None,
                  cache: CornerCache | None = None):
    """Wind (and omega) at parcels, interpolated in space and time, in one compiled pass.

    Equals, to round-off, ``locate`` at ``to_lat_lon(x)`` followed by
    ``tangent(x, blend(sample_wind(loc, a...), sample_wind(loc, b...), wt)) / radius`` and
    ``blend(sample_scalar(loc, a["omega"]), sample_scalar(loc, b["omega"]), wt)``; the slice
    whose weight is 0 is not read.  A few parcels take those numpy functions (see
    ``COMPILED_FROM_PARCELS``), others the kernel ``_kernel.wind_tendency`` (numba, imported
    here on first use); many parcels are shared among numba's number of threads
    (``_threads.share_parcels``), with results identical to one thread.

    Parameters
    ----------
    geom : GridGeometry
    x : ndarray (n, 3)
        Unit position vectors.
    pressure : ndarray (n,) or None
        Pa; None (or a single-level grid): no vertical interpolation.
    member : ndarray of int (n,)
    a, b : dict
        Prepared time slices (``"u"``, ``"v"``, and ``"omega"`` when ``omega``).
    wt : float
        Weight of ``b``.
    radius : float, optional
        The Earth's radius (m); default ``geom.radius``.
    cache : CornerCache, optional
        Corner values kept between calls on the same parcels and slices, and the count of
        calls (see :class:`CornerCache`); without it every corner is read, and a few
        parcels take the numpy functions.

    Returns
    -------
    vel : ndarray (n, 3)
        Tangent velocity divided by ``radius`` (s-1).
    dz : ndarray (n,)
        Omega (Pa s-1), zeros unless ``omega``.
    outside, below, above : ndarray (n,) bool
        As the attributes of :class:`Location`.
    """
    radius = geom.radius if radius is None else radius
    x = np.ascontiguousarray(x, dtype=np.float64)
    n = x.shape[0]
    if cache is None:
        cache = CornerCache().use(n, None)
    elif cache.key.shape[1] != n:
        raise ValueError("corner cache built for another number of parcels")
    cache.calls += 1
    if n < COMPILED_FROM_PARCELS and cache.calls <= NUMPY_CALLS:
        return _numpy_tendency(geom, x, pressure, member, a, b, wt, omega, radius)
    return _compiled_tendency(geom, x, pressure, member, a, b, wt, omega, radius, cache)


def _numpy_tendency(geom, x, pressure, member, a, b, wt, omega, radius):
    """:func:`wind_tendency` by the numpy functions of this module."""
    lat, lon = to_lat_lon(x)
    loc = locate(geom, lat, lon, pressure, member)

    def at(d):  # wind and omega of one time slice
        w = sample_wind(loc, d["u"], d["v"])
        return w, (sample_scalar(loc, d["omega"]) if omega else np.zeros(x.shape[0]))

    if wt <= 0.0:
        w, dz = at(a)
    elif wt >= 1.0:
        w, dz = at(b)
    else:
        (wa, oa), (wb, ob) = at(a), at(b)
        w, dz = blend(wa, wb, wt), blend(oa, ob, wt)
    return tangent(x, w) / radius, dz, loc.outside, loc.below, loc.above


def _compiled_tendency(geom, x, pressure, member, a, b, wt, omega, radius, cache):
    """:func:`wind_tendency` by the compiled kernel, parcels shared among threads."""
    from parcelcast.trajectories._kernel import wind_tendency as kernel
    from parcelcast.trajectories._threads import share_parcels

    n = x.shape[0]
    use_p = pressure is not None and geom.nlev > 1
    p = np.ascontiguousarray(pressure, dtype=np.float64) if use_p else np.ones(n)
    mem = np.ascontiguousarray(member, dtype=np.intp)
    if cache.omega != omega:  # cached cells lack omega (or carry it needlessly)
        cache.key[:] = -1
        cache.omega = omega

    def field(d, name):
        return np.ascontiguousarray(d[name], dtype=np.float64)

    f = [field(a, "u"), field(a, "v"), field(a, "omega") if omega else _NO_FIELD,
         field(b, "u"), field(b, "v"), field(b, "omega") if omega else _NO_FIELD]
    vel = np.empty((n, 3))
    dz = np.empty(n)
    outside = np.empty(n, dtype=bool)
    below = np.empty(n, dtype=bool)
    above = np.empty(n, dtype=bool)
    lat, lon, q = np.empty(n), np.empty(n), np.empty(n)
    args = (x, lat, lon, q, p, mem, use_p, *_kernel_geometry(geom), *f, float(wt),
            float(radius), cache.key, cache.val, vel, dz, outside, below, above)

    def work(lo, hi):  # one thread's parcels; numpy's ufuncs release the GIL too
        lat[lo:hi], lon[lo:hi] = to_lat_lon(x[lo:hi])
        np.log(p[lo:hi], out=q[lo:hi])
        np.negative(q[lo:hi], out=q[lo:hi])
        kernel(lo, hi, *args)

    share_parcels(n, work)
    return vel, dz, outside, below, above
