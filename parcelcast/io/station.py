"""Station temperature series from CSV: times converted to UTC, gaps found and reported.

Format: a header row; a ``time`` column in ISO 8601 (an offset such as ``+01:00`` is
honoured; times without one are UTC) and one temperature column whose name states the
unit: ``temperature_K``, ``temperature_degC`` or ``temperature_degF``.  Empty cells are
missing values (kept as NaN and reported, never filled).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from parcelcast.errors import InputFileError, ParcelcastError
from parcelcast.times import parse_utc
from parcelcast.units import convert

_TEMPERATURE_COLUMNS = {"temperature_k": "K", "temperature_degc": "degC", "temperature_degf": "degF"}


@dataclass
class StationSeries:
    """A temperature series (UTC times, K) with the gaps found in it."""

    times: np.ndarray  # datetime64[ns], UTC, sorted
    temperature: np.ndarray  # K, NaN where missing
    gaps: list[tuple[np.datetime64, np.datetime64]]
    source: str

    def value_at(self, when) -> float:
        """Temperature (K) at ``when``, linear between the two nearest valid reports.

        NaN if ``when`` is outside the series or inside a gap (nothing is bridged).
        """
        when = np.datetime64(when, "ns")
        valid = np.isfinite(self.temperature)
        t, x = self.times[valid], self.temperature[valid]
        if t.size == 0 or when < t[0] or when > t[-1]:
            return float("nan")
        for start, end in self.gaps:
            if start < when < end:
                return float("nan")
        seconds = (t - t[0]) / np.timedelta64(1, "s")
        return float(np.interp((when - t[0]) / np.timedelta64(1, "s"), seconds, x))

    def gap_text(self) -> list[str]:
        return [f"{str(a)[:16]}Z to {str(b)[:16]}Z" for a, b in self.gaps]


def read_station_series(path) -> StationSeries:
    """Read a station CSV (see module docstring); raise a clear error naming the file."""
    import pandas as pd

    path = Path(path)
    if not path.is_file():
        raise InputFileError(path, "no such file")
    try:
        frame = pd.read_csv(path, dtype=str, keep_default_na=False)
    except Exception as exc:
        raise InputFileError(path, f"not a readable CSV file: {exc}") from None
    columns = {c.strip().lower(): c for c in frame.columns}
    if "time" not in columns:
        raise InputFileError(path, f"no 'time' column; columns: {', '.join(frame.columns)}")
    found = [c for c in columns if c in _TEMPERATURE_COLUMNS]
    if len(found) != 1:
        raise InputFileError(
            path, "expected exactly one temperature column named temperature_K, temperature_degC "
            f"or temperature_degF; columns: {', '.join(frame.columns)}")
    times = [parse_utc(text, f"{path}: row {row}")
             for row, text in enumerate(frame[columns["time"]], start=2)]
    raw = frame[columns[found[0]]].str.strip()
    values = np.full(len(raw), np.nan)
    for i, text in enumerate(raw):
        if not text:
            continue  # an empty cell is a missing value
        try:
            values[i] = float(text)
        except ValueError:
            raise ParcelcastError(
                f"{path}: row {i + 2}: column {columns[found[0]]}: {text!r} is not a number "
                "(leave the cell empty for a missing value)") from None
    kelvin = convert(values, _TEMPERATURE_COLUMNS[found[0]], "temperature", "station temperature",
                     str(path))
    times = np.array(times, dtype="datetime64[ns]")
    order = np.argsort(times, kind="stable")
    times, kelvin = times[order], kelvin[order]
    return StationSeries(times, kelvin, _find_gaps(times, kelvin), str(path))


def _find_gaps(times, values) -> list:
    """Intervals between valid reports longer than 1.5 times the usual spacing."""
    valid = np.isfinite(values)
    t = times[valid]
    if t.size < 3:
        return []
    steps = np.diff(t)
    usual = np.median(steps)
    return [(t[i], t[i + 1]) for i in np.flatnonzero(steps > 1.5 * usual)]
