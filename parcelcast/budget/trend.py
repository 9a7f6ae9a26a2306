"""Both views of the split side by side, with how far they agree (never forced together)."""

from __future__ import annotations

import numpy as np

from parcelcast.budget.consistency import assess
from parcelcast.budget.eulerian import eulerian_split
from parcelcast.budget.lagrangian import lagrangian_split
from parcelcast.budget.windows import bounding_times


def trend_split(ds, lat: float, lon: float, level_hpa: float, start, end, wind: str = "actual",
                radius_km: float | None = None, station=None, members: int = 5,
                paths=None) -> dict:
    """The Eulerian and the Lagrangian split of one window, and their ``consistency``.

    The Lagrangian view follows each analysis member's unperturbed trajectory from the point,
    so it uses each member's analysed change at the point itself (never a station series or
    an area mean, which are not what the parcel's temperature measures).  Both views are
    then member means: ``consistency`` (see :mod:`parcelcast.budget.consistency`) compares
    like with like.  ``advective_difference_K`` is its ``eulerian_minus_lagrangian_K``.
    ``paths``: back trajectories the caller already computed for this window (see
    :func:`~parcelcast.budget.lagrangian.lagrangian_split`).
    """
    euler = eulerian_split(ds, lat, lon, level_hpa, start, end, wind, radius_km, station)
    observed = euler.get("point_observed_change_members_K", euler["point_observed_change_K"])
    lagr = lagrangian_split(ds, lat, lon, level_hpa, start, end, observed, wind, members,
                            paths=paths)
    lagr["observed_change_K"] = euler["point_observed_change_K"]
    consistency = assess(euler, lagr, _spacing_h(ds, start, end))
    return {"eulerian": euler, "lagrangian": lagr, "consistency": consistency,
            "advective_difference_K": consistency["eulerian_minus_lagrangian_K"]}


def _spacing_h(ds, start, end) -> float:
    """Largest gap (h) between the analysis times that bound the window."""
    times = bounding_times(ds, start, end)["time"].values
    return float(np.max(np.diff(times)) / np.timedelta64(1, "h")) if times.size > 1 else 0.0
