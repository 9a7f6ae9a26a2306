"""The invented demo scenario: a warm-sector wave passing the fictional station Tamsin Cross.

Everything here is made up for the demonstration (no real place or event).
The atmosphere is analytic and its budget is known exactly:

* a temperature pattern ``P = T0(p) + A(p) G(lon - Omega_c t, lat)`` (one horizontal
  shape G, a meridional gradient plus a wave, scaled by A(p) at every level) drifts east
  at angular speed ``Omega_c``;
* the wind is the pattern's drift plus a flow *along* its isotherms,
  ``u = Omega_c a cos(lat) - k dG/(a dlat)``, ``v = k dG/(a cos(lat) dlon)``,
  so that -V.grad P equals the local change of P exactly;
* the along-isotherm factor ``k(p, lat) = k0 + (R_d / f) integral_p^1000hPa A dln p``
  puts the wind in thermal-wind balance with the temperature: the shear between two
  levels is ``(R_d / f) k x grad(integral of T dln p)`` (Holton and Hakim 2013, sec. 3.4),
  so the thermal-wind advection of a profile agrees with the gridded advection;
* a spatially uniform diurnal heating ``H(t, p)`` is added near the ground and does
  not change the gradients.  Hence, exactly, dT/dt = -V.grad T + dH/dt: the
  advective part is -V.grad T and the non-advective (diabatic) part is dH/dt.
* there is no vertical motion (omega = 0 is written, so the vertical term is 0);
  geopotential is integrated hydrostatically from the temperatures.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import DRY_AIR_GAS_CONSTANT, EARTH_RADIUS, STANDARD_GRAVITY

STATION_NAME = "Tamsin Cross"
STATION_LAT = 51.5
STATION_LON = 2.0
START = np.datetime64("2026-03-14T00:00", "ns")
HOURS = 48
STEP_HOURS = 3
LEVELS_HPA = np.array([1000.0, 925.0, 850.0, 700.0, 500.0, 300.0])

#: Eastward drift of the pattern: 11 m/s at 51.5 N.
DRIFT_RAD_PER_S = 11.0 / (EARTH_RADIUS * np.cos(np.deg2rad(STATION_LAT)))
WAVE_NUMBER = 7.0  # waves around the globe
WAVE_AMPLITUDE_K = 5.0
WAVE_CENTRE_LAT = 52.0
WAVE_HALF_WIDTH_DEG = 9.0
MERIDIONAL_GRADIENT_K_PER_DEG = -0.55
#: Diurnal heating amplitude (K) by level: strongest at the ground, none above 700 hPa.
DIURNAL_AMPLITUDE_K = {1000.0: 4.0, 925.0: 2.5, 850.0: 1.2, 700.0: 0.0, 500.0: 0.0, 300.0: 0.0}
#: Local solar time (h) of the diurnal temperature maximum at the station longitude.
WARMEST_LOCAL_HOUR = 15.0


def _base_temperature(p_hpa):
    """Mid-latitude-like base profile (K): 282 K at 1000 hPa, 6.5 K/km-like decrease."""
    return 282.0 * (p_hpa / 1000.0) ** 0.19


#: along-isotherm factor at 1000 hPa (m2 s-1 K-1).
ALONG_ISOTHERM_1000HPA = 2.2e6


def _vertical_factor(p_hpa):
    """A(p): the pattern's horizontal contrasts, 1 at 1000 hPa, weaker aloft (0.72 at 300 hPa)."""
    return 0.6 + 0.4 * p_hpa / 1000.0


def _along_isotherm_factor(p_hpa, lat_deg):
    """k(p, lat) in m2 s-1 K-1: k0 + (R_d/f) * integral of A(p') dln p' from p to 1000 hPa.

    The integral of 0.6 + 0.4 p'/1000 over dln p' is 0.6 ln(1000/p) + 0.4 (1000 - p)/1000.
    """
    from parcelcast.grid.latlon import coriolis_parameter

    integral = 0.6 * np.log(1000.0 / p_hpa) + 0.4 * (1000.0 - p_hpa) / 1000.0
    return ALONG_ISOTHERM_1000HPA + DRY_AIR_GAS_CONSTANT / coriolis_parameter(lat_deg) * integral


def _shape(lon_deg, lat_deg, seconds):
    """G (K) and dG/dlon, dG/dlat (K per radian): meridional gradient plus the drifting wave."""
    lam = np.deg2rad(lon_deg) - DRIFT_RAD_PER_S * seconds
    envelope = np.exp(-(((lat_deg - WAVE_CENTRE_LAT) / WAVE_HALF_WIDTH_DEG) ** 2))
    wave = WAVE_AMPLITUDE_K * np.sin(WAVE_NUMBER * lam) * envelope
    value = MERIDIONAL_GRADIENT_K_PER_DEG * (lat_deg - WAVE_CENTRE_LAT) + wave
    d_lon = WAVE_AMPLITUDE_K * WAVE_NUMBER * np.cos(WAVE_NUMBER * lam) * envelope
    d_lat_deg = MERIDIONAL_GRADIENT_K_PER_DEG - 2.0 * (lat_deg - WAVE_CENTRE_LAT) / WAVE_HALF_WIDTH_DEG ** 2 * wave
    return value, d_lon, np.rad2deg(d_lat_deg)


