"""Property tests (hypothesis) of -V.grad T: symmetries that hold for any field and wind.

Expected values come from the properties themselves (identities of a linear operator), and from
the same atmosphere stored in other conventions and read through ``open_analysis``.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from datasets import raw_cf, small_atmosphere, write_netcdf
from parcelcast.advection import advection_array, advection_on_level
from parcelcast.grid import LatLonGrid
from parcelcast.io.analysis import open_analysis

pytestmark = pytest.mark.slow

NY, NX = 7, 9
REGIONAL = LatLonGrid(np.linspace(20.0, 62.0, NY), np.linspace(-20.0, 28.0, NX), periodic_lon=False)
GLOBAL = LatLonGrid(np.linspace(-60.0, 60.0, NY), np.arange(0.0, 360.0, 40.0), periodic_lon=True)

finite = st.floats(-50.0, 50.0, allow_nan=False, allow_infinity=False)
fields = arrays(np.float64, (NY, NX), elements=finite)
grids = st.sampled_from([REGIONAL, GLOBAL])
FAST = settings(max_examples=40, deadline=None)


def _scale(*arrays_):
    return max(1.0, *(float(np.abs(a).max()) for a in arrays_))


@FAST
@given(c=st.floats(150.0, 330.0), u=fields, v=fields, grid=grids)
def test_uniform_field_gives_zero(c, u, v, grid):
    adv = advection_array(np.full((NY, NX), c), u, v, grid)
    # zero up to round-off: stencil weights of an uneven (or float-uneven linspace) axis sum to
    # ~eps / h, not exactly 0; bound c |V| / (a h) * 1e-12 is many orders below any real signal
    # (1e-12 K/s is ~4e-9 K/h)
    tol = 1e-12 * c * _scale(u, v) / (6.371e6 * np.deg2rad(6.0))
    np.testing.assert_allclose(adv, 0.0, rtol=0, atol=tol)


@FAST
@given(t=fields, u=fields, v=fields, grid=grids)
def test_reversing_the_wind_flips_the_sign(t, u, v, grid):
    np.testing.assert_array_equal(advection_array(t, -u, -v, grid), -advection_array(t, u, v, grid))


@FAST
@given(t1=fields, t2=fields, u=fields, v=fields, a=st.floats(-3, 3), b=st.floats(-3, 3),
       grid=grids)
def test_linear_in_temperature(t1, t2, u, v, a, b, grid):
    lhs = advection_array(a * t1 + b * t2, u, v, grid)
    rhs = a * advection_array(t1, u, v, grid) + b * advection_array(t2, u, v, grid)
    # tolerance: round-off of O(10) operations on values up to |a t1 + b t2| * |V| / (a dx)
    tol = 1e-12 * _scale(t1, t2) * _scale(u, v) * 6 / 1e5
    np.testing.assert_allclose(lhs, rhs, rtol=0, atol=tol)


@FAST
@given(t=fields, u=fields, v=fields, c=st.floats(-300.0, 300.0), grid=grids)
def test_unchanged_by_adding_a_constant(t, u, v, c, grid):
    tol = 1e-12 * (abs(c) + _scale(t)) * _scale(u, v) * 6 / 1e5
    np.testing.assert_allclose(advection_array(t + c, u, v, grid), advection_array(t, u, v, grid),
                               rtol=0, atol=tol)


# ------------------------------------------------- same atmosphere, different storage conventions
CONVENTIONS = st.fixed_dictionaries({
    "lat_descending": st.booleans(),
    "lon_0_360": st.booleans(),
    "temperature_units": st.sampled_from(["K", "degC"]),
    "level_units": st.sampled_from(["hPa", "Pa"]),
    "wind_units": st.sampled_from(["m s-1", "knots"]),
    "fmt": st.sampled_from(["NETCDF4", "NETCDF3_64BIT"]),
})


@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(conv=CONVENTIONS, seed=st.integers(0, 1000), regional=st.booleans())
def test_same_atmosphere_in_any_convention_gives_the_same_answer(conv, seed, regional):
    # reference: stored canonically-ish (ascending lat, -180..180, K, hPa, m/s)
    if regional:  # a regional grid across the dateline: 150 .. 210 E stored as -180..180
        lat, lon, t, u, v = small_atmosphere(seed=seed, lon0=150.0, dlon=5.0, nx=13)
        lon = np.mod(lon + 180.0, 360.0) - 180.0
        order = np.argsort(lon)
        lon, t, u, v = lon[order], t[:, order], u[:, order], v[:, order]
    else:
        lat, lon, t, u, v = small_atmosphere(seed=seed)
    fmt = conv.pop("fmt")
    with tempfile.TemporaryDirectory() as tmp:
        ref_path = write_netcdf(raw_cf(lat, lon, t, u, v), Path(tmp) / "ref.nc")
        alt_path = write_netcdf(raw_cf(lat, lon, t, u, v, **conv), Path(tmp) / "alt.nc", fmt)
        ref = advection_on_level(open_analysis(ref_path), 850.0)
        alt = advection_on_level(open_analysis(alt_path), 850.0)
    for name in ("temperature", "u", "v", "temperature_advection"):
        np.testing.assert_array_equal(alt["lat"].values, ref["lat"].values)
        np.testing.assert_allclose(alt["lon"].values, ref["lon"].values, atol=1e-9)
        # float64 conversions (degC -> K, knots -> m/s) change the last bits only
        np.testing.assert_allclose(alt[name].values, ref[name].values, rtol=1e-9, atol=1e-13,
                                   err_msg=f"{name} with {conv}")
