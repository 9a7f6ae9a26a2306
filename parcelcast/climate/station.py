"""The split at one station for all the windows of a block of times (runs inside one task).

The same split as :func:`parcelcast.budget.eulerian_split`, computed for many windows at
once: the fields are interpolated in time once at every window's integration nodes
(:func:`parcelcast.budget.windows.simpson_nodes`, :func:`~parcelcast.budget.windows.interpolate_in_time`),
the advection and omega S_p are evaluated once on the station's 4 x 4 neighbourhood and
taken bilinearly at the station, and each window is a weighted sum of those values with
the split's own weights.  Sums and the bilinear interpolation are linear, so the result
equals the split window by window (tests compare them).  Where the input cannot give a
part at all (no wind, no omega) or a window holds a gap or missing values, the part is
``None`` and ``missing`` says why.
"""

from __future__ import annotations

import math

import numpy as np

from parcelcast.climate.windows import Window, gap_reason

PARTS = ("observed_change_K", "advective_K", "vertical_K", "residual_K")

NAN_REASON = "missing values (NaN) in the analysis at or next to the station in this window"


def block_rows(block, lat: float, lon: float, level_hpa: float, wind: str,
               windows: list[Window], missing: dict, step) -> list[dict]:
    """One row per window: ``start``, ``end`` (datetime64), the four parts (float or None)
    and ``missing`` (part -> reason).  ``block`` holds the times the windows need (dask
    computes it before this runs; files a worker opens itself get the small chunk cache)."""
    from parcelcast.climate.run import small_netcdf_chunk_cache

    small_netcdf_chunk_cache()
    block = block.load()
    times = block["time"].values
    parts = block_parts(block, lat, lon, level_hpa, wind, windows,
                        with_advection="advective_K" not in missing)
    below = _below_ground(block, lat, lon, level_hpa, windows)
    rows = []
    for k, window in enumerate(windows):
        values = {p: (None if parts.get(p) is None else float(parts[p][k])) for p in PARTS}
        reason = gap_reason(times, window, step) or (below[k] and _ground_reason(level_hpa))
        rows.append(_row(window, values, missing, reason))
    return rows


def _below_ground(block, lat, lon, level_hpa, windows) -> list[bool]:
    """For each window: does the level lie below the ground at one of the station's 2 x 2
    grid points at any analysis time the window uses (then the split masks it)?"""
    from parcelcast.climate.windows import bounding_slice
    from parcelcast.ground import below_ground
    from parcelcast.sampling import corner_box
    from parcelcast.selection import select_level

    mask, _ = below_ground(select_level(block, level_hpa))
    if mask is None:
        return [False] * len(windows)
    corners = corner_box(mask, lat, lon)
    corners = corners.any([d for d in corners.dims if d not in ("member", "time")])
    if "time" not in corners.dims:
        return [bool(corners.any())] * len(windows)
    at_times = np.atleast_2d(corners.transpose(..., "time").values).any(axis=0)
    times = block["time"].values
    return [bool(at_times[bounding_slice(times, w, w)].any()) for w in windows]


def _ground_reason(level_hpa: float) -> str:
    from parcelcast.ground import BELOW_GROUND

    return f"{BELOW_GROUND}: the {level_hpa:g} hPa level lies below the surface at or next to the station"


def block_parts(block, lat, lon, level_hpa, wind, windows, with_advection=True) -> dict:
    """part -> array (n_windows,) of member means (K); a part the input lacks is absent."""
    from parcelcast.budget import interpolation_weights
    from parcelcast.sampling import value_at
    from parcelcast.selection import select_level

    level = select_level(block, level_hpa)
    times = block["time"].values
    change = np.stack([interpolation_weights(times, w.end) - interpolation_weights(times, w.start)
                       for w in windows])
    parts = {"observed_change_K": _weighted_sums(value_at(level["temperature"], lat, lon), change)}
    if not with_advection:
        return parts
    from parcelcast.budget.windows import interpolate_in_time

    nodes, integral = _integration_nodes(times, windows)
    at_nodes = [interpolate_in_time(x, nodes) for x in _advection_inputs(block, level, level_hpa, wind)]
    from parcelcast.advection import advection

    parts["advective_K"] = _weighted_sums(value_at(advection(*at_nodes), lat, lon), integral)
    parts["residual_K"] = parts["observed_change_K"] - parts["advective_K"]
    vertical = _vertical_term_at_nodes(block, level_hpa, nodes)
    if vertical is not None:
        parts["vertical_K"] = _weighted_sums(value_at(vertical, lat, lon), integral)
        parts["residual_K"] = parts["residual_K"] - parts["vertical_K"]
    return parts


def _advection_inputs(block, level, level_hpa, wind):
    """(temperature, u, v) on the level: the actual wind or the geostrophic one."""
    if wind == "actual":
        return level["temperature"], level["u"], level["v"]
    from parcelcast.geostrophic import geostrophic_wind
    from parcelcast.selection import select_level

    return (level["temperature"], *geostrophic_wind(select_level(block[["geopotential"]], level_hpa)))


def _integration_nodes(times, windows):
    """All windows' Simpson nodes (ascending, unique) and the matrix (n_windows, n_nodes) of
    each window's weights (s) on them."""
    from parcelcast.budget.windows import simpson_nodes

    per_window = [simpson_nodes(times, w.start, w.end) for w in windows]
    nodes = np.unique(np.concatenate([n for n, _ in per_window]))
    matrix = np.zeros((len(windows), nodes.size))
    for k, (n, weights) in enumerate(per_window):
        np.add.at(matrix[k], np.searchsorted(nodes, n), weights)
    return nodes, matrix


def _vertical_term_at_nodes(block, level_hpa, nodes):
    """omega * S_p (K s-1) on the level at the nodes (omega and S_p each interpolated in
    time, as the split does), or None without omega."""
    if "omega" not in block.data_vars or block.sizes.get("level", 0) < 2:
        return None
    import xarray as xr

    from parcelcast.budget.windows import interpolate_in_time
    from parcelcast.selection import select_level
    from parcelcast.thermo import static_stability

    temperature = block["temperature"].transpose(..., "level")
    stability = temperature.copy(data=static_stability(temperature.values, block["level"].values))
    level = select_level(xr.Dataset({"omega": block["omega"], "stability": stability}), level_hpa)
    return interpolate_in_time(level["omega"], nodes) * interpolate_in_time(level["stability"], nodes)


def _weighted_sums(point, weights: np.ndarray) -> np.ndarray:
    """sum_i w[k, i] x(t_i) for every window k over the times with a weight (a NaN where the
    weight is 0 does not count; one where it counts makes the window NaN), member mean."""
    values = np.atleast_2d(point.transpose(..., "time").values)  # (members, times)
    products = np.where(weights != 0.0, weights[None] * values[:, None, :], 0.0)
    return products.sum(axis=-1).mean(axis=0)


def _row(window: Window, values: dict, missing: dict, void: str | None) -> dict:
    """The row of one window; ``void`` is a reason that empties every part (a gap, the
    level below the ground)."""
    reasons = dict(missing)
    if void:
        values, reasons = dict.fromkeys(PARTS), dict.fromkeys(PARTS, void)
    elif "advective_K" in missing:
        reasons["residual_K"] = "needs the advective part"
    for key, value in values.items():
        if value is not None and not math.isfinite(value):
            values[key] = None
            reasons[key] = NAN_REASON
    return {"start": window.start, "end": window.end, **values,
            "missing": {k: reasons[k] for k in PARTS if values[k] is None}}
