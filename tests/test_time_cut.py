"""A one-time question reads one time: a NetCDF file is cut to the valid time asked for
(or its latest) before values are read, with the same answers as the full read.

Reference: the full read of the same file (every time), then the selection of that time, as
the commands did before (``selection.select_time``); the field is the analytic solid-body
rotation of ``parcelcast.trajectories.analytic`` (24 h, 6-hourly).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from datasets import write_solid_body_netcdf
from parcelcast.advection import advection_on_level
from parcelcast.cli import main
from parcelcast.io.analysis import open_analysis

ROLES = ("temperature", "u", "v")


@pytest.fixture(scope="module")
def record(tmp_path_factory):
    return write_solid_body_netcdf(tmp_path_factory.mktemp("times") / "solid.nc")


def test_the_latest_time_only_and_the_same_answer(record):
    full = open_analysis(record, roles=ROLES, levels=85000.0)
    cut = open_analysis(record, roles=ROLES, levels=85000.0, time="latest")
    assert full.sizes["time"] == 5 and cut.sizes["time"] == 1
    assert cut["time"].values[0] == full["time"].values[-1]
    xr.testing.assert_identical(advection_on_level(cut, 850.0, None), advection_on_level(full, 850.0, None))


def test_a_time_asked_for_only(record):
    full = open_analysis(record, roles=ROLES, levels=85000.0)
    when = full["time"].values[2]
    cut = open_analysis(record, roles=ROLES, levels=85000.0, time=when)
    assert list(cut["time"].values) == [when]
    xr.testing.assert_identical(advection_on_level(cut, 850.0, when), advection_on_level(full, 850.0, when))


def test_a_time_not_in_the_file_keeps_every_time_so_the_error_lists_them(record, capsys):
    absent = np.datetime64("2030-01-01T03:00", "ns")
    kept = open_analysis(record, roles=ROLES, levels=85000.0, time=absent)
    assert kept.sizes["time"] == 5
    assert main(["advect", str(record), "--level", "850", "--at", "60,10", "--time",
                 "2030-01-01T03:00"]) == 5  # nothing to compute (README exit statuses)
    message = capsys.readouterr().err
    first = np.datetime_as_string(kept["time"].values[0], unit="m").replace("T", " ")
    assert "2030-01-01 03:00" in message and first in message


def test_several_files_are_not_cut(record, tmp_path):
    """Combining files checks every time (a valid time in two files is an error), so
    several files are read whole."""
    ds = xr.open_dataset(record).load()
    first, second = tmp_path / "a.nc", tmp_path / "b.nc"
    ds.isel(time=slice(0, 3)).to_netcdf(first)
    ds.isel(time=slice(3, None)).to_netcdf(second)
    both = open_analysis([first, second], roles=ROLES, levels=85000.0, time="latest")
    assert both.sizes["time"] == 5
