"""Labelled entry point: trajectories from a canonical analysis dataset, as CF DSG.

What belongs here: :func:`compute_trajectories`, which checks units, builds the starts
(cloud, analysis members, series of times), runs the kernel and returns an
``xarray.Dataset`` laid out as a CF discrete sampling geometry of featureType
``trajectory`` (incomplete multidimensional representation, CF 1.10 section H.4.2).
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from parcelcast.constants import STANDARD_GRAVITY
from parcelcast.errors import SelectionError
from parcelcast.units import check_quantity
from parcelcast.trajectories.ensemble import cloud_starts, spread
from parcelcast.trajectories.errors import StartPointError, TrajectoryError
from parcelcast.trajectories.fields import build_source, from_seconds, to_seconds
from parcelcast.trajectories.integrate import integrate, pressure_on_theta
from parcelcast.trajectories.interpolate import STATUS_NAMES, blend, locate, sample_column

_STATUS_ATTRS = {
    "flag_values": np.arange(len(STATUS_NAMES), dtype=np.int8),
    "flag_meanings": " ".join(STATUS_NAMES),
    "long_name": "why the trajectory ended",
}


def compute_trajectories(
    ds: xr.Dataset,
    lat: float,
    lon: float,
    level,
    duration,
    start_time=None,
    *,
    mode: str = "isobaric",
    scheme: str = "petterssen",
    wind: str = "actual",
    members: int = 1,
    analysis_members: bool = True,
    cloud_radius=None,
    cloud_dp=None,
    start_times=None,
    output_interval=None,
    ground: str = "follow",
    samples=(),
    steady: bool | None = None,
) -> xr.Dataset:
    """Back or forward trajectories from (or to) one point.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis (see ``design_notes/canonical_dataset.md``).
    lat, lon : float
        Arrival (``duration < 0``) or release point, degrees north / east.
    level : pint.Quantity
        Pressure of the point (e.g. ``Q_(850, "hPa")``).  In isentropic mode the parcel
        keeps the potential temperature found there at the start.
    duration : pint.Quantity
        Time span; negative for back trajectories (e.g. ``Q_(-24, "h")``).
    start_time : numpy.datetime64, optional
        Arrival time (back) or release time (forward); default the last analysis time
        for back trajectories and the first for forward ones.
    mode : {"isobaric", "3d", "isentropic"}
    scheme : {"petterssen", "rk4"}
    wind : {"actual", "geostrophic"}
    members : int
        Size of the cloud of starts (1 = the point only).
    analysis_members : bool
        Run every member of an ensemble analysis (else member 0 only).
    cloud_radius : pint.Quantity, optional
        Horizontal offset of cloud members (default half a grid length).
    cloud_dp : pint.Quantity, optional
        Pressure offset of cloud members (default 5 hPa).
    start_times : sequence of numpy.datetime64, optional
        A series of arrival/release times (overrides ``start_time``).
    output_interval : pint.Quantity, optional
        Spacing of recorded points (default 1 h).
    ground : {"follow", "stop"}
        Rule for parcels that meet the ground (see ``integrate``).
    samples : sequence of str
        Extra dataset variables to record along the paths.  Temperature, potential
        temperature and geopotential height are recorded when available.
    steady : bool, optional
        Treat a single analysis time as a steady flow (default when there is one time).

    A start below the ground (:func:`parcelcast.ground.start_below_ground`: surface pressure,
    else geopotential against the orography) is not followed: it keeps its start point only,
    with status ``below_ground_start``.  Whether the requested hours were covered:
    :mod:`parcelcast.trajectories.completeness`.

    Returns
    -------
    xarray.Dataset
        Dimensions ``trajectory`` and ``obs``; ``obs = 0`` is the start point and obs
        follow the integration (backwards in time for back trajectories).  Variables
        ``time, lat, lon, pressure, on_ground`` and samples ``(trajectory, obs)``;
        ``status, member, analysis_member, start_group, central (trajectory)``;
        ``spread, spread_fraction, spread_growth, spread_growth_fraction (start_group, obs)``,
        ``start_spread (start_group)`` (see ``ensemble.py``); attrs ``hours_requested``,
        ``below_ground_check``, ``earth_radius_m`` and its source.

    Examples
    --------
    >>> from parcelcast.trajectories.analytic import solid_body_dataset
    >>> from parcelcast.units import Q_
    >>> ds = solid_body_dataset(hours=24, step_hours=6, resolution=5.0)
    >>> out = compute_trajectories(ds, 0.0, 0.0, Q_(500, "hPa"), Q_(24, "h"))
    >>> str(out.status_name.values[0])
    'ok'
    """
    if "x" in ds.dims and "y" in ds.dims:  # a projected grid: run on a lat-lon copy
        from parcelcast.grid.regrid import to_lat_lon

        ds = to_lat_lon(ds)  # attrs["regridded"] says how; it travels to the output
    span_s = float(check_quantity(duration, "time", "duration"))
    p_start = float(check_quantity(level, "pressure", "level"))
    out_s = 3600.0 if output_interval is None else float(check_quantity(output_interval, "time", "output interval"))
    dp = 500.0 if cloud_dp is None else float(check_quantity(cloud_dp, "pressure", "cloud pressure offset"))
    if members < 1:
        raise TrajectoryError(f"members must be 1 or more, got {members}")
    if not -90.0 <= lat <= 90.0:
        raise StartPointError("latitude", lat, "-90..90")
    want = ["temperature"] if "temperature" in ds.data_vars else []
    if "geopotential" in ds.data_vars:
        want.append("geopotential")
    want += [s for s in samples if s not in want]
    src, info = build_source(ds, mode, wind, want, steady)
    geom = src.geometry
    radius = 0.5 * geom.grid_length if cloud_radius is None else float(
        check_quantity(cloud_radius, "height", "cloud radius"))
    if geom.levels is None and "level" in ds.dims:
        have = float(ds["level"].values[0])
        if abs(have - p_start) > 50.0 and mode == "isobaric":
            raise SelectionError("level", f"{p_start / 100:g} hPa", f"{have / 100:g} hPa", ds.attrs.get("source_files", ""))
    times = src.times
    if start_times is None:
        if start_time is None:
            starts = [times[-1] if span_s < 0 else times[0]]
        else:
            starts = [float(to_seconds([start_time])[0])]
    else:
        starts = [float(s) for s in to_seconds(start_times)]
    if not src.steady:
        for s in starts:
            if not times[0] - 1e-6 <= s <= times[-1] + 1e-6:
                raise StartPointError("time", str(from_seconds([s])[0])[:19],
                                      f"{str(from_seconds([times[0]])[0])[:19]} .. "
                                      f"{str(from_seconds([times[-1]])[0])[:19]}")
    amembers = np.arange(src.n_members if analysis_members else 1)
    cl_lat, cl_lon, cl_dp = cloud_starts(lat, lon, members, radius, dp, geom.radius)
    results = []
    meta = []
    for g, s in enumerate(starts):
        mem = np.repeat(amembers, members)
        la = np.tile(cl_lat, amembers.size)
        lo = np.tile(cl_lon, amembers.size)
        pp = p_start + np.tile(cl_dp, amembers.size)
        if geom.levels is not None:
            # cloud members are kept within the levels (the central start is checked as given)
            pert = np.tile(np.arange(members) > 0, amembers.size)
            pp = np.where(pert, np.clip(pp, geom.levels[-1], geom.levels[0]), pp)
        if mode == "isentropic":
            z = _theta_at(src, la, lo, pp, mem, s)
        else:
            z = pp
        res = integrate(src, la, lo, z, s, span_s, member=mem, mode=mode, scheme=scheme,
                        output_interval=out_s, ground=ground, samples=want)
        cloud = np.tile(np.arange(members), amembers.size)
        ground_check = _mark_below_ground_starts(ds, res, la, lo, pp, mem, cloud, s)
        results.append(res)
        meta.append((g, mem, cloud, s))
    out = _assemble(results, meta, ds, info, mode, scheme, wind, ground, span_s, src.steady)
    out.attrs["below_ground_check"] = ground_check
    out.attrs["hours_requested"] = abs(span_s) / 3600.0  # see trajectories/completeness.py
    return out


def _mark_below_ground_starts(ds, res, la, lo, pp, mem, cloud, t) -> str:
    """Starts below the ground keep only their start point, with status
    ``below_ground_start``; returns how the ground was checked (``parcelcast.ground``).
    Each cloud position is checked once, for every analysis member."""
    from parcelcast.ground import start_below_ground
    from parcelcast.trajectories.interpolate import BELOW_GROUND_START

    first = np.unique(cloud, return_index=True)[1]  # one start per cloud member
    below, _surface, method = start_below_ground(ds, la[first], lo[first], pp[first],
                                                 from_seconds([t])[0])
    below = below[np.clip(mem, 0, below.shape[0] - 1), cloud]
    if below.any():
        res.status[below] = BELOW_GROUND_START
        res.n_valid[below] = 1
        for arr in (res.lat, res.lon, res.pressure, *res.samples.values()):
            arr[below, 1:] = np.nan
        res.on_ground[below, 1:] = False
    return method


def _theta_at(src, la, lo, pp, mem, t):
    times = src.times
    if src.steady:
        a = b = src.slice(0)
        wt = 0.0
    else:
        k = min(max(int(np.searchsorted(times, t, side="right") - 1), 0), times.size - 2)
        a, b = src.slice(k), src.slice(k + 1)
        wt = (t - times[k]) / (times[k + 1] - times[k])
    loc = locate(src.geometry, la, lo, None, mem)
    col = blend(sample_column(loc, a["theta"]), sample_column(loc, b["theta"]), wt)
    lev = src.geometry.levels
    lp = np.log(lev)
    # theta at the start pressure: linear in ln p within the column
    theta = np.array([np.interp(-np.log(p), -lp, c) for p, c in zip(pp, col)])
    if np.isnan(theta).any():
        raise StartPointError("potential temperature", "NaN", "a start inside valid data")
    check, _b, _a, _bad = pressure_on_theta(col, theta, lev)
    return theta


def _assemble(results, meta, ds, info, mode, scheme, wind, ground, span_s, steady):
    nobs = max(r.times.size for r in results)

    def pad(a, fill=np.nan):
        out = np.full((a.shape[0], nobs), fill, dtype=a.dtype if fill is not np.nan else np.float64)
        out[:, : a.shape[1]] = a
        return out

    lat = np.concatenate([pad(r.lat) for r in results])
    lon = np.concatenate([pad(r.lon) for r in results])
    prs = np.concatenate([pad(r.pressure) for r in results])
    gnd = np.concatenate([pad(r.on_ground.astype(np.int8), 0) for r in results])
    tsec = np.concatenate([
        pad(np.where(np.arange(nobs)[None, :r.times.size] < r.n_valid[:, None], r.times[None, :], np.nan))
        for r in results])
    status = np.concatenate([r.status for r in results])
    group = np.concatenate([np.full(r.status.size, m[0]) for r, m in zip(results, meta)])
    amem = np.concatenate([m[1] for m in meta])
    cloud = np.concatenate([m[2] for m in meta])
    central = (amem == 0) & (cloud == 0)
    from parcelcast.grid.earth import radius_of, source_of

    sp = spread(lat, lon, group, central, radius_of(ds))
    ntraj = lat.shape[0]
    dims = ("trajectory", "obs")
    out = xr.Dataset(
        {
            "time": (dims, from_seconds(tsec), {"standard_name": "time", "long_name": "time of the point"}),
            "lat": (dims, lat, {"standard_name": "latitude", "units": "degrees_north", "long_name": "latitude"}),
            "lon": (dims, lon, {"standard_name": "longitude", "units": "degrees_east", "long_name": "longitude"}),
            "pressure": (dims, prs, {"standard_name": "air_pressure", "units": "Pa",
                                     "long_name": "pressure of the parcel", "positive": "down", "axis": "Z"}),
            "on_ground": (dims, gnd, {"long_name": "parcel at or below the ground at this point",
                                      "flag_values": np.array([0, 1], np.int8),
                                      "flag_meanings": "above_ground at_ground"}),
            "distance_from_central": (dims, sp["distance_m"], {
                "units": "m", "long_name": "great-circle distance from the central trajectory"}),
            "trajectory_id": (("trajectory",), np.array([f"t{i:05d}" for i in range(ntraj)]),
                              {"cf_role": "trajectory_id", "long_name": "trajectory identifier"}),
            "status": (("trajectory",), status, _STATUS_ATTRS),
            "status_name": (("trajectory",), np.array([STATUS_NAMES[s] for s in status]),
                            {"long_name": "why the trajectory ended"}),
            "analysis_member": (("trajectory",), amem, {"long_name": "ensemble member of the analysis"}),
            "cloud_member": (("trajectory",), cloud, {"long_name": "member of the cloud of starts (0 = unperturbed)"}),
            "start_group": (("trajectory",), group, {"long_name": "index of the arrival/release time"}),
            "central": (("trajectory",), central.astype(np.int8), {"long_name": "unperturbed trajectory of its group"}),
            "row_size": (("trajectory",), np.concatenate([r.n_valid for r in results]),
                         {"long_name": "number of valid points"}),
            "spread": (("start_group", "obs"), sp["spread_m"], {
                "units": "m", "long_name": "mean distance of members from the central trajectory"}),
            "spread_fraction": (("start_group", "obs"), sp["fraction"], {
                "units": "1", "long_name": "spread divided by distance travelled along the central trajectory"}),
            "start_spread": (("start_group",), sp["start_m"], {
                "units": "m", "long_name": "spread at the start: the cloud's own size"}),
            "spread_growth": (("start_group", "obs"), sp["growth_m"], {
                "units": "m", "long_name": "spread minus the spread at the start (negative: converging)"}),
            "spread_growth_fraction": (("start_group", "obs"), sp["growth_fraction"], {
                "units": "1", "long_name": "spread growth divided by distance travelled along the central trajectory"}),
        },
        attrs={
            "featureType": "trajectory",
            "Conventions": "CF-1.10",
            "title": "parcelcast air-parcel trajectories",
            "direction": "backward" if span_s < 0 else "forward",
            "mode": mode,
            "scheme": scheme,
            "wind": wind,
            "ground_rule": ground,
            "steady_flow": int(bool(steady)),
            "time_step_s": float(max(r.dt for r in results)),
            "source_files": ds.attrs.get("source_files", ""),
            "earth_radius_m": radius_of(ds),
            "earth_radius_source": source_of(ds),
            **({"regridded": ds.attrs["regridded"]} if "regridded" in ds.attrs else {}),
        },
    )
    for name, values in _samples(results, pad, prs).items():
        out[name] = (dims, values[0], values[1])
    out = out.set_coords(["time", "lat", "lon", "trajectory_id"])
    return out


def _samples(results, pad, prs):
    names = list(results[0].samples)
    out = {}
    if "temperature" in names:
        t = np.concatenate([pad(r.samples["temperature"]) for r in results])
        out["temperature"] = (t, {"standard_name": "air_temperature", "units": "K",
                                  "long_name": "temperature along the path"})
        from parcelcast.thermo import potential_temperature

        out["potential_temperature"] = (potential_temperature(t, prs), {
            "standard_name": "air_potential_temperature", "units": "K",
            "long_name": "potential temperature along the path"})
    if "geopotential" in names:
        z = np.concatenate([pad(r.samples["geopotential"]) for r in results])
        out["geopotential_height"] = (z / STANDARD_GRAVITY, {
            "standard_name": "geopotential_height", "units": "m",
            "long_name": "geopotential height along the path (geopotential / g0)"})
    for name in names:
        if name in ("temperature", "geopotential"):
            continue
        out[name] = (np.concatenate([pad(r.samples[name]) for r in results]),
                     {"long_name": f"{name} along the path"})
    return out
