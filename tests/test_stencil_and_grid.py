"""Stencils and lat-lon grid geometry against exact derivatives (second route: calculus by hand).

Metric on the sphere (Holton & Hakim 2013, sec. 2.5): d/dx = 1/(a cos lat) d/dlon, d/dy = 1/a d/dlat.
"""

from __future__ import annotations

import numpy as np
import pytest

from datasets import A
from parcelcast.advection import advection_array
from parcelcast.errors import GridError
from parcelcast.grid import LatLonGrid, grid_for
from parcelcast.grid.stencil import Stencil
from parcelcast.io.coords import longitude_order


# ------------------------------------------------------------------------------------ stencils
@pytest.mark.parametrize("x", [np.linspace(0.0, 1.0, 11),
                               np.array([0.0, 0.1, 0.35, 0.4, 0.8, 0.85, 1.3])])
def test_stencil_exact_for_quadratics_inside_and_at_open_edges(x):
    # three-point formulas are exact for polynomials of degree <= 2 (Fornberg 1988, Math. Comp.
    # 51, 699: weights of order n-1 for n points); derivative of 3 + 2x - 5x^2 is 2 - 10x
    f = 3.0 + 2.0 * x - 5.0 * x**2
    d = Stencil.build(x).apply(f, axis=0)
    np.testing.assert_allclose(d, 2.0 - 10.0 * x, rtol=0, atol=1e-10)


def test_stencil_uniform_fast_path_equals_general_weights():
    # the uniform path (slices) and the gather path must agree: compare against a second route,
    # numpy.gradient with edge_order=2 (independent implementation of the same formulas)
    x = np.linspace(0.0, 2.0, 17)
    f = np.sin(3 * x)[None, :] * np.arange(1, 4)[:, None]
    st = Stencil.build(x)
    assert st.spacing is not None
    np.testing.assert_allclose(st.apply(f, axis=-1), np.gradient(f, x, axis=-1, edge_order=2),
                               rtol=1e-12, atol=1e-12)
    xn = x + 0.01 * np.sin(7 * x)  # uneven
    np.testing.assert_allclose(Stencil.build(xn).apply(f, axis=-1),
                               np.gradient(f, xn, axis=-1, edge_order=2), rtol=1e-10, atol=1e-10)


def test_stencil_periodic_wraps():
    # a periodic axis of sin(x) on [0, 2pi): centred difference (sin(x+h)-sin(x-h))/2h = cos x sin h / h
    n = 24
    x = 2 * np.pi * np.arange(n) / n
    h = 2 * np.pi / n
    d = Stencil.build(x, periodic=True, period=2 * np.pi).apply(np.sin(x), axis=0)
    np.testing.assert_allclose(d, np.cos(x) * np.sin(h) / h, rtol=0, atol=1e-13)


# ------------------------------------------------------------------------------- sphere metric
def test_ddx_ddy_exact_for_fields_linear_in_lon_and_lat():
    lat = np.arange(-75.0, 75.01, 2.5)
    lon = np.arange(100.0, 150.01, 2.5)
    g = LatLonGrid(lat, lon, periodic_lon=False)
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    f = 3.0 * lam - 7.0 * phi
    # exact: df/dx = 3 / (a cos lat), df/dy = -7 / a (edges too: one-sided, exact for linear)
    np.testing.assert_allclose(g.ddx(f), 3.0 / (A * np.cos(phi)), rtol=1e-10)
    np.testing.assert_allclose(g.ddy(f), np.full(f.shape, -7.0 / A), rtol=1e-10)


def _convergence_errors(make_lat, make_lon, periodic, ns, region=None):
    """Max error of ddx and ddy of a smooth field at resolutions ns (grid-points on each axis)."""
    errors = []
    for n in ns:
        lat, lon = make_lat(n), make_lon(n)
        g = LatLonGrid(lat, lon, periodic_lon=periodic)
        phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
        # spherical-harmonic-like field Y ~ cos(phi) sin(phi) cos(2 lam) + sin(phi)
        f = np.cos(phi) * np.sin(phi) * np.cos(2 * lam) + np.sin(phi)
        # exact derivatives by hand
        dfdx = -2 * np.sin(phi) * np.sin(2 * lam) / A
        dfdy = (np.cos(2 * phi) * np.cos(2 * lam) + np.cos(phi)) / A
        ex = np.abs(g.ddx(f) - dfdx)
        ey = np.abs(g.ddy(f) - dfdy)
        errors.append((np.nanmax(ex), np.nanmax(ey)))
    return np.array(errors)


def _orders(errors):
    return np.log2(errors[:-1] / errors[1:])


def test_second_order_convergence_uniform_global():
    # halving the step divides the error by ~4 for a second-order scheme: observed order ~ 2
    errs = _convergence_errors(lambda n: np.linspace(-80, 80, n + 1),
                               lambda n: np.linspace(-180, 180, 2 * n, endpoint=False),
                               True, [20, 40, 80])
    orders = _orders(errs)
    assert np.all((orders > 1.8) & (orders < 2.2)), orders


