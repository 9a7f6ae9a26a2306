"""Compiled kernel for -V.grad(s) on a lat-lon grid (numba; imported on first use).

One pass over memory: each output point reads its stencil neighbours and the
two wind components once, which keeps the kernel near the memory-streaming
floor (see ``benchmarks/bench_advection.py``).  The stencil arrays come from
:class:`parcelcast.grid.stencil.Stencil`, so uneven spacing, periodic longitude
and one-sided edges are handled exactly as in ``LatLonGrid.ddx``/``ddy``.
"""

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True, nogil=True)
def advect_fields(s, u, v, x_index, x_weight, y_index, y_weight, x_factor, y_factor, out):
    """out[k] = -(u dS/dx + v dS/dy) for every field k of s (n, ny, nx); float64 C arrays.

    ``x_factor[j]`` = 1/(a cos lat_j) (NaN on pole rows), ``y_factor`` = 1/a;
    stencil weights are per radian.
    """
    n, ny, nx = s.shape
    for k in range(n):
        for j in range(ny):
            j0 = y_index[j, 0]
            j1 = y_index[j, 1]
            j2 = y_index[j, 2]
            b0 = y_weight[j, 0] * y_factor
            b1 = y_weight[j, 1] * y_factor
            b2 = y_weight[j, 2] * y_factor
            f = x_factor[j]
            for i in (0, nx - 1):  # edge columns: wrap-around or one-sided neighbours
                dsdx = (x_weight[i, 0] * s[k, j, x_index[i, 0]] + x_weight[i, 1] * s[k, j, x_index[i, 1]]
                        + x_weight[i, 2] * s[k, j, x_index[i, 2]]) * f
                dsdy = b0 * s[k, j0, i] + b1 * s[k, j1, i] + b2 * s[k, j2, i]
                out[k, j, i] = -(u[k, j, i] * dsdx + v[k, j, i] * dsdy)
            for i in range(1, nx - 1):
                dsdx = (x_weight[i, 0] * s[k, j, i - 1] + x_weight[i, 1] * s[k, j, i]
                        + x_weight[i, 2] * s[k, j, i + 1]) * f
                dsdy = b0 * s[k, j0, i] + b1 * s[k, j1, i] + b2 * s[k, j2, i]
                out[k, j, i] = -(u[k, j, i] * dsdx + v[k, j, i] * dsdy)


def warm_up() -> None:
    """Compile (or load from cache) once, e.g. before timing."""
    z = np.zeros((1, 3, 3))
    idx = np.zeros((3, 3), dtype=np.intp)
    advect_fields(z, z, z, idx, np.zeros((3, 3)), idx, np.zeros((3, 3)), np.zeros(3), 1.0, z.copy())
