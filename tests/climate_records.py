"""Synthetic multi-week records for the climate tests: a wave drifting east with a known,
uniform heating, on a coarse global grid, written to NetCDF as a user's file would be.

T(lat, lon, p, t) = 270 + 6 cos(lat)^2 sin(k (lon - c t)) + (p - 85000 Pa) 1e-4 K/Pa + H t,
u = c a cos(lat) (solid body, the wave's own angular speed), v = 0.  The wave is carried
by the wind, so following the air only the heating changes T: over a window of length L
the advective part is T(end) - T(start) - H L, and the residual is H L (the vertical term
is zero with ``omega`` = 0).  By hand, from the construction (second route to the split).
"""

from __future__ import annotations

import numpy as np
import xarray as xr

A = 6_371_000.0  # Earth radius used by parcelcast (parcelcast/constants.py)
HEATING_K_PER_S = 1.0e-5  # 0.864 K per day
START = np.datetime64("2024-01-24T00:00", "ns")


def wave_record(days=12, step_h=6, dlat=5.0, dlon=5.0, omega_pa_s=0.0, speed=4.0, k=2):
    """Raw CF dataset (time, plev, lat, lon) of the drifting wave; ``omega_pa_s`` != 0 adds a
    smooth omega field (then the residual is no longer the heating alone)."""
    lat = np.arange(-90.0, 90.01, dlat)
    lon = np.arange(-180.0, 180.0, dlon)
    levels = np.array([925.0, 850.0, 700.0])
    times = START + np.arange(int(days * 24 / step_h) + 1) * np.timedelta64(step_h, "h")
    seconds = (times - START) / np.timedelta64(1, "s")
    c = speed / (A * np.cos(np.deg2rad(45.0)))
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    phase = k * (lam[None] - c * seconds[:, None, None])
    t2d = 270.0 + 6.0 * np.cos(phi) ** 2 * np.sin(phase) + HEATING_K_PER_S * seconds[:, None, None]
    t = t2d[:, None] + (levels[None, :, None, None] * 100.0 - 85_000.0) * 1e-4
    u = np.broadcast_to(c * A * np.cos(phi), t.shape)
    omega = omega_pa_s * np.sin(lam)[None, None] * np.cos(phi)[None, None] * np.cos(
        2 * np.pi * seconds / 86400.0)[:, None, None, None]
    dims = ("time", "plev", "lat", "lon")
    return xr.Dataset(
        {"t": (dims, t, {"units": "K", "standard_name": "air_temperature"}),
         "u": (dims, u.copy(), {"units": "m s-1", "standard_name": "eastward_wind"}),
         "v": (dims, np.zeros(t.shape), {"units": "m s-1", "standard_name": "northward_wind"}),
         "w": (dims, np.broadcast_to(omega, t.shape).copy(),
               {"units": "Pa s-1", "standard_name": "lagrangian_tendency_of_air_pressure"})},
        coords={"time": times, "plev": ("plev", levels, {"units": "hPa", "standard_name": "air_pressure"}),
                "lat": ("lat", lat, {"units": "degrees_north", "standard_name": "latitude"}),
                "lon": ("lon", lon, {"units": "degrees_east", "standard_name": "longitude"})},
        attrs={"Conventions": "CF-1.10", "comment": "synthetic drifting wave with known heating"},
    )
