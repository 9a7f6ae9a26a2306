"""Fuzzing the BUFR sounding reader (``parcelcast.io.bufr``: ``read_ascents`` then
``ascent_profile``) with damaged copies of the real ascents in the shared data
(``temp-20081208T12-7stations.bufr``, ``temp-20250223T1045-hires-10954.bufr``; see
PROVENANCE.md there; read, never modified).

Damage: bytes overwritten, a section's 3-byte length set to another number (sections found
as WMO FM 94 BUFR editions 3/4 lay them out: section 0 of 8 bytes with the total length in
bytes 5-7, then sections 1-5 each starting with a 3-byte length; section 2 is optional,
flagged in section 1), files cut short, messages dropped or repeated; also a ``BUFR`` marker followed by random
bytes.  The reader must
return ascents with float64 SI arrays, finite positions and times, and profiles that pass
``fuzz_contract.check_profile``, or raise parcelcast's own error.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from datasets import data_file
from fuzz_contract import check_profile, fuzz_settings, outcome
from parcelcast.io.bufr import ascent_profile, read_ascents

pytestmark = [pytest.mark.slow, pytest.mark.realdata]

FILES = ("temp-20081208T12-7stations.bufr", "temp-20250223T1045-hires-10954.bufr")


def messages_of(data: bytes) -> list[bytes]:
    """The BUFR messages of a file, split by the total length in section 0."""
    out, offset = [], data.find(b"BUFR")
    while offset >= 0:
        length = int.from_bytes(data[offset + 4:offset + 7], "big")
        out.append(data[offset:offset + length])
        offset = data.find(b"BUFR", offset + length)
    return out


def length_fields(message: bytes) -> list[int]:
    """Offsets of the 3-byte length fields of sections 0-4 of one valid message."""
    fields, offset = [4], 8
    edition = message[7]
    flag_byte = 7 if edition == 3 else 9  # section 1 octet 8 (ed. 3) / 10 (ed. 4): section 2 present
    has_section2 = bool(message[8 + flag_byte] & 0x80)
    for _ in range(4 if has_section2 else 3):
        if offset + 3 > len(message):
            break  # an earlier edit broke the chain
        fields.append(offset)
        offset += max(1, int.from_bytes(message[offset:offset + 3], "big"))
    return fields


_VALID: dict[str, bytes] = {}


def valid_files() -> dict[str, bytes]:
    """The real files' bytes (read once; a test skips when the shared data are absent)."""
    if not _VALID:
        _VALID.update({name: data_file(name).read_bytes() for name in FILES})
    return _VALID


@st.composite
def damage(draw, valid_files):
    messages = [bytearray(m) for m in messages_of(valid_files[draw(st.sampled_from(FILES))])]
    for _ in range(draw(st.integers(1, 3))):
        k = draw(st.integers(0, len(messages) - 1))
        message = messages[k]
        kind = draw(st.sampled_from(["length", "byte", "byte", "drop", "repeat"]))
        if kind == "length":
            at = draw(st.sampled_from(length_fields(bytes(message))))
            value = draw(st.sampled_from([0, 1, 2**24 - 1]) | st.integers(0, 2 * len(message)))
            message[at:at + 3] = value.to_bytes(3, "big")
        elif kind == "byte":
            at = draw(st.integers(0, len(message) - 1))
            message[at] = draw(st.integers(0, 255))
        elif kind == "drop" and len(messages) > 1:
            del messages[k]
        elif kind == "repeat":
            messages.insert(k, bytearray(message))
    data = b"".join(bytes(m) for m in messages)
    if draw(st.integers(0, 3)) == 0:
        data = data[: draw(st.integers(0, len(data)))]
    return data


def check_ascent(ascent) -> None:
    n = ascent.pressure.size
    for key in ("pressure", "height", "temperature", "dewpoint", "wind_direction", "wind_speed"):
        values = getattr(ascent, key)
        assert values.dtype == np.float64 and values.shape == (n,), key
        assert not np.isinf(values).any(), f"ascent {key} holds infinities"
    # 1e-9: the South Pole station (89009) decodes to -90.00000000000001
    assert np.isfinite(ascent.latitude) and abs(ascent.latitude) <= 90.0 + 1e-9
    assert np.isfinite(ascent.longitude) and abs(ascent.longitude) <= 360.0
    assert not np.isnat(np.datetime64(ascent.time))


_COUNTER = iter(range(10**9))


@fuzz_settings(300)
@given(data=st.data())
def test_bufr_damaged(scratch, data):
    raw = data.draw(damage(valid_files()) | st.binary(max_size=64).map(lambda b: b"BUFR" + b))
    path = scratch / f"ascents-{next(_COUNTER)}.bufr"
    path.write_bytes(raw)
    ascents, _ = outcome("BUFR", read_ascents, path, names=[path])
    for ascent in ascents or []:
        check_ascent(ascent)
        profile, _ = outcome("BUFR ascent -> profile", ascent_profile, ascent)
        if profile is not None:
            check_profile(profile)
