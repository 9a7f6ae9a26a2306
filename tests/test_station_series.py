"""Station temperature series from CSV: UTC conversion, gaps, units, clear errors.

Expected values are written by hand beside each check (times converted from the stated
offset by hand; degC -> K by adding 273.15, degF -> K by (F - 32) * 5/9 + 273.15: the
definitions of the Celsius and Fahrenheit scales, BIPM SI Brochure 2019 and NIST SP 811).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from parcelcast.errors import ParcelcastError
from parcelcast.io.station import read_station_series

# Hourly reports in local time +02:00; the 04:00 and 05:00 local reports are absent (rows
# missing) and the 08:00 report has an empty cell: two gaps.
CSV_DEGC = """time,temperature_degC
2017-01-01T02:00+02:00,1.0
2017-01-01T03:00+02:00,2.0
2017-01-01T06:00+02:00,5.0
2017-01-01T07:00+02:00,6.0
2017-01-01T08:00+02:00,
2017-01-01T09:00+02:00,8.0
2017-01-01T10:00+02:00,9.5
2017-01-01T11:00+02:00,10.0
"""


def _write(tmp_path, text, name="station.csv"):
    path = tmp_path / name
    path.write_text(text)
    return path


def _t(text):
    return np.datetime64(text, "ns")


def test_times_converted_to_utc_and_sorted(tmp_path):
    series = read_station_series(_write(tmp_path, CSV_DEGC))
    # 02:00+02:00 is 00:00 UTC, ..., 11:00+02:00 is 09:00 UTC (by hand)
    expected = [_t(f"2017-01-01T{h:02d}:00") for h in (0, 1, 4, 5, 6, 7, 8, 9)]
    np.testing.assert_array_equal(series.times, np.array(expected, dtype="datetime64[ns]"))
    assert series.temperature[0] == pytest.approx(274.15, abs=1e-9)
    assert math.isnan(series.temperature[4])  # the empty cell stays missing


def test_gaps_reported(tmp_path):
    series = read_station_series(_write(tmp_path, CSV_DEGC))
    # usual spacing 1 h; valid reports jump 01->04 UTC and 05->07 UTC (empty cell at 06 UTC)
    assert [(str(a)[:16], str(b)[:16]) for a, b in series.gaps] == [
        ("2017-01-01T01:00", "2017-01-01T04:00"), ("2017-01-01T05:00", "2017-01-01T07:00")]
    assert series.gap_text() == ["2017-01-01T01:00Z to 2017-01-01T04:00Z",
                                 "2017-01-01T05:00Z to 2017-01-01T07:00Z"]


def test_values_inside_a_gap_are_missing_not_bridged(tmp_path):
    series = read_station_series(_write(tmp_path, CSV_DEGC))
    assert math.isnan(series.value_at(_t("2017-01-01T02:30")))
    assert math.isnan(series.value_at(_t("2017-01-01T06:00")))  # the empty cell itself
    # on the edges of a gap the reports are valid
    assert series.value_at(_t("2017-01-01T01:00")) == pytest.approx(275.15, abs=1e-9)
    assert series.value_at(_t("2017-01-01T04:00")) == pytest.approx(278.15, abs=1e-9)
    # between two valid hourly reports: linear, 08:00 UTC 9.5 degC and 09:00 UTC 10 degC
    assert series.value_at(_t("2017-01-01T08:30")) == pytest.approx(273.15 + 9.75, abs=1e-9)
    # outside the series
    assert math.isnan(series.value_at(_t("2016-12-31T23:00")))
    assert math.isnan(series.value_at(_t("2017-01-01T10:00")))


@pytest.mark.parametrize("column,values,kelvin", [
    ("temperature_K", ("271.15", "280.4"), (271.15, 280.4)),
    ("temperature_degC", ("-2.0", "7.25"), (271.15, 280.4)),
    ("temperature_degF", ("28.4", "32.0"), (271.15, 273.15)),  # (28.4 - 32) * 5/9 = -2
])
def test_units_from_the_column_name(tmp_path, column, values, kelvin):
    text = f"time,{column}\n2017-01-01T00:00,{values[0]}\n2017-01-01T01:00,{values[1]}\n"
    series = read_station_series(_write(tmp_path, text))
    np.testing.assert_allclose(series.temperature, kelvin, rtol=0, atol=1e-9)
    # times without a zone are UTC
    assert series.times[0] == _t("2017-01-01T00:00")
    assert series.gaps == []


def test_mixed_offsets_across_a_clock_change(tmp_path):
    # Central European summer time ends 2017-10-29 03:00 CEST -> 02:00 CET: local 02:30 occurs
    # twice; with offsets the UTC times are 00:30 and 01:30 (by hand)
    text = ("time,temperature_K\n2017-10-29T02:30+02:00,280.0\n2017-10-29T02:00+01:00,281.0\n"
            "2017-10-29T02:30+01:00,282.0\n")
    series = read_station_series(_write(tmp_path, text))
    np.testing.assert_array_equal(
        series.times, np.array(["2017-10-29T00:30", "2017-10-29T01:00", "2017-10-29T01:30"],
                               dtype="datetime64[ns]"))
    np.testing.assert_array_equal(series.temperature, [280.0, 281.0, 282.0])


def test_bad_time_names_file_and_row(tmp_path):
    path = _write(tmp_path, "time,temperature_K\n2017-01-01T00:00,280\nyesterday noon,281\n")
    with pytest.raises(ParcelcastError) as err:
        read_station_series(path)
    assert str(path) in str(err.value)
    assert "row 3" in str(err.value)  # header is row 1


def test_bad_value_names_file_and_row(tmp_path):
    path = _write(tmp_path, "time,temperature_degC\n2017-01-01T00:00,2.0\n2017-01-01T01:00,warm\n")
    with pytest.raises(ParcelcastError) as err:
        read_station_series(path)
    assert str(path) in str(err.value)
    assert "row 3" in str(err.value)  # the brief: a bad CSV gives an error naming file and row


def test_missing_temperature_column_lists_columns(tmp_path):
    path = _write(tmp_path, "time,temp\n2017-01-01T00:00,280\n")
    with pytest.raises(ParcelcastError) as err:
        read_station_series(path)
    assert str(path) in str(err.value)
    assert "temperature_degC" in str(err.value) and "temp" in str(err.value)


def test_missing_file(tmp_path):
    with pytest.raises(ParcelcastError, match="no such file"):
        read_station_series(tmp_path / "nowhere.csv")


def test_a_time_beyond_what_nanoseconds_hold_is_refused(tmp_path):
    """datetime64[ns] ends on 2262-04-11 (numpy's documented span of the ns unit); a later
    year must be refused, not wrapped round into the past (found by the fuzz suite)."""
    path = tmp_path / "series.csv"
    path.write_text("time,temperature_K\n2019-03-01T00:00Z,280.0\n2262-04-12,281.0\n")
    with pytest.raises(ParcelcastError, match=r"row 3, column time: '2262-04-12' is outside") as err:
        read_station_series(path)
    assert str(path) in str(err.value)
