"""Geometry of a regular (uniform or not) latitude-longitude grid on the sphere.

Derivatives are in metres along the local east and north directions:

    d/dx = 1 / (a cos(lat)) d/dlon,     d/dy = 1 / a d/dlat      (lon, lat in radians)

with a the Earth's radius the file declares (:mod:`parcelcast.grid.earth`; default
:data:`parcelcast.constants.EARTH_RADIUS`).  Whether longitude wraps is
declared (``periodic_lon``); :func:`grid_for` infers it from the coordinates
and refuses a declaration the coordinates contradict.  At a pole row
(|lat| = 90) the eastward derivative is undefined and is NaN.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from parcelcast.constants import EARTH_RADIUS
from parcelcast.errors import GridError
from parcelcast.grid.stencil import Stencil

_POLE_TOLERANCE_DEG = 1e-6


@dataclass(frozen=True)
class LatLonGrid:
    """A latitude-longitude grid: coordinates in degrees, ascending.

    Parameters
    ----------
    lat : array (ny,)
        Latitudes, degrees north, strictly ascending.
    lon : array (nx,)
        Longitudes, degrees east, strictly ascending (may exceed 180 across the dateline).
    periodic_lon : bool
        True if the grid closes around the globe (longitude wraps).
    radius : float
        The Earth's radius (m) of the metric (:mod:`parcelcast.grid.earth`).
    """

    lat: np.ndarray
    lon: np.ndarray
    periodic_lon: bool
    radius: float = EARTH_RADIUS
    _x: Stencil = field(init=False, repr=False, compare=False)
    _y: Stencil = field(init=False, repr=False, compare=False)
    _inv_dx_factor: np.ndarray = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        lat = np.asarray(self.lat, dtype=np.float64)
        lon = np.asarray(self.lon, dtype=np.float64)
        if lat.ndim != 1 or lon.ndim != 1 or lat.size < 3 or lon.size < 3:
            raise GridError("latitude and longitude must be 1-D with at least 3 points each")
        if np.any(np.diff(lat) <= 0) or np.any(np.diff(lon) <= 0):
            raise GridError("latitude and longitude must be strictly ascending (canonical order)")
        span = lon[-1] - lon[0]
        if self.periodic_lon and not (359.0 < span + np.diff(lon).max() < 361.0 and span < 360.0):
            raise GridError(
                f"longitude declared periodic but the grid spans {lon[0]:g} .. {lon[-1]:g} degrees"
            )
        object.__setattr__(self, "lat", lat)
        object.__setattr__(self, "lon", lon)
        object.__setattr__(self, "_x", Stencil.build(np.deg2rad(lon), self.periodic_lon, 2 * np.pi))
        object.__setattr__(self, "_y", Stencil.build(np.deg2rad(lat)))
        coslat = np.cos(np.deg2rad(lat))
        factor = np.full(lat.shape, np.nan)
        away = np.abs(np.abs(lat) - 90.0) > _POLE_TOLERANCE_DEG
        factor[away] = 1.0 / (self.radius * coslat[away])
        object.__setattr__(self, "_inv_dx_factor", factor)

    #: names of the two horizontal dimensions in the canonical dataset
    dims = ("lat", "lon")

    @property
    def shape(self) -> tuple[int, int]:
        return (self.lat.size, self.lon.size)

    def latitude_field(self) -> np.ndarray:
        """Latitude (degrees north) of every grid point, shape (ny, nx)."""
        return np.broadcast_to(self.lat[:, None], self.shape)

    def longitude_field(self) -> np.ndarray:
        """Longitude (degrees east) of every grid point, shape (ny, nx)."""
        return np.broadcast_to(self.lon[None, :], self.shape)

    def area_weights(self) -> np.ndarray:
        """Relative area of each grid cell, cos(lat), shape (ny, nx)."""
        return np.broadcast_to(np.cos(np.deg2rad(self.lat))[:, None], self.shape)

    def fill_advection(self, s, u, v, out) -> None:
        """out[k] = -(u ds/dx + v ds/dy) for arrays (n, ny, nx), C-contiguous float64."""
        from parcelcast.grid._advection_kernel import advect_fields

        advect_fields(s, u, v, self._x.index, self._x.weight, self._y.index, self._y.weight,
                      self._inv_dx_factor, 1.0 / self.radius, out)

    def bilinear(self, lat: float, lon: float):
        """Corner indices and weights ((j0, j1, wy), (i0, i1, wx)) for a point; None if outside."""
        if not self.contains(lat, lon):
            return None
        j0, j1, wy = _bracket(self.lat, lat)
        if self.periodic_lon:
            i0, i1, wx = _bracket_periodic(self.lon, lon)
        else:
            i0, i1, wx = _bracket(self.lon, float(self.lon_in_grid(lon)))
        return (j0, j1, wy), (i0, i1, wx)

    def extent_text(self) -> str:
        """The grid's extent in words, for error messages."""
        lons = "all (global grid)" if self.periodic_lon else f"{self.lon[0]:g}..{self.lon[-1]:g}"
        return f"latitudes {self.lat[0]:g}..{self.lat[-1]:g}, longitudes {lons}"

    @property
    def has_pole_rows(self) -> bool:
        return bool(np.any(np.isnan(self._inv_dx_factor)))

    def ddx(self, f: np.ndarray) -> np.ndarray:
        """Eastward derivative (per metre) of ``f`` with shape (..., ny, nx); NaN on pole rows."""
        return self._x.apply(f, axis=-1) * self._inv_dx_factor[:, None]

    def ddy(self, f: np.ndarray) -> np.ndarray:
        """Northward derivative (per metre) of ``f`` with shape (..., ny, nx)."""
        return self._y.apply(f, axis=-2) * (1.0 / self.radius)

    def coriolis(self) -> np.ndarray:
        """Coriolis parameter f = 2 Omega sin(lat) (s-1), shape (ny, nx)."""
        return coriolis_parameter(self.latitude_field())

    def contains(self, lat: float, lon: float) -> bool:
        """True if the point lies inside the grid (longitude taken modulo 360)."""
        if not self.lat[0] <= lat <= self.lat[-1]:
            return False
        if self.periodic_lon:
            return True
        return self.lon[0] <= self.lon_in_grid(lon) <= self.lon[-1]

    def lon_in_grid(self, lon):
        """Express longitudes in the grid's own range (start at ``lon[0]``)."""
        return self.lon[0] + np.mod(np.asarray(lon, dtype=np.float64) - self.lon[0], 360.0)



