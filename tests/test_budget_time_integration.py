"""Time integration of the Eulerian advective part (issue 13, item 4).

Claim refuted: "the trapezoid over analysis times is exact for fields linear in time".  The
advection -V.grad T is a *product* of two fields; when each varies linearly in time the
product is quadratic, and the trapezoid of the end advections misses its curvature.  The split
now integrates -V.grad T of the fields interpolated linearly in time, by Simpson's rule on
each piece between analysis times (exact for a quadratic).

Analytic case (derived here by hand; the sphere of parcelcast's radius A)
------------------------------------------------------------------------
Time s in seconds from T0; station longitude lambda_S, latitude phi_S (radians):

    T(s, lambda, phi) = T_REF + g(s) (lambda - lambda_S) + Q s,     g(s) = G0 + G1 s
    u(s, phi) = U(s) cos(phi) / cos(phi_S),   U(s) = U0 + U1 s,     v = 0

* -V.grad T = -u/(A cos phi) dT/dlambda = -U(s) g(s) / (A cos phi_S) =: f(s), the same
  everywhere (T is linear in lambda, so centred differences are exact in space).
* Both fields are linear in time, so linear interpolation between analyses reproduces them
  exactly, and f is a quadratic: f'' = -2 U1 G1 / (A cos phi_S).
* Exact advective part over [a, b]:
      F = -(1/(A cos phi_S)) [U0 G0 s + (U0 G1 + U1 G0) s^2/2 + U1 G1 s^3/3]_a^b.
* Trapezoid of the end advections at spacing h (error of the trapezoid rule for a
  quadratic, exactly): trapezoid - F = (b - a) h^2 f'' / 12.
* At the station dT/dt = Q, so the observed change is Q (b - a) and the true residual is
  Q (b - a) - F.

Figures (12-hourly analyses, 36 h window): the trapezoid is off by 0.6 K; the sub-step
integration is exact to rounding.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from parcelcast.budget import eulerian_split, linear_time_weights

A = 6_371_000.0  # parcelcast's Earth radius (parcelcast/constants.py)
T0 = np.datetime64("2022-01-10T00:00", "ns")
LAT_S, LON_S = 50.0, 10.0
COS_S = np.cos(np.deg2rad(LAT_S))
T_REF, Q = 268.0, 1.5 / 86400.0  # K, K/s
U0, U1 = 5.0, 20.0 / (36 * 3600.0)  # m/s; m/s per s: 5 m/s rising to 25 m/s over 36 h
G0 = np.rad2deg(-0.3)  # K per radian of longitude (-0.3 K per degree)
G1 = np.rad2deg(-0.9) / (36 * 3600.0)  # strengthening to -1.2 K per degree over 36 h


def strengthening_flow(step_h: float, hours: float = 36.0) -> xr.Dataset:
    """The canonical dataset of the module docstring's atmosphere (time, level, lat, lon)."""
    lat = np.arange(40.0, 60.0 + 1e-9, 2.0)
    lon = np.arange(0.0, 20.0 + 1e-9, 2.0)
    times = T0 + (np.arange(int(round(hours / step_h)) + 1) * step_h * 3600e9).astype("timedelta64[ns]")
    s = ((times - T0) / np.timedelta64(1, "s"))[:, None, None, None]
    lam = np.deg2rad(lon - LON_S)[None, None, None, :]
    phi = np.deg2rad(lat)[None, None, :, None]
    t = T_REF + (G0 + G1 * s) * lam + Q * s + 0.0 * phi
    u = (U0 + U1 * s) * np.cos(phi) / COS_S + 0.0 * lam
    dims = ("time", "level", "lat", "lon")
    return xr.Dataset(
        {"temperature": (dims, t, {"units": "K", "standard_name": "air_temperature"}),
         "u": (dims, u, {"units": "m s-1", "standard_name": "eastward_wind"}),
         "v": (dims, np.zeros_like(u), {"units": "m s-1", "standard_name": "northward_wind"})},
        coords={"time": times, "level": ("level", [85_000.0], {"units": "Pa"}),
                "lat": ("lat", lat, {"units": "degrees_north"}),
                "lon": ("lon", lon, {"units": "degrees_east"})},
        attrs={"source_files": "synthetic strengthening flow"})


def exact_advective(a: float, b: float) -> float:
    def primitive(s):
        return U0 * G0 * s + (U0 * G1 + U1 * G0) * s**2 / 2.0 + U1 * G1 * s**3 / 3.0
    return -(primitive(b) - primitive(a)) / (A * COS_S)


def _seconds(when):
    return (np.datetime64(when, "ns") - T0) / np.timedelta64(1, "s")


@pytest.mark.parametrize("start,end", [("2022-01-10T00:00", "2022-01-11T12:00"),   # on analysis times
                                       ("2022-01-10T05:00", "2022-01-11T07:30")])  # between them
