"""The Lagrangian split: the change following the air, from isobaric back trajectories.

A back trajectory from the station at ``end`` to ``start`` on the pressure level.  The
change following the parcel, T(station, end) - T(origin, start), is the non-advective part
(omega S_p + Q/c_p integrated along the path); the advective part is the observed change
minus it.  Each analysis member has its own unperturbed trajectory; the reported parts are
their mean (the footing of the Eulerian parts).  The cloud of starts and the members give
a spread.
"""

from __future__ import annotations

import numpy as np

from parcelcast.budget.consistency import footing


def lagrangian_split(ds, lat: float, lon: float, level_hpa: float, start, end,
                     observed_change, wind: str = "actual", members: int = 5,
                     scheme: str = "petterssen", paths=None) -> dict:
    """The Lagrangian split from isobaric back trajectories arriving at ``end``.

    Parameters
    ----------
    observed_change : float or sequence of float
        The analysed change at the point (K): one value per analysis member, or one value
        used for every member.
    members : int
        Trajectories in the cloud of starts of each analysis member.
    paths : xarray.Dataset, optional
        The trajectories of this very call (same point, level, window, wind, members and
        scheme) when the caller already has them; computed here when None.

    Returns
    -------
    dict
        ``non_advective_K`` and ``advective_K``: means over the analysis members of the
        parts along each member's unperturbed trajectory (None when any of them did not
        reach ``start``: missing stays missing); ``*_members_K`` lists per member when the
        analysis has members; ``footing`` says which; ``spread_K`` (standard deviation of
        the non-advective part over all trajectories that reached ``start``),
        ``trajectories`` used, ``reached_start``, their statuses, the origin of the first
        member's unperturbed trajectory and the ``paths``.
    """
    from parcelcast.budget.eulerian import at_surface
    from parcelcast.selection import is_surface
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.units import Q_

    hours = (np.datetime64(end, "ns") - np.datetime64(start, "ns")) / np.timedelta64(1, "h")
    ds, pressure = at_surface(ds, level_hpa, wind), level_hpa
    if is_surface(level_hpa):  # the surface: one level, the 10-m wind; the pressure of a
        pressure = 1000.0      # single-level field is not used (it only labels the path)
    if paths is None:
        paths = compute_trajectories(ds, lat, lon, Q_(pressure, "hPa"), Q_(-float(hours), "h"),
                                     start_time=np.datetime64(end, "ns"), mode="isobaric",
                                     scheme=scheme, wind=wind, members=members)
    last = paths["row_size"].values - 1
    index = np.arange(paths.sizes["trajectory"])
    arrival_t = paths["temperature"].values[:, 0]
    origin_t = paths["temperature"].values[index, last]
    origin_time = paths["time"].values[index, last]
    reached = (paths["status_name"].values == "ok") & (origin_time == np.datetime64(start, "ns"))
    change = np.where(reached, arrival_t - origin_t, np.nan)
    unperturbed = np.flatnonzero(paths["cloud_member"].values == 0)
    unperturbed = unperturbed[np.argsort(paths["analysis_member"].values[unperturbed])]
    non_advective = change[unperturbed]
    observed = np.broadcast_to(np.asarray(observed_change, dtype=np.float64), non_advective.shape)
    advective = observed - non_advective
    central = int(np.flatnonzero(paths["central"].values)[0])
    usable = change[np.isfinite(change)]
    out = {
        "non_advective_K": _mean_or_none(non_advective),
        "advective_K": _mean_or_none(advective),
        "footing": footing(unperturbed.size if "member" in ds.dims else None),
        "spread_K": float(np.std(usable)) if usable.size > 1 else None,
        "trajectories": int(paths.sizes["trajectory"]),
        "reached_start": int(reached.sum()),
        "statuses": sorted(set(paths["status_name"].values.tolist())),
        "origin_lat": float(paths["lat"].values[central, last[central]]),
        "origin_lon": float(paths["lon"].values[central, last[central]]),
        "paths": paths,
    }
    if "member" in ds.dims:
        out["non_advective_members_K"] = [_number_or_none(x) for x in non_advective]
        out["advective_members_K"] = [_number_or_none(x) for x in advective]
    return out


def _number_or_none(x) -> float | None:
    return float(x) if np.isfinite(x) else None


def _mean_or_none(values: np.ndarray) -> float | None:
    """Mean of the members; None if any is missing (no member is silently dropped)."""
    return float(np.mean(values)) if values.size and np.all(np.isfinite(values)) else None
