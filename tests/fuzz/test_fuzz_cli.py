"""Malformed inputs through the command line, in-process (``parcelcast.cli.main``): each run
ends with a non-zero exit status and a message, never a Python traceback.

The inputs are the fuzz generators' own (profile CSV, case TOML, NetCDF and GRIB analyses),
drawn derandomized, a few dozen in all.
"""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from fuzz_contract import fuzz_settings
from parcelcast.cli import main
from test_fuzz_csv import PROFILE_HEADER, PROFILE_ROWS, cell, damaged_table, profile_header_pool
from test_fuzz_grib import damaged_grib
from test_fuzz_netcdf import damaged_analysis, fresh_path, write
from test_fuzz_toml import damaged_case

pytestmark = pytest.mark.slow

_COUNTER = iter(range(10**9))


def run_cli(capsys, args) -> None:
    status = main(args)
    captured = capsys.readouterr()
    assert "Traceback" not in captured.err, captured.err
    if status != 0:
        assert captured.err.strip(), "a failure without a message"


@fuzz_settings(15)
@given(data=damaged_table(PROFILE_HEADER, PROFILE_ROWS, profile_header_pool, cell))
def test_cli_profile_csv(scratch, capsys, data):
    path = scratch / f"sounding-{next(_COUNTER)}.csv"
    path.write_bytes(data)
    run_cli(capsys, ["profile", str(path), "--lat", "51.5", "--lon", "2.0", "--json"])


@fuzz_settings(15)
@given(data=damaged_case())
def test_cli_review_case(scratch, capsys, data):
    path = scratch / f"case-{next(_COUNTER)}.toml"
    path.write_bytes(data)
    status = main(["review", str(path), "--out", str(scratch / "review")])
    captured = capsys.readouterr()
    assert status != 0  # the analyses named (a.nc) do not exist
    assert "Traceback" not in captured.err and captured.err.strip()


@fuzz_settings(10)
@given(case=damaged_analysis())
def test_cli_advect_netcdf(scratch, capsys, case):
    path = fresh_path(scratch)
    if write(*case, path):
        run_cli(capsys, ["advect", str(path), "--level", "850", "--at", "46,5", "--json"])


@fuzz_settings(10)
@given(data=damaged_grib())
def test_cli_advect_grib(scratch, capsys, monkeypatch, data):
    monkeypatch.setenv("PARCELCAST_CACHE", str(scratch / "cache"))
    monkeypatch.setenv("XDG_CACHE_HOME", str(scratch / "xdg-cache"))
    path = scratch / f"cli-{next(_COUNTER)}.grb"
    path.write_bytes(data)
    run_cli(capsys, ["advect", str(path), "--level", "850", "--at", "46,5", "--json"])