def test_sub_steps_are_exact_where_the_trapezoid_is_not(start, end):
    ds = strengthening_flow(12.0)
    a, b = _seconds(start), _seconds(end)
    split = eulerian_split(ds, LAT_S, LON_S, 850.0, np.datetime64(start), np.datetime64(end))
    expected = exact_advective(a, b)
    assert split["advective_K"] == pytest.approx(expected, abs=1e-9)
    assert split["residual_K"] == pytest.approx(Q * (b - a) - expected, abs=1e-9)

    # the former method, the trapezoid of the advection at analysis times (cut at the window
    # ends by linear interpolation), for comparison: the closed-form error where the window
    # is on analysis times, and a large error in both windows
    s = (ds["time"].values - T0) / np.timedelta64(1, "s")
    at_times = -(U0 + U1 * s) * (G0 + G1 * s) / (A * COS_S)
    trapezoid = linear_time_weights(ds["time"].values, np.datetime64(start), np.datetime64(end)) @ at_times
    f2 = -2.0 * U1 * G1 / (A * COS_S)
    if start.endswith("00:00") and end.endswith("12:00"):
        assert trapezoid - expected == pytest.approx((b - a) * (12 * 3600.0) ** 2 * f2 / 12.0, rel=1e-9)
    print(f"\n{start}..{end}, 12-hourly: trapezoid error {trapezoid - expected:+.3f} K, "
          f"sub-steps {split['advective_K'] - expected:+.1e} K")
    assert abs(trapezoid - expected) > 0.3


def test_twelve_hourly_equals_hourly_when_fields_are_linear_in_time():
    # a second route: with 1-hourly analyses of the same atmosphere the answer must not change
    start, end = np.datetime64("2022-01-10T03:00"), np.datetime64("2022-01-11T09:00")
    coarse = eulerian_split(strengthening_flow(12.0), LAT_S, LON_S, 850.0, start, end)
    fine = eulerian_split(strengthening_flow(1.0), LAT_S, LON_S, 850.0, start, end)
    assert coarse["advective_K"] == pytest.approx(fine["advective_K"], abs=1e-9)


IRREGULAR = T0 + np.array([0, 3, 6, 12, 13, 24, 36], dtype="timedelta64[h]").astype("timedelta64[ns]")


@pytest.mark.parametrize("start,end", [("2022-01-10T00:00", "2022-01-11T12:00"),
                                       ("2022-01-10T01:30", "2022-01-10T02:15"),
                                       ("2022-01-10T02:00", "2022-01-11T11:01")])
def test_simpson_nodes_integrate_products_of_linear_interpolants_exactly(start, end):
    # the split's integrand: a product of two fields interpolated linearly between irregular
    # analysis times (continuous, quadratic on each piece); second route: scipy's adaptive
    # quadrature told where the kinks are
    from scipy.integrate import quad

    from parcelcast.budget.windows import simpson_nodes

    rng = np.random.default_rng(3)
    ts = (IRREGULAR - T0) / np.timedelta64(1, "s")
    wind, gradient = rng.normal(10.0, 5.0, ts.size), rng.normal(-2e-5, 1e-5, ts.size)

    def product(x):
        return np.interp(x, ts, wind) * np.interp(x, ts, gradient)

    a, b = _seconds(start), _seconds(end)
    inside = ts[(ts > a) & (ts < b)]
    expected, _ = quad(product, a, b, points=inside if inside.size else None, limit=200,
                       epsabs=1e-14, epsrel=1e-13)
    nodes, weights = simpson_nodes(IRREGULAR, np.datetime64(start), np.datetime64(end))
    assert weights @ product((nodes - T0) / np.timedelta64(1, "s")) == pytest.approx(expected, rel=1e-10)
    assert weights.sum() == pytest.approx(b - a, rel=1e-12)
    assert np.all(np.diff(nodes) > np.timedelta64(0, "ns"))


def test_interpolation_in_time_keeps_missing_values_where_they_are():
    # np.interp as the second route; a NaN at one analysis time reaches only the intervals
    # next to it, and the analysis times themselves are taken as they are
    from parcelcast.budget.windows import interpolate_in_time

    values = np.array([1.0, 2.0, np.nan, 4.0, 3.0, 0.0, 5.0])
    da = xr.DataArray(values, dims="time", coords={"time": IRREGULAR}, attrs={"units": "K"})
    when = IRREGULAR[[0, 1]].tolist() + [T0 + np.timedelta64(4, "h"), IRREGULAR[3],
                                           T0 + np.timedelta64(18, "h"), IRREGULAR[-1]]
    when = np.array(when, dtype="datetime64[ns]")
    out = interpolate_in_time(da, when)
    x = (when - T0) / np.timedelta64(1, "s")
    ts = (IRREGULAR - T0) / np.timedelta64(1, "s")
    expected = np.interp(x, ts, np.nan_to_num(values))
    expected[2] = np.nan  # between 3 h and 6 h, next to the missing 6-h value
    np.testing.assert_allclose(out.values, expected, rtol=1e-14)
    assert out.attrs["units"] == "K" and (out["time"].values == when).all()
