"""Fuzzing the case-file reader of ``parcelcast review`` (``parcelcast.review.read_case``).

Inputs start from a valid case file: values are replaced by any TOML value (text, integers
beyond 64 bits' use, ``nan``/``inf``, booleans, dates, arrays, tables), keys and sections are
dropped or added, sections become values; the text itself is cut short, garbled or not UTF-8.
The reader must return a :class:`~parcelcast.review.Case` whose fields have the types and
ranges a review needs, or raise parcelcast's own error naming the file.
"""

from __future__ import annotations

import datetime as dt
import json
import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from fuzz_contract import fuzz_settings, read_bytes_as_file
from parcelcast.budget import WINDS
from parcelcast.review import read_case

pytestmark = pytest.mark.slow

VALID = {
    "case": {"title": "Fuzzed case", "analyses": ["a.nc"], "wind": "actual", "members": 5},
    "station": {"name": "Somewhere", "lat": 51.5, "lon": 2.0},
    "window": {"start": dt.datetime(2026, 3, 14, 6, tzinfo=dt.timezone.utc),
               "end": dt.datetime(2026, 3, 15, 3, tzinfo=dt.timezone.utc), "level_hPa": 850},
}


def _toml_value(value) -> str:
    """TOML text of a value (a small writer: the standard library only reads TOML)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf") if math.isinf(
            value) else repr(value)
    if isinstance(value, str):
        return json.dumps(value)  # a TOML basic string (JSON escapes are valid TOML escapes)
    if isinstance(value, (dt.datetime, dt.date, dt.time)):
        return value.isoformat()
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{json.dumps(k)} = {_toml_value(v)}" for k, v in value.items()) + "}"
    raise TypeError(value)


def toml_text(document: dict) -> str:
    lines = []
    for section, table in document.items():
        if not isinstance(table, dict):
            lines.insert(0, f"{json.dumps(section)} = {_toml_value(table)}")
            continue
        lines.append(f"[{json.dumps(section)}]")
        lines.extend(f"{json.dumps(k)} = {_toml_value(v)}" for k, v in table.items())
    return "\n".join(lines) + "\n"


text_value = st.text(st.characters(blacklist_categories=["Cs"]), max_size=12)
scalar = st.one_of(
    text_value,
    st.sampled_from(["fifty-one", "", "51.5", "2026-03-14T06:00Z", "geostrophic", "ACTUAL",
                     "${PARCELCAST_DATA}/x.grb", "*.nc", "[", "\u00e9", "a" * 300]),
    st.integers(-(2**63), 2**63 - 1),
    st.sampled_from([0, -1, 1, 91, -91, 1_000_000, 2**63 - 1]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
    st.datetimes(min_value=dt.datetime(1, 1, 1), max_value=dt.datetime(9999, 12, 31)),
    st.dates(),
    st.times(),
)
toml_value = st.recursive(scalar, lambda inner: st.lists(inner, max_size=3)
                          | st.dictionaries(st.sampled_from(["a", "lat", "start"]), inner,
                                            max_size=2), max_leaves=4)


@st.composite
def damaged_case(draw):
    document = {section: dict(table) for section, table in VALID.items()}
    for _ in range(draw(st.integers(1, 3))):
        section = draw(st.sampled_from(sorted(document)))
        table = document[section]
        action = draw(st.sampled_from(["replace"] * 6 + ["drop", "add", "section"]))
        if not isinstance(table, dict):
            continue
        if action == "replace" and table:
            table[draw(st.sampled_from(sorted(table)))] = draw(toml_value)
        elif action == "drop" and table:
            del table[draw(st.sampled_from(sorted(table)))]
        elif action == "add":
            table[draw(st.sampled_from(["extra", "lat", "data_dir", "end"]))] = draw(toml_value)
        elif action == "section":  # a section dropped, or made a plain value
            if draw(st.booleans()):
                del document[section]
            else:
                document[section] = draw(scalar)
    return toml_text(document).encode()


@st.composite
def garbled_text(draw):
    data = bytearray(toml_text(VALID).encode())
    for _ in range(draw(st.integers(1, 4))):
        at = draw(st.integers(0, len(data)))
        edit = draw(st.sampled_from(["insert", "delete", "cut"]))
        if edit == "insert":
            data[at:at] = draw(st.sampled_from([b"=", b"[", b"]", b'"', b"\n", b"\xff", b"\xe9",
                                                b"\x00", b"#", b"[[window]]\n", b"'''"]))
        elif edit == "delete":
            del data[at:at + draw(st.integers(1, 8))]
        else:
            del data[at:]
    return bytes(data)


def check_case(case) -> None:
    """Fields a review can use as they are."""
    assert isinstance(case.title, str) and isinstance(case.station_name, str)
    assert isinstance(case.analyses, list) and case.analyses
    assert all(isinstance(a, str) and a for a in case.analyses)
    assert isinstance(case.lat, float) and math.isfinite(case.lat) and abs(case.lat) <= 90.0
    assert isinstance(case.lon, float) and math.isfinite(case.lon) and abs(case.lon) <= 360.0
    assert isinstance(case.level_hpa, float) and math.isfinite(case.level_hpa)
    assert 0.0 < case.level_hpa <= 1100.0
    assert isinstance(case.members, int) and case.members >= 1
    assert case.wind in WINDS
    for when in (case.start, case.end):
        assert isinstance(when, np.datetime64) and not np.isnat(when)


@fuzz_settings(1500)
@given(data=damaged_case())
def test_case_file_wrong_values(scratch, data):
    read_bytes_as_file(scratch / "case.toml", data, "case TOML", read_case, check_case)


@fuzz_settings(600)
@given(data=garbled_text() | st.binary(max_size=300))
def test_case_file_garbled(scratch, data):
    read_bytes_as_file(scratch / "case.toml", data, "case TOML", read_case, check_case)
