"""Times: every time in parcelcast is UTC; a time written without a zone is UTC."""

from __future__ import annotations

import numpy as np

from parcelcast.errors import ParcelcastError


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
    return np.datetime64(stamp.to_datetime64(), "ns")
