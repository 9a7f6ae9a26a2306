"""The split at one station for each window of a block of times (runs inside one task).

Each window's parts come from :func:`parcelcast.budget.eulerian_split` on the block (the
station's neighbourhood, in memory); nothing of the split is redone here.  Where the
input cannot give a part at all (no wind, no omega) or a window holds a gap or missing
values, the part is ``None`` and ``missing`` says why.
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
    and ``missing`` (part -> reason).  ``block`` holds the times the windows need."""
    block = block.load()
    times = block["time"].values
    return [_row(block, lat, lon, level_hpa, wind, w, missing, gap_reason(times, w, step))
            for w in windows]


def _row(block, lat, lon, level_hpa, wind, window: Window, missing: dict, gap) -> dict:
    reasons = dict(missing)
    values = dict.fromkeys(PARTS)
    if gap:
        reasons = dict.fromkeys(PARTS, gap)
    elif "advective_K" in missing:
        values["observed_change_K"] = _observed_change(block, lat, lon, level_hpa, window)
        reasons["residual_K"] = "needs the advective part"
    else:
        from parcelcast.budget import eulerian_split

        split = eulerian_split(block, lat, lon, level_hpa, window.start, window.end, wind)
        values.update({k: split[k] for k in PARTS})
    for key, value in values.items():
        if value is not None and not math.isfinite(value):
            values[key] = None
            reasons[key] = NAN_REASON
        elif value is None and key not in reasons:
            reasons[key] = NAN_REASON
    return {"start": window.start, "end": window.end, **values,
            "missing": {k: reasons[k] for k in PARTS if values[k] is None}}


def _observed_change(block, lat, lon, level_hpa, window: Window) -> float:
    """T(end) - T(start) at the station (bilinear; linear in time between analyses), with
    the split's own interpolation weights; for inputs that allow no advective part."""
    from parcelcast.budget import interpolation_weights
    from parcelcast.sampling import value_at
    from parcelcast.selection import member_mean, select_level

    series = member_mean(value_at(select_level(block[["temperature"]], level_hpa)["temperature"],
                                  lat, lon)).values
    times = block["time"].values
    change = (interpolation_weights(times, window.end) - interpolation_weights(times, window.start))
    used = np.flatnonzero(change)
    return float(np.sum(change[used] * series[used]))
