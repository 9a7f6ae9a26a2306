"""The contract every reader keeps under fuzzing, and the settings the fuzz tests share.

A reader given any input either returns a valid canonical object (checked here against the
invariants of ``design_notes/canonical_dataset.md`` and of each reader's docstring) or raises a
:class:`parcelcast.errors.ParcelcastError` whose message names the file.  Any other exception
fails the test, and so does a call that runs longer than :data:`HANG_SECONDS` (a hang).

Reproducible in CI: hypothesis runs derandomized (the examples follow from the test's code)
with no example database.  ``PARCELCAST_FUZZ_SCALE`` multiplies every test's number of
examples (``PARCELCAST_FUZZ_SCALE=10`` for a longer run by hand); the number of inputs each
reader received is printed at the end of the run (``tests/fuzz/conftest.py``).
"""

from __future__ import annotations

import collections
import os
import signal
import threading
from contextlib import contextmanager

import numpy as np
from hypothesis import HealthCheck, Phase, settings

from parcelcast.errors import ParcelcastError
from parcelcast.io.roles import PLAUSIBLE_RANGE, ROLES

#: seconds one reader call may take before it counts as a hang (a small file reads in well
#: under a second; the margin is for a loaded CI machine)
HANG_SECONDS = 20.0

#: reader name -> number of inputs given to it in this run
INPUTS: collections.Counter = collections.Counter()

_SCALE = float(os.environ.get("PARCELCAST_FUZZ_SCALE", "1"))


def fuzz_settings(examples: int) -> settings:
    """Hypothesis settings for one fuzz test: ``examples`` inputs (times the scale), no
    deadline, derandomized, no database, no shrinking."""
    return settings(
        max_examples=max(1, int(examples * _SCALE)), deadline=None, derandomize=True,
        database=None, print_blob=False,
        # no shrinking: a failing input is reported as found (shrinking a damaged file can
        # take minutes, longer than the whole fuzz run)
        phases=[Phase.explicit, Phase.reuse, Phase.generate],
        suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                               HealthCheck.filter_too_much, HealthCheck.function_scoped_fixture],
    )


class Hang(BaseException):
    """A reader call ran past :data:`HANG_SECONDS` (BaseException: a reader's own
    ``except Exception`` cannot turn it into an ordinary error)."""


@contextmanager
def _time_limit(seconds: float):
    if threading.current_thread() is not threading.main_thread():  # no SIGALRM off the main thread
        yield
        return

    def expire(signum, frame):
        raise Hang(f"still running after {seconds:g} s")

    previous = signal.signal(signal.SIGALRM, expire)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)


def outcome(reader_name: str, reader, *args, names=(), **kwargs):
    """Call ``reader(*args, **kwargs)``; return ``(result, None)`` or ``(None, error)``.

    ``error`` is the :class:`ParcelcastError` raised; its message must mention each of
    ``names`` (the file).  Any other exception propagates and fails the test.
    """
    INPUTS[reader_name] += 1
    try:
        with _time_limit(HANG_SECONDS):
            return reader(*args, **kwargs), None
    except ParcelcastError as exc:
        message = str(exc)
        assert message.strip(), f"{type(exc).__name__} with an empty message"
        for name in names:
            assert str(name) in message, f"the error does not name {name}: {message}"
        return None, exc


def read_bytes_as_file(path, data: bytes, reader_name: str, reader, check=None, **kwargs):
    """Write ``data`` to ``path`` and read it with ``reader(path, **kwargs)`` under the rules
    of :func:`outcome` (the error names the file); ``check(result)`` when it was read.
    Returns the result, or None when it was refused."""
    path.write_bytes(data)
    result, _ = outcome(reader_name, reader, path, names=[path], **kwargs)
    if result is not None and check is not None:
        check(result)
    return result


# ------------------------------------------------------------------------- canonical dataset
_CANONICAL_ORDER = ("member", "time", "level", "lat", "lon")


def _strictly_increasing(values) -> bool:
    return bool(np.all(np.diff(values) > 0))


