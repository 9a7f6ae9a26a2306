"""Nothing lost, nothing misread (issue 10 item 8 of the issue, item 3 of the brief): files cut
short, implausible values at any time, duplicated times, CSV rows, argument bounds."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from datasets import raw_cf, small_atmosphere, write_netcdf
from parcelcast.cli import main
from parcelcast.errors import (EXIT_STATUS, ImplausibleValuesError, IncompleteInputError,
                               InputFileError, ProfileError)
from parcelcast.io.analysis import open_analysis
from parcelcast.io.netcdf_classic import check_complete
from parcelcast.io.station import read_station_series
from parcelcast.profiles.csv import read_profile_csv

TIMES = np.array(["2024-01-15T00", "2024-01-15T06", "2024-01-15T12", "2024-01-15T18"],
                 dtype="datetime64[ns]")


def _raw(times=TIMES):
    lat, lon, t, u, v = small_atmosphere(seed=5)
    return raw_cf(lat, lon, t, u, v, times=tuple(times))


def _classic(tmp_path, fmt="NETCDF3_64BIT", name="c.nc"):
    path = tmp_path / name
    _raw().to_netcdf(path, format=fmt, engine="netcdf4", unlimited_dims=["time"])
    return path


# ---------------------------------------------------------------------- classic NetCDF cut short
@pytest.mark.parametrize("fmt", ["NETCDF3_CLASSIC", "NETCDF3_64BIT"])
def test_whole_classic_file_passes_and_any_cut_is_found(tmp_path, fmt):
    path = _classic(tmp_path, fmt)
    check_complete(path)  # whole: no error
    assert open_analysis(path).sizes["time"] == 4
    data = path.read_bytes()
    for keep in (len(data) - 1, len(data) * 3 // 4, len(data) // 2):
        cut = tmp_path / f"cut{keep}.nc"
        cut.write_bytes(data[:keep])
        with pytest.raises((IncompleteInputError, InputFileError)) as err:
            open_analysis(cut)
        assert str(cut) in str(err.value)


def test_cut_inside_the_records_says_what_is_left(tmp_path, capsys):
    path = _classic(tmp_path)
    data = path.read_bytes()
    cut = tmp_path / "cut.nc"
    cut.write_bytes(data[: len(data) - len(data) // 5])  # about the last record lost
    with pytest.raises(IncompleteInputError, match="states 4 record"):
        check_complete(cut)
    assert main(["advect", str(cut), "--level", "850"]) == EXIT_STATUS["unreadable_input"]
    assert "cut short" in capsys.readouterr().err


def test_netcdf4_and_other_files_are_left_to_their_readers(tmp_path):
    path = write_netcdf(_raw(), tmp_path / "n4.nc")
    check_complete(path)  # HDF5: not a classic file, nothing to check here
    (tmp_path / "x.grb").write_bytes(b"GRIB....")
    check_complete(tmp_path / "x.grb")


# --------------------------------------------------------------------- every time is plausible
def test_spike_at_the_last_time_is_refused(tmp_path):
    raw = _raw()
    raw["t"].values[-1, 0, 3, 4] = 3229.6  # the observed 3229.6 (K) spike
    path = write_netcdf(raw, tmp_path / "spike.nc")
    with pytest.raises(ImplausibleValuesError, match="first at 2024-01-15T18:00"):
        open_analysis(path)


def test_repeated_time_in_one_file_is_refused(tmp_path):
    times = TIMES.copy()
    times[2] = times[1]
    raw = _raw().assign_coords(time=times)
    path = write_netcdf(raw, tmp_path / "dup.nc")
    with pytest.raises(InputFileError, match="2024-01-15T06:00 UTC occurs more than once"):
        open_analysis(path)


# --------------------------------------------------------------------------- CSV rows named
SOUNDING = """pressure_hPa,temperature_degC,dewpoint_degC
1000,20,15
925,15,10
850,{t850},5
700,0,-5
500,-15,-25
"""


@pytest.mark.parametrize("value", ["inf", "-inf", "1e400", "Infinity"])
def test_sounding_non_finite_refused_with_row(tmp_path, value):
    path = tmp_path / "s.csv"
    path.write_text(SOUNDING.format(t850=value))
    with pytest.raises(ProfileError, match="row 4, column temperature_degC.*not a finite number"):
        read_profile_csv(path)


def test_hpa_numbers_under_a_pa_header(tmp_path):
    path = tmp_path / "s.csv"
    path.write_text(SOUNDING.format(t850="10").replace("pressure_hPa", "pressure_Pa"))
    with pytest.raises(ProfileError, match="row 2, column pressure_Pa.*_Pa header"):
        read_profile_csv(path)


STATION = "time,temperature_degC\n2024-01-15T00:00Z,5.0\n2024-01-15T01:00Z,{x}\n2024-01-15T02:00Z,6.0\n"


@pytest.mark.parametrize("value, needle", [
    ("inf", "row 3, column temperature_degc: not a finite number"),
    ("1e400", "row 3, column temperature_degc: not a finite number"),
    ("99", "row 3, column temperature_degc: 372.1 K is outside"),
    ("-150", "row 3, column temperature_degc: 123.1 K is outside"),
    ("secret-text", "row 3, column temperature_degc: not a number"),
])
def test_station_values_refused_with_row(tmp_path, value, needle):
    path = tmp_path / "obs.csv"
    path.write_text(STATION.format(x=value))
    with pytest.raises(InputFileError) as err:
        read_station_series(path)
    assert needle in str(err.value)
    assert "secret" not in str(err.value)  # the file's contents are never echoed


def test_station_repeated_time_refused(tmp_path):
    path = tmp_path / "obs.csv"
    path.write_text(STATION.format(x="5.5").replace("01:00Z", "00:00Z"))
    with pytest.raises(InputFileError, match="rows 2 and 3 give the same time"):
        read_station_series(path)


def test_obs_error_does_not_echo_the_file(tmp_path):
    secret = tmp_path / "secret.txt"
    secret.write_text("root:SECRETHASH:19000:0:99999:7:::\nmore:lines\n")
    with pytest.raises(InputFileError) as err:
        read_station_series(secret)
    message = str(err.value).replace(str(secret), "FILE")
    assert "SECRETHASH" not in message and "root" not in message and "more" not in message


# ---------------------------------------------------------------------------- bounded ranges
@pytest.fixture(scope="module")
def series_file(tmp_path_factory):
    return write_netcdf(_raw(), tmp_path_factory.mktemp("bounds") / "four.nc")


@pytest.mark.parametrize("extra, needle", [
    (["--back", "1e9"], "longer than the analyses' span of 18 h"),
    (["--back", "259"], "at most 258 h"),
    (["--back", "inf"], "positive finite number"),
    (["--back", "12", "--every", "1e-5"], "--every 1e-05 h gives"),
    (["--back", "12", "--members", "2000000"], "--members must be within 1..1000"),
    (["--back", "12", "--members", "900", "--series", "30"], "at most 20000"),
])
def test_track_requests_bounded(series_file, capsys, extra, needle):
    argv = ["track", str(series_file), "--from", "40,0", "--level", "850", *extra]
    try:
        status = main(argv)
    except SystemExit as exc:  # refused by the parser
        status = exc.code
    assert status == EXIT_STATUS["usage"]
    assert needle in capsys.readouterr().err
