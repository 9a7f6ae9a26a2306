"""Humidity conversions against the ASHRAE psychrometric routines of ``psychrolib``.

psychrolib (ASHRAE Handbook Fundamentals 2017, ch. 1) computes humidity ratio
0.621945 e / (p - e), the thermodynamic wet bulb and moist-air density with its own
(Hyland-Wexler) saturation pressure; tolerances allow for that difference.
"""

from __future__ import annotations

import numpy as np
import pytest

from parcelcast.thermo import (
    density,
    dewpoint_from_relative_humidity,
    dewpoint_from_specific_humidity,
    mixing_ratio_from_specific_humidity,
    mixing_ratio_from_vapour_pressure,
    relative_humidity_from_dewpoint,
    specific_humidity_from_dewpoint,
    specific_humidity_from_mixing_ratio,
    vapour_pressure_from_mixing_ratio,
    virtual_temperature,
    wet_bulb_temperature,
)

import psychrolib as psy
psy.SetUnitSystem(psy.SI)

CASES = [(101325.0, 1000.0), (101325.0, 3000.0), (85000.0, 500.0), (50000.0, 60.0), (95000.0, 4200.0)]


@pytest.mark.parametrize("p,e", CASES)
def test_mixing_ratio_against_psychrolib(p, e):
    assert mixing_ratio_from_vapour_pressure(e, p) == pytest.approx(psy.GetHumRatioFromVapPres(e, p), rel=1e-4)


@pytest.mark.parametrize("p,e", CASES)
def test_vapour_pressure_from_mixing_ratio_against_psychrolib(p, e):
    r = psy.GetHumRatioFromVapPres(e, p)
    assert vapour_pressure_from_mixing_ratio(r, p) == pytest.approx(psy.GetVapPresFromHumRatio(r, p), rel=1e-4)


@pytest.mark.parametrize("r", [0.001, 0.01, 0.02])
def test_specific_humidity_against_psychrolib(r):
    q = psy.GetSpecificHumFromHumRatio(r)
    assert specific_humidity_from_mixing_ratio(r) == pytest.approx(q, rel=1e-12)
    assert mixing_ratio_from_specific_humidity(q) == pytest.approx(r, rel=1e-12)


@pytest.mark.parametrize("t,td", [(25.0, 15.0), (30.0, 25.0), (5.0, 1.0), (12.0, 0.5)])
def test_relative_humidity_against_psychrolib(t, td):
    # above 0 degC only: below it psychrolib (ASHRAE) saturates over ice, WMO over water
    ref = psy.GetRelHumFromTDewPoint(t, td)
    ours = relative_humidity_from_dewpoint(t + 273.15, td + 273.15)
    assert ours == pytest.approx(ref, rel=5e-3)
    assert dewpoint_from_relative_humidity(t + 273.15, ref) == pytest.approx(td + 273.15, abs=0.1)


@pytest.mark.parametrize("t,td,p", [(25.0, 15.0, 101325.0), (35.0, 20.0, 101325.0), (10.0, 2.0, 90000.0),
                                    (30.0, 28.0, 100000.0), (15.0, 5.0, 85000.0)])
def test_wet_bulb_against_psychrolib(t, td, p):
    ref = psy.GetTWetBulbFromTDewPoint(t, td, p)
    ours = wet_bulb_temperature(t + 273.15, td + 273.15, p) - 273.15
    assert ours == pytest.approx(ref, abs=0.1)
    assert td <= ours <= t


@pytest.mark.parametrize("t,r,p", [(25.0, 0.01, 101325.0), (0.0, 0.003, 85000.0), (30.0, 0.02, 100000.0)])
def test_moist_air_density_against_psychrolib(t, r, p):
    assert density(p, t + 273.15, r) == pytest.approx(psy.GetMoistAirDensity(t, r, p), rel=2e-4)


def test_virtual_temperature_definition_wmo():
    # WMO-No. 8 Annex 4.B: T_v = T (1 + r/eps)/(1 + r); eps = 0.62198 there (recalled from memory)
    t, r = 300.0, 0.015
    assert virtual_temperature(t, r) == pytest.approx(t * (1 + r / 0.62198) / (1 + r), rel=1e-4)


def test_dewpoint_specific_humidity_round_trip():
    p = np.array([100000.0, 70000.0, 30000.0])
    td = np.array([290.0, 270.0, 240.0])
    np.testing.assert_allclose(dewpoint_from_specific_humidity(specific_humidity_from_dewpoint(td, p), p), td, atol=1e-9)
