"""Fuzzing the two CSV readers: sounding profiles (``parcelcast.profiles.csv``) and station
temperature series (``parcelcast.io.station``).

Each input starts from a valid file and is damaged: cells replaced by awkward tokens
(``inf``, ``1e400``, ``nan``, text, huge or negative numbers), headers with other or unknown
units, rows dropped, repeated, reordered, lengthened or shortened, comment and blank lines,
a byte-order mark, text that is not UTF-8, or plain random bytes.  Each reader must return a
valid object (``fuzz_contract.check_profile`` / ``check_station_series``) or raise
parcelcast's own error naming the file.
"""

from __future__ import annotations

import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from fuzz_contract import check_profile, check_station_series, fuzz_settings, read_bytes_as_file
from parcelcast.io.station import read_station_series
from parcelcast.profiles.csv import read_profile_csv

pytestmark = pytest.mark.slow

# A plausible mid-latitude sounding (invented numbers, close to the ICAO standard atmosphere)
PROFILE_HEADER = ["pressure_hPa", "height_m", "temperature_degC", "dewpoint_degC",
                  "wind_direction_deg", "wind_speed_kt"]
PROFILE_ROWS = [
    ["1000", "110", "15.0", "10.0", "180", "10"],
    ["925", "760", "11.0", "7.0", "200", "20"],
    ["850", "1460", "7.0", "2.0", "220", "25"],
    ["700", "3010", "-2.0", "-9.0", "240", "35"],
    ["500", "5570", "-21.0", "-31.0", "250", "50"],
    ["300", "9160", "-44.0", "-55.0", "260", "70"],
]
STATION_HEADER = ["time", "temperature_degC"]
STATION_ROWS = [[f"2019-03-01T{h:02d}:00Z", f"{5 + 0.5 * h:.1f}"] for h in range(0, 24, 3)]

#: cells people and programs write where a number should be
AWKWARD_CELLS = ["", " ", "nan", "NaN", "NA", "inf", "-inf", "+inf", "Infinity", "1e400",
                 "-1e400", "1e308", "-1e308", "1e-400", "0", "-0", "-999", "99999", "1,5",
                 "12.5.3", "abc", "None", "\u00e9t\u00e9", "0x10", "1_000", "--5", "\t7",
                 "\"12\"", "5e", "nan(0)", "\u221e", "3.4028235e38"]
UNITS = ["hPa", "Pa", "mb", "kPa", "bar", "K", "degC", "degF", "C", "m", "ft", "km", "kt",
         "m_s", "km_h", "deg", "percent", "fraction", "", "furlong", "s", "1", "%", "m s-1",
         "\u00b0C", "degC_", "_", "hPa hPa", "m**2", "log(Pa)"]
QUANTITIES = ["pressure", "height", "temperature", "dewpoint", "dew_point", "relative_humidity",
              "wind_direction", "wind_speed", "u", "v", "latitude", "longitude", "lat", "lon",
              "time", "time_utc", "pressure_", "temp", "\u00fcber", ""]
TIMES = ["2019-03-01T00:00Z", "2019-03-01T00:00", "2019-03-01 06:00+01:00", "2019-03-01",
         "2019-02-30T00:00", "2019-03-01T25:00", "99999-01-01", "1677-09-21", "2262-04-12",
         "0001-01-01", "NaT", "nat", "", "now", "today", "12", "1e400", "2019-W09-5",
         "2019-03-01T00:00:00.123456789123Z", "2019-03-01T00:00-25:00", "\u00e9"]

