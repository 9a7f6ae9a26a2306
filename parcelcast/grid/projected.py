"""Geometry of a map-projected grid (Lambert conformal, polar stereographic, Mercator).

The grid is regular in projection coordinates x, y (metres).  For a conformal
projection a small distance on the Earth is the distance on the map divided by
the map factor m, the same in every direction, and grid north differs from true
north by the angle theta (positive when true north points to the grid's +x side).
With the gradient along the grid axes g = m (ds/dX, ds/dY),

    ds/dx_east  = g_X cos(theta) - g_Y sin(theta)
    ds/dy_north = g_X sin(theta) + g_Y cos(theta)

and grid-relative winds (u_X, v_Y) turn into earth-relative ones the same way.
m and theta come from pyproj for the grid's CRS (declared in the file: CF
``grid_mapping`` or the GRIB grid definition), never guessed.  Non-conformal
projections are refused.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np

from parcelcast.errors import GridError
from parcelcast.grid.latlon import coriolis_parameter
from parcelcast.grid.stencil import Stencil

_NORTH_STEP_DEG = 1e-5


@dataclass(frozen=True)
class ProjectedGrid:
    """A regular grid in a conformal map projection.

    Parameters
    ----------
    x, y : array (nx,), (ny,)
        Projection coordinates of the grid (m), strictly ascending.
    crs_wkt : str
        The projection, as WKT (``pyproj.CRS.to_wkt()``).
    """

    x: np.ndarray
    y: np.ndarray
    crs_wkt: str
    _lat: np.ndarray = field(init=False, repr=False, compare=False)
    _lon: np.ndarray = field(init=False, repr=False, compare=False)
    _m: np.ndarray = field(init=False, repr=False, compare=False)
    _cos: np.ndarray = field(init=False, repr=False, compare=False)
    _sin: np.ndarray = field(init=False, repr=False, compare=False)
    _sx: Stencil = field(init=False, repr=False, compare=False)
    _sy: Stencil = field(init=False, repr=False, compare=False)

    dims = ("y", "x")

    def __post_init__(self):
        import pyproj

        x = np.asarray(self.x, dtype=np.float64)
        y = np.asarray(self.y, dtype=np.float64)
        if x.ndim != 1 or y.ndim != 1 or x.size < 3 or y.size < 3:
            raise GridError("projection coordinates x and y must be 1-D with at least 3 points")
        if np.any(np.diff(x) <= 0) or np.any(np.diff(y) <= 0):
            raise GridError("projection coordinates x and y must be strictly ascending")
        crs = pyproj.CRS.from_wkt(self.crs_wkt)
        to_geo = pyproj.Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True)
        to_map = pyproj.Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True)
        xx, yy = np.meshgrid(x, y)
        lon, lat = to_geo.transform(xx, yy)
        factors = pyproj.Proj(crs).get_factors(lon, lat)
        m = np.asarray(factors.meridional_scale, dtype=np.float64)
        k = np.asarray(factors.parallel_scale, dtype=np.float64)
        if not np.allclose(m, k, rtol=1e-6):
            raise GridError(f"the projection '{crs.name}' is not conformal; parcelcast supports "
                            "conformal projections (Lambert conformal, polar stereographic, Mercator)")
        step = np.where(lat + _NORTH_STEP_DEG <= 90.0, _NORTH_STEP_DEG, -_NORTH_STEP_DEG)
        x2, y2 = to_map.transform(lon, lat + step)
        dx, dy = (x2 - xx) * np.sign(step), (y2 - yy) * np.sign(step)
        theta = np.arctan2(dx, dy)
        object.__setattr__(self, "x", x)
        object.__setattr__(self, "y", y)
        object.__setattr__(self, "_lat", np.asarray(lat))
        object.__setattr__(self, "_lon", np.asarray(lon))
        object.__setattr__(self, "_m", m)
        object.__setattr__(self, "_cos", np.cos(theta))
        object.__setattr__(self, "_sin", np.sin(theta))
        object.__setattr__(self, "_sx", Stencil.build(x))
        object.__setattr__(self, "_sy", Stencil.build(y))

    @classmethod
    def from_dataset(cls, ds) -> ProjectedGrid:
        """The grid of a canonical dataset or DataArray with dims ``y, x`` and a ``crs``
        coordinate holding the projection as WKT (attribute ``crs_wkt``)."""
        if "crs" not in ds.coords or "crs_wkt" not in ds["crs"].attrs:
            raise GridError(f"{ds.attrs.get('source_files', 'input')}: a grid with x/y dimensions "
                            "but no declared projection (CF grid_mapping or GRIB grid definition)")
        x, y = np.asarray(ds["x"].values, np.float64), np.asarray(ds["y"].values, np.float64)
        return _cached_grid(x.tobytes(), y.tobytes(), ds["crs"].attrs["crs_wkt"])

    @property
    def shape(self) -> tuple[int, int]:
        return (self.y.size, self.x.size)

    has_pole_rows = False

    def latitude_field(self) -> np.ndarray:
        return self._lat

    def longitude_field(self) -> np.ndarray:
        return self._lon

    def map_factor(self) -> np.ndarray:
        """Map factor m = (distance on the map) / (distance on the Earth), shape (ny, nx)."""
        return self._m

    def rotation(self) -> tuple[np.ndarray, np.ndarray]:
        """(cos theta, sin theta): theta is the angle from grid north to true north (clockwise)."""
        return self._cos, self._sin

    def area_weights(self) -> np.ndarray:
        """Relative area on the Earth of each (equal-on-the-map) cell: 1 / m**2."""
        return 1.0 / self._m ** 2

    def coriolis(self) -> np.ndarray:
        return coriolis_parameter(self._lat)

    def _grid_gradient(self, f):
        f = np.asarray(f, dtype=np.float64)
        return self._sx.apply(f, axis=-1) * self._m, self._sy.apply(f, axis=-2) * self._m

    def ddx(self, f) -> np.ndarray:
        """Eastward derivative (per metre on the Earth) of ``f`` (..., ny, nx)."""
        gx, gy = self._grid_gradient(f)
        return gx * self._cos - gy * self._sin

    def ddy(self, f) -> np.ndarray:
        """Northward derivative (per metre on the Earth) of ``f`` (..., ny, nx)."""
        gx, gy = self._grid_gradient(f)
        return gx * self._sin + gy * self._cos

    def fill_advection(self, s, u, v, out) -> None:
        """out = -(u ds/dx + v ds/dy) with earth-relative u, v; arrays (n, ny, nx)."""
        gx, gy = self._grid_gradient(s)
        out[...] = -(u * (gx * self._cos - gy * self._sin) + v * (gx * self._sin + gy * self._cos))

    def winds_to_earth(self, u_grid, v_grid):
        """Earth-relative (east, north) components from grid-relative ones (m s-1)."""
        return (u_grid * self._cos - v_grid * self._sin, u_grid * self._sin + v_grid * self._cos)

    def bilinear(self, lat: float, lon: float):
        """Corner indices and weights in x/y for a point; None if outside the grid."""
        import pyproj

        crs = pyproj.CRS.from_wkt(self.crs_wkt)
        px, py = pyproj.Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True).transform(lon, lat)
        if not (self.x[0] <= px <= self.x[-1] and self.y[0] <= py <= self.y[-1]):
            return None
        from parcelcast.grid.latlon import _bracket

        return _bracket(self.y, float(py)), _bracket(self.x, float(px))

    def extent_text(self) -> str:
        return (f"the projected grid covering latitudes {self._lat.min():.2f}..{self._lat.max():.2f}, "
                f"longitudes {self._lon.min():.2f}..{self._lon.max():.2f}")


@functools.lru_cache(maxsize=8)
def _cached_grid(x_bytes: bytes, y_bytes: bytes, crs_wkt: str) -> ProjectedGrid:
    """Build each grid once: map factors and rotations cost a pyproj pass over every point."""
    return ProjectedGrid(np.frombuffer(x_bytes), np.frombuffer(y_bytes), crs_wkt)
