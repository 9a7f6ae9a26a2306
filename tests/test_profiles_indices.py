"""Sounding indices of whole profiles.

References: the index definitions (K index, George 1960; Total Totals, Miller 1972;
Showalter 1953; lifted index, Galway 1956) evaluated by hand on the file's numbers;
arithmetic for precipitable water of a uniformly moist column; the 1976 US Standard
Atmosphere (``ambiance``) for hypsometric heights; a second route (root finding and
``solve_ivp``) for the Showalter parcel.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from parcelcast.profiles import Profile, analyse, fill_heights, top_temperature_guidance, validate
from parcelcast.thermo import dewpoint_from_specific_humidity, pseudoadiabatic_lapse_rate
from parcelcast.thermo.constants import EPSILON, G0, KAPPA


def make(p_hpa, t_c, td_c, z=None, lat=50.0, u=None, v=None):
    p = np.asarray(p_hpa, dtype=float) * 100.0
    n = p.size
    return validate(Profile(
        pressure=p, height=np.full(n, np.nan) if z is None else np.asarray(z, float),
        temperature=np.asarray(t_c, float) + 273.15, dewpoint=np.asarray(td_c, float) + 273.15,
        u=np.zeros(n) if u is None else np.asarray(u, float), v=np.zeros(n) if v is None else np.asarray(v, float),
        latitude=lat, source="test"))


@pytest.fixture()
def sounding():
    return make([1000, 925, 850, 700, 500, 400, 300], [24, 19, 14, 2, -14, -25, -40],
                [17, 14, 9, -6, -30, -40, -55], z=[110, 780, 1500, 3100, 5750, 7300, 9350])


def test_k_index_and_total_totals_by_hand(sounding):
    res = analyse(sounding)
    assert res["k_index_K"] == pytest.approx((14 - -14) + 9 - (2 - -6))  # George (1960)
    assert res["total_totals_K"] == pytest.approx(14 + 9 - 2 * -14)  # Miller (1972)


def test_showalter_against_second_route(sounding):
    from scipy.optimize import brentq

    t0, td0, p0 = 287.15, 282.15, 85000.0
    magnus = lambda t: 611.2 * np.exp(17.62 * (t - 273.15) / (t - 273.15 + 243.12))  # noqa: E731
    r0 = EPSILON * magnus(td0) / (p0 - magnus(td0))
    q = r0 / (1 + r0)
    rm = (1 - q) * 287.04 + q * 461.0
    cpm = (1 - q) * 1006.04 + q * 1879.0
    dry = lambda p: t0 * (p / p0) ** (rm / cpm)  # noqa: E731
    pl = brentq(lambda p: EPSILON * magnus(dry(p)) / (p - magnus(dry(p))) - r0, 50000.0, p0)
    sol = solve_ivp(lambda x, y: pseudoadiabatic_lapse_rate(y, np.exp(x)), [np.log(pl), np.log(50000.0)],
                    [dry(pl)], rtol=1e-10, atol=1e-10)
    expected = (273.15 - 14.0) - sol.y[0, -1]
    assert analyse(sounding)["showalter_index_K"] == pytest.approx(expected, abs=0.02)


def test_precipitable_water_of_uniform_humidity():
    q = 0.008
    p = np.array([1000, 900, 800, 700, 600, 500.0])
    td = dewpoint_from_specific_humidity(q, p * 100) - 273.15
    prof = make(p, td + 5.0, td)
    # PW = q (p_bottom - p_top) / g, kg m-2 = mm
    assert analyse(prof)["precipitable_water_mm"] == pytest.approx(q * 50000.0 / G0, rel=1e-9)


def test_freezing_and_lapse_rates_of_linear_column():
    z = np.arange(0.0, 10001.0, 500.0)
    t = 15.0 - 6.5e-3 * z
    p = 1013.25 * (1 - 2.25577e-5 * z) ** 5.25588  # standard-atmosphere pressure (troposphere)
    prof = make(p, t, t - 8.0, z=z)
    res = analyse(prof)
    assert res["freezing_level_m"] == pytest.approx(15.0 / 6.5e-3, rel=1e-9)
    assert res["minus10_level_m"] == pytest.approx(25.0 / 6.5e-3, rel=1e-9)
    assert res["wet_bulb_zero_m"] < res["freezing_level_m"]
    for key in ("lapse_rate_850_500_K_per_km", "lapse_rate_700_500_K_per_km", "lapse_rate_0_3km_K_per_km"):
        assert res[key] == pytest.approx(6.5, rel=2e-3)
    assert res["inversions"] == []


def test_heights_against_us_standard_atmosphere():
    import ambiance
    from scipy.optimize import brentq

    levels = np.array([1000.0, 925.0, 850.0, 700.0, 500.0, 400.0, 300.0, 250.0, 200.0])
    h = [brentq(lambda x: ambiance.Atmosphere(x).pressure[0] - lv * 100, -1000.0, 20000.0) for lv in levels]
    atm = ambiance.Atmosphere(np.array(h))
    t, big_h = atm.temperature, atm.H
    z = fill_heights(levels * 100, t, np.full(t.shape, np.nan), np.r_[big_h[0], np.full(levels.size - 1, np.nan)])
    # trapezoidal mean temperature on standard levels: within 0.1 % of the standard heights
    np.testing.assert_allclose(z, big_h, rtol=1e-3, atol=1.0)


def test_inversion_and_mixed_layer_depth():
    # dry-adiabatic lowest kilometre, then a 3 K inversion, then stable
    z = np.array([0.0, 250, 500, 750, 1000, 1200, 1500, 2500, 4000, 6000])
    t = np.where(z <= 1000, 20.0 - 9.76e-3 * z, 0.0)
    t[5] = 13.2
    t[6:] = 13.2 - 5.5e-3 * (z[6:] - 1200)
    p = 1013.25 * (1 - 2.25577e-5 * z) ** 5.25588
    prof = make(p, t, t - 15.0, z=z)
    res = analyse(prof)
    inv = res["inversions"]
    assert len(inv) == 1 and inv[0]["base_m"] == 1000.0 and inv[0]["top_m"] == 1200.0
    assert inv[0]["strength_K"] == pytest.approx(13.2 - (20 - 9.76))
    assert 1000.0 <= res["mixed_layer_depth_m"] <= 1200.0


def test_top_temperature_guidance_dry_adiabat():
    p = np.array([100000.0, 92500.0, 85000.0, 70000.0])
    t = np.array([285.0, 283.0, 281.0, 275.0])
    g = top_temperature_guidance(p, t)
    assert g["mixing_top_hPa"] == 850.0
    assert g["temperature_K"] == pytest.approx(281.0 * (1000 / 850) ** KAPPA)
    g2 = top_temperature_guidance(p, t, mixing_top_pressure=70000.0, advective_change=-1.5)
    assert g2["temperature_K"] == pytest.approx(275.0 * (1000 / 700) ** KAPPA - 1.5)


def test_json_contract_keys(sounding):
    res = analyse(sounding)
    for key in ("lcl_hPa", "lcl_temperature_K", "lifted_index_K", "precipitable_water_mm", "freezing_level_m"):
        assert np.isfinite(res[key])
    for key in ("cape_J_per_kg", "cin_J_per_kg"):
        assert set(res[key]) == {"surface", "mixed_layer", "most_unstable"}
    assert {"bottom_hPa", "top_hPa", "advection_K_per_h"} <= set(res["layers"][0])
