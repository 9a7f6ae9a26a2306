"""Property tests (hypothesis) of the time integration of the split (parcelcast.budget.windows).

For any ascending analysis times and any window inside them: Simpson's nodes lie in the
window, their weights sum to its length, and they integrate the product of two linear
interpolants exactly (second route: the closed form of the integral of a product of two
linear functions on each piece, int (p + q u)(r + t u) du in each piece's own coordinate u, expanded by hand).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from parcelcast.budget.windows import interpolate_in_time, simpson_nodes

pytestmark = pytest.mark.slow

T0 = np.datetime64("2024-01-01T00:00", "ns")
gaps = st.lists(st.integers(1, 24 * 60), min_size=1, max_size=8)  # minutes between analyses
values = st.floats(-100.0, 100.0, allow_nan=False)


def _product_integral(ts, f, g, a, b):
    """int_a^b F G ds for the piecewise-linear interpolants F, G of (ts, f), (ts, g)."""
    total = 0.0
    for k in range(ts.size - 1):
        lo, hi = max(ts[k], a), min(ts[k + 1], b)
        if hi <= lo:
            continue
        # in the piece's own coordinate u = s - ts[k], so no large powers of s cancel
        h = ts[k + 1] - ts[k]
        q, t = (f[k + 1] - f[k]) / h, (g[k + 1] - g[k]) / h
        p, r = f[k], g[k]

        def primitive(s):
            u = s - ts[k]
            return p * r * u + (p * t + q * r) * u**2 / 2.0 + q * t * u**3 / 3.0

        total += primitive(hi) - primitive(lo)
    return total


@settings(max_examples=60, deadline=None)
@given(gaps=gaps, data=st.data())
def test_simpson_nodes_are_exact_for_products_of_interpolants(gaps, data):
    minutes = np.concatenate([[0], np.cumsum(gaps)])
    times = T0 + minutes.astype("timedelta64[m]").astype("timedelta64[ns]")
    a_min = data.draw(st.integers(0, int(minutes[-1]) - 1))
    b_min = data.draw(st.integers(a_min + 1, int(minutes[-1])))
    start = T0 + np.timedelta64(a_min, "m")
    end = T0 + np.timedelta64(b_min, "m")
    f = np.array(data.draw(st.lists(values, min_size=minutes.size, max_size=minutes.size)))
    g = np.array(data.draw(st.lists(values, min_size=minutes.size, max_size=minutes.size)))
    nodes, weights = simpson_nodes(times, start, end)
    assert nodes[0] == start and nodes[-1] == end
    assert np.all(np.diff(nodes) > np.timedelta64(0, "ns"))
    ts = minutes * 60.0
    x = (nodes - T0) / np.timedelta64(1, "s")
    a, b = a_min * 60.0, b_min * 60.0
    assert weights.sum() == pytest.approx(b - a, rel=1e-12)
    expected = _product_integral(ts, f, g, a, b)
    got = weights @ (np.interp(x, ts, f) * np.interp(x, ts, g))
    assert got == pytest.approx(expected, rel=1e-9, abs=1e-9 * (b - a) * 1e4)


@settings(max_examples=60, deadline=None)
@given(gaps=gaps, data=st.data())
def test_interpolation_in_time_matches_numpy(gaps, data):
    import xarray as xr

    minutes = np.concatenate([[0], np.cumsum(gaps)])
    times = T0 + minutes.astype("timedelta64[m]").astype("timedelta64[ns]")
    f = np.array(data.draw(st.lists(values, min_size=minutes.size, max_size=minutes.size)))
    when_min = np.array(data.draw(st.lists(st.integers(0, int(minutes[-1])), min_size=1, max_size=10)))
    when = T0 + when_min.astype("timedelta64[m]").astype("timedelta64[ns]")
    da = xr.DataArray(f, dims="time", coords={"time": times}, attrs={"units": "K"})
    out = interpolate_in_time(da, when).values
    np.testing.assert_allclose(out, np.interp(when_min * 60.0, minutes * 60.0, f), rtol=1e-12, atol=1e-10)
