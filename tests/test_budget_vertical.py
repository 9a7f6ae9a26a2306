"""The vertical-motion term omega * S_p of the trend split, with known omega and stability.

Second route: S_p = R_d T/(c_p p) - dT/dp written out by hand for columns where dT/dp is known
exactly (isothermal: dT/dp = 0; T linear in p: dT/dp = constant, which the library's centred
and one-sided differences reproduce exactly).  Constants (recalled from memory, conventional values): R_d = 287.047 J kg-1 K-1
(R* = 8.31446 J mol-1 K-1 over M_d = 28.9655 g mol-1; Wallace & Hobbs 2006 round it to 287)
and c_p = 1004 J kg-1 K-1 (Bolton 1980; Wallace & Hobbs 2006).  Note: CODATA 2018 R* over
M_d = 28.9647 g/mol, as the comment in parcelcast/constants.py states, gives 287.055, not
287.047 (a 3e-5 relative slip in that comment; the value itself is the conventional one).
Omega constant or linear in time, so the time integration is exact and the tolerance is rounding.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from parcelcast.budget import eulerian_split, split_fields, trend_split

R_D = 287.047  # J kg-1 K-1 (see module docstring)
C_P = 1004.0  # J kg-1 K-1
T0 = np.datetime64("2022-07-10T00:00", "ns")
LEVELS = np.array([100_000.0, 85_000.0, 70_000.0])


def column_atmosphere(temperature_of_p, omega_of_s, hours=24, step_h=3, with_omega=True,
                      levels=LEVELS):
    """Horizontally uniform, steady temperature T(p), calm air, omega(s) uniform in space."""
    lat = np.arange(40.0, 60.0 + 1e-9, 2.0)
    lon = np.arange(0.0, 20.0 + 1e-9, 2.0)
    times = T0 + (np.arange(0, hours + 1e-9, step_h) * 3600e9).astype("timedelta64[ns]")
    s = (times - T0) / np.timedelta64(1, "s")
    shape = (times.size, levels.size, lat.size, lon.size)
    dims = ("time", "level", "lat", "lon")
    t = np.broadcast_to(temperature_of_p(levels)[None, :, None, None], shape).copy()
    data = {"temperature": (dims, t, {"units": "K"}),
            "u": (dims, np.zeros(shape), {"units": "m s-1"}),
            "v": (dims, np.zeros(shape), {"units": "m s-1"})}
    if with_omega:
        data["omega"] = (dims, np.broadcast_to(omega_of_s(s)[:, None, None, None], shape).copy(),
                         {"units": "Pa s-1"})
    return xr.Dataset(data, coords={"time": times, "level": ("level", levels, {"units": "Pa"}),
                                    "lat": ("lat", lat), "lon": ("lon", lon)},
                      attrs={"source_files": "synthetic column"})


def _sec(t):
    return (np.datetime64(t, "ns") - T0) / np.timedelta64(1, "s")


@pytest.mark.parametrize("start,end", [("2022-07-10T00:00", "2022-07-11T00:00"),
                                       ("2022-07-10T01:30", "2022-07-10T20:00")])
@pytest.mark.parametrize("level_hpa", [850.0, 1000.0, 700.0])
def test_isothermal_constant_omega(start, end, level_hpa):
    omega0 = -0.3  # Pa/s: ascent
    ds = column_atmosphere(lambda p: np.full(p.shape, 250.0), lambda s: np.full(s.shape, omega0))
    out = eulerian_split(ds, 50.0, 10.0, level_hpa, np.datetime64(start, "ns"), np.datetime64(end, "ns"))
    # isothermal: S_p = R_d T / (c_p p) exactly; vertical part = omega S_p (end - start)
    expected = omega0 * R_D * 250.0 / (C_P * level_hpa * 100.0) * (_sec(end) - _sec(start))
    assert out["vertical_available"] is True
    assert out["vertical_K"] == pytest.approx(expected, rel=1e-9)
    assert out["vertical_K"] < 0.0  # ascent in a stable column cools
    assert out["observed_change_K"] == 0.0  # steady temperature
    assert out["advective_K"] == 0.0  # calm
    assert out["residual_K"] == pytest.approx(-expected, rel=1e-9)
    assert out["observed_change_K"] == pytest.approx(
        out["advective_K"] + out["vertical_K"] + out["residual_K"], abs=1e-12)


@pytest.mark.parametrize("level_hpa", [1000.0, 850.0, 700.0])
def test_linear_in_pressure_column_with_time_linear_omega(level_hpa):
    # T = 220 K + 6e-4 K/Pa * p  (280 K at 1000 hPa, 262 K at 700 hPa): dT/dp = 6e-4 K/Pa;
    # omega(s) = 0.1 Pa/s + 2e-6 Pa/s^2 * s  (subsidence strengthening with time)
    b = 6e-4
    ds = column_atmosphere(lambda p: 220.0 + b * p, lambda s: 0.1 + 2e-6 * s)
    start, end = np.datetime64("2022-07-10T02:00", "ns"), np.datetime64("2022-07-10T23:00", "ns")
    out = eulerian_split(ds, 50.0, 10.0, level_hpa, start, end)
    p = level_hpa * 100.0
    s_p = R_D * (220.0 + b * p) / (C_P * p) - b
    a, e = _sec(start), _sec(end)
    expected = s_p * (0.1 * (e - a) + 2e-6 * (e**2 - a**2) / 2.0)  # integral of omega, by hand
    assert out["vertical_K"] == pytest.approx(expected, rel=1e-9)
    assert out["observed_change_K"] == pytest.approx(
        out["advective_K"] + out["vertical_K"] + out["residual_K"], abs=1e-12)


def test_vertical_term_not_available_without_omega():
    ds = column_atmosphere(lambda p: np.full(p.shape, 250.0), None, with_omega=False)
    start, end = np.datetime64("2022-07-10T01:30", "ns"), np.datetime64("2022-07-10T20:00", "ns")
    out = eulerian_split(ds, 50.0, 10.0, 850.0, start, end)
    assert out["vertical_K"] is None  # never 0
    assert out["vertical_available"] is False
    assert out["residual_K"] == out["observed_change_K"] - out["advective_K"]
    maps = split_fields(ds, 850.0, start, end)
    assert "vertical" not in maps.data_vars
    assert "no omega" in maps["residual"].attrs["long_name"]


def test_vertical_term_not_available_with_omega_on_one_level():
    # a single level cannot give dT/dp: not available, not 0
    ds = column_atmosphere(lambda p: np.full(p.shape, 250.0), lambda s: np.full(s.shape, 0.2),
                           levels=np.array([85_000.0]))
    out = eulerian_split(ds, 50.0, 10.0, 850.0, np.datetime64("2022-07-10T00:00", "ns"),
                         np.datetime64("2022-07-10T12:00", "ns"))
    assert out["vertical_K"] is None
    assert out["vertical_available"] is False


def test_lagrangian_in_calm_air_is_all_non_advective():
    # calm air: the back trajectory stays at the station, so the change following the parcel is
    # the observed change (0 here) and the advective part is 0
    ds = column_atmosphere(lambda p: np.full(p.shape, 250.0), lambda s: np.full(s.shape, -0.3))
    out = trend_split(ds, 50.0, 10.0, 850.0, np.datetime64("2022-07-10T01:30", "ns"),
                      np.datetime64("2022-07-10T20:00", "ns"), members=1)
    assert out["lagrangian"]["non_advective_K"] == pytest.approx(0.0, abs=1e-9)
    assert out["lagrangian"]["advective_K"] == pytest.approx(0.0, abs=1e-9)
