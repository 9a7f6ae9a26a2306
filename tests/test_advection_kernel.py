"""The compiled advection kernel against the readable numpy reference (``LatLonGrid.ddx/ddy``).

Second route: -(u ddx(T) + v ddy(T)) with the numpy stencils (slices on uniform axes, gathers
on uneven ones; tested against calculus in test_stencil_and_grid.py).  The two differ only in
the order of floating-point operations, so they agree to rounding (relative 1e-12 of the
largest term); NaN (missing values, pole rows) must fall on exactly the same points.
"""

from __future__ import annotations

import numpy as np
import pytest

from parcelcast.advection import advection_array
from parcelcast.grid import LatLonGrid


def _reference(t, u, v, grid):
    return -(u * grid.ddx(t) + v * grid.ddy(t))


def _fields(grid, n, seed):
    rng = np.random.default_rng(seed)
    shape = (n, *grid.shape)
    return (250.0 + 40.0 * rng.random(shape), 25.0 * rng.standard_normal(shape),
            25.0 * rng.standard_normal(shape))


GRIDS = {
    "global with pole rows": LatLonGrid(np.linspace(-90.0, 90.0, 37), np.arange(0.0, 360.0, 5.0),
                                        periodic_lon=True),
    "regional uneven": LatLonGrid(np.cumsum(np.linspace(0.5, 1.5, 23)) + 20.0,
                                  np.cumsum(np.linspace(1.0, 0.4, 31)) - 10.0, periodic_lon=False),
    "global uneven, no poles": LatLonGrid(np.sort(np.random.default_rng(3).uniform(-80, 80, 29)),
                                          np.arange(0.0, 360.0, 9.0) + 0.2 * np.sin(np.arange(40.0)) ** 2,
                                          periodic_lon=True),
    "smallest (3 x 3)": LatLonGrid(np.array([40.0, 41.0, 43.0]), np.array([0.0, 2.0, 3.0]),
                                   periodic_lon=False),
}


@pytest.mark.parametrize("name", GRIDS)
def test_kernel_equals_numpy_reference_within_rounding(name):
    grid = GRIDS[name]
    t, u, v = _fields(grid, 3, seed=len(name))
    t[1, grid.shape[0] // 2, 0] = np.nan  # a missing value on an edge column
    u[2, 1, grid.shape[1] // 2] = np.nan  # and a missing wind inside
    got = advection_array(t, u, v, grid)
    want = _reference(t, u, v, grid)
    # where T itself is missing the result is missing (advection.py: NaN wherever the stencil,
    # centre included, touches a NaN); the uniform numpy slices skip the centre, so add it here
    want[np.isnan(t)] = np.nan
    np.testing.assert_array_equal(np.isnan(got), np.isnan(want))
    scale = np.nanmax(np.abs(u)) * np.nanmax(np.abs(t)) / (grid.radius * np.deg2rad(0.4))
    np.testing.assert_allclose(got, want, rtol=0, atol=1e-12 * scale)
    assert np.isnan(got[1]).sum() >= 3  # the missing T spoils its stencil neighbours too


def test_kernel_leaves_its_inputs_unchanged():
    grid = GRIDS["regional uneven"]
    t, u, v = _fields(grid, 1, seed=7)
    copies = [a.copy() for a in (t, u, v)]
    advection_array(t, u, v, grid)
    for before, after in zip(copies, (t, u, v)):
        np.testing.assert_array_equal(before, after)
