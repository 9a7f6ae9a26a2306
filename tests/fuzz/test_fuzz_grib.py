"""Fuzzing ``open_analysis`` on GRIB files (``parcelcast.io.grib`` through ``io.analysis``).

The valid input is small and made here with eccodes from its own samples
(``regular_ll_pl_grib1``/``regular_ll_pl_grib2``): temperature and wind at 850 and 500 hPa on
a 5 x 4 latitude-longitude grid, six messages.  Damage: bytes overwritten anywhere or inside
a section header, a section's length field set to another number (the sections are found
by walking the message as WMO FM 92 GRIB edition 1/2 lay them out: GRIB2 section 0 of 16
bytes with the total length in bytes 9-16, then sections of ``length(4) number(1)``; GRIB1
section 0 of 8 bytes with a 3-byte total length, then sections with 3-byte lengths), files
cut short, messages repeated or dropped; also a ``GRIB`` marker followed by random bytes.
``open_analysis`` must return a canonical dataset
or raise parcelcast's own error naming the file.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from fuzz_contract import check_canonical_dataset, fuzz_settings, read_bytes_as_file
from parcelcast.io.analysis import open_analysis

pytestmark = pytest.mark.slow

SAMPLES = {1: "regular_ll_pl_grib1", 2: "regular_ll_pl_grib2"}
FIELDS = (("t", 270.0), ("u", 5.0), ("v", -3.0))
LEVELS = (850, 500)


def grib_message(edition: int, short_name: str, level: int, base: float) -> bytes:
    """One GRIB message from eccodes' sample, on a 5 x 4 grid 40-52 N, 5 W-15 E."""
    import pyproj  # noqa: F401  (before eccodes: see DEVELOPERS.md, "GRIB and PROJ")
    import eccodes

    handle = eccodes.codes_grib_new_from_samples(SAMPLES[edition])
    try:
        for key, value in (("typeOfLevel", "isobaricInhPa"), ("level", level), ("Ni", 5),
                           ("Nj", 4), ("latitudeOfFirstGridPointInDegrees", 52.0),
                           ("latitudeOfLastGridPointInDegrees", 40.0),
                           ("longitudeOfFirstGridPointInDegrees", -5.0),
                           ("longitudeOfLastGridPointInDegrees", 15.0),
                           ("iDirectionIncrementInDegrees", 5.0),
                           ("jDirectionIncrementInDegrees", 4.0), ("shortName", short_name),
                           ("dataDate", 20240115), ("dataTime", 1200)):
            eccodes.codes_set(handle, key, value)
        eccodes.codes_set_values(handle, base + np.linspace(0.0, 9.5, 20))
        return eccodes.codes_get_message(handle)
    finally:
        eccodes.codes_release(handle)


_VALID: dict[int, list[bytes]] = {}


def valid_messages(edition: int) -> list[bytes]:
    if edition not in _VALID:
        _VALID[edition] = [grib_message(edition, name, level, base)
                           for name, base in FIELDS for level in LEVELS]
    return _VALID[edition]


def section_length_fields(message: bytes) -> list[tuple[int, int]]:
    """(offset, size in bytes) of the length fields of a message, as far as they chain (an
    earlier edit may have broken the chain: the walk stops there)."""
    edition = message[7]
    if edition == 2:
        fields, offset = [(8, 8)], 16
        while offset + 5 <= len(message) and message[offset:offset + 4] != b"7777":
            fields.append((offset, 4))
            step = int.from_bytes(message[offset:offset + 4], "big")
            if step < 5:
                break
            offset += step
        return fields
    fields, offset = [(4, 3)], 8
    while offset + 4 <= len(message) and message[offset:offset + 4] != b"7777":
        fields.append((offset, 3))
        step = int.from_bytes(message[offset:offset + 3], "big")
        if step < 4:
            break
        offset += step
    return fields


@st.composite
def damaged_grib(draw):
    edition = draw(st.sampled_from([1, 2]))
    messages = [bytearray(m) for m in valid_messages(edition)]
    for _ in range(draw(st.integers(1, 3))):
        k = draw(st.integers(0, len(messages) - 1))
        message = messages[k]
        kind = draw(st.sampled_from(["length", "length", "header", "byte", "drop", "repeat"]))
        if kind in ("length", "header"):
            offset, size = draw(st.sampled_from(section_length_fields(bytes(message))))
            if kind == "length":  # the section (or message) says it is longer or shorter
                value = draw(st.sampled_from([0, 1, 2**(8 * size) - 1])
                             | st.integers(0, 2**(8 * size) - 1)
                             | st.integers(0, 2 * len(message)))
                message[offset:offset + size] = value.to_bytes(size, "big")
            else:  # a byte of the section header (length, number, first octets) flipped
                at = min(len(message) - 1, offset + draw(st.integers(0, size + 2)))
                message[at] ^= 1 << draw(st.integers(0, 7))
        elif kind == "byte":
            at = draw(st.integers(0, len(message) - 1))
            message[at] = draw(st.integers(0, 255))
        elif kind == "drop" and len(messages) > 1:
            del messages[k]
        elif kind == "repeat":
            messages.insert(k, bytearray(message))
    data = b"".join(bytes(m) for m in messages)
    if draw(st.integers(0, 3)) == 0:
        data = data[: draw(st.integers(0, len(data)))]  # the file cut short
    return data


_COUNTER = iter(range(10**9))


@pytest.fixture
def grib_cache(scratch, monkeypatch):
    """cfgrib's index files (and any cache) in the test's own folder."""
    monkeypatch.setenv("PARCELCAST_CACHE", str(scratch / "cache"))
    monkeypatch.setenv("XDG_CACHE_HOME", str(scratch / "xdg-cache"))
    return scratch


def _found(at: int, value: int) -> bytes:
    """The valid GRIB 2 file with one byte of its first message set to ``value``."""
    data = bytearray(b"".join(valid_messages(2)))
    data[at] = value
    return bytes(data)


#: a marker followed by anything
random_grib = st.binary(min_size=4, max_size=64).map(lambda b: b"GRIB" + b)


@fuzz_settings(150)
@given(data=damaged_grib() | random_grib)
@example(data=_found(28, 0))  # found by fuzzing: the year's high byte zeroed (year 226)
@example(data=_found(148, 1))  # found by fuzzing: values that eccodes cannot decode
@example(data=_found(148, 255))  # found: 4 278 190 100 values stated for 20 points (32 GiB)
def test_grib_damaged(grib_cache, data):
    ds = read_bytes_as_file(grib_cache / f"analysis-{next(_COUNTER)}.grb", data, "GRIB",
                            open_analysis, check_canonical_dataset)
    assert ds is None or "damaged" not in ds.attrs  # refused unless allow_damaged=True


@fuzz_settings(60)
@given(data=damaged_grib())
def test_grib_damaged_allowed(grib_cache, data):
    """With ``allow_damaged=True`` the readable part comes back, canonical, and says what was lost."""
    read_bytes_as_file(grib_cache / f"allowed-{next(_COUNTER)}.grb", data, "GRIB",
                       open_analysis, check_canonical_dataset, allow_damaged=True)
