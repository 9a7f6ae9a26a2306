"""Ensembles of trajectories: clouds of starts around a point, and the spread of members.

What belongs here: the deterministic pattern of perturbed starts (:func:`cloud_offsets`)
and the spread measure (:func:`spread`).

Spread is the mean great-circle distance of the members of one arrival (or release) time
from that time's central path (unperturbed start, first analysis member), at each
recorded time; also given as a fraction of the distance travelled along the central path
up to that time (Stohl 1998 uses the same normalisation, "relative transport deviation").
The spread at the start is the cloud's own size (the members start apart by design); the
*growth* is the spread minus that start value: what the flow did to the cloud (negative
where the members converge).  Both are reported; the growth fraction divides the growth by
the distance travelled.

References
----------
Stohl, A. (1998). Computation, accuracy and applications of trajectories - a review and
    bibliography. Atmos. Environ. 32, 947-966.
Merrill, J. T. et al. (1985): ensembles of starts to gauge trajectory sensitivity.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import EARTH_RADIUS
from parcelcast.trajectories.sphere import great_circle_distance, offset_point


def cloud_offsets(n: int, radius_m: float, dp_pa: float):
    """Offsets of ``n`` cloud members: the first unperturbed, the rest on a ring.

    Member ``c >= 1`` sits at distance ``radius_m`` in direction ``2 pi (c - 1) / (n - 1)``
    (clockwise from north), with pressure offset ``+dp`` for odd and ``-dp`` for even ``c``.

    Returns
    -------
    north_m, east_m, dp : ndarray (n,)
    """
    c = np.arange(n)
    ang = np.where(c > 0, 2 * np.pi * (c - 1) / max(n - 1, 1), 0.0)
    r = np.where(c > 0, radius_m, 0.0)
    dp = np.where(c == 0, 0.0, np.where(c % 2 == 1, dp_pa, -dp_pa))
    return r * np.cos(ang), r * np.sin(ang), dp


def cloud_starts(lat: float, lon: float, n: int, radius_m: float, dp_pa: float,
                 earth_radius: float = EARTH_RADIUS):
    """Start latitudes, longitudes (degrees) and pressure offsets (Pa) of a cloud of ``n``
    on a sphere of ``earth_radius`` (m)."""
    north, east, dp = cloud_offsets(n, radius_m, dp_pa)
    la, lo = offset_point(np.full(n, lat), np.full(n, lon), north, east, earth_radius)
    return la, lo, dp


def path_length(lat: np.ndarray, lon: np.ndarray, earth_radius: float = EARTH_RADIUS) -> np.ndarray:
    """Cumulative distance (m) along a path of points ``(..., nobs)``; NaN after its end."""
    seg = great_circle_distance(lat[..., :-1], lon[..., :-1], lat[..., 1:], lon[..., 1:], earth_radius)
    out = np.zeros(lat.shape)
    out[..., 1:] = np.cumsum(seg, axis=-1)
    out[np.isnan(lat)] = np.nan
    return out


def spread(lat: np.ndarray, lon: np.ndarray, group: np.ndarray, central: np.ndarray,
           earth_radius: float = EARTH_RADIUS):
    """Spread of trajectory groups about their central paths.

    Parameters
    ----------
    lat, lon : ndarray (ntraj, nobs)
        Positions in degrees (NaN after a trajectory stopped).
    group : ndarray of int (ntraj,)
        Group (arrival time) of each trajectory.
    central : ndarray of bool (ntraj,)
        True for the central trajectory of its group (one per group).
    earth_radius : float
        The Earth's radius (m) of the analysis.

    Returns
    -------
    dict
        ``groups`` (ng,), ``spread_m`` (ng, nobs) mean distance of the other members from
        the central path (NaN where no member is valid), ``fraction`` (ng, nobs) the same
        divided by the distance travelled along the central path, ``distance_m`` (ntraj,
        nobs) each trajectory's distance from its central path, ``start_m`` (ng,) the
        spread at the start (the cloud's own size), ``growth_m`` (ng, nobs) the spread
        minus ``start_m`` and ``growth_fraction`` (ng, nobs) the growth divided by the
        distance travelled.
    """
    groups = np.unique(group)
    nobs = lat.shape[1]
    spread_m = np.full((groups.size, nobs), np.nan)
    frac = np.full((groups.size, nobs), np.nan)
    growth_frac = np.full((groups.size, nobs), np.nan)
    dist = np.full(lat.shape, np.nan)
    for gi, g in enumerate(groups):
        members = np.flatnonzero(group == g)
        c = members[central[members]][0]
        d = great_circle_distance(lat[members], lon[members], lat[c][None], lon[c][None], earth_radius)
        dist[members] = d
        others = members != c
        if others.any():
            with np.errstate(invalid="ignore"):
                valid = ~np.isnan(d[others])
                cnt = valid.sum(axis=0)
                s = np.where(cnt > 0, np.nansum(d[others], axis=0) / np.maximum(cnt, 1), np.nan)
            spread_m[gi] = s
            travelled = path_length(lat[c], lon[c], earth_radius)
            with np.errstate(invalid="ignore", divide="ignore"):
                frac[gi] = np.where(travelled > 0, s / travelled, np.nan)
                growth_frac[gi] = np.where(travelled > 0, (s - s[0]) / travelled, np.nan)
    start = spread_m[:, 0].copy()
    return {"groups": groups, "spread_m": spread_m, "fraction": frac, "distance_m": dist,
            "start_m": start, "growth_m": spread_m - start[:, None], "growth_fraction": growth_frac}
