"""Geometry of a regular (uniform or not) latitude-longitude grid on the sphere.

Derivatives are in metres along the local east and north directions:

    d/dx = 1 / (a cos(lat)) d/dlon,     d/dy = 1 / a d/dlat      (lon, lat in radians)

with a = :data:`parcelcast.constants.EARTH_RADIUS`.  Whether longitude wraps is
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

    @property
    def shape(self) -> tuple[int, int]:
        return (self.lat.size, self.lon.size)

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
        """Coriolis parameter f = 2 Omega sin(lat) (s-1), shape (ny,)."""
        from parcelcast.constants import EARTH_ANGULAR_VELOCITY

        return 2.0 * EARTH_ANGULAR_VELOCITY * np.sin(np.deg2rad(self.lat))

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

    def x_stencil(self) -> Stencil:
        return self._x

    def y_stencil(self) -> Stencil:
        return self._y

    def inv_dx_factor(self) -> np.ndarray:
        """1 / (a cos lat) per row (m-1 per radian of longitude), NaN on pole rows."""
        return self._inv_dx_factor


def grid_for(ds, periodic_lon: bool | None = None) -> LatLonGrid:
    """Geometry of a canonical dataset; ``periodic_lon`` None means: from the coordinates."""
    from parcelcast.io.coords import longitude_order

    lon = np.asarray(ds["lon"].values, dtype=np.float64)
    _, _, is_global = longitude_order(lon)
    if periodic_lon is None:
        periodic_lon = is_global
    elif periodic_lon and not is_global:
        raise GridError("longitude declared periodic but the grid does not go round the globe")
    return LatLonGrid(ds["lat"].values, lon, periodic_lon)
