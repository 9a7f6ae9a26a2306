"""The station's neighbourhood: the few grid points a one-point split needs, cut out first.

The split at a station is the bilinear value (2 x 2 corners) of fields made with
centred three-point differences (advection of T; the geostrophic wind from the
geopotential).  Every corner's differences reach one point further on each side, so
a box of **4 x 4 points** (one ring around the corners) gives exactly the values the
whole grid gives at the corners.  At an open edge of a regional grid the box stops at
the edge, where the whole grid uses the same one-sided differences.  On a global grid
the box may wrap across the longitude seam; its longitudes are then made contiguous
(e.g. 178, 179, 180, 181) so the box is an ordinary regional grid.

Cutting is lazy (``isel`` on dask-backed arrays): only the box is ever read into memory.
"""

from __future__ import annotations

import numpy as np

from parcelcast.errors import SelectionError

#: points on each side of the bilinear corners kept for the centred differences
RING = 1


def neighbourhood(ds, lat: float, lon: float):
    """The 4 x 4 box of ``ds`` around (lat, lon), all other dimensions kept (lazy).

    Raises :class:`SelectionError` (with the grid's extent) for a point outside the grid.
    """
    from parcelcast.grid import grid_for

    grid = grid_for(ds)
    corners = grid.bilinear(lat, lon)
    if corners is None:
        raise SelectionError("point", f"{lat:g},{lon:g}", grid.extent_text(),
                             ds.attrs.get("source_files", ""))
    (j0, j1, _), (i0, i1, _) = corners
    ydim, xdim = grid.dims
    rows = _open_range(j0, j1, ds.sizes[ydim])
    periodic = bool(getattr(grid, "periodic_lon", False))
    cols = _periodic_range(i0, ds.sizes[xdim]) if periodic else _open_range(i0, i1, ds.sizes[xdim])
    box = ds.isel({ydim: rows, xdim: cols})
    if periodic:
        first = float(box["lon"].values[0])
        box = box.assign_coords(lon=first + np.mod(box["lon"].values - first, 360.0))
    box.attrs = dict(ds.attrs)
    return box


def _open_range(k0: int, k1: int, n: int) -> np.ndarray:
    """Indices k0-RING .. k1+RING clipped to 0..n-1."""
    return np.arange(max(k0 - RING, 0), min(k1 + RING, n - 1) + 1)


def _periodic_range(i0: int, n: int) -> np.ndarray:
    """Indices i0-RING .. i0+1+RING modulo n (a global longitude circle)."""
    return np.arange(i0 - RING, i0 + 2 + RING) % n


def level_neighbourhood(ds, level_hpa: float):
    """The levels the split at ``level_hpa`` needs: that level alone, or with omega in the
    input also the levels just above and below it (dT/dp is a three-point difference in
    the column, one-sided at its ends; the same value as from the whole column)."""
    from parcelcast.selection import select_level

    if "level" not in ds.dims:
        return ds
    select_level(ds, level_hpa)  # (lazy) a clear error listing the levels if it is absent
    k = int(np.argmin(np.abs(ds["level"].values - level_hpa * 100.0)))
    if "omega" not in ds.data_vars:
        return ds.isel(level=[k])
    return ds.isel(level=_open_range(k, k, ds.sizes["level"]))
