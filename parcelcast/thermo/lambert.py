"""The lower real branch W_{-1} of the Lambert W function, on numpy arrays.

What belongs here: :func:`lambert_w_lower`, used by the Romps (2017) LCL.  It stands in for
``scipy.special.lambertw(x, -1)``, whose import (about 0.3 s) would be most of a one-point
``profile`` run; the tests compare the two to rounding.

Method: a starting value from the series about the branch point x = -1/e or from the
asymptotic expansion as x -> 0- (both as given by Corless et al. 1996; the coefficients are
recalled from memory, which is harmless: they only start the iteration), then Halley's
iteration on w e^w - x = 0, which converges cubically; a few steps reach rounding, as the
tests check against scipy.special.lambertw.

References
----------
Corless, R. M., G. H. Gonnet, D. E. G. Hare, D. J. Jeffrey and D. E. Knuth, 1996: On the
Lambert W function.  Adv. Comput. Math., 5, 329-359.
"""

from __future__ import annotations

import numpy as np

_HALLEY_STEPS = 6


def lambert_w_lower(x):
    """W_{-1}(x) for real x in [-1/e, 0): the solution w <= -1 of w e^w = x.

    Parameters
    ----------
    x : array_like
        Real values; outside [-1/e, 0) (and for NaN) the answer is NaN.

    Returns
    -------
    numpy.ndarray
        float64, the shape of ``x``.
    """
    x = np.asarray(x, dtype=np.float64)
    inside = (x >= -np.exp(-1.0)) & (x < 0.0)
    xs = np.where(inside, x, -0.1)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        p = -np.sqrt(np.maximum(2.0 * (np.e * xs + 1.0), 0.0))
        near_branch = -1.0 + p - p**2 / 3.0 + 11.0 / 72.0 * p**3
        l1 = np.log(-xs)
        l2 = np.log(-l1)
        asymptotic = l1 - l2 + l2 / l1
        w = np.where(xs < -0.25, near_branch, asymptotic)
        for _ in range(_HALLEY_STEPS):
            ew = np.exp(w)
            f = w * ew - xs
            denominator = ew * (w + 1.0) - (w + 2.0) * f / (2.0 * w + 2.0)
            step = np.where((denominator != 0.0) & np.isfinite(denominator), f / denominator, 0.0)
            w = np.minimum(w - step, -1.0)  # stay on the lower branch
    return np.where(inside, w, np.nan)
