"""Both views of the split side by side: Eulerian at the station, Lagrangian following the air."""

from __future__ import annotations

import numpy as np

from parcelcast.budget.eulerian import eulerian_split
from parcelcast.budget.lagrangian import lagrangian_split


def trend_split(ds, lat: float, lon: float, level_hpa: float, start, end, wind: str = "actual",
                radius_km: float | None = None, station=None, members: int = 5) -> dict:
    """Both views side by side, with their difference as a consistency measure."""
    euler = eulerian_split(ds, lat, lon, level_hpa, start, end, wind, radius_km, station)
    # The Lagrangian split follows the first analysis member's unperturbed trajectory from the
    # point, so it uses that member's analysed change at the point itself (never a station
    # series or an area mean, which are not what the parcel's temperature measures).
    observed = euler.get("point_observed_change_members_K", [euler["point_observed_change_K"]])[0]
    eulerian_advective = euler.get("advective_members_K", [euler["advective_K"]])[0]
    lagr = lagrangian_split(ds, lat, lon, level_hpa, start, end, observed, wind, members)
    lagr["observed_change_K"] = observed
    difference = None
    if lagr["advective_K"] is not None and np.isfinite(eulerian_advective):
        difference = eulerian_advective - lagr["advective_K"]
    return {"eulerian": euler, "lagrangian": lagr, "advective_difference_K": difference}
