"""Geometry on the sphere for trajectories: unit vectors, winds as 3-D vectors, offsets.

Positions are carried as 3-D Cartesian unit vectors (x towards 0 N 0 E, y towards
0 N 90 E, z towards the North Pole).  Steps taken in these coordinates have no
singularity at the poles, so a path over a pole is as accurate as one over the
equator (see ``design_notes/trajectories.md``).
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import EARTH_RADIUS
from parcelcast.grid.geometry import great_circle_distance  # noqa: F401  (lives in grid/)


def to_unit_vector(lat_deg, lon_deg) -> np.ndarray:
    """Unit position vectors of points given in degrees.

    Parameters
    ----------
    lat_deg, lon_deg : array_like, shape (n,)
        Latitude (degrees north) and longitude (degrees east).

    Returns
    -------
    numpy.ndarray, shape (n, 3)
        Cartesian unit vectors.
    """
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    lon = np.deg2rad(np.asarray(lon_deg, dtype=np.float64))
    c = np.cos(lat)
    return np.stack([c * np.cos(lon), c * np.sin(lon), np.sin(lat)], axis=-1)


def to_lat_lon(xyz: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Latitude and longitude (degrees; longitude in [-180, 180)) of vectors ``(..., 3)``.

    The vectors need not be normalised.  ``arctan2`` keeps full accuracy near the poles.
    """
    x, y, z = xyz[..., 0], xyz[..., 1], xyz[..., 2]
    lat = np.rad2deg(np.arctan2(z, np.hypot(x, y)))
    lon = np.rad2deg(np.arctan2(y, x))
    lon = np.where(lon >= 180.0, lon - 360.0, lon)
    return lat, lon


def normalise(xyz: np.ndarray) -> np.ndarray:
    """Scale vectors ``(..., 3)`` to unit length."""
    return xyz / np.sqrt(np.einsum("...i,...i->...", xyz, xyz))[..., None]


def wind_to_cartesian(u, v, sinlat, coslat, sinlon, coslon):
    """Earth-relative wind (eastward u, northward v) as a 3-D Cartesian vector.

    The local east unit vector is ``(-sin lon, cos lon, 0)`` and north is
    ``(-sin lat cos lon, -sin lat sin lon, cos lat)``.

    Parameters
    ----------
    u, v : array_like
        Eastward and northward components (any unit; the result has the same unit).
    sinlat, coslat, sinlon, coslon : array_like
        Trigonometric functions of the point's latitude and longitude (broadcast with u, v).

    Returns
    -------
    tuple of numpy.ndarray
        ``(vx, vy, vz)`` Cartesian components.
    """
    vx = -u * sinlon - v * sinlat * coslon
    vy = u * coslon - v * sinlat * sinlon
    vz = v * coslat
    return vx, vy, vz


def cartesian_to_wind(vx, vy, vz, sinlat, coslat, sinlon, coslon):
    """Inverse of :func:`wind_to_cartesian` (tangent part only): ``(u, v)``."""
    u = -vx * sinlon + vy * coslon
    v = -vx * sinlat * coslon - vy * sinlat * sinlon + vz * coslat
    return u, v


def offset_point(lat_deg, lon_deg, north_m, east_m, radius: float = EARTH_RADIUS):
    """Point reached from (lat, lon) by moving ``north_m`` north and ``east_m`` east.

    The move follows the great circle along the local displacement vector, so it is
    defined at the poles too (there "east" is taken along the 90-degree meridian).
    Returns ``(lat, lon)`` in degrees.
    """
    x0 = to_unit_vector(np.atleast_1d(lat_deg), np.atleast_1d(lon_deg))
    lat = np.deg2rad(np.atleast_1d(lat_deg))
    lon = np.deg2rad(np.atleast_1d(lon_deg))
    d = np.stack(wind_to_cartesian(np.asarray(east_m, float), np.asarray(north_m, float),
                                   np.sin(lat), np.cos(lat), np.sin(lon), np.cos(lon)), -1)
    dist = np.sqrt(np.sum(d * d, axis=-1, keepdims=True))
    with np.errstate(invalid="ignore", divide="ignore"):
        direction = np.where(dist > 0, d / np.where(dist > 0, dist, 1.0), 0.0)
    ang = dist / radius
    x1 = x0 * np.cos(ang) + direction * np.sin(ang)
    return to_lat_lon(x1)
