"""Consecutive windows of a record, and the blocks of windows that one task computes.

A window is ``[start, start + hours]``; the first starts at the record's first analysis
time and each next one starts where the previous ended, as long as it ends within the
record.  A block groups consecutive windows so that one task reads one stretch of times.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from parcelcast.errors import ParcelcastError


@dataclass(frozen=True)
class Window:
    """One window: ``start`` and ``end`` as numpy datetime64[ns] (UTC)."""

    start: np.datetime64
    end: np.datetime64

    @property
    def month(self) -> str:
        """Calendar month of the window's start, ``YYYY-MM`` (the summary groups by it)."""
        return str(self.start)[:7]


def consecutive_windows(times, hours: float) -> list[Window]:
    """Windows of ``hours`` (> 0) back to back from the first of ``times`` (ascending, UTC).

    Raises
    ------
    ParcelcastError
        When the window is not positive or longer than the record.
    """
    times = np.asarray(times, dtype="datetime64[ns]")
    if not hours > 0:
        raise ParcelcastError(f"--window must be a positive number of hours; got {hours:g}")
    step = np.timedelta64(int(round(hours * 3600e9)), "ns")
    if times.size < 2 or times[0] + step > times[-1]:
        span = (times[-1] - times[0]) / np.timedelta64(1, "h") if times.size else 0.0
        raise ParcelcastError(f"a window of {hours:g} h does not fit in the record "
                              f"({times.size} analysis time(s) spanning {span:g} h)")
    count = int((times[-1] - times[0]) // step)
    return [Window(times[0] + k * step, times[0] + (k + 1) * step) for k in range(count)]


def bounding_slice(times, first: Window, last: Window) -> slice:
    """Index slice of ``times`` from the last at or before ``first.start`` to the first at or
    after ``last.end``: the analysis times a block of windows needs."""
    lo = int(np.searchsorted(times, first.start, side="right") - 1)
    hi = int(np.searchsorted(times, last.end, side="left"))
    return slice(max(lo, 0), min(hi, len(times) - 1) + 1)


def blocks(windows: list[Window], per_block: int) -> list[list[Window]]:
    """Consecutive groups of at most ``per_block`` windows."""
    per_block = max(int(per_block), 1)
    return [windows[i:i + per_block] for i in range(0, len(windows), per_block)]


def gap_reason(times, window: Window, usual_step: np.timedelta64) -> str | None:
    """A reason when the analysis times a window uses are further apart than 1.5 times the
    record's usual step (a gap: the time integrals would bridge it by a straight line)."""
    used = times[bounding_slice(times, window, window)]
    if used.size < 2:
        return None
    widest = np.diff(used).max()
    if widest > 1.5 * usual_step:
        return (f"gap in the analysis times: {widest / np.timedelta64(1, 'h'):g} h between two "
                f"analyses (the record's usual step is {usual_step / np.timedelta64(1, 'h'):g} h)")
    return None


def usual_step(times) -> np.timedelta64:
    """The median spacing of the record's analysis times."""
    return np.median(np.diff(np.asarray(times, dtype="datetime64[ns]")).astype(np.int64)).astype(
        "timedelta64[ns]")