def pattern(lon_deg, lat_deg, p_hpa, seconds):
    """P (K) and its derivatives dP/dlon, dP/dlat (K per radian) at given times."""
    g, g_lon, g_lat = _shape(lon_deg, lat_deg, seconds)
    a = _vertical_factor(p_hpa)
    return _base_temperature(p_hpa) + a * g, a * g_lon, a * g_lat


def wind(lon_deg, lat_deg, p_hpa, seconds):
    """(u, v) in m/s: the pattern's eastward drift plus the balanced flow along its isotherms."""
    _, g_lon, g_lat = _shape(lon_deg, lat_deg, seconds)
    k = _along_isotherm_factor(p_hpa, lat_deg)
    coslat = np.cos(np.deg2rad(lat_deg))
    return (DRIFT_RAD_PER_S * EARTH_RADIUS * coslat - k * g_lat / EARTH_RADIUS,
            k * g_lon / (EARTH_RADIUS * coslat))


def diurnal_heating(seconds, p_hpa, lon_deg=STATION_LON):
    """(H in K, dH/dt in K s-1): uniform in space, the known diabatic part."""
    amp = DIURNAL_AMPLITUDE_K.get(float(p_hpa), 0.0)
    utc_hours = seconds / 3600.0 + (START - START.astype("datetime64[D]")) / np.timedelta64(1, "h")
    local = utc_hours + lon_deg / 15.0
    phase = 2.0 * np.pi * (local - WARMEST_LOCAL_HOUR) / 24.0
    return amp * np.cos(phase), -amp * np.sin(phase) * 2.0 * np.pi / (24.0 * 3600.0)


def build_scenario(resolution_deg: float = 1.0):
    """The demo analysis as a CF dataset (what a file of ours would hold), float32 on disk."""
    import pandas as pd
    import xarray as xr

    lat = np.arange(30.0, 72.0 + 1e-9, resolution_deg)
    lon = np.arange(-35.0, 35.0 + 1e-9, resolution_deg)
    times = START + np.arange(0, HOURS + 1, STEP_HOURS) * np.timedelta64(1, "h")
    seconds = (times - START) / np.timedelta64(1, "s")
    shape = (times.size, LEVELS_HPA.size, lat.size, lon.size)
    t = np.empty(shape)
    u = np.empty(shape)
    v = np.empty(shape)
    lon2, lat2 = np.meshgrid(lon, lat)
    for it, sec in enumerate(seconds):
        for ip, p in enumerate(LEVELS_HPA):
            heat, _ = diurnal_heating(sec, p)
            t[it, ip] = pattern(lon2, lat2, p, sec)[0] + heat
            u[it, ip], v[it, ip] = wind(lon2, lat2, p, sec)
    # hydrostatic geopotential height, 1000 hPa surface at 110 m
    phi = np.empty(shape)
    phi[:, 0] = 110.0 * STANDARD_GRAVITY
    for ip in range(1, LEVELS_HPA.size):
        mean_t = 0.5 * (t[:, ip] + t[:, ip - 1])
        phi[:, ip] = phi[:, ip - 1] + DRY_AIR_GAS_CONSTANT * mean_t * np.log(
            LEVELS_HPA[ip - 1] / LEVELS_HPA[ip])
    rh = np.broadcast_to(np.array([0.85, 0.8, 0.7, 0.55, 0.4, 0.3])[None, :, None, None], shape)
    dims = ("time", "level", "latitude", "longitude")

    def var(data, units, standard_name, long_name):
        return xr.Variable(dims, data.astype(np.float32),
                           {"units": units, "standard_name": standard_name, "long_name": long_name})

    ds = xr.Dataset(
        {
            "air_temp": var(t, "K", "air_temperature", "air temperature"),
            "wind_east": var(u, "m s-1", "eastward_wind", "eastward wind"),
            "wind_north": var(v, "m s-1", "northward_wind", "northward wind"),
            "height": var(phi / STANDARD_GRAVITY, "m", "geopotential_height", "geopotential height"),
            "omega": var(np.zeros(shape), "Pa s-1", "lagrangian_tendency_of_air_pressure",
                         "vertical velocity (pressure)"),
            "rh": var(rh * 100.0, "%", "relative_humidity", "relative humidity"),
        },
        coords={
            "time": ("time", pd.DatetimeIndex(times)),
            "level": ("level", LEVELS_HPA, {"units": "hPa", "standard_name": "air_pressure",
                                             "positive": "down"}),
            "latitude": ("latitude", lat, {"units": "degrees_north", "standard_name": "latitude"}),
            "longitude": ("longitude", lon, {"units": "degrees_east", "standard_name": "longitude"}),
        },
        attrs={
            "Conventions": "CF-1.10",
            "title": f"parcelcast demo: an invented wave passing {STATION_NAME}",
            "comment": "Invented analytic atmosphere for demonstration; not real data.",
        },
    )
    ds["time"].encoding["units"] = "hours since 2026-03-14 00:00:00"
    return ds


def write_scenario(path, resolution_deg: float = 1.0) -> None:
    """Write the demo analysis to CF NetCDF (atomically)."""
    from parcelcast.io import cf_netcdf

    ds = build_scenario(resolution_deg)
    cf_netcdf.write(ds, path, ds.attrs["title"])
