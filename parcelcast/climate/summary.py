"""The summary of a climate run by calendar month: count, mean and spread of each part,
and the share of the change that was advective.

Share (common practice for budget climatologies: a covariance decomposition): over the
month's windows where the observed change and the advective part are both present,

    share = cov(advective, observed) / var(observed)

Since observed = advective + (vertical + residual), the shares of the advective and the
non-advective parts add up to 1; a share near 1 means the window-to-window changes were
carried in by the wind, near 0 that they were made locally.  Spread is the standard
deviation (ddof=1).  Only the few numbers per window are kept (never fields).
"""

from __future__ import annotations

import numpy as np

from parcelcast.climate.station import PARTS


class MonthlySummary:
    """Collects rows (see :func:`parcelcast.climate.run.station_rows`) month by month."""

    def __init__(self):
        self._values: dict[str, dict[str, list[float]]] = {}

    def add(self, row: dict) -> None:
        """Take one window's row (month from its start)."""
        month = str(row["start"])[:7]
        parts = self._values.setdefault(month, {p: [] for p in PARTS})
        for p in PARTS:
            parts[p].append(np.nan if row[p] is None else float(row[p]))

    def values(self) -> dict[str, dict[str, np.ndarray]]:
        """month -> part -> values (NaN where missing), for plotting."""
        return {m: {p: np.asarray(v) for p, v in parts.items()} for m, parts in self._values.items()}

    def by_month(self) -> list[dict]:
        """One entry per month: ``month``, ``windows`` and per part ``count``, ``mean_K``,
        ``spread_K`` (None when there are too few values), and ``advective_share``."""
        out = []
        for month, parts in self.values().items():
            entry = {"month": month, "windows": int(parts["observed_change_K"].size)}
            for p in PARTS:
                entry[p.removesuffix("_K")] = _statistics(parts[p])
            entry["advective_share"] = _share(parts["advective_K"], parts["observed_change_K"])
            out.append(entry)
        return out


def _statistics(values: np.ndarray) -> dict:
    present = values[np.isfinite(values)]
    return {"count": int(present.size),
            "mean_K": float(present.mean()) if present.size else None,
            "spread_K": float(present.std(ddof=1)) if present.size > 1 else None}


def _share(advective: np.ndarray, observed: np.ndarray) -> float | None:
    both = np.isfinite(advective) & np.isfinite(observed)
    if both.sum() < 2:
        return None
    a, o = advective[both], observed[both]
    variance = np.var(o, ddof=1)
    if variance == 0.0:
        return None
    return float(np.cov(a, o, ddof=1)[0, 1] / variance)
