"""Small fields take numpy's reference stencils, large ones the compiled kernel: same answers.

The second route for each path is the other path (``LatLonGrid.ddx``/``ddy`` are the readable
reference the kernel replaces, DEVELOPERS.md "Why compiled kernels").  Differences are
rounding only: compared against the field's own scale.
"""

from __future__ import annotations

import importlib
import subprocess
import sys

import numpy as np

import pytest

from datasets import data_file, raw_cf, small_atmosphere, write_netcdf
from parcelcast.advection import advection_array
from parcelcast.grid.latlon import LatLonGrid

adv_module = importlib.import_module("parcelcast.advection")  # the module; parcelcast.advection is the function


def _both_paths(monkeypatch, s, u, v, grid):
    numpy_path = advection_array(s, u, v, grid)
    with monkeypatch.context() as patch:
        patch.setattr(adv_module, "NUMPY_BELOW_POINTS", 0)
        kernel_path = advection_array(s, u, v, grid)
    return numpy_path, kernel_path


@pytest.mark.parametrize("periodic", [True, False], ids=["global", "regional"])
def test_numpy_path_equals_the_kernel(monkeypatch, periodic):
    rng = np.random.default_rng(8)
    if periodic:
        grid = LatLonGrid(np.linspace(-90.0, 90.0, 37), np.arange(0.0, 360.0, 7.5), periodic_lon=True)
    else:  # uneven spacing, one-sided edges
        lat = np.cumsum(rng.uniform(0.5, 2.0, 21)) + 20.0
        grid = LatLonGrid(lat, np.cumsum(rng.uniform(0.5, 2.0, 30)) - 10.0, periodic_lon=False)
    s, u, v = (rng.normal(size=(3, *grid.shape)) for _ in range(3))
    s[1, 5, 7] = np.nan  # missing stays missing the same way
    numpy_path, kernel_path = _both_paths(monkeypatch, 280.0 + s, 10.0 * u, 10.0 * v, grid)
    assert np.array_equal(np.isnan(numpy_path), np.isnan(kernel_path))
    scale = np.nanmax(np.abs(kernel_path))
    np.testing.assert_allclose(numpy_path, kernel_path, rtol=0.0, atol=1e-12 * scale)


@pytest.mark.realdata
def test_numpy_path_equals_the_kernel_on_gfs_850hpa(monkeypatch):
    from parcelcast.grid import grid_for
    from parcelcast.io.analysis import open_analysis

    ds = open_analysis(data_file("gfs-20111008T00-f072-global-2p5deg.grb2"),
                       roles=("temperature", "u", "v"), levels=85_000.0).isel(level=0)
    grid = grid_for(ds)
    numpy_path, kernel_path = _both_paths(monkeypatch, ds["temperature"].values, ds["u"].values,
                                          ds["v"].values, grid)
    np.testing.assert_allclose(numpy_path, kernel_path, rtol=0.0,
                               atol=1e-12 * np.nanmax(np.abs(kernel_path)))


#: after a one-point advect, which of the heavy modules were imported
_IMPORTS_AFTER_ADVECT = r"""
import contextlib, io, sys
from parcelcast.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    status = main(["advect", sys.argv[1], "--level", "850", "--at", "50,5", "--json"])
heavy = ("matplotlib", "cartopy", "dask", "numba")
print(status, *[name for name in heavy if name in sys.modules])
"""


@pytest.mark.realdata
def test_one_point_advect_imports_no_drawing_chunking_or_compiler():
    """No matplotlib, cartopy, dask or numba for a one-point question on a 2.5-degree grid."""
    path = data_file("gfs-20111008T00-f072-global-2p5deg.grb2")
    done = subprocess.run([sys.executable, "-c", _IMPORTS_AFTER_ADVECT, str(path)],
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["0"], done.stdout


_CHUNKED_AFTER_ADVECT = r"""
import contextlib, io, sys
from parcelcast.cli import main
from parcelcast.io.analysis import open_analysis
with contextlib.redirect_stdout(io.StringIO()):
    main(["advect", sys.argv[1], "--level", "850", "--at", "50,5", "--json"])
lazy = open_analysis(sys.argv[2], chunks={"time": 1})
import dask.array
import xarray as xr
eager = open_analysis(sys.argv[2])
assert isinstance(lazy["temperature"].data, dask.array.Array)
xr.testing.assert_identical(lazy["temperature"].compute(), eager["temperature"])
print("ok")
"""


@pytest.mark.realdata
def test_chunked_reading_still_works_after_dask_was_kept_out(tmp_path):
    path = data_file("gfs-20111008T00-f072-global-2p5deg.grb2")
    lat, lon, t, u, v = small_atmosphere()
    netcdf = write_netcdf(raw_cf(lat, lon, t, u, v), tmp_path / "small.nc")
    done = subprocess.run([sys.executable, "-c", _CHUNKED_AFTER_ADVECT, str(path), str(netcdf)],
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["ok"]
