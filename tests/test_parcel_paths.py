"""A few columns run the parcel loops as Python, many the same loops compiled: same answers.

Second route for each path: the other path (one source, ``thermo/_parcel_loops.py``, run by
the interpreter or compiled by numba, DEVELOPERS.md "Why compiled kernels").  Differences
are rounding only (numpy's and the C library's ``exp``/``log`` may differ in the last bit):
pressures within 1e-12 relative, temperatures and buoyancy within 1e-9 K, CAPE and CIN
within 1e-9 J/kg, and NaN at the same places.
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

from datasets import data_file
from parcelcast.thermo import parcel
from parcelcast.thermo.moist import pseudoadiabat_lookup
from parcelcast.thermo.parcel import PARCELS, interpolate_at_pressure, lift_parcels

_PRESSURES = ("lcl_pressure", "lfc_pressure", "el_pressure", "start_pressure")


def _both(monkeypatch, function, *args, **kwargs):
    """``function`` run with the Python loops, then with the compiled ones."""
    with monkeypatch.context() as patch:
        patch.setattr(parcel, "COMPILED_FROM_COLUMNS", sys.maxsize)
        python = function(*args, **kwargs)
    with monkeypatch.context() as patch:
        patch.setattr(parcel, "COMPILED_FROM_COLUMNS", 0)
        compiled = function(*args, **kwargs)
    return python, compiled


def _assert_same(python, compiled, name=""):
    python, compiled = np.asarray(python), np.asarray(compiled)
    assert np.array_equal(np.isnan(python), np.isnan(compiled)), name
    if name in _PRESSURES:
        np.testing.assert_allclose(python, compiled, rtol=1e-12, atol=0.0, err_msg=name)
    else:
        np.testing.assert_allclose(python, compiled, rtol=0.0, atol=1e-9, err_msg=name)


def _assert_same_results(python, compiled):
    for kind in python:
        for name in python[kind].__dataclass_fields__:
            _assert_same(getattr(python[kind], name), getattr(compiled[kind], name), name)


def _analytic_columns():
    """Analytic columns (0.19 power law with an inversion, as in test_thermo_parcel.py) and
    the awkward cases: a saturated start, unknown humidity aloft, missing levels, a column
    with no valid level, a stable column, a surface above some levels."""
    p = np.linspace(100000.0, 10000.0, 60)
    base = 303.0 * (p / 1e5) ** 0.19
    base = np.maximum(base, 303.0 * 0.2 ** 0.19) + 2.5 * np.exp(-(((p - 88000.0) / 2500.0) ** 2))
    spread = np.linspace(2.0, 30.0, p.size)
    t = np.tile(base, (8, 1))
    td = t - spread
    td[1, 0] = t[1, 0]  # saturated at the start
    td[2, 30:] = np.nan  # humidity unknown aloft
    t[3, [0, 7, 8, 40]] = np.nan  # missing levels, the first among them
    t[4] = np.nan  # nothing valid
    t[5] = 250.0 + 40.0 * (p / 1e5)  # stable: no LFC
    td[5] = t[5] - 15.0
    t[6] -= np.linspace(0.0, 25.0, p.size)  # warm, moist and very unstable
    td[6] = t[6] - np.linspace(0.5, 20.0, p.size)
    surface = np.full(t.shape[0], 101000.0)
    surface[7] = 87000.0  # levels below ground ignored
    return p, t, td, surface


def test_python_loops_equal_the_compiled_ones_on_analytic_columns(monkeypatch):
    p, t, td, surface = _analytic_columns()
    python, compiled = _both(monkeypatch, lift_parcels, p, t, td, PARCELS, surface_pressure=surface)
    _assert_same_results(python, compiled)
    assert np.isfinite(python["surface"].cape[[0, 1, 6]]).all()  # the comparison has something to compare
    assert (python["surface"].cape[[0, 6]] > 100.0).all() and python["surface"].cape[5] == 0.0
    assert np.isnan(python["surface"].cape[4])


@pytest.mark.parametrize("method", ["table", "rk4"])
@pytest.mark.parametrize("depths", [(10000.0, 30000.0), (0.0, 0.0), (150000.0, 150000.0)],
                         ids=["default", "zero", "deeper-than-the-column"])
def test_python_loops_equal_the_compiled_ones_for_methods_and_depths(monkeypatch, method, depths):
    p, t, td, surface = _analytic_columns()
    python, compiled = _both(monkeypatch, lift_parcels, p, t, td, PARCELS, surface_pressure=surface,
                             ml_depth=depths[0], mu_depth=depths[1], method=method)
    _assert_same_results(python, compiled)


@pytest.mark.filterwarnings("ignore:divide by zero:RuntimeWarning")  # theta_E at 0 Pa (numpy, both paths)
def test_python_loops_equal_the_compiled_ones_on_repeated_and_zero_pressures(monkeypatch):
    """Division by zero and log 0 give the IEEE values on both paths (no exception)."""
    p = np.array([100000.0, 90000.0, 90000.0, 70000.0, 50000.0, 0.0])
    t = np.array([[300.0, 293.0, 292.0, 280.0, 262.0, 200.0]])
    python, compiled = _both(monkeypatch, lift_parcels, p, t, t - 4.0)
    _assert_same_results(python, compiled)
    python, compiled = _both(monkeypatch, interpolate_at_pressure, p, t, np.array([90000.0]))
    _assert_same(python, compiled)


def test_lookup_and_interpolation_paths_agree(monkeypatch):
    levels = np.linspace(105000.0, 1000.0, 80)
    starts = np.linspace(170.0, 340.0, 50)  # reaches outside the table (NaN) on purpose
    python, compiled = _both(monkeypatch, pseudoadiabat_lookup, starts, 90000.0, levels)
    _assert_same(python, compiled)
    assert np.isnan(python[0]).all() and np.isfinite(python[20]).all()
    values = np.sin(np.arange(levels.size))[None, :] * np.arange(1.0, 6.0)[:, None]
    targets = np.array([106000.0, 100000.0, 55555.0, 1000.0, np.nan])
    python, compiled = _both(monkeypatch, interpolate_at_pressure, levels, values, targets)
    _assert_same(python, compiled)


@pytest.mark.realdata
def test_python_loops_equal_the_compiled_ones_on_gfs_columns(monkeypatch):
    from parcelcast.io.analysis import open_analysis
    from parcelcast.thermo import dewpoint_from_relative_humidity

    ds = open_analysis(data_file("gfs-20111008T00-f072-global-2p5deg.grb2"),
                       roles=("temperature", "relative_humidity", "surface_pressure")).isel(time=0)
    p = ds["level"].values
    every = slice(None, None, 7)  # 1,500 columns, pole to pole, land and sea
    t = ds["temperature"].transpose("lat", "lon", "level").values.reshape(-1, p.size)[every]
    rh = ds["relative_humidity"].transpose("lat", "lon", "level").values.reshape(-1, p.size)[every]
    ps = ds["surface_pressure"].values.reshape(-1)[every]
    with np.errstate(divide="ignore", invalid="ignore"):
        td = np.minimum(dewpoint_from_relative_humidity(t, np.clip(rh, 0, 1)), t)
    python, compiled = _both(monkeypatch, lift_parcels, p, t, td, PARCELS, surface_pressure=ps)
    _assert_same_results(python, compiled)
    assert (python["most_unstable"].cape > 500.0).sum() > 20  # convective columns among them


def test_few_columns_take_python_many_the_compiled_loops():
    from parcelcast.thermo import _parcel_kernel

    assert parcel.column_loops(1) is not _parcel_kernel
    assert parcel.column_loops(parcel.COMPILED_FROM_COLUMNS - 1) is not _parcel_kernel
    assert parcel.column_loops(parcel.COMPILED_FROM_COLUMNS) is _parcel_kernel


#: after a one-point profile and a one-parcel track, whether numba was imported
_NUMBA_AFTER = r"""
import contextlib, io, sys
from parcelcast.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    status = main(sys.argv[2:])
print(status, "numba" in sys.modules)
"""


@pytest.mark.realdata
@pytest.mark.parametrize("command", [
    ["profile", "{gfs}", "--at", "50,5", "--json"],
    ["track", "{gfs}", "--from", "51,12", "--level", "850", "--back", "24", "--json"],
    ["track", "{era5}", "--from", "51,12", "--level", "850", "--back", "24", "--wind", "geostrophic",
     "--json"],
], ids=["profile", "track-gfs", "track-era5-ensemble"])
def test_one_point_questions_load_no_compiler(command):
    files = {"gfs": data_file("gfs-20111008T00-f072-global-2p5deg.grb2"),
             "era5": data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1")}
    argv = [a.format(**files) for a in command]
    done = subprocess.run([sys.executable, "-c", _NUMBA_AFTER, "-", *argv], capture_output=True,
                          text=True, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["0", "False"], done.stdout
