"""Compiled kernel for -V.grad(s) on a lat-lon grid (numba; imported on first use).

One pass over memory: each output point reads its stencil neighbours and the
two wind components once, which keeps the kernel at the speed of a fused pass
that only reads three arrays and writes one (``benchmarks/bench_advection.py``).
What keeps it there:

* the metric and the northward stencil weights are folded into per-row factors
  before the row's loop (``b0, b1, b2`` = weight / a, ``f`` = 1 / (a cos lat));
* the eastward weights are copied once into three contiguous rows, so the inner
  loop reads only unit-stride arrays (numba vectorises it);
* each row works on 1-D views of the rows it needs (no index arithmetic per point);
* the two edge columns (wrap-around or one-sided neighbours) are done apart, so
  the interior loop has no branches.

No ``fastmath``: it would let the compiler assume no NaN, and missing values must
stay missing.  The stencil arrays come from :class:`parcelcast.grid.stencil.Stencil`,
so uneven spacing, periodic longitude and one-sided edges are handled exactly as in
``LatLonGrid.ddx``/``ddy`` (the readable numpy reference the tests compare against).
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
    w0 = x_weight[:, 0].copy()  # contiguous copies: unit-stride loads in the inner loop
    w1 = x_weight[:, 1].copy()
    w2 = x_weight[:, 2].copy()
    for k in range(n):
        for j in range(ny):
            b0 = y_weight[j, 0] * y_factor
            b1 = y_weight[j, 1] * y_factor
            b2 = y_weight[j, 2] * y_factor
            f = x_factor[j]
            row = s[k, j]
            r0 = s[k, y_index[j, 0]]  # the northward stencil's rows: j-1, j, j+1 inside,
            r1 = s[k, y_index[j, 1]]  # one-sided at the first and last rows
            r2 = s[k, y_index[j, 2]]
            uj = u[k, j]
            vj = v[k, j]
            oj = out[k, j]
            for i in range(1, nx - 1):
                dsdx = (w0[i] * row[i - 1] + w1[i] * row[i] + w2[i] * row[i + 1]) * f
                dsdy = b0 * r0[i] + b1 * r1[i] + b2 * r2[i]
                oj[i] = -(uj[i] * dsdx + vj[i] * dsdy)
            for i in (0, nx - 1):  # edge columns: wrap-around or one-sided neighbours
                dsdx = (w0[i] * row[x_index[i, 0]] + w1[i] * row[x_index[i, 1]]
                        + w2[i] * row[x_index[i, 2]]) * f
                dsdy = b0 * r0[i] + b1 * r1[i] + b2 * r2[i]
                oj[i] = -(uj[i] * dsdx + vj[i] * dsdy)


def warm_up() -> None:
    """Compile (or load from cache) once, e.g. before timing."""
    z = np.zeros((1, 3, 3))
    idx = np.zeros((3, 3), dtype=np.intp)
    advect_fields(z, z, z, idx, np.zeros((3, 3)), idx, np.zeros((3, 3)), np.zeros(3), 1.0, z.copy())
