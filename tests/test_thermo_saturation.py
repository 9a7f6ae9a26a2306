"""Saturation vapour pressure against outside references.

References: IAPWS-95 through the ``iapws`` package (saturation over water from the full
equation of state, sublimation over ice from the IAPWS 2011 equation); Murphy and Koop
(2005) for supercooled water; WMO-No. 8 (2018) Annex 4.B Magnus formulas.
"""

from __future__ import annotations

import numpy as np
import pytest

from parcelcast.thermo import dewpoint_from_vapour_pressure, saturation_vapour_pressure
from parcelcast.thermo.saturation import saturation_vapour_pressure_derivative

import iapws

WATER_T = [273.16, 278.15, 288.15, 298.15, 308.15, 318.15, 333.15]


@pytest.fixture(scope="module")
def iapws95_water():
    # IAPWS-95 saturated liquid state: pressure in MPa
    return np.array([iapws.IAPWS95(T=t, x=0).P * 1e6 for t in WATER_T])


def test_iapws_option_matches_iapws95_over_water(iapws95_water):
    ours = saturation_vapour_pressure(np.array(WATER_T), "water", "iapws")
    # Wagner and Pruss's auxiliary equation reproduces IAPWS-95 to about 0.01 %
    np.testing.assert_allclose(ours, iapws95_water, rtol=2e-4)


def test_wmo_magnus_within_its_accuracy_of_iapws95(iapws95_water):
    ours = saturation_vapour_pressure(np.array(WATER_T), "water", "wmo")
    # the Magnus fit of WMO-No. 8 is good to a few tenths of a percent between 0 and 60 degC
    np.testing.assert_allclose(ours, iapws95_water, rtol=4e-3)


def test_bolton_within_stated_accuracy_of_iapws95(iapws95_water):
    t = np.array(WATER_T)
    sel = t <= 308.15  # Bolton states 0.1 % for -35..35 degC
    ours = saturation_vapour_pressure(t[sel], "water", "bolton")
    np.testing.assert_allclose(ours, iapws95_water[sel], rtol=1.5e-3)


@pytest.mark.parametrize("t", [200.0, 223.15, 243.15, 258.15, 268.15, 273.15])
def test_ice_against_iapws_sublimation(t):
    ref = iapws._iapws._Sublimation_Pressure(t) * 1e6  # MPa -> Pa
    assert saturation_vapour_pressure(t, "ice", "iapws") == pytest.approx(ref, rel=1e-9)
    if t >= 208.15:  # WMO-No. 8 ice formula valid -65..0 degC
        assert saturation_vapour_pressure(t, "ice", "wmo") == pytest.approx(ref, rel=5e-3)


def _murphy_koop_liquid(t):
    # Murphy, D. M. and T. Koop, 2005: Q. J. R. Meteorol. Soc., 131, 1539-1565, eq. (10).
    # Coefficients recalled from memory.
    return np.exp(54.842763 - 6763.22 / t - 4.210 * np.log(t) + 0.000367 * t
                  + np.tanh(0.0415 * (t - 218.8)) * (53.878 - 1331.22 / t - 9.44523 * np.log(t) + 0.014025 * t))


@pytest.mark.parametrize("method,rtol", [("wmo", 6e-3), ("iapws", 5e-3)])
def test_supercooled_water_against_murphy_koop(method, rtol):
    t = np.array([238.15, 248.15, 258.15, 268.15, 283.15, 303.15])
    np.testing.assert_allclose(saturation_vapour_pressure(t, "water", method), _murphy_koop_liquid(t), rtol=rtol)


def test_murphy_koop_reference_agrees_with_iapws95_above_triple_point(iapws95_water):
    # guards the recalled coefficients of the reference itself
    np.testing.assert_allclose(_murphy_koop_liquid(np.array(WATER_T)), iapws95_water, rtol=1e-3)


@pytest.mark.parametrize("method", ["wmo", "bolton", "iapws"])
def test_dewpoint_inverts_saturation(method):
    e = np.array([50.0, 300.0, 1000.0, 3000.0, 7000.0])
    td = dewpoint_from_vapour_pressure(e, "water", method)
    np.testing.assert_allclose(saturation_vapour_pressure(td, "water", method), e, rtol=1e-10)


@pytest.mark.parametrize("method", ["wmo", "iapws"])
@pytest.mark.parametrize("phase", ["water", "ice"])
def test_derivative_by_second_route(method, phase):
    t = np.array([240.0, 260.0, 270.0])
    h = 1e-4
    num = (saturation_vapour_pressure(t + h, phase, method) - saturation_vapour_pressure(t - h, phase, method)) / (2 * h)
    np.testing.assert_allclose(saturation_vapour_pressure_derivative(t, phase, method), num, rtol=1e-5)


def test_nan_stays_nan_and_bad_options_refused():
    assert np.isnan(saturation_vapour_pressure(np.nan))
    assert np.isnan(dewpoint_from_vapour_pressure(0.0))
    with pytest.raises(ValueError, match="valid: wmo, bolton, iapws"):
        saturation_vapour_pressure(280.0, method="magic")
    with pytest.raises(ValueError, match="water only"):
        saturation_vapour_pressure(260.0, "ice", "bolton")