cell = st.one_of(
    st.sampled_from(AWKWARD_CELLS),
    st.sampled_from(["inf", "-inf", "1e400", "nan", "", "-1", "1e6"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-10**30, 10**30).map(str),
    st.text(st.characters(blacklist_categories=["Cs"]), max_size=8),
)


@st.composite
def damaged_table(draw, header, rows, header_pool, cell_pool):
    """A CSV text (or bytes) made from ``header``/``rows`` with a few random edits (sparse,
    so that most inputs have one or two faults a reader might let through)."""
    header = list(header)
    body = [list(r) for r in rows]
    for _ in range(draw(st.integers(0, 3)) // 2):  # header edits: none half the time
        header[draw(st.integers(0, len(header) - 1))] = draw(header_pool)
    for _ in range(draw(st.integers(0, 3))):
        row = body[draw(st.integers(0, len(body) - 1))]
        row[draw(st.integers(0, len(row) - 1))] = draw(cell_pool)
    for _ in range(draw(st.integers(0, 4)) // 2):  # row edits
        k = draw(st.integers(0, len(body) - 1))
        action = draw(st.sampled_from(["drop", "twice", "short", "long"]))
        if action == "drop" and len(body) > 1:
            del body[k]
        elif action == "twice":
            body.insert(k, list(body[k]))
        elif action == "short":
            body[k] = body[k][:-1]
        elif action == "long":
            body[k] = body[k] + [draw(cell_pool)]
    if draw(st.integers(0, 4)) == 0:
        body = draw(st.permutations(body))
    lines = [",".join(header)] + [",".join(r) for r in body]
    for _ in range(draw(st.integers(0, 2))):
        at = draw(st.integers(0, len(lines)))
        lines.insert(at, draw(st.sampled_from(["", "# comment", "   ", ",,,,", "#", "\u00a0"])))
    text = draw(st.sampled_from(["\n", "\r\n", "\r"])).join(lines)
    if draw(st.integers(0, 9)) == 0:
        text = "\ufeff" + text
    encoding = draw(st.sampled_from(["utf-8"] * 8 + ["latin-1", "utf-16"]))
    data = text.encode(encoding, errors="replace")
    if draw(st.integers(0, 9)) == 0:  # a byte that is not UTF-8 somewhere
        at = draw(st.integers(0, len(data)))
        data = data[:at] + draw(st.sampled_from([b"\xff", b"\xe9", b"\x00", b"\xc3"])) + data[at:]
    if draw(st.integers(0, 19)) == 0:
        data = data[: draw(st.integers(0, len(data)))]  # cut short
    return data


profile_header_pool = st.builds(lambda q, u: f"{q}_{u}" if u else q,
                                st.sampled_from(QUANTITIES), st.sampled_from(UNITS))
station_header_pool = st.sampled_from(["time", "Time ", "TIME", "time_utc", "temperature_K",
                                       "temperature_degC", "temperature_degF", "temperature",
                                       "temperature_C", "", "t", "temperature_K,extra"])


@fuzz_settings(1500)
@given(data=damaged_table(PROFILE_HEADER, PROFILE_ROWS, profile_header_pool, cell))
def test_profile_csv_damaged(scratch, data):
    read_bytes_as_file(scratch / "sounding.csv", data, "profile CSV", read_profile_csv, check_profile)


@fuzz_settings(300)
@given(data=st.binary(max_size=400))
def test_profile_csv_random_bytes(scratch, data):
    read_bytes_as_file(scratch / "bytes.csv", data, "profile CSV", read_profile_csv, check_profile)


station_cell = st.one_of(cell, st.sampled_from(TIMES))


@fuzz_settings(1500)
@given(data=damaged_table(STATION_HEADER, STATION_ROWS, station_header_pool, station_cell))
@example(data=b"time,temperature_degC\r2019-03-01T00:00Z,5.0\r2262-04-12,8.0\r")  # found: a year
# past datetime64[ns]'s end wrapped round into the past
def test_station_csv_damaged(scratch, data):
    read_bytes_as_file(scratch / "station.csv", data, "station CSV", read_station_series, check_station_series)


@fuzz_settings(300)
@given(data=st.binary(max_size=400))
def test_station_csv_random_bytes(scratch, data):
    read_bytes_as_file(scratch / "bytes.csv", data, "station CSV", read_station_series, check_station_series)
