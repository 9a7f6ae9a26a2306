"""Which analysis times a window uses, and with what weights.

A window [start, end] rarely falls on analysis times.  These helpers check that the
analyses cover it, keep only the analysis times it needs, interpolate fields linearly in
time, and give the weights that turn values at analysis times into a value at one time or
into a time integral.  Times are ``datetime64``; weights are in seconds for integrals and
dimensionless for interpolation.

Two integrals:

* :func:`linear_time_weights`: the trapezoid rule, exact for a quantity that varies
  linearly in time between analysis times (a station series, one analysed field).
* :func:`simpson_nodes`: Simpson's rule on each piece of the window between analysis
  times (both ends and the midpoint).  A product of two fields that each vary linearly in
  time, such as the advection -V.grad T of linearly interpolated V and T, is quadratic in
  time on each piece, so Simpson's rule integrates it exactly where the trapezoid rule of
  the end values does not (it is off by h^3/12 times the second derivative per piece).
"""

from __future__ import annotations

import numpy as np

from parcelcast.errors import SelectionError


def _seconds_from(times, origin) -> np.ndarray:
    return (np.asarray(times, dtype="datetime64[ns]") - np.datetime64(origin, "ns")) / np.timedelta64(1, "s")


def linear_time_weights(times, start, end) -> np.ndarray:
    """Weights w_i (s) with  sum_i w_i f(t_i) = integral of the piecewise-linear f over [start, end].

    The trapezoid rule for a quantity known only at ``times`` (ascending datetime64); where
    the window starts or ends between two times, the interpolant is cut there.  The window
    must lie inside ``times``.
    """
    t = _seconds_from(times, start)
    e = (np.datetime64(end, "ns") - np.datetime64(start, "ns")) / np.timedelta64(1, "s")
    weights = np.zeros(t.size)
    for k in range(t.size - 1):
        a, b = max(t[k], 0.0), min(t[k + 1], e)
        if b <= a:
            continue
        h = t[k + 1] - t[k]
        weights[k] += ((t[k + 1] - a) ** 2 - (t[k + 1] - b) ** 2) / (2.0 * h)
        weights[k + 1] += ((b - t[k]) ** 2 - (a - t[k]) ** 2) / (2.0 * h)
    return weights


def interpolation_weights(times, when) -> np.ndarray:
    """Weights giving the linear interpolation in time at ``when`` (they sum to 1)."""
    t = _seconds_from(times, when)
    weights = np.zeros(t.size)
    hit = np.flatnonzero(t == 0.0)
    if hit.size:
        weights[hit[0]] = 1.0
        return weights
    k = int(np.searchsorted(t, 0.0) - 1)
    h = t[k + 1] - t[k]
    weights[k] = t[k + 1] / h
    weights[k + 1] = -t[k] / h
    return weights


def simpson_nodes(times, start, end) -> tuple[np.ndarray, np.ndarray]:
    """Node times (datetime64[ns]) and weights (s) of Simpson's rule on each piece of [start, end].

    The pieces are the window cut at the analysis ``times`` (ascending, covering the
    window); each piece [a, b] has nodes a, (a + b)/2, b with weights (b - a)/6, 4(b - a)/6,
    (b - a)/6, and a node shared by two pieces appears once with the sum of its weights.
    Exact for any function that is quadratic in time on each piece.
    """
    t = np.asarray(times, dtype="datetime64[ns]")
    a, b = np.datetime64(start, "ns"), np.datetime64(end, "ns")
    cuts = np.unique(np.concatenate([[a], t[(t > a) & (t < b)], [b]]))
    span = (cuts[1:] - cuts[:-1]) / np.timedelta64(1, "s")
    middle = cuts[:-1] + (cuts[1:] - cuts[:-1]) // 2
    nodes = np.concatenate([cuts, middle])
    weights = np.concatenate([np.zeros(cuts.size), 4.0 * span / 6.0])
    weights[:cuts.size - 1] += span / 6.0
    weights[1:cuts.size] += span / 6.0
    order = np.argsort(nodes, kind="stable")
    return nodes[order], weights[order]


def interpolate_in_time(da, when):
    """``da`` interpolated linearly in time to the times ``when`` (its new ``time`` axis).

    A time that is an analysis time takes that analysis as it is, so a NaN at the
    neighbouring time does not spread; between two times a NaN at either gives NaN
    (missing stays missing).  Attributes (units) are kept.
    """
    import xarray as xr

    t = _seconds_from(da["time"].values, da["time"].values[0])
    x = _seconds_from(when, da["time"].values[0])
    lo = np.clip(np.searchsorted(t, x, side="right") - 1, 0, t.size - 1)
    hi = np.minimum(lo + 1, t.size - 1)
    gap = t[hi] - t[lo]
    frac = np.where(gap > 0, (x - t[lo]) / np.where(gap > 0, gap, 1.0), 0.0)
    hi = np.where(frac > 0, hi, lo)
    alpha = xr.DataArray(frac, dims="time")
    timed = [c for c in da.coords if "time" in da[c].dims]  # would repeat: dropped, time set below
    below = da.isel(time=xr.DataArray(lo, dims="time")).drop_vars(timed)
    above = da.isel(time=xr.DataArray(hi, dims="time")).drop_vars(timed)
    out = (below * (1.0 - alpha) + above * alpha).assign_coords(time=np.asarray(when, "datetime64[ns]"))
    out.attrs = dict(da.attrs)
    return out


def check_window(ds, start, end) -> None:
    """Refuse a window that is empty, reversed or not covered by the analysis times."""
    source = ds.attrs.get("source_files", "")
    if "time" not in ds.dims:
        raise SelectionError("window", f"{str(start)[:16]} to {str(end)[:16]} UTC",
                             "nothing: the analysis has no time coordinate", source)
    times = ds["time"].values
    if not np.datetime64(end, "ns") > np.datetime64(start, "ns"):
        raise SelectionError("window", f"{str(start)[:16]} to {str(end)[:16]}",
                             "a window whose end is after its start", source)
    if np.datetime64(start, "ns") < times[0] or np.datetime64(end, "ns") > times[-1]:
        raise SelectionError("window", f"{str(start)[:16]} to {str(end)[:16]} UTC",
                             f"analysis times {str(times[0])[:16]} to {str(times[-1])[:16]} UTC", source)


def bounding_times(ds, start, end):
    """The analysis times from the last one at or before ``start`` to the first at or after ``end``."""
    times = ds["time"].values
    first = int(np.searchsorted(times, np.datetime64(start, "ns"), side="right") - 1)
    last = int(np.searchsorted(times, np.datetime64(end, "ns"), side="left"))
    return ds.isel(time=slice(max(first, 0), last + 1))


def weighted(da, weights):
    """sum_i w_i da(t_i) along ``time`` over the times that count (a NaN outside the window does not
    reach the result; a NaN inside it does: missing stays missing)."""
    import xarray as xr

    used = np.flatnonzero(weights)
    w = xr.DataArray(weights[used], dims="time", coords={"time": da["time"].values[used]})
    return (da.isel(time=used) * w).sum("time", skipna=False)
