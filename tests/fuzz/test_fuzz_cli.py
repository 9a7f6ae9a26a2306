"""Malformed inputs through the command line, in-process (``parcelcast.cli.main``): each run
ends with an exit status of ``errors.EXIT_STATUS`` for the input's fault and a message, never
"internal error" (status 1) or a Python traceback.

The inputs are the fuzz generators' own (profile CSV, case TOML, NetCDF and GRIB analyses),
drawn derandomized, a few dozen in all.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from fuzz_contract import fuzz_settings
from parcelcast.cli import main
from parcelcast.errors import EXIT_STATUS
from test_fuzz_csv import PROFILE_HEADER, PROFILE_ROWS, cell, damaged_table, profile_header_pool
from test_fuzz_grib import damaged_grib
from test_fuzz_netcdf import VARIABLES, base_dataset, damaged_analysis, fresh_path, write
from test_fuzz_toml import damaged_case

pytestmark = pytest.mark.slow

_COUNTER = iter(range(10**9))


#: exit statuses a malformed input may end with (``errors.EXIT_STATUS``): 0 when the input
#: is still usable; never 1, "internal error", which is a fault in parcelcast
MALFORMED_INPUT = {EXIT_STATUS[k] for k in ("ok", "usage", "unreadable_input", "missing_quantity",
                                            "nothing_to_compute")}


def run_cli(capsys, args, allowed=MALFORMED_INPUT) -> int:
    """Run the command line in-process; return its exit status, one of ``allowed``."""
    status = main(args)
    captured = capsys.readouterr()
    assert "Traceback" not in captured.err, captured.err
    assert status in allowed, f"exit status {status}: {captured.err}"
    if status != 0:
        assert captured.err.strip(), "a failure without a message"
    return status


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
    # a damaged case file, or the analyses it names (a.nc) do not exist: unreadable input
    run_cli(capsys, ["review", str(path), "--out", str(scratch / "review")],
            allowed={EXIT_STATUS["unreadable_input"]})


def _timeless_case():
    """The valid analysis at its first time, without a time coordinate (found by fuzzing: the
    advect summary then failed with a KeyError instead of saying that the time is missing)."""
    spec = base_dataset()
    for name in VARIABLES:
        spec[name] = [spec[name][0][1:], spec[name][1][0], spec[name][2]]
    del spec["time"]
    return spec, "NETCDF4", None


def _wind_with_extra_dim():
    """v with a leading 'height' dimension the temperature lacks (found by fuzzing: the
    advection failed inside xarray instead of naming the mismatch)."""
    spec = base_dataset()
    spec["v"] = [("height", *spec["v"][0]), np.stack([spec["v"][1]] * 2), spec["v"][2]]
    return spec, "NETCDF4", None


@fuzz_settings(10)
@given(case=damaged_analysis())
@example(case=_timeless_case())
@example(case=_wind_with_extra_dim())
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
