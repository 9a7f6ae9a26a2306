"""Did the trajectories cover the hours asked for?  Completeness of a trajectory result.

What belongs here: from the dataset of :func:`~parcelcast.trajectories.api.compute_trajectories`,
how many hours each start group's trajectories covered against the hours requested, the
members' statuses counted, and the one-line warning a command prints when a result is
incomplete.  A result is *complete* when every trajectory covers every requested hour.
"""

from __future__ import annotations

from collections import Counter

import numpy as np

#: why a trajectory ended, in words (keys: ``interpolate.STATUS_NAMES``)
ENDED_BECAUSE = {
    "ok": "ran the whole span",
    "left_domain": "left the grid or the levels",
    "left_time_range": "reached the end of the analysis times",
    "hit_ground": "met the ground",
    "missing_data": "reached missing data (e.g. the equatorial band of the geostrophic wind)",
    "below_ground_start": "started below the ground",
}

_TOLERANCE_H = 1e-6


def hours_covered(ds) -> np.ndarray:
    """Hours from the start point to the last valid point of each trajectory, (trajectory,)."""
    last = np.maximum(ds["row_size"].values - 1, 0)
    rows = np.arange(ds.sizes["trajectory"])
    span = ds["time"].values[rows, last] - ds["time"].values[:, 0]
    return np.abs(span / np.timedelta64(1, "h")).astype(np.float64)


def group_completeness(ds, group: int) -> dict:
    """Completeness of one start group (arrival or release time).

    Returns
    -------
    dict
        ``complete`` (bool), ``hours_requested``, ``hours_covered`` (central path),
        ``hours_covered_min`` (over all trajectories), ``trajectories_complete`` and
        ``trajectories`` (counts), ``member_statuses`` ({status: count}).
    """
    rows = np.flatnonzero(ds["start_group"].values == group)
    covered = hours_covered(ds)[rows]
    requested = float(ds.attrs["hours_requested"])
    central = rows[np.argmax(ds["central"].values[rows])]
    full = covered >= requested - _TOLERANCE_H
    full &= ds["status_name"].values[rows] != "below_ground_start"
    return {
        "complete": bool(full.all()),
        "hours_requested": round(requested, 3),
        "hours_covered": round(float(hours_covered(ds)[central]), 3),
        "hours_covered_min": round(float(covered.min()), 3),
        "trajectories": int(rows.size),
        "trajectories_complete": int(full.sum()),
        "member_statuses": dict(sorted(Counter(ds["status_name"].values[rows].tolist()).items())),
    }


def completeness(ds) -> dict:
    """Completeness of the whole result: as :func:`group_completeness` over every group
    (``hours_covered`` is the first group's central path) plus ``groups`` and
    ``groups_incomplete`` (start times of a series)."""
    groups = np.unique(ds["start_group"].values)
    each = [group_completeness(ds, int(g)) for g in groups]
    first = each[0]
    statuses = Counter()
    for item in each:
        statuses.update(item["member_statuses"])
    return {
        "complete": all(item["complete"] for item in each),
        "hours_requested": first["hours_requested"],
        "hours_covered": first["hours_covered"],
        "hours_covered_min": min(item["hours_covered_min"] for item in each),
        "trajectories": sum(item["trajectories"] for item in each),
        "trajectories_complete": sum(item["trajectories_complete"] for item in each),
        "member_statuses": dict(sorted(statuses.items())),
        "groups": len(each),
        "groups_incomplete": sum(not item["complete"] for item in each),
    }


def incomplete_text(info: dict) -> str:
    """One line for an incomplete result (empty when complete): hours covered by the central
    path and by the shortest trajectory, the statuses counted and explained."""
    if info["complete"]:
        return ""
    counts = ", ".join(f"{n} {name}" + ("" if name == "ok" else f": {ENDED_BECAUSE.get(name, name)}")
                       for name, n in info["member_statuses"].items())
    text = (f"INCOMPLETE: the central path covers {info['hours_covered']:g} of the "
            f"{info['hours_requested']:g} h asked for, the shortest {info['hours_covered_min']:g} h; "
            f"{info['trajectories_complete']} of {info['trajectories']} trajectories complete ({counts})")
    if "groups_incomplete" in info and info.get("groups", 1) > 1:
        text += f"; {info['groups_incomplete']} of {info['groups']} start times incomplete"
    return text
