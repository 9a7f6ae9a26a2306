"""Named synthetic atmospheres for the advection tests (after xgcm's ``test/datasets.py``).

Two forms:

* canonical datasets (what ``parcelcast.io.open_analysis`` returns: ``time, level (Pa,
  descending), lat (ascending), lon``; float64 SI variables ``temperature``, ``u``, ``v``,
  ``geopotential``), built directly, for the operators;
* raw CF datasets as a user's file might store them (descending latitude, 0..360 longitude,
  degC, hPa or Pa levels, knots), written to NetCDF and read back through ``open_analysis``.

Every field comes with its exact advection, derived by hand beside it (second route).
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

# Earth radius and rotation used by parcelcast (parcelcast/constants.py); the derivations below
# use the same values so that exact comparisons are meaningful.
A = 6_371_000.0
OMEGA = 7.292115e-5
G0 = 9.80665  # standard gravity, m s-2 (WMO / CODATA conventional value)
RD = 287.0470  # dry-air gas constant (J kg-1 K-1), as in parcelcast.constants

TIME = np.datetime64("2024-01-15T12:00", "ns")


# ----------------------------------------------------------------------------------- real data
def data_dir() -> Path:
    """The folder of real open data: ``PARCELCAST_DATA`` or ``../shared/data`` beside the repo."""
    env = os.environ.get("PARCELCAST_DATA")
    if env:
        return Path(env)
    return Path(__file__).resolve().parents[2] / "shared" / "data"


def data_file(name: str) -> Path:
    """Path of one real-data file, or skip the test with a reason naming the file."""
    path = data_dir() / name
    if not path.is_file():
        pytest.skip(f"real-data file {name} not found in {data_dir()} "
                    "(set PARCELCAST_DATA to the folder holding the shared data)")
    return path


# ------------------------------------------------------------------------------ canonical form
def canonical(lat, lon, temperature, u, v, levels_pa=(85_000.0,), times=(TIME,),
              geopotential=None) -> xr.Dataset:
    """A canonical dataset from arrays of shape (ny, nx) or (time, level, ny, nx)."""
    lat = np.asarray(lat, dtype=np.float64)
    lon = np.asarray(lon, dtype=np.float64)
    shape = (len(times), len(levels_pa), lat.size, lon.size)
    dims = ("time", "level", "lat", "lon")

    def var(values, units, std):
        data = np.broadcast_to(np.asarray(values, dtype=np.float64), shape).copy()
        return xr.Variable(dims, data, {"units": units, "standard_name": std})

    data = {"temperature": var(temperature, "K", "air_temperature"),
            "u": var(u, "m s-1", "eastward_wind"),
            "v": var(v, "m s-1", "northward_wind")}
    if geopotential is not None:
        data["geopotential"] = var(geopotential, "m2 s-2", "geopotential")
    return xr.Dataset(
        data,
        coords={"time": ("time", np.asarray(times, dtype="datetime64[ns]")),
                "level": ("level", np.asarray(levels_pa, dtype=np.float64), {"units": "Pa"}),
                "lat": ("lat", lat, {"units": "degrees_north"}),
                "lon": ("lon", lon, {"units": "degrees_east"})},
        attrs={"source_files": "synthetic"},
    )


def uniform_gradient(lat=None, lon=None, gradient_k_per_m=(2e-6, -5e-6), wind=(12.0, -7.0)):
    """T linear in *distance* along lat (exact for the centred y-derivative) and in longitude.

    T = 280 + gy * a * lat_rad + gx * a * lon_rad, winds uniform (u0, v0).
    Exact:  dT/dy = gy;  dT/dx = gx / cos(lat)   (d/dx = 1/(a cos lat) d/dlon, Holton & Hakim
    2013 eq. 2.18 metric);  advection = -(u0 gx / cos(lat) + v0 gy).
    """
    lat = np.arange(-60.0, 60.01, 2.0) if lat is None else np.asarray(lat, float)
    lon = np.arange(-40.0, 40.01, 2.0) if lon is None else np.asarray(lon, float)
    gx, gy = gradient_k_per_m
    u0, v0 = wind
    lat2, lon2 = np.meshgrid(lat, lon, indexing="ij")
    t = 280.0 + gy * A * np.deg2rad(lat2) + gx * A * np.deg2rad(lon2)
    ds = canonical(lat, lon, t, np.full(t.shape, u0), np.full(t.shape, v0))
    exact = -(u0 * gx / np.cos(np.deg2rad(lat2)) + v0 * gy)
    return ds, exact


def solid_body_rotation(lat=None, lon=None, u0=20.0):
    """Solid-body rotation about the polar axis: u = u0 cos(lat), v = 0 (Williamson et al. 1992,
    test case 1 with alpha = 0), advecting T = 250 + 30 cos(lat)^2 + 10 sin(lat) cos(lat) sin(3 lon).

    Exact: -u dT/dx = -u0 cos(lat) / (a cos lat) * 30 sin(lat) cos(lat) * cos(3 lon)
           = -(u0 / a) * 30 sin(lat) cos(lat) cos(3 lon)  (hand derivative, product rule).
    """
    lat = np.arange(-80.0, 80.01, 1.0) if lat is None else np.asarray(lat, float)
    lon = np.arange(-180.0, 180.0, 1.0) if lon is None else np.asarray(lon, float)
    lat2, lon2 = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    t = 250.0 + 30.0 * np.cos(lat2) ** 2 + 10.0 * np.sin(lat2) * np.cos(lat2) * np.sin(3 * lon2)
    u = u0 * np.cos(lat2)
    ds = canonical(lat, lon, t, u, np.zeros_like(u))
    exact = -(u0 / A) * 30.0 * np.sin(lat2) * np.cos(lat2) * np.cos(3 * lon2)
    return ds, exact


def translating_wave(lat=None, lon=None, speed_m_s=15.0, ref_lat=45.0, wavenumber=5,
                     amplitude=6.0, heating_k_per_s=3e-5, seconds=0.0):
    """A wave drifting east at angular speed c = speed / (a cos ref_lat), with uniform heating H t.

    T(lon, lat, t) = 270 + amplitude * cos(lat)^2 * sin(k (lon - c t)) + H t, carried by the wind
    u = c a cos(lat) (solid body, same angular speed), v = 0.
    Exact, by hand:  dT/dt = -c dT/dlon + H  and  -u/(a cos lat) dT/dlon = -c dT/dlon,
    so advection = dT/dt - H = -c k amplitude cos(lat)^2 cos(k(lon - c t)).
    """
    lat = np.arange(20.0, 70.01, 1.0) if lat is None else np.asarray(lat, float)
    lon = np.arange(-180.0, 180.0, 1.0) if lon is None else np.asarray(lon, float)
    c = speed_m_s / (A * np.cos(np.deg2rad(ref_lat)))
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    phase = wavenumber * (lam - c * seconds)
    t = 270.0 + amplitude * np.cos(phi) ** 2 * np.sin(phase) + heating_k_per_s * seconds
    u = c * A * np.cos(phi)
    ds = canonical(lat, lon, t, u, np.zeros_like(u))
    exact = -c * wavenumber * amplitude * np.cos(phi) ** 2 * np.cos(phase)
    return ds, exact


def linear_geopotential(lat, lon, b=2.0e5, c=1.0e5):
    """Phi = 5.5e4 - b lat_rad + c lon_rad (m2 s-2): centred differences exact.

    Exact geostrophic wind (Holton & Hakim 2013 eq. 3.2, f = 2 Omega sin lat):
    u_g = -(1/f) dPhi/dy = b / (a f);  v_g = (1/f) dPhi/dx = c / (a cos(lat) f).
    """
    lat2, lon2 = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    phi = 5.5e4 - b * lat2 + c * lon2
    f = 2 * OMEGA * np.sin(lat2)
    with np.errstate(divide="ignore"):
        return phi, b / (A * f), c / (A * np.cos(lat2) * f)


SYNTHETIC = {
    "uniform_gradient": uniform_gradient,
    "solid_body_rotation": solid_body_rotation,
    "translating_wave": translating_wave,
}


@pytest.fixture(params=sorted(SYNTHETIC))
def synthetic_case(request):
    """(name, canonical dataset, exact advection K s-1) for each named synthetic field."""
    ds, exact = SYNTHETIC[request.param]()
    return request.param, ds, exact


# --------------------------------------------------------------------------------- raw CF files
def raw_cf(lat, lon, t_kelvin, u_m_s, v_m_s, levels_hpa=(850.0,), *, lat_descending=False,
           lon_0_360=False, temperature_units="K", level_units="hPa", wind_units="m s-1",
           names=("t", "u", "v"), times=(TIME,), fmt_note="") -> xr.Dataset:
    """A raw CF dataset storing the same atmosphere in a chosen convention.

    Inputs are on ascending ``lat`` and ``lon`` in -180..180, shape (ny, nx) (broadcast over
    time and levels).  Conversions here are by hand (second route to pint):
    degC = K - 273.15; 1 knot = 1852/3600 m/s (international nautical mile, exact); Pa = 100 hPa.
    """
    lat = np.asarray(lat, float)
    lon = np.asarray(lon, float)
    t = np.asarray(t_kelvin, float)
    u = np.asarray(u_m_s, float)
    v = np.asarray(v_m_s, float)
    if temperature_units in ("degC", "degrees_Celsius", "celsius"):
        t = t - 273.15
    elif temperature_units != "K":
        raise ValueError(temperature_units)
    if wind_units in ("knots", "kt", "knot"):
        u = u / (1852.0 / 3600.0)
        v = v / (1852.0 / 3600.0)
    levels = np.asarray(levels_hpa, float) * (100.0 if level_units == "Pa" else 1.0)
    if lon_0_360:
        order = np.argsort(np.mod(lon, 360.0), kind="stable")
        lon = np.mod(lon, 360.0)[order]
        t, u, v = t[:, order], u[:, order], v[:, order]
    if lat_descending:
        lat, t, u, v = lat[::-1], t[::-1], u[::-1], v[::-1]
    shape = (len(times), levels.size, lat.size, lon.size)
    dims = ("time", "plev", "latitude", "longitude")
    nt, nu, nv = names

    def var(values, units, std):
        return (dims, np.broadcast_to(values, shape).copy(), {"units": units, "standard_name": std})

    return xr.Dataset(
        {nt: var(t, temperature_units, "air_temperature"),
         nu: var(u, wind_units, "eastward_wind"),
         nv: var(v, wind_units, "northward_wind")},
        coords={"time": ("time", np.asarray(times, dtype="datetime64[ns]")),
                "plev": ("plev", levels, {"units": level_units, "standard_name": "air_pressure",
                                          "positive": "down"}),
                "latitude": ("latitude", lat, {"units": "degrees_north",
                                               "standard_name": "latitude"}),
                "longitude": ("longitude", lon, {"units": "degrees_east",
                                                 "standard_name": "longitude"})},
        attrs={"Conventions": "CF-1.10", "comment": fmt_note or "synthetic test atmosphere"},
    )


def small_atmosphere(ny=13, nx=24, seed=0, lat0=20.0, dlat=3.0, lon0=-180.0, dlon=15.0):
    """A smooth random-ish atmosphere (T in K, u, v in m/s) on a small lat-lon grid."""
    rng = np.random.default_rng(seed)
    lat = lat0 + dlat * np.arange(ny)
    lon = lon0 + dlon * np.arange(nx)
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    a, b, c = rng.uniform(-1, 1, 3)
    t = 265.0 + 8 * a * np.sin(2 * lam) * np.cos(phi) + 12 * np.cos(phi) ** 2 + 3 * b * np.sin(phi)
    u = 10.0 + 8 * c * np.cos(lam) * np.cos(phi)
    v = 6.0 * np.sin(lam + a) * np.cos(phi)
    return lat, lon, t, u, v


def write_netcdf(ds: xr.Dataset, path: Path, fmt: str = "NETCDF4") -> Path:
    """Write a raw dataset to NetCDF (``NETCDF4`` or ``NETCDF3_64BIT`` classic) and return the path."""
    ds.to_netcdf(path, format=fmt, engine="netcdf4")
    return path


# ------------------------------------------------------------------------- GRIB, second route
def grib_field(path, short_name: str, level: float, type_of_level: str = "isobaricInhPa"):
    """(lat, lon, values) of one GRIB message read with eccodes directly (not through cfgrib or
    parcelcast): the independent route for values taken from real files. Grid as stored."""
    import pyproj  # noqa: F401  (PROJ before eccodes: see the issue's pitfalls)
    import eccodes

    eccodes.codes_grib_multi_support_on()  # GRIB2 messages may hold u and v together
    try:
        return _find_message(eccodes, path, short_name, level, type_of_level)
    finally:
        eccodes.codes_grib_multi_support_off()  # global eccodes state: leave it as found


def _find_message(eccodes, path, short_name, level, type_of_level):
    with open(path, "rb") as handle:
        while True:
            gid = eccodes.codes_grib_new_from_file(handle)
            if gid is None:
                raise LookupError(f"{short_name} at {level} not in {path}")
            try:
                if (eccodes.codes_get(gid, "shortName") == short_name
                        and eccodes.codes_get(gid, "typeOfLevel") == type_of_level
                        and float(eccodes.codes_get(gid, "level")) == float(level)):
                    ni, nj = eccodes.codes_get(gid, "Ni"), eccodes.codes_get(gid, "Nj")
                    values = eccodes.codes_get_array(gid, "values").reshape(nj, ni)
                    lat = eccodes.codes_get_array(gid, "distinctLatitudes")
                    lon = eccodes.codes_get_array(gid, "distinctLongitudes")
                    if eccodes.codes_get(gid, "jScansPositively") == 0:
                        lat = np.sort(lat)[::-1]
                    return lat, lon, values
            finally:
                eccodes.codes_release(gid)


def cli_command() -> list[str]:
    """The ``parcelcast`` console script, or the same entry point through this Python."""
    import shutil
    import sys

    exe = shutil.which("parcelcast")
    if exe:
        return [exe]
    return [sys.executable, "-c", "from parcelcast.cli import console; console()"]


def write_solid_body_netcdf(path):
    """Solid-body rotation about the pole (24 h, 6-hourly, 2 deg, 850 and 500 hPa) as a CF
    NetCDF file at ``path``: a parcel at 60N moves east across the dateline."""
    from parcelcast.trajectories.analytic import solid_body_dataset

    ds = solid_body_dataset(hours=24, step_hours=6, resolution=2.0, levels_hpa=(850.0, 500.0))
    for name, std in (("u", "eastward_wind"), ("v", "northward_wind"), ("temperature", "air_temperature")):
        ds[name].attrs.update(standard_name=std)
    ds.lat.attrs.update(standard_name="latitude", units="degrees_north")
    ds.lon.attrs.update(standard_name="longitude", units="degrees_east")
    ds.level.attrs.update(units="Pa")
    ds.to_netcdf(path)
    return path
