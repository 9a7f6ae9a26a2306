"""Saturation vapour pressure over plane surfaces of liquid water and of ice.

Three formulations, chosen by ``method``:

``"wmo"`` (default)
    The Magnus-type formulas of WMO-No. 8 (2018), Annex 4.B:
    e_w = 611.2 exp(17.62 t / (243.12 + t)) Pa over water (-45 to 60 degC) and
    e_i = 611.2 exp(22.46 t / (272.62 + t)) Pa over ice (-65 to 0 degC), t in degC.
``"bolton"``
    Bolton (1980) eq. (10): e_w = 611.2 exp(17.67 t / (t + 243.5)) Pa, water only,
    stated accurate to 0.1 % between -35 and 35 degC.
``"iapws"``
    The more exact option, fitted to IAPWS-95: the saturation-pressure equation of
    Wagner and Pruss (2002, eq. 2.5) over water (273.16 K to 647.096 K; used by
    extrapolation below the triple point, for supercooled water, where it stays
    within 0.05 % of Murphy and Koop 2005 down to -15 degC and 0.4 % at -35 degC) and the
    sublimation-pressure equation of Wagner et al. (2011) over ice (50 K to 273.16 K).

All functions take temperature in K (any shape) and return Pa; NaN stays NaN.
The enhancement factor of moist air (about 1.004, WMO-No. 8) is not applied.
"""

from __future__ import annotations

import numpy as np

from parcelcast.thermo.constants import P_CRITICAL, P_TRIPLE, T_CRITICAL, T_TRIPLE, T_ZERO_C

__all__ = [
    "METHODS",
    "saturation_vapour_pressure",
    "saturation_vapour_pressure_derivative",
    "dewpoint_from_vapour_pressure",
]

METHODS = ("wmo", "bolton", "iapws")

# (A, B, C): e = A exp(B t / (C + t)), t in degC, A in Pa
_MAGNUS = {
    ("wmo", "water"): (611.2, 17.62, 243.12),
    ("wmo", "ice"): (611.2, 22.46, 272.62),
    ("bolton", "water"): (611.2, 17.67, 243.5),
}

# Wagner and Pruss (2002), eq. (2.5) coefficients a1..a6
_WP_A = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
# Wagner, Riethmann, Feistel and Harvey (2011), sublimation: a_i, b_i
_SUB_A = (-0.212144006e2, 0.273203819e2, -0.610598130e1)
_SUB_B = (0.333333333e-2, 0.120666667e1, 0.170333333e1)


def _check(method, phase):
    if method not in METHODS:
        raise ValueError(f"unknown saturation method {method!r}; valid: {', '.join(METHODS)}")
    if phase not in ("water", "ice"):
        raise ValueError(f"unknown phase {phase!r}; valid: water, ice")
    if method == "bolton" and phase == "ice":
        raise ValueError("Bolton (1980) gives saturation over water only; use method='wmo' or 'iapws'")


def _wagner_pruss(t):
    tau = 1.0 - t / T_CRITICAL
    a1, a2, a3, a4, a5, a6 = _WP_A
    poly = a1 * tau + a2 * tau**1.5 + a3 * tau**3 + a4 * tau**3.5 + a5 * tau**4 + a6 * tau**7.5
    return P_CRITICAL * np.exp(T_CRITICAL / t * poly)


def _sublimation(t):
    theta = t / T_TRIPLE
    s = sum(a * theta**b for a, b in zip(_SUB_A, _SUB_B))
    return P_TRIPLE * np.exp(s / theta)


def saturation_vapour_pressure(temperature, phase="water", method="wmo"):
    """Saturation vapour pressure e_s(T) (Pa) over a plane surface of water or ice.

    Parameters
    ----------
    temperature : array_like
        Temperature T (K), any shape.
    phase : {"water", "ice"}
        Surface the vapour is in equilibrium with.  ``"water"`` below 0 degC means
        supercooled water (the usual meteorological convention for dew point and
        relative humidity, WMO-No. 8).
    method : {"wmo", "bolton", "iapws"}
        Formulation (see the module docstring).

    Returns
    -------
    numpy.ndarray
        e_s (Pa), same shape.

    References
    ----------
    WMO, 2018: Guide to Instruments and Methods of Observation (WMO-No. 8), Annex 4.B.
    Bolton, D., 1980: Mon. Wea. Rev., 108, 1046-1053, eq. (10).
    Wagner, W. and A. Pruss, 2002: J. Phys. Chem. Ref. Data, 31, 387-535, eq. (2.5).
    Wagner, W., T. Riethmann, R. Feistel and A. H. Harvey, 2011: J. Phys. Chem. Ref.
    Data, 40, 043103 (sublimation pressure of ice).

    Examples
    --------
    >>> round(float(saturation_vapour_pressure(293.15)), 1)
    2336.9
    """
    _check(method, phase)
    t = np.asarray(temperature, dtype=np.float64)
    if method == "iapws":
        return _wagner_pruss(t) if phase == "water" else _sublimation(t)
    a, b, c = _MAGNUS[(method, phase)]
    tc = t - T_ZERO_C
    return a * np.exp(b * tc / (c + tc))


def saturation_vapour_pressure_derivative(temperature, phase="water", method="wmo"):
    """d e_s / dT (Pa/K) of :func:`saturation_vapour_pressure` (analytic for Magnus forms)."""
    _check(method, phase)
    t = np.asarray(temperature, dtype=np.float64)
    if method == "iapws":
        h = 1e-3
        f = _wagner_pruss if phase == "water" else _sublimation
        return (f(t + h) - f(t - h)) / (2 * h)
    a, b, c = _MAGNUS[(method, phase)]
    tc = t - T_ZERO_C
    return a * np.exp(b * tc / (c + tc)) * b * c / (c + tc) ** 2


def dewpoint_from_vapour_pressure(vapour_pressure, phase="water", method="wmo"):
    """Dew point (or frost point for ``phase="ice"``) T_d (K) with e_s(T_d) = e.

    Parameters
    ----------
    vapour_pressure : array_like
        Water-vapour partial pressure e (Pa), > 0.
    phase, method : str
        As in :func:`saturation_vapour_pressure`; the Magnus forms are inverted
        exactly, ``"iapws"`` by Newton's method (to 1e-9 K).

    Returns
    -------
    numpy.ndarray
        T_d (K); NaN where e is NaN or not positive.
    """
    _check(method, phase)
    e = np.asarray(vapour_pressure, dtype=np.float64)
    e = np.where(e > 0, e, np.nan)
    key = (method if method != "iapws" else "wmo", phase)
    a, b, c = _MAGNUS[key]
    x = np.log(e / a)
    td = c * x / (b - x) + T_ZERO_C
    if method == "iapws":
        for _ in range(8):
            f = saturation_vapour_pressure(td, phase, "iapws")
            df = saturation_vapour_pressure_derivative(td, phase, "iapws")
            td = td - (f - e) / df
    return td