def test_second_order_convergence_nonuniform_regional_with_edges():
    # uneven spacing from a smooth stretching x = s + 0.3 sin(s) (refinement keeps the ratio of
    # neighbouring steps -> 1, the condition for second order of the uneven 3-point formula);
    # open edges in both axes (one-sided second-order formulas), errors include the edges
    def stretched(lo, hi):
        def make(n):
            s = np.linspace(-1.0, 1.0, n + 1)
            x = s + 0.3 * np.sin(np.pi * s) / np.pi
            return lo + (hi - lo) * (x + 1) / 2
        return make

    errs = _convergence_errors(stretched(10.0, 70.0), stretched(-30.0, 40.0), False, [16, 32, 64])
    orders = _orders(errs)
    assert np.all((orders > 1.8) & (orders < 2.3)), orders


def test_edges_one_sided_second_order():
    # error at the first and last column alone, regional grid: order ~ 2 (not 1 as for a
    # one-sided two-point difference)
    errs = []
    for n in (20, 40, 80):
        lon = np.linspace(0.0, 60.0, n + 1)
        lat = np.array([40.0, 45.0, 50.0])
        g = LatLonGrid(lat, lon, periodic_lon=False)
        lam = np.deg2rad(lon)[None, :] * np.ones((3, 1))
        d = g.ddx(np.sin(3 * lam))
        exact = 3 * np.cos(3 * lam) / (A * np.cos(np.deg2rad(lat)))[:, None]
        errs.append(np.abs(d - exact)[:, [0, -1]].max())
    orders = _orders(np.array(errs))
    assert np.all((orders > 1.8) & (orders < 2.3)), orders


def test_dateline_regional_grid_equals_global_in_interior():
    # the same smooth field on a regional grid 170..190 and on a global -180..180 grid:
    # interior points (not the edge columns) must agree to round-off
    lat = np.arange(20.0, 60.01, 2.0)
    lon_reg = np.arange(170.0, 190.01, 2.0)
    lon_glob = np.arange(-180.0, 180.0, 2.0)

    def fields(lon):
        phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
        return (280 + 5 * np.sin(3 * lam) * np.cos(phi) + 10 * np.sin(phi),
                10 + 5 * np.cos(lam), 4 * np.sin(2 * lam))

    reg = LatLonGrid(lat, lon_reg, periodic_lon=False)
    glob = LatLonGrid(lat, lon_glob, periodic_lon=True)
    a_reg = advection_array(*fields(lon_reg), reg)
    a_glob = advection_array(*fields(lon_glob), glob)
    # global columns of 172..188 (i.e. 172..180 and -178..-172)
    want = np.mod(lon_reg[1:-1] + 180.0, 360.0) - 180.0
    cols = [int(np.flatnonzero(np.isclose(lon_glob, w))[0]) for w in want]
    np.testing.assert_allclose(a_reg[:, 1:-1], a_glob[:, cols], rtol=1e-9, atol=1e-15)
    assert np.isfinite(a_reg).all()


def test_pole_rows_are_nan_and_rest_finite():
    lat = np.arange(-90.0, 90.01, 5.0)
    lon = np.arange(-180.0, 180.0, 5.0)
    g = LatLonGrid(lat, lon, periodic_lon=True)
    assert g.has_pole_rows
    phi, lam = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    f = np.cos(phi) * np.sin(lam)
    d = g.ddx(f)
    assert np.isnan(d[[0, -1]]).all()
    assert np.isfinite(d[1:-1]).all()
    assert np.isfinite(g.ddy(f)).all()  # the northward derivative exists at the pole rows
    adv = advection_array(f, np.ones_like(f), np.ones_like(f), g)
    assert np.isnan(adv[[0, -1]]).all() and np.isfinite(adv[1:-1]).all()


# ----------------------------------------------------------------------------- grid detection
def test_longitude_order_regional_across_dateline_and_global():
    # stored as -180..180 with the dateline inside the domain: becomes 170..190 (design note)
    lon = np.concatenate([np.arange(-180.0, -169.9, 2.0), np.arange(170.0, 179.9, 2.0)])
    order, values, is_global = longitude_order(lon)
    assert not is_global
    np.testing.assert_allclose(values, np.arange(170.0, 190.01, 2.0))
    np.testing.assert_allclose(np.mod(lon[order], 360.0), np.mod(values, 360.0))
    # a global 0..357.5 grid goes to [-180, 180)
    order, values, is_global = longitude_order(np.arange(0.0, 360.0, 2.5))
    assert is_global and values[0] == -180.0 and values[-1] == 177.5


def test_grid_for_declares_periodicity_and_refuses_contradiction():
    import xarray as xr

    glob = xr.Dataset(coords={"lat": np.arange(-30.0, 31.0, 3.0), "lon": np.arange(-180.0, 180.0, 3.0)})
    reg = xr.Dataset(coords={"lat": np.arange(-30.0, 31.0, 3.0), "lon": np.arange(0.0, 60.0, 3.0)})
    assert grid_for(glob).periodic_lon is True
    assert grid_for(reg).periodic_lon is False
    with pytest.raises(GridError):
        grid_for(reg, periodic_lon=True)
    with pytest.raises(GridError):
        LatLonGrid(np.array([10.0, 0.0, -10.0]), np.arange(3.0), periodic_lon=False)
