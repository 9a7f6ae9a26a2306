"""``parcelcast demo``: files written offline and fast, and the scenario's known budget holds.

Second route for the budget: the local change dT/dt at the station by a centred difference in
time of the demo's own analytic ``pattern`` + ``diurnal_heating`` (no spatial derivative, no
file, no grid), against the advection parcelcast computes from the written NetCDF plus the
known diabatic heating (``parcelcast/demo.py`` docstring: dT/dt = -V.grad T + dH/dt exactly).
"""

from __future__ import annotations

import csv
import os
import stat
import subprocess
import time

import numpy as np
import pytest
import xarray as xr

from datasets import cli_command
from parcelcast import demo


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    start = time.perf_counter()
    done = subprocess.run([*cli_command(), "demo", "--out", str(out)],
                          capture_output=True, text=True, timeout=120)
    elapsed = time.perf_counter() - start
    return out, done, elapsed


def _rows(out):
    with open(out / "station-table.csv", newline="") as handle:
        return list(csv.DictReader(handle))


def test_demo_writes_png_csv_netcdf(demo_run):
    out, done, elapsed = demo_run
    # issue 2 item 6 asks for under 30 s: reported, not asserted (no timing in tests)
    print(f"\nparcelcast demo: {elapsed:.1f} s")
    assert done.returncode == 0, done.stderr
    assert (out / "advection-850hPa.png").read_bytes()[:4] == b"\x89PNG"
    rows = _rows(out)
    assert len(rows) == demo.HOURS // demo.STEP_HOURS + 1  # 3-hourly over 48 h, both ends
    with xr.open_dataset(out / "demo-analysis.nc", engine="netcdf4") as ds:
        assert ds["air_temp"].attrs["standard_name"] == "air_temperature"
        assert ds.sizes["time"] == len(rows)
    assert "Tamsin Cross" in done.stdout


def test_demo_budget_at_the_station(demo_run):
    out, done, _ = demo_run
    assert done.returncode == 0, done.stderr
    p, lat, lon = 850.0, demo.STATION_LAT, demo.STATION_LON
    dt = 60.0
    worst = 0.0
    for row in _rows(out):
        when = np.datetime64(row["time_utc"].rstrip("Z"), "ns")
        sec = (when - demo.START) / np.timedelta64(1, "s")

        def temperature(s):
            return demo.pattern(lon, lat, p, s)[0] + demo.diurnal_heating(s, p)[0]

        local = (temperature(sec + dt) - temperature(sec - dt)) / (2 * dt) * 3600.0  # K/h
        heating = (demo.diurnal_heating(sec + dt, p)[0]
                   - demo.diurnal_heating(sec - dt, p)[0]) / (2 * dt) * 3600.0
        adv, diab = float(row["advection_K_per_h"]), float(row["known_diabatic_K_per_h"])
        assert diab == pytest.approx(heating, abs=1e-3)  # CSV rounding: 4 decimals
        # Tolerance 0.01 K/h: the 1-deg centred difference of a k=7 wave has relative error
        # (k h)^2 / 6 = (7 * 0.01745)^2 / 6 = 2.5e-3 (Taylor, by hand) of ~0.4 K/h, plus bilinear
        # interpolation in latitude (station between rows) and float32 storage (~1e-5 K/h).
        assert local == pytest.approx(adv + diab, abs=0.01), row
        worst = max(worst, abs(local - adv - diab))
    print(f"\ndemo budget at the station: max |dT/dt - (adv + diab)| = {worst:.4f} K/h")


def test_demo_outputs_have_ordinary_permissions(demo_run):
    # files made for the user (and colleagues) should honour the umask like any other program's
    # output (0644 under umask 022), not the 0600 of a private temporary file
    out, done, _ = demo_run
    assert done.returncode == 0, done.stderr
    umask = os.umask(0)
    os.umask(umask)
    expected = 0o666 & ~umask
    for name in ("station-table.csv", "advection-850hPa.png", "demo-analysis.nc"):
        mode = stat.S_IMODE((out / name).stat().st_mode)
        assert mode == expected, f"{name}: {oct(mode)} (umask {oct(umask)} gives {oct(expected)})"
