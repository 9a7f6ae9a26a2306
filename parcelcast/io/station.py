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
    """Read a station CSV (see module docstring); raise a clear error naming the file and row.

    Refused (:class:`~parcelcast.errors.InputFileError`, naming the row): a cell that is not a
    number, a non-finite value (``inf``, ``1e400``), a temperature outside the plausible range
    of near-surface air (:data:`parcelcast.io.roles.PLAUSIBLE_RANGE`), a time that is not ISO
    8601, a time given twice.  Messages never quote the file's contents (the path may be any
    readable file).
    """
    import pandas as pd

    from parcelcast.io.roles import PLAUSIBLE_RANGE

    path = Path(path)
    if not path.is_file():
        raise InputFileError(path, "no such file")
    try:
        frame = pd.read_csv(path, dtype=str, keep_default_na=False, encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputFileError(path, "not UTF-8 text; save the station CSV as UTF-8") from None
    except Exception:  # noqa: BLE001 - pandas raises many kinds for text that is not CSV
        raise InputFileError(path, "not a readable CSV file (expected a header row with 'time' "
                             "and one temperature column)") from None
    columns = {str(c).strip().lower(): c for c in frame.columns}
    found = [c for c in columns if c in _TEMPERATURE_COLUMNS]
    if "time" not in columns or len(found) != 1:
        raise InputFileError(
            path, f"expected a header with a 'time' column and exactly one temperature column "
            f"named temperature_K, temperature_degC or temperature_degF (the header has "
            f"{len(frame.columns)} column(s), not these)")
    column = columns[found[0]]
    times = []
    for row, text in enumerate(frame[columns["time"]], start=2):
        try:
            times.append(parse_utc(text))
        except ParcelcastError as exc:  # not a time, or a year out of range
            raise InputFileError(path, f"row {row}, column time: {exc}") from None
    raw = frame[column].str.strip()
    values = np.full(len(raw), np.nan)
    for i, text in enumerate(raw):
        if not text:
            continue  # an empty cell is a missing value
        try:
            values[i] = float(text)
        except ValueError:
            raise InputFileError(path, f"row {i + 2}, column {found[0]}: not a number (leave the "
                                 "cell empty for a missing value)") from None
        if not np.isfinite(values[i]):
            raise InputFileError(path, f"row {i + 2}, column {found[0]}: not a finite number "
                                 "(leave the cell empty for a missing value)")
    kelvin = convert(values, _TEMPERATURE_COLUMNS[found[0]], "temperature", "station temperature",
                     str(path))
    lo, hi = PLAUSIBLE_RANGE["near_surface_temperature"]
    bad = np.flatnonzero(np.isfinite(kelvin) & ((kelvin < lo) | (kelvin > hi)))
    if bad.size:
        raise InputFileError(path, f"row {bad[0] + 2}, column {found[0]}: {kelvin[bad[0]]:.1f} K is "
                             f"outside the plausible {lo:g}..{hi:g} K of near-surface air; check "
                             "the unit in the header")
    times = np.array(times, dtype="datetime64[ns]")
    order = np.argsort(times, kind="stable")
    times, kelvin = times[order], kelvin[order]
    same = np.flatnonzero(np.diff(times) == np.timedelta64(0, "ns"))
    if same.size:
        rows = sorted((int(order[same[0]]) + 2, int(order[same[0] + 1]) + 2))
        raise InputFileError(path, f"rows {rows[0]} and {rows[1]} give the same time "
                             f"{str(times[same[0]])[:16]}Z; each time once")
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