def check_canonical_dataset(ds) -> None:
    """The invariants of ``design_notes/canonical_dataset.md`` (lat-lon grids)."""
    assert ds.data_vars, "a canonical dataset with no variable"
    for name, var in ds.data_vars.items():
        assert name in ROLES, f"variable {name!r} is not a role"
        role = ROLES[name]
        assert var.dtype == np.float64, (name, var.dtype)
        assert var.attrs.get("units") == role.units, (name, var.attrs.get("units"))
        assert var.attrs.get("standard_name") == role.standard_name, name
        assert var.attrs.get("source"), f"{name} has no source attribute"
        values = np.asarray(var.values)
        assert not np.isinf(values).any(), f"{name} holds infinities (missing must be NaN)"
        if name in PLAUSIBLE_RANGE:
            low, high = PLAUSIBLE_RANGE[name]
            finite = values[np.isfinite(values)]
            assert finite.size == 0 or (finite.min() >= low and finite.max() <= high), (
                f"{name} outside its plausible range {low}..{high} at some time or member")
        dims = [d for d in var.dims if d in _CANONICAL_ORDER]
        assert dims == [d for d in _CANONICAL_ORDER if d in dims], (name, var.dims)
        assert list(var.dims[-2:]) in (["lat", "lon"], ["y", "x"]), (name, var.dims)
        assert ("level" in var.dims) == role.on_levels, (name, var.dims)
    for coord in ("lat", "lon"):
        values = np.asarray(ds[coord].values)
        assert ds[coord].dtype == np.float64 and values.ndim == 1, coord
        assert np.isfinite(values).all(), f"{coord} has missing values"
        assert _strictly_increasing(values), f"{coord} is not strictly ascending"
    assert np.all(np.abs(ds["lat"].values) <= 90.0)
    assert ds["lat"].attrs.get("units") == "degrees_north"
    assert ds["lon"].attrs.get("units") == "degrees_east"
    lon = ds["lon"].values
    assert lon[0] >= -180.0 and lon[-1] - lon[0] < 360.0, "longitudes not one contiguous run"
    if "level" in ds.coords:
        level = np.atleast_1d(ds["level"].values)
        assert ds["level"].dtype == np.float64 and ds["level"].attrs.get("units") == "Pa"
        assert np.isfinite(level).all() and level.min() > 0 and level.max() <= 110_000.0
        assert _strictly_increasing(level[::-1]), "levels not strictly descending in pressure"
    if "time" in ds.coords:
        time = np.atleast_1d(ds["time"].values)
        assert ds["time"].dtype == np.dtype("datetime64[ns]"), ds["time"].dtype
        assert not np.isnat(time).any(), "a missing (NaT) time"
        assert _strictly_increasing(time), "times not strictly ascending (repeated or unsorted)"
    counted = dict(item.split(": ") for item in ds.attrs["missing_values"].split("; "))
    for name in ds.data_vars:
        assert int(counted[name]) == int(ds[name].isnull().sum()), f"{name}: NaN miscounted"
    assert ds.attrs.get("source_files")


# ------------------------------------------------------------------------------ profile
def check_profile(profile) -> None:
    """A validated profile (``parcelcast.profiles.profile``): SI float64, ground first,
    pressure strictly decreasing, no infinities, dew point not above temperature."""
    arrays = {k: getattr(profile, k) for k in ("pressure", "height", "temperature", "dewpoint",
                                               "u", "v")}
    n = profile.pressure.size
    assert n >= 2
    for key, values in arrays.items():
        assert values.dtype == np.float64 and values.shape == (n,), key
        assert not np.isinf(values).any(), f"profile {key} holds infinities"
    p, t, td = arrays["pressure"], arrays["temperature"], arrays["dewpoint"]
    assert np.isfinite(p).all() and np.all(np.diff(p) < 0), "pressure not strictly decreasing"
    assert 100.0 <= p.min() and p.max() <= 110_000.0
    assert np.isfinite(t[0]) and np.isfinite(t).sum() >= 2
    both = np.isfinite(t) & np.isfinite(td)
    assert np.all(td[both] <= t[both]), "dew point above temperature"
    finite_t = t[np.isfinite(t)]
    low, high = PLAUSIBLE_RANGE["temperature"]
    assert finite_t.min() >= low and finite_t.max() <= high
    assert np.isfinite(arrays["height"]).all(), "heights not filled"
    for value, limit in ((profile.latitude, 90.0), (profile.longitude, 360.0)):
        # 1e-9: decoding rounding (BUFR station 89009 at the South Pole reads -90.00000000000001)
        assert value is None or (np.isfinite(value) and abs(value) <= limit + 1e-9), value


# ---------------------------------------------------------------------------- station series
def check_station_series(series) -> None:
    """A station series: UTC datetime64[ns] strictly ascending, K float64, NaN for missing,
    plausible near-surface values, gaps between valid reports."""
    times, values = series.times, series.temperature
    assert times.dtype == np.dtype("datetime64[ns]") and values.dtype == np.float64
    assert times.shape == values.shape
    assert not np.isnat(times).any(), "a missing (NaT) time"
    assert _strictly_increasing(times), "times repeated or unsorted"
    assert not np.isinf(values).any(), "infinite temperature"
    finite = values[np.isfinite(values)]
    low, high = PLAUSIBLE_RANGE["near_surface_temperature"]
    assert finite.size == 0 or (finite.min() >= low and finite.max() <= high), (
        "temperature outside the plausible range of near-surface air")
    for start, end in series.gaps:
        assert start < end and start in times and end in times