def coriolis_parameter(lat_deg) -> np.ndarray:
    """f = 2 Omega sin(lat) (s-1) for latitudes in degrees."""
    from parcelcast.constants import EARTH_ANGULAR_VELOCITY

    return 2.0 * EARTH_ANGULAR_VELOCITY * np.sin(np.deg2rad(np.asarray(lat_deg, dtype=np.float64)))


def _bracket(coord: np.ndarray, x: float):
    """(i0, i1, weight of i1) for ``x`` inside ascending ``coord`` (linear interpolation)."""
    i0 = int(np.searchsorted(coord, x, side="right") - 1)
    i0 = min(max(i0, 0), coord.size - 2)
    return i0, i0 + 1, float((x - coord[i0]) / (coord[i0 + 1] - coord[i0]))


def _bracket_periodic(lon: np.ndarray, x: float):
    """As :func:`_bracket` on a longitude circle (the last point neighbours the first)."""
    n = lon.size
    rel = np.mod(x - lon[0], 360.0)
    steps = np.append(np.diff(lon), lon[0] + 360.0 - lon[-1])
    edges = np.concatenate([[0.0], np.cumsum(steps)])
    i0 = min(int(np.searchsorted(edges, rel, side="right") - 1), n - 1)
    return i0, (i0 + 1) % n, float((rel - edges[i0]) / steps[i0])


def in_grid_order(*arrays):
    """Put DataArrays on a 1-D lat/lon grid in any order into the grid's order.

    Returns ``(sorted_arrays, restore)``: latitude ascending, longitude contiguous and
    ascending, and a function that puts a result back in the caller's order and
    coordinates.  Arrays already in order (or on a projected grid) pass unchanged.
    """
    from parcelcast.io.coords import longitude_order

    first = arrays[0]
    if "lat" not in first.dims or "lon" not in first.dims:
        return arrays, lambda result: result
    lat = np.asarray(first["lat"].values, dtype=np.float64)
    lon = np.asarray(first["lon"].values, dtype=np.float64)
    lat_order = np.argsort(lat, kind="stable")
    lon_order, lon_values, _ = longitude_order(lon)
    if np.array_equal(lat_order, np.arange(lat.size)) and np.array_equal(lon_values, lon):
        return arrays, lambda result: result
    ordered = tuple(a.isel(lat=lat_order, lon=lon_order).assign_coords(lon=lon_values)
                    for a in arrays)

    def restore(result):
        back = result.isel(lat=np.argsort(lat_order), lon=np.argsort(lon_order))
        return back.assign_coords(lat=first["lat"], lon=first["lon"])

    return ordered, restore


def grid_for(ds, periodic_lon: bool | None = None):
    """Geometry of a canonical dataset: a :class:`LatLonGrid`, or a
    :class:`~parcelcast.grid.projected.ProjectedGrid` for dims ``y, x`` with a CRS.

    ``periodic_lon`` None means: from the coordinates (lat-lon grids only).
    """
    from parcelcast.io.coords import longitude_order

    if "x" in ds.dims and "y" in ds.dims:
        from parcelcast.grid.projected import ProjectedGrid

        return ProjectedGrid.from_dataset(ds)

    lon = np.asarray(ds["lon"].values, dtype=np.float64)
    _, _, is_global = longitude_order(lon)
    if periodic_lon is None:
        periodic_lon = is_global
    elif periodic_lon and not is_global:
        raise GridError("longitude declared periodic but the grid does not go round the globe")
    from parcelcast.grid.earth import radius_of

    return LatLonGrid(ds["lat"].values, lon, periodic_lon, radius=radius_of(ds))
