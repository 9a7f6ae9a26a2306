"""Analytic flows as canonical datasets, for tests, examples and benchmarks.

What belongs here: winds whose trajectories are known exactly.

* :func:`solid_body_wind` / :func:`solid_body_dataset`: test case 1 of Williamson et al.
  (1992): solid-body rotation with speed ``u0 = 2 pi a / (12 days)`` about an axis tilted
  by ``alpha`` from the pole; the exact trajectory is a rotation of the start point about
  that axis at angular speed ``u0 / a``.
* :func:`rotation_axis`: the axis, (-sin alpha, 0, cos alpha) in Earth-centred coordinates.

References
----------
Williamson, D. L., Drake, J. B., Hack, J. J., Jakob, R. and Swarztrauber, P. N. (1992).
    A standard test set for numerical approximations to the shallow water equations in
    spherical geometry. J. Comput. Phys. 102, 211-224 (test case 1, eqs. 75-76).
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import EARTH_RADIUS

#: Williamson et al. (1992) test case 1 speed: one revolution in 12 days (m s-1).
U0 = 2.0 * np.pi * EARTH_RADIUS / (12.0 * 86400.0)


def solid_body_wind(lat_deg, lon_deg, alpha: float = 0.0, u0: float = U0):
    """Eastward and northward wind (m s-1) of Williamson case 1 (``alpha`` in radians).

    ``u = u0 (cos(lat) cos(alpha) + sin(lat) cos(lon) sin(alpha))``,
    ``v = -u0 sin(lon) sin(alpha)``.
    """
    la = np.deg2rad(lat_deg)
    lo = np.deg2rad(lon_deg)
    u = u0 * (np.cos(la) * np.cos(alpha) + np.sin(la) * np.cos(lo) * np.sin(alpha))
    v = -u0 * np.sin(lo) * np.sin(alpha) * np.ones_like(la)
    return u, v


def rotation_axis(alpha: float) -> np.ndarray:
    """Unit rotation axis of :func:`solid_body_wind` (angular speed ``u0 / a``)."""
    return np.array([-np.sin(alpha), 0.0, np.cos(alpha)])


def solid_body_dataset(hours: float = 72, step_hours: float = 6, resolution: float = 1.0,
                       alpha: float = 0.0, levels_hpa=(500.0,), start="2020-01-01T00:00",
                       time_factor=None):
    """A canonical global dataset with the Williamson case-1 wind at every time and level.

    Parameters
    ----------
    hours, step_hours : float
        Length of the record and spacing of analysis times (h).
    resolution : float
        Grid spacing in degrees (latitudes -90..90 including the poles, longitudes
        -180..180-resolution).
    alpha : float
        Tilt of the rotation axis from the pole (radians).
    levels_hpa : sequence of float
        Pressure levels (hPa), the same wind on each.
    time_factor : callable, optional
        ``f(hours_since_start) -> float`` multiplying the wind (a flow that changes in time).
    """
    import xarray as xr

    lat = np.arange(-90.0, 90.0 + resolution / 2, resolution)
    lon = np.arange(-180.0, 180.0 - resolution / 2, resolution)
    nt = int(round(hours / step_hours)) + 1
    times = np.datetime64(start, "ns") + (np.arange(nt) * step_hours * 3600 * 1e9).astype(
        "timedelta64[ns]")
    u2, v2 = solid_body_wind(lat[:, None], lon[None, :], alpha)
    fac = np.ones(nt) if time_factor is None else np.array(
        [time_factor(k * step_hours) for k in range(nt)])
    levels = np.array(levels_hpa, dtype=np.float64) * 100.0
    shape = (nt, levels.size, lat.size, lon.size)
    u = np.broadcast_to(fac[:, None, None, None] * u2, shape).copy()
    v = np.broadcast_to(fac[:, None, None, None] * v2, shape).copy()
    temp = np.broadcast_to(250.0 + 0.0 * u2, shape).copy()
    dims = ("time", "level", "lat", "lon")
    return xr.Dataset(
        {
            "u": (dims, u, {"units": "m s-1", "standard_name": "eastward_wind"}),
            "v": (dims, v, {"units": "m s-1", "standard_name": "northward_wind"}),
            "temperature": (dims, temp, {"units": "K", "standard_name": "air_temperature"}),
        },
        coords={
            "time": times,
            "level": ("level", levels, {"units": "Pa", "standard_name": "air_pressure", "positive": "down"}),
            "lat": ("lat", lat, {"units": "degrees_north"}),
            "lon": ("lon", lon, {"units": "degrees_east"}),
        },
        attrs={"source_files": "analytic: Williamson et al. (1992) test case 1"},
    )
