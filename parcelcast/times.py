"""Times: every time in parcelcast is UTC; a time written without a zone is UTC."""

from __future__ import annotations

import numpy as np

from parcelcast.errors import ParcelcastError


#: the span of datetime64[ns], in whole days: a time outside it would wrap round silently
FIRST_TIME = np.datetime64("1677-09-22", "D")
LAST_TIME = np.datetime64("2262-04-11", "D")


def parse_utc(value, where: str = "") -> np.datetime64:
    """An ISO 8601 time (str, datetime or TOML date-time) as naive UTC ``datetime64[ns]``.

    A zone or offset (``Z``, ``+02:00``) is honoured and converted; none means UTC.
    Raises :class:`ParcelcastError` naming ``where`` for text that is not a time.
    """
    import pandas as pd

    try:
        stamp = pd.Timestamp(value.strip() if isinstance(value, str) else value)
    except (ValueError, TypeError):
        stamp = None
    if stamp is None or stamp is pd.NaT:
        prefix = f"{where}: " if where else ""
        raise ParcelcastError(f"{prefix}{value!r} is not an ISO 8601 time such as "
                              "2017-01-01T12:00 (UTC unless a zone is given)")
    if stamp.tzinfo is not None:
        stamp = stamp.tz_convert("UTC").tz_localize(None)
    when = stamp.to_datetime64()  # pandas may keep seconds: years beyond nanoseconds' range
    if not FIRST_TIME <= when <= LAST_TIME:
        prefix = f"{where}: " if where else ""
        raise ParcelcastError(f"{prefix}{value!r} is outside the times parcelcast can hold "
                              f"({FIRST_TIME} to {LAST_TIME}, UTC)")
    return np.datetime64(when, "ns")
