"""CAPE, CIN, LCL, LFC, EL of lifted parcels against a second route.

Second route: the environment is an analytic function of pressure; the parcel's LCL is
found by root finding (scipy brentq), its pseudo-adiabat by scipy ``solve_ivp`` (RK45,
rtol 1e-9) with dense output, buoyancy zero crossings by brentq and the areas by
scipy ``quad`` -- no shared code with the kernel except the lapse-rate formula and the
Magnus saturation curve.  Virtual-temperature correction as in Doswell and Rasmussen
(1994) on both routes.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad, solve_ivp
from scipy.optimize import brentq

from parcelcast.thermo import lift_parcel, pseudoadiabatic_lapse_rate
from parcelcast.thermo.constants import EPSILON, RD

P0 = 100000.0


def env_t(p):
    """Analytic environment (K): 0.19 power law, isothermal above 200 hPa, slight inversion near 900 hPa."""
    t = 303.0 * (np.minimum(p, P0) / P0) ** 0.19
    t = np.maximum(t, 303.0 * (20000.0 / P0) ** 0.19)
    return t + 2.5 * np.exp(-(((p - 88000.0) / 2500.0) ** 2))


def env_r(p):
    return 0.016 * (p / P0) ** 4


def _magnus(t):
    tc = t - 273.15
    return 611.2 * np.exp(17.62 * tc / (243.12 + tc))


def _tv(t, r):
    return t * (1 + r / EPSILON) / (1 + r)


def _dewpoint(r, p):
    e = p * r / (EPSILON + r)
    x = np.log(e / 611.2)
    return 243.12 * x / (17.62 - x) + 273.15


def second_route(p_start, t_start, r0, p_top=10000.0):
    q = r0 / (1 + r0)
    rm = (1 - q) * 287.04 + q * 461.0  # Romps (2017) constants, recalled from memory
    cpm = (1 - q) * (719.0 + 287.04) + q * (1418.0 + 461.0)
    dry = lambda p: t_start * (p / p_start) ** (rm / cpm)  # noqa: E731
    rs = lambda t, p: EPSILON * _magnus(t) / (p - _magnus(t))  # noqa: E731
    p_lcl = brentq(lambda p: rs(dry(p), p) - r0, 30000.0, p_start)
    t_lcl = dry(p_lcl)
    sol = solve_ivp(lambda x, y: pseudoadiabatic_lapse_rate(y, np.exp(x)), [np.log(p_lcl), np.log(p_top)], [t_lcl],
                    dense_output=True, rtol=1e-9, atol=1e-9)

    def b(x):
        p = np.exp(x)
        if p >= p_lcl:
            tvp = _tv(dry(p), r0)
        else:
            tp = sol.sol(x)[0]
            tvp = _tv(tp, rs(tp, p))
        return tvp - _tv(env_t(p), env_r(p))

    xs = np.linspace(np.log(p_start), np.log(p_top), 4000)
    bs = np.array([b(x) for x in xs])
    crossings = [brentq(b, xs[i + 1], xs[i]) for i in range(len(xs) - 1) if (bs[i] > 0) != (bs[i + 1] > 0)]
    d = 1e-7  # x decreases upward: b(x - d) is just above the crossing
    x_lcl = np.log(p_lcl)
    if b(x_lcl - d) > 0:
        x_lfc = x_lcl
    else:
        x_lfc = next(c for c in crossings if c < x_lcl and b(c - d) > 0)
    downs = [c for c in crossings if c < x_lfc and b(c + d) > 0 > b(c - d)]
    x_el = min(downs) if downs else np.log(p_top)
    inner = [c for c in crossings if x_el < c < x_lfc]
    cape = RD * quad(lambda x: max(b(x), 0.0), x_el, x_lfc, points=inner or None, limit=200)[0]
    below = [c for c in crossings if x_lfc < c < np.log(p_start)] + [x_lcl]
    cin = RD * quad(lambda x: min(b(x), 0.0), x_lfc, np.log(p_start), points=below, limit=200)[0]
    return {"cape": cape, "cin": cin, "lcl": p_lcl, "lfc": np.exp(x_lfc), "el": np.exp(x_el)}


@pytest.fixture(scope="module")
def column():
    p = np.geomspace(P0, 10000.0, 300)
    return p, env_t(p), _dewpoint(env_r(p), p)


@pytest.fixture(scope="module")
def reference_surface():
    return second_route(P0, env_t(P0), env_r(P0))


def test_surface_parcel_against_second_route(column, reference_surface):
    p, t, td = column
    res = lift_parcel(p, t, td, "surface")
    ref = reference_surface
    assert ref["cape"] > 500 and ref["cin"] < -5  # the analytic case has both areas
    assert float(res.cape) == pytest.approx(ref["cape"], rel=0.01)
    assert float(res.cin) == pytest.approx(ref["cin"], rel=0.03, abs=1.0)
    assert float(res.lcl_pressure) == pytest.approx(ref["lcl"], rel=1e-3)
    assert float(res.lfc_pressure) == pytest.approx(ref["lfc"], rel=3e-3)
    assert float(res.el_pressure) == pytest.approx(ref["el"], rel=3e-3)


def test_mixed_layer_parcel_against_second_route(column):
    p, t, td = column
    top = P0 - 10000.0
    # layer means of theta and r by quad (pressure-weighted)
    th = quad(lambda x: env_t(x) * (P0 / x) ** (287.047 / 1004.0), top, P0)[0] / 10000.0
    rbar = quad(env_r, top, P0)[0] / 10000.0
    ref = second_route(P0, th, rbar)
    res = lift_parcel(p, t, td, "mixed_layer")
    assert float(res.start_temperature) == pytest.approx(th, abs=0.02)
    assert float(res.cape) == pytest.approx(ref["cape"], rel=0.015)
    assert float(res.cin) == pytest.approx(ref["cin"], rel=0.05, abs=1.0)


def test_most_unstable_at_least_surface(column):
    p, t, td = column
    mu = lift_parcel(p, t, td, "most_unstable")
    sfc = lift_parcel(p, t, td, "surface")
    assert float(mu.cape) >= float(sfc.cape) - 1e-9
    assert float(mu.start_pressure) >= P0 - 30000.0


def test_many_columns_at_once_equal_one_by_one(column):
    p, t, td = column
    shifts = np.array([-3.0, 0.0, 2.0, 4.0])
    tt = t[None, :] + shifts[:, None] * (p / P0)[None, :] ** 3
    tdd = np.minimum(td[None, :].repeat(4, 0), tt)
    tt3 = np.stack([tt, tt - 1.0])  # shape (2, 4, nlev)
    td3 = np.minimum(np.stack([tdd, tdd]), tt3)
    for kind in ("surface", "mixed_layer", "most_unstable"):
        batch = lift_parcel(p, tt3, td3, kind)
        assert batch.cape.shape == (2, 4)
        for i in range(2):
            for j in range(4):
                one = lift_parcel(p, tt3[i, j], td3[i, j], kind)
                assert float(one.cape) == pytest.approx(batch.cape[i, j], rel=1e-9, abs=1e-9)
                assert float(one.cin) == pytest.approx(batch.cin[i, j], rel=1e-9, abs=1e-9)


def test_missing_values_and_below_ground(column):
    p, t, td = column
    tt = np.stack([t, np.full_like(t, np.nan)])
    res = lift_parcel(p, tt, np.stack([td, td]), "surface")
    assert np.isfinite(res.cape[0]) and np.isnan(res.cape[1]) and np.isnan(res.cin[1])
    # levels below the ground are ignored: same as cutting them off
    ps = 95000.0
    cut = p <= ps
    a = lift_parcel(p, t, td, "surface", surface_pressure=ps)
    b = lift_parcel(p[cut], t[cut], td[cut], "surface")
    assert float(a.cape) == pytest.approx(float(b.cape), rel=1e-12)


def test_stable_column_has_no_lfc():
    p = np.geomspace(P0, 10000.0, 50)
    t = 290.0 + 0.0 * p  # isothermal: stable
    res = lift_parcel(p, t, t - 10.0, "surface")
    assert float(res.cape) == 0.0 and float(res.cin) == 0.0 and np.isnan(res.lfc_pressure)
    assert float(res.lifted_index) > 0


@pytest.mark.slow
def test_property_signs_and_bounds():
    from hypothesis import given, settings
    from hypothesis import strategies as st

    p = np.geomspace(P0, 10000.0, 80)

    @settings(max_examples=40, deadline=None)
    @given(st.floats(270.0, 310.0), st.floats(0.10, 0.25), st.floats(0.5, 25.0), st.floats(1.0, 6.0))
    def check(t0, expo, dd, moist_power):
        t = np.maximum(t0 * (p / P0) ** expo, 200.0)
        td = np.minimum(t - dd * (1 + (1 - p / P0) * moist_power), t)
        for kind in ("surface", "mixed_layer", "most_unstable"):
            r = lift_parcel(p, t, td, kind)
            assert float(r.cape) >= 0.0 and float(r.cin) <= 0.0
            assert float(r.lcl_pressure) <= float(r.start_pressure) * (1 + 1e-9)
            if np.isfinite(r.lfc_pressure):
                assert float(r.lfc_pressure) <= float(r.lcl_pressure) * (1 + 1e-9)
                assert float(r.el_pressure) <= float(r.lfc_pressure) * (1 + 1e-9)

    check()


def test_table_and_rk4_and_batched_kinds_agree(column):
    from parcelcast.thermo import lift_parcels

    p, t, td = column
    both = lift_parcels(p, t, td)
    for kind in ("surface", "mixed_layer", "most_unstable"):
        rk4 = lift_parcel(p, t, td, kind, method="rk4")
        tab = lift_parcel(p, t, td, kind)
        assert float(tab.cape) == pytest.approx(float(rk4.cape), rel=2e-3)
        assert float(tab.cin) == pytest.approx(float(rk4.cin), rel=2e-2, abs=0.2)
        assert float(both[kind].cape) == pytest.approx(float(tab.cape), rel=1e-12)
