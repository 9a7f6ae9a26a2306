"""Pseudo-adiabats, equivalent and wet-bulb potential temperature.

References: a second integration route (scipy ``solve_ivp``, RK45 at rtol 1e-10) of
the same lapse rate; Bolton (1980) eq. (39) equivalent potential temperature (a fit
to numerically computed pseudo-adiabats), which must stay constant along our
pseudo-adiabats; Bolton (1980) eq. (43) as an independent form of theta_E.
No printed pseudo-adiabat table was available offline to compare with.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from parcelcast.thermo import (
    equivalent_potential_temperature,
    lcl_temperature_bolton,
    mixing_ratio_from_dewpoint,
    pseudoadiabat,
    pseudoadiabatic_lapse_rate,
    saturation_equivalent_potential_temperature,
    vapour_pressure_from_dewpoint,
    wet_bulb_potential_temperature,
)

P = np.geomspace(100000.0, 10000.0, 60)


@pytest.mark.parametrize("t0", [263.15, 283.15, 298.15, 305.15])
def test_pseudoadiabat_against_solve_ivp(t0):
    sol = solve_ivp(lambda x, y: pseudoadiabatic_lapse_rate(y, np.exp(x)), [np.log(P[0]), np.log(P[-1])], [t0],
                    t_eval=np.log(P), rtol=1e-10, atol=1e-10)
    np.testing.assert_allclose(pseudoadiabat(t0, P[0], P), sol.y[0], atol=2e-3)


@pytest.mark.parametrize("t0", [273.15, 283.15, 293.15, 303.15])
def test_bolton_theta_e_conserved_along_pseudoadiabat(t0):
    t = pseudoadiabat(t0, 100000.0, P)
    the = saturation_equivalent_potential_temperature(t, P)
    upto200 = P >= 20000.0
    assert np.ptp(the[upto200]) < 0.4  # K, 1000 to 200 hPa


def test_pseudoadiabat_descends_and_vectorises():
    starts = np.array([[280.0], [290.0]])
    t = pseudoadiabat(starts[:, 0], np.array([70000.0, 80000.0]), np.array([100000.0, 85000.0, 50000.0]))
    assert t.shape == (2, 3)
    # descending from 700 to 1000 hPa then back up to 700 returns to the start
    back = pseudoadiabat(t[0, 0], 100000.0, np.array([70000.0]))
    assert back[0] == pytest.approx(280.0, abs=1e-4)
    assert np.isnan(pseudoadiabat(np.nan, 100000.0, P)).all()


def _bolton_eq43(t, td, p):
    # Bolton (1980) eqs. (24) and (43); r in g/kg, coefficients recalled from memory
    r = 1000.0 * mixing_ratio_from_dewpoint(td, p)
    e = vapour_pressure_from_dewpoint(td)
    tl = lcl_temperature_bolton(t, dewpoint=td)
    theta_dl = t * (100000.0 / (p - e)) ** 0.2854 * (t / tl) ** (0.28e-3 * r)
    return theta_dl * np.exp((3.036 / tl - 0.00178) * r * (1 + 0.448e-3 * r))


@pytest.mark.parametrize("t,td,p", [(300.0, 295.0, 100000.0), (290.0, 280.0, 90000.0), (270.0, 260.0, 70000.0),
                                    (250.0, 240.0, 50000.0)])
def test_theta_e_eq39_against_eq43(t, td, p):
    assert equivalent_potential_temperature(t, td, p) == pytest.approx(_bolton_eq43(t, td, p), abs=0.1)


def test_theta_e_dry_limit_is_theta():
    # very dry air: theta_E -> theta (Bolton's kappa 0.2854)
    t, p = 280.0, 80000.0
    assert equivalent_potential_temperature(t, 180.0, p) == pytest.approx(t * (1000 / 800) ** 0.2854, abs=0.02)


@pytest.mark.parametrize("t,td,p", [(300.0, 290.0, 100000.0), (285.0, 275.0, 85000.0), (275.0, 270.0, 70000.0)])
def test_wet_bulb_potential_temperature_shares_theta_e(t, td, p):
    thw = wet_bulb_potential_temperature(t, td, p)
    # saturated air at (theta_W, 1000 hPa) has the theta_E of the original air
    assert saturation_equivalent_potential_temperature(thw, 100000.0) == pytest.approx(
        equivalent_potential_temperature(t, td, p), abs=0.4)
    # saturated air at 1000 hPa: theta_W equals its temperature
    assert wet_bulb_potential_temperature(290.0, 290.0, 100000.0) == pytest.approx(290.0, abs=1e-6)


def test_tabulated_pseudoadiabats_match_integration():
    from parcelcast.thermo import pseudoadiabat_lookup

    rng = np.random.default_rng(3)
    t0 = rng.uniform(230.0, 305.0, 300)
    p0 = rng.uniform(50000.0, 100000.0, 300)
    p = np.geomspace(105000.0, 1000.0, 120)
    direct = pseudoadiabat(t0, p0, p, max_step=0.005)
    np.testing.assert_allclose(pseudoadiabat_lookup(t0, p0, p), direct, atol=0.01)
    assert np.isnan(pseudoadiabat_lookup(np.nan, 90000.0, p)).all()
    assert np.isnan(pseudoadiabat_lookup(400.0, 90000.0, p)).all()  # outside the table
