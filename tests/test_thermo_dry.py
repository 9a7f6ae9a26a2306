"""Dry thermodynamics against outside references.

References: Bolton (1980) eq. (7) for potential temperature; the 1976 US Standard
Atmosphere (``ambiance`` package) for hypsometric heights of standard pressure
levels; calculus (exact derivatives of analytic columns) for static stability;
``psychrolib`` (ASHRAE) for dry-air density.
"""

from __future__ import annotations

import numpy as np
import pytest

from parcelcast.thermo import (
    density,
    dry_adiabat,
    potential_temperature,
    static_stability,
    temperature_from_potential_temperature,
    thickness,
)
from parcelcast.thermo.constants import CPD, RD

import ambiance


@pytest.mark.parametrize("t,p", [(300.0, 100000.0), (273.15, 85000.0), (250.0, 50000.0), (220.0, 25000.0)])
def test_potential_temperature_against_bolton_eq7(t, p):
    # Bolton (1980) eq. (7): theta = T (1000/p)^0.2854; our kappa = R_d/c_pd = 0.28591.
    ref = t * (1000.0 / (p / 100.0)) ** 0.2854
    assert potential_temperature(t, p) == pytest.approx(ref, abs=0.25)


def test_potential_temperature_inverse_and_dry_adiabat():
    p = np.array([100000.0, 70000.0, 30000.0])
    th = potential_temperature(np.array([290.0, 270.0, 230.0]), p)
    np.testing.assert_allclose(temperature_from_potential_temperature(th, p), [290.0, 270.0, 230.0])
    t = dry_adiabat(300.0, 100000.0, p)
    np.testing.assert_allclose(potential_temperature(t, p), 300.0)


def test_heights_of_standard_levels_against_us_standard_atmosphere_1976():
    # Integrate the hypsometric equation over the 1976 standard atmosphere temperature
    # (from ambiance, by geopotential height) and compare the heights of standard
    # pressure levels with the standard atmosphere's own geopotential heights.
    from scipy.optimize import brentq

    atm = ambiance.Atmosphere
    h = np.linspace(0.0, 16000.0, 3201)  # geometric metres
    a = atm(h)
    p, t, big_h = a.pressure, a.temperature, a.H
    lnp = np.log(p)
    dz = RD * 0.5 * (t[:-1] + t[1:]) / 9.80665 * (lnp[:-1] - lnp[1:])
    z_ours = np.concatenate([[0.0], np.cumsum(dz)])
    for level in (85000.0, 70000.0, 50000.0, 30000.0, 20000.0):
        hz = brentq(lambda x: atm(x).pressure[0] - level, 0.0, 20000.0)
        ref = atm(hz).H[0]
        ours = np.interp(-np.log(level), -lnp, z_ours)
        # agreement to 0.5 m: the standard atmosphere uses R = 287.053, we use 287.047
        assert ours == pytest.approx(ref, abs=0.5 + 2e-5 * ref), level
    # thickness() on one layer with the ln p mean temperature
    sel = (p <= 100000.0 * 1.0001)
    assert sel.any()
    i0, i1 = 0, 400
    tbar = np.trapezoid(t[i0:i1 + 1], lnp[i0:i1 + 1]) / (lnp[i1] - lnp[i0])
    assert thickness(p[i0], p[i1], tbar) == pytest.approx(big_h[i1] - big_h[i0], rel=1e-4)


def test_static_stability_of_analytic_columns():
    # T = T0 (p/p0)^a  =>  S_p = R_d T/(c_p p) - a T/p exactly (calculus)
    p = np.linspace(100000.0, 10000.0, 400)
    for a in (0.15, 0.19, 0.2857):
        t = 300.0 * (p / 1e5) ** a
        exact = RD * t / (CPD * p) - a * t / p
        s = static_stability(t, p)
        scale = np.abs(a * t / p)  # size of the dT/dp term
        assert np.all(np.abs(s - exact)[1:-1] <= 1e-3 * scale[1:-1])
        assert np.all(np.abs(s - exact)[[0, -1]] <= 5e-2 * scale[[0, -1]])
        # second order inside: halving the spacing divides the error by about four
        p2 = np.linspace(100000.0, 10000.0, 799)
        t2 = 300.0 * (p2 / 1e5) ** a
        err1 = np.abs(s - exact)[200]
        err2 = np.abs(static_stability(t2, p2) - (RD * t2 / (CPD * p2) - a * t2 / p2))[400]
        assert 3.0 < err1 / err2 < 5.0


def test_static_stability_nonuniform_levels_many_columns_and_order():
    p = np.array([100000.0, 92500.0, 85000.0, 70000.0, 50000.0, 40000.0, 30000.0])
    t = np.stack([280.0 - 6.5e-4 * (1e5 - p) / 10, 250.0 + 0.0 * p])  # (2, nlev)
    s = static_stability(t, p)
    assert s.shape == (2, 7)
    # a quadratic T(p) has an exact centred derivative on non-uniform levels
    tq = 200.0 + 1e-3 * p + 2e-9 * p**2
    sq = static_stability(tq, p)
    np.testing.assert_allclose(sq[1:-1], (RD * tq / (CPD * p) - (1e-3 + 4e-9 * p))[1:-1], rtol=1e-10)
    # reversed level order gives the same values
    np.testing.assert_allclose(static_stability(t[:, ::-1], p[::-1])[:, ::-1], s)
    # broadcast pressure of the same shape, NaN propagates locally
    t2 = t.copy()
    t2[0, 3] = np.nan
    s2 = static_stability(t2, np.broadcast_to(p, t.shape))
    assert np.isnan(s2[0, 2:5]).all() and np.isfinite(s2[0, [0, 6]]).all()


@pytest.mark.parametrize("t,p", [(288.15, 101325.0), (263.15, 70000.0)])
def test_dry_density_against_psychrolib(t, p):
    import psychrolib as psy
    psy.SetUnitSystem(psy.SI)
    assert density(p, t) == pytest.approx(psy.GetDryAirDensity(t - 273.15, p), rel=2e-4)
