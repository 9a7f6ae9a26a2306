"""W_{-1} of our own against two reference libraries from the registry: mpmath's lambertw at
40 significant digits everywhere, and scipy.special.lambertw away from the branch point
(close to x = -1/e scipy's answer drifts: at x = -1/e + 1.8e-9 it gives -1.0000000149 where
mpmath and the series about the branch point give -1.0000998356, found while writing this)."""

from __future__ import annotations

import mpmath
import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.special import lambertw

from parcelcast.thermo.lambert import lambert_w_lower


def _sample():
    x = np.concatenate([-np.exp(-1.0) + np.logspace(-15, np.log10(np.exp(-1.0)), 400),
                        -np.logspace(-300, -1, 200)])
    return x[(x >= -np.exp(-1.0)) & (x < 0)]


def test_matches_mpmath_across_the_whole_branch():
    mpmath.mp.dps = 40
    x = _sample()
    expected = np.array([float(mpmath.lambertw(mpmath.mpf(v), -1).real) for v in x])
    # W is ill-conditioned at the branch point: a rounding of x (1e-17) moves W by about
    # 1e-17 / (e^W (W + 1)), e.g. 1e-9 at x = -1/e + 1e-15; elsewhere it must agree to rounding
    condition = 1e-16 / np.abs(np.exp(expected) * (expected + 1.0))
    error = np.abs(lambert_w_lower(x) - expected) / np.abs(expected)
    assert np.all(error <= 1e-12 + condition), x[error > 1e-12 + condition]


def test_matches_scipy_away_from_the_branch_point():
    x = _sample()
    far = x > -np.exp(-1.0) + 1e-4
    np.testing.assert_allclose(lambert_w_lower(x[far]), lambertw(x[far], -1).real, rtol=1e-13)


@settings(max_examples=300, deadline=None)
@given(st.floats(-np.exp(-1.0), -1e-300, allow_nan=False))
def test_solves_its_defining_equation(x):
    w = float(lambert_w_lower(x))
    assert w <= -1.0
    assert w * np.exp(w) == np.float64(x) or abs(w * np.exp(w) - x) <= 1e-12 * abs(x) + 1e-15


def test_branch_point_and_outside_the_domain():
    assert lambert_w_lower(-np.exp(-1.0)) == -1.0
    out = lambert_w_lower(np.array([0.0, 0.5, -0.5, np.nan]))
    assert np.isnan(out).all()
