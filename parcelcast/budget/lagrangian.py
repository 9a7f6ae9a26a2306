"""The Lagrangian split: the change following the air, from isobaric back trajectories.

A back trajectory from the station at ``end`` to ``start`` on the pressure level.  The
change following the parcel, T(station, end) - T(origin, start), is the non-advective part
(omega S_p + Q/c_p integrated along the path); the advective part is the observed change
minus it.  The cloud of starts and the members of an ensemble analysis give a spread.
"""

from __future__ import annotations

import numpy as np


def lagrangian_split(ds, lat: float, lon: float, level_hpa: float, start, end,
                     observed_change: float, wind: str = "actual", members: int = 5,
                     scheme: str = "petterssen") -> dict:
    """The Lagrangian split from isobaric back trajectories arriving at ``end``.

    Returns
    -------
    dict
        ``non_advective_K`` and ``advective_K`` (unperturbed trajectory of the first
        analysis member), ``spread_K`` (standard deviation of the non-advective part over
        all trajectories that reached ``start``), ``trajectories`` used and their statuses.
    """
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.units import Q_

    hours = (np.datetime64(end, "ns") - np.datetime64(start, "ns")) / np.timedelta64(1, "h")
    paths = compute_trajectories(ds, lat, lon, Q_(level_hpa, "hPa"), Q_(-float(hours), "h"),
                                 start_time=np.datetime64(end, "ns"), mode="isobaric",
                                 scheme=scheme, wind=wind, members=members)
    last = paths["row_size"].values - 1
    index = np.arange(paths.sizes["trajectory"])
    arrival_t = paths["temperature"].values[:, 0]
    origin_t = paths["temperature"].values[index, last]
    origin_time = paths["time"].values[index, last]
    reached = (paths["status_name"].values == "ok") & (origin_time == np.datetime64(start, "ns"))
    change = np.where(reached, arrival_t - origin_t, np.nan)
    central = int(np.flatnonzero(paths["central"].values)[0])
    non_advective = float(change[central])
    usable = change[np.isfinite(change)]
    return {
        "non_advective_K": non_advective if np.isfinite(non_advective) else None,
        "advective_K": (observed_change - non_advective) if np.isfinite(non_advective) else None,
        "spread_K": float(np.std(usable)) if usable.size > 1 else None,
        "trajectories": int(paths.sizes["trajectory"]),
        "reached_start": int(reached.sum()),
        "statuses": sorted(set(paths["status_name"].values.tolist())),
        "origin_lat": float(paths["lat"].values[central, last[central]]),
        "origin_lon": float(paths["lon"].values[central, last[central]]),
        "paths": paths,
    }
