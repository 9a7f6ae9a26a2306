"""The trajectory driver: time steps, analysis times, statuses and recording (plain arrays).

What belongs here: :class:`FieldSource` (analysis times and a loader of prepared time
slices) and :func:`integrate`, which moves all parcels together, one common time step at a
time, and records them at output times.  No xarray here; see ``api.py`` for the labelled
entry point.

Time step
    Within each interval between consecutive *break times* (analysis times and output
    times), ``n`` equal steps are taken, ``n`` the smallest integer with
    ``|dt| <= cfl * L / V``: ``L`` the smallest grid spacing (m, at the equator), ``V`` an
    upper bound of the wind speed in the two analysis times in use
    (``hypot(max|u|, max|v|)``), ``cfl = 0.5``.  In 3-D mode also
    ``|dt| <= cfl * min(d ln p) / max(|omega| / p)``.  No step crosses an analysis time.

Ground rule
    The ground is the surface pressure interpolated at the parcel when the analysis has
    ``surface_pressure``, else the first (lowest) level.  ``ground="follow"`` (default):
    in 3-D mode a parcel that would go below the ground is put back on it (pressure
    clamped) and continues; in isentropic mode a parcel whose surface lies below the lowest
    level is carried at the lowest level; in isobaric mode it stays on its level.  Each
    recorded point carries ``on_ground`` and the parcel's status becomes ``hit_ground``
    if it ended the run otherwise fine.  ``ground="stop"``: the parcel stops there.

Other stops
    ``left_domain`` (outside a regional grid, or above the top level in 3-D/isentropic
    modes), ``left_time_range`` (the analysis times end before the requested duration),
    ``missing_data`` (NaN wind, omega or potential temperature met; nothing is filled).
    A stopped parcel keeps the path recorded so far; it stays at the last position where
    a whole step succeeded.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

from parcelcast.trajectories.errors import StartPointError, TrajectoryError
from parcelcast.trajectories.interpolate import (
    HIT_GROUND,
    LEFT_DOMAIN,
    LEFT_TIME_RANGE,
    MISSING_DATA,
    OK,
    CornerCache,
    GridGeometry,
    blend,
    locate,
    sample_column,
    sample_scalar,
    wind_tendency,
)
from parcelcast.trajectories.schemes import SCHEMES
from parcelcast.trajectories.sphere import to_lat_lon, to_unit_vector

MODES = ("isobaric", "3d", "isentropic")


def _abs_nanmax(a, axis=None):
    """``nanmax(abs(a))`` without the temporary array (NaN only where all are NaN)."""
    a = np.asarray(a)
    if axis is None:
        a = a.reshape(-1)
    return np.fmax(np.fmax.reduce(a, axis=axis), -np.fmin.reduce(a, axis=axis))


@dataclass
class FieldSource:
    """Analysis times and a loader of prepared slices, for :func:`integrate`.

    Attributes
    ----------
    geometry : GridGeometry
    times : ndarray, shape (nt,)
        Analysis times in seconds (any epoch), strictly ascending.
    loader : callable
        ``loader(ti) -> dict`` of arrays ``(nm, nl, ny, nx)`` already passed through
        :meth:`GridGeometry.prepare`; must contain ``"u"`` and ``"v"`` (m s-1), plus
        ``"omega"`` (Pa s-1) for 3-D mode, ``"theta"`` (K) for isentropic mode, optional
        ``"surface_pressure"`` (Pa) and any fields to sample along the path.
    n_members : int
    steady : bool
        Treat a single analysis time as a flow constant in time (no time range limit).
    """

    geometry: GridGeometry
    times: np.ndarray
    loader: Callable[[int], dict]
    n_members: int = 1
    steady: bool = False
    _cache: dict = field(default_factory=dict, repr=False)

    def slice(self, ti: int) -> dict:
        if ti not in self._cache:
            if len(self._cache) >= 3:
                self._cache.pop(next(iter(self._cache)))
            data = self.loader(ti)
            u, v = data["u"], data["v"]
            vmax = float(np.hypot(_abs_nanmax(u), _abs_nanmax(v)))
            data["_vmax"] = vmax
            if "omega" in data and self.geometry.levels is not None:
                levels = self.geometry.levels
                om = _abs_nanmax(data["omega"], axis=(0, 2, 3))
                if not np.isfinite(om).all():  # NaN or infinite values: ignore them
                    om = np.abs(data["omega"])
                    om = np.where(np.isfinite(om), om, 0.0).max(axis=(0, 2, 3))
                om = om / levels  # NaN levels: no limit
                data["_omega_rate"] = float(om.max()) if om.size else 0.0
            self._cache[ti] = data
        return self._cache[ti]


@dataclass
class KernelResult:
    """Paths as plain arrays, in integration order (index 0 = start point).

    ``times`` (nobs,) seconds; ``lat``, ``lon`` (deg), ``pressure`` (Pa), ``on_ground``
    (bool) and each of ``samples[name]`` have shape (n, nobs), NaN after a parcel stopped;
    ``status`` (n,) int8 codes (see ``interpolate.STATUS_NAMES``); ``n_valid`` (n,) number
    of recorded points; ``dt`` the largest absolute step used (s).
    """

    times: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    pressure: np.ndarray
    on_ground: np.ndarray
    samples: dict
    status: np.ndarray
    n_valid: np.ndarray
    dt: float
    n_steps: int


def _break_times(t0, t1, times, out_times, steady):
    lo, hi = min(t0, t1), max(t0, t1)
    pts = set(np.asarray(out_times).tolist())
    if not steady:
        pts.update(t for t in times.tolist() if lo < t < hi)
    pts.update((t0, t1))
    ordered = sorted(float(p) for p in pts)
    if t1 < t0:
        ordered.reverse()
    return ordered


def _interval(times, ta, tb):
    """Index k of the analysis interval [times[k], times[k+1]] containing [ta, tb]."""
    lo = min(ta, tb)
    k = int(np.searchsorted(times, lo, side="right") - 1)
    return min(max(k, 0), times.size - 2)


def pressure_on_theta(theta_col, theta, levels):
    """Pressure (Pa) where a column's potential temperature equals ``theta``.

    Linear in ln p between the two levels that bracket ``theta``; the lowest crossing is
    used in a column that is not monotonic.

    Parameters
    ----------
    theta_col : ndarray (n, nl)
        Potential temperature (K) on ``levels`` (Pa, descending).
    theta : ndarray (n,)
        Target potential temperature (K).

    Returns
    -------
    p : ndarray (n,) Pa; below : bool (n,) surface under the lowest level (p = levels[0]);
    above : bool (n,) surface over the top level (p = levels[-1]); bad : bool (n,) NaN column.
    """
    bad = np.isnan(theta_col).any(axis=1) | np.isnan(theta)
    ge = theta_col >= theta[:, None]
    below = ge[:, 0] & ~bad
    anyge = ge.any(axis=1)
    above = ~anyge & ~bad
    k = np.argmax(ge, axis=1)
    k = np.clip(k, 1, levels.size - 1)
    rows = np.arange(theta.size)
    th0, th1 = theta_col[rows, k - 1], theta_col[rows, k]
    lp = np.log(levels)
    with np.errstate(invalid="ignore", divide="ignore"):
        w = np.clip((theta - th0) / (th1 - th0), 0.0, 1.0)
    p = np.exp(lp[k - 1] + w * (lp[k] - lp[k - 1]))
    p = np.where(below, levels[0], np.where(above, levels[-1], p))
    p = np.where(bad, np.nan, p)
    return p, below, above, bad


def integrate(
    source: FieldSource,
    lat: np.ndarray,
    lon: np.ndarray,
    z: np.ndarray,
    t0: float,
    duration: float,
    *,
    member: np.ndarray | None = None,
    mode: str = "isobaric",
    scheme: str = "petterssen",
    output_interval: float = 3600.0,
    ground: str = "follow",
    samples: Sequence[str] = (),
    cfl: float = 0.5,
    iterations: int = 3,
) -> KernelResult:
    """Integrate trajectories of ``n`` parcels from a common start time.

    Parameters
    ----------
    source : FieldSource
    lat, lon : ndarray (n,)
        Start positions, degrees north / east.
    z : ndarray (n,)
        Start pressure (Pa) for ``isobaric`` and ``3d``; potential temperature (K) for
        ``isentropic``.
    t0 : float
        Start time, seconds on the same epoch as ``source.times``.
    duration : float
        Seconds; negative for backward trajectories.
    member : ndarray of int (n,), optional
        Analysis member index of each parcel.
    mode : {"isobaric", "3d", "isentropic"}
    scheme : {"petterssen", "rk4"}
    output_interval : float
        Seconds between recorded points (positive); the end time is always recorded.
    ground : {"follow", "stop"}
    samples : sequence of str
        Names of loaded fields to interpolate at recorded points.
    cfl : float
        Largest fraction of a grid length moved in one step.
    iterations : int
        Corrections of the Petterssen scheme.
    """
    if mode not in MODES:
        raise TrajectoryError(f"unknown mode {mode!r}; valid: {', '.join(MODES)}")
    if scheme not in SCHEMES:
        raise TrajectoryError(f"unknown scheme {scheme!r}; valid: {', '.join(SCHEMES)}")
    if ground not in ("follow", "stop"):
        raise TrajectoryError(f"unknown ground rule {ground!r}; valid: follow, stop")
    if not output_interval > 0:
        raise TrajectoryError("output interval must be positive")
    geom = source.geometry
    times = np.asarray(source.times, dtype=np.float64)
    steady = source.steady
    if steady and times.size != 1:
        raise TrajectoryError("a steady flow needs exactly one analysis time")
    if not steady and times.size < 2:
        raise TrajectoryError(
            "one analysis time only: trajectories need two or more times, or a steady-flow request"
        )
    if mode != "isobaric" and geom.levels is None:
        raise TrajectoryError(f"{mode} trajectories need several pressure levels")
    lat = np.asarray(lat, dtype=np.float64).copy()
    lon = np.asarray(lon, dtype=np.float64).copy()
    z = np.asarray(z, dtype=np.float64).copy()
    n = lat.size
    member = np.zeros(n, dtype=np.intp) if member is None else np.asarray(member, dtype=np.intp)
    if not steady and not (times[0] <= t0 <= times[-1]):
        raise StartPointError("time", t0, f"{times[0]} .. {times[-1]} (s)")

    t1 = t0 + duration
    sign = 1.0 if duration >= 0 else -1.0
    t_stop = t1
    if not steady:
        t_stop = min(max(t1, times[0]), times[-1])
    n_out = int(np.floor(abs(duration) / output_interval + 1e-9))
    out_times = [t0 + sign * k * output_interval for k in range(n_out + 1)]
    if abs(out_times[-1] - t1) > 1e-6:
        out_times.append(t1)
    out_times = np.array(out_times)
    nobs = out_times.size
    reachable = out_times[(sign * (out_times - t_stop)) <= 1e-6]
    breaks = _break_times(t0, t_stop, times, reachable, steady)

    rec_lat = np.full((n, nobs), np.nan)
    rec_lon = np.full((n, nobs), np.nan)
    rec_p = np.full((n, nobs), np.nan)
    rec_g = np.zeros((n, nobs), dtype=bool)
    rec_s = {name: np.full((n, nobs), np.nan) for name in samples}
    status = np.zeros(n, dtype=np.int8)
    touched = np.zeros(n, dtype=bool)
    ground_now = np.zeros(n, dtype=bool)
    n_valid = np.zeros(n, dtype=np.intp)
    x = to_unit_vector(lat, lon)
    levels = geom.levels
    step_fn = SCHEMES[scheme]
    max_dt = 0.0
    total_steps = 0

    state = {}
    # corner values reused while parcels stay in a cell: valid for one set of active
    # parcels (it only shrinks, so the count identifies it) and one analysis interval
    corners = CornerCache()

    def set_interval(ta, tb):
        if steady:
            a = b = source.slice(0)
            state.update(a=a, b=b, ta=ta - 1.0, tb=ta, tag=0)  # wt irrelevant
        else:
            k = _interval(times, ta, tb)
            state.update(a=source.slice(k), b=source.slice(k + 1), ta=times[k], tb=times[k + 1],
                         tag=k)

    def wt_of(t):
        if steady:
            return 0.0
        return (t - state["ta"]) / (state["tb"] - state["ta"])

    def pressure_of(loc_h, zz, wt, mem_lat, mem_lon, idx_member):
        """Pressure for isentropic mode (needs a horizontal location)."""
        a, b = state["a"], state["b"]
        col = blend(sample_column(loc_h, a["theta"]), sample_column(loc_h, b["theta"]), wt)
        return pressure_on_theta(col, zz, levels)

    def tendency_factory(mem):
        def f(xx, zz, t):
            wt = wt_of(t)
            a, b = state["a"], state["b"]
            code = np.zeros(xx.shape[0], dtype=np.int8)
            if mode == "isentropic":
                la, lo = to_lat_lon(xx)
                loc = locate(geom, la, lo, None, mem)
                p, _below, above, bad = pressure_of(loc, zz, wt, la, lo, mem)
                code[above] = LEFT_DOMAIN
                code[bad] = MISSING_DATA
                p = np.where(bad, levels[0], p)
            else:
                p = zz
            # locate + sample_wind/sample_scalar at both times + blend + tangent, compiled
            vel, dz, outside, below, above = wind_tendency(
                geom, xx, p, mem, a, b, wt, omega=mode == "3d",
                cache=corners.use(xx.shape[0], state["tag"]))
            if mode == "3d":
                code[above] = LEFT_DOMAIN
            code[outside] = LEFT_DOMAIN
            if mode == "3d":
                if below.any():
                    # below the lowest level: no downward motion into the ground
                    dz = np.where(below & (dz * sign > 0), 0.0, dz)
            # column by column: ten times faster than isnan(vel).any(axis=1) on (n, 3)
            nan = np.isnan(vel[:, 0]) | np.isnan(vel[:, 1]) | np.isnan(vel[:, 2]) | np.isnan(dz)
            if nan.any():
                code[nan & (code == 0)] = MISSING_DATA
                vel[nan] = 0.0
                dz = np.where(nan, 0.0, dz)
            return vel, dz, code

        return f

    def ground_pressure(where, mem, wt):
        """Ground pressure (Pa) at ``where``: unit vectors (n, 3), or a (lat, lon) pair;
        positions are only turned into latitudes and longitudes if surface pressure is there."""
        a, b = state["a"], state["b"]
        if "surface_pressure" in a:
            la, lo = to_lat_lon(where) if isinstance(where, np.ndarray) else where
            loc = locate(geom, la, lo, None, mem)
            ps = blend(sample_scalar(loc, a["surface_pressure"]), sample_scalar(loc, b["surface_pressure"]), wt)
            return np.where(np.isnan(ps), levels[0] if levels is not None else np.inf, ps)
        return np.full(len(mem), levels[0] if levels is not None else np.inf)

    def record(obs, t, idx):
        if idx.size == 0:
            return
        la, lo = to_lat_lon(x[idx])
        wt = wt_of(t)
        mem = member[idx]
        zz = z[idx]
        if mode == "isentropic":
            loc = locate(geom, la, lo, None, mem)
            p, below, _above, _bad = pressure_of(loc, zz, wt, la, lo, mem)
            ground_now[idx] = ground_now[idx] | below
        else:
            p = zz
        loc = locate(geom, la, lo, p, mem)
        rec_lat[idx, obs] = la
        rec_lon[idx, obs] = lo
        rec_p[idx, obs] = p
        rec_g[idx, obs] = ground_now[idx]
        a, b = state["a"], state["b"]
        for name in samples:
            rec_s[name][idx, obs] = blend(sample_scalar(loc, a[name]), sample_scalar(loc, b[name]), wt)
        n_valid[idx] = obs + 1

    active = np.ones(n, dtype=bool)
    # start check
    set_interval(breaks[0], breaks[1] if len(breaks) > 1 else breaks[0])
    loc0 = locate(geom, lat, lon, z if mode != "isentropic" else None, member)
    if loc0.outside.any():
        raise StartPointError("position", f"{lat[loc0.outside][0]},{lon[loc0.outside][0]}",
                              f"lat {geom.lat[0]}..{geom.lat[-1]}, lon {geom.lon[0]}..{geom.lon[-1]}")
    if mode != "isentropic" and levels is not None and (loc0.above.any() or loc0.below.any()):
        bad = z[loc0.above | loc0.below][0]
        raise StartPointError("pressure", f"{bad / 100:g} hPa",
                              f"{levels[-1] / 100:g}..{levels[0] / 100:g} hPa")
    if mode == "isobaric" or mode == "3d":
        gp = ground_pressure((lat, lon), member, wt_of(t0))
        ground_now[:] = z > gp + 1e-6
        touched |= ground_now
        if mode == "3d":
            z = np.minimum(z, gp)
    out_i = 0
    record(0, t0, np.flatnonzero(active))
    out_i = 1
    for ta, tb in zip(breaks[:-1], breaks[1:]):
        set_interval(ta, tb)
        a, b = state["a"], state["b"]
        vmax = max(a["_vmax"], b["_vmax"], 1e-6)
        dt_max = cfl * geom.grid_length / vmax
        if mode == "3d":
            rate = max(a.get("_omega_rate", 0.0), b.get("_omega_rate", 0.0))
            if rate > 0:
                dt_max = min(dt_max, cfl * geom.min_dlogp / rate)
        span = tb - ta
        nsteps = max(1, int(np.ceil(abs(span) / dt_max - 1e-9)))
        dt = span / nsteps
        max_dt = max(max_dt, abs(dt))
        for s in range(nsteps):
            t = ta + s * dt
            idx = np.flatnonzero(active)
            if idx.size == 0:
                break
            f = tendency_factory(member[idx])
            x1, z1, code = step_fn(f, x[idx], z[idx], t, dt, iterations) if scheme == "petterssen" \
                else step_fn(f, x[idx], z[idx], t, dt)
            total_steps += 1
            wt_end = wt_of(t + dt)
            if mode in ("3d", "isobaric"):
                gp = ground_pressure(x1, member[idx], wt_end)
                under = (z1 > gp + 1e-6) & (code == 0)
                ground_now[idx] = under
                if mode == "3d":
                    z1 = np.where(under, gp, z1)
                touched[idx] |= under
                if ground == "stop":
                    code = np.where(under, HIT_GROUND, code).astype(np.int8)
            x[idx] = x1
            z[idx] = z1
            stop = code != 0
            if stop.any():
                status[idx[stop]] = code[stop]
                active[idx[stop]] = False
        # record at output times
        while out_i < nobs and abs(out_times[out_i] - tb) < 1e-6:
            idx = np.flatnonzero(active)
            if mode == "isentropic":
                ground_now[idx] = False
            record(out_i, tb, idx)
            if mode == "isentropic":
                touched[idx] |= ground_now[idx]
                if ground == "stop":
                    hit = idx[ground_now[idx]]
                    status[hit] = HIT_GROUND
                    active[hit] = False
            out_i += 1
    if not steady and sign * (t1 - t_stop) > 1e-6:
        status[active] = LEFT_TIME_RANGE
    status[(status == OK) & touched] = HIT_GROUND
    return KernelResult(out_times, rec_lat, rec_lon, rec_p, rec_g, rec_s, status, n_valid,
                        max_dt, total_steps)
