"""Dry thermodynamics on float64 SI arrays: potential temperature, dry adiabats,
density, virtual temperature, hypsometric thickness and static stability.

Everything here is a pure, vectorised numpy function (K, Pa, kg/kg, m); missing
values (NaN) stay NaN.
"""

from __future__ import annotations

import numpy as np

from parcelcast.grid.stencil import centred_weights

from parcelcast.thermo.constants import CPD, EPSILON, G0, KAPPA, P0, RD

__all__ = [
    "potential_temperature",
    "temperature_from_potential_temperature",
    "dry_adiabat",
    "virtual_temperature",
    "density",
    "thickness",
    "static_stability",
]


def _f(x):
    return np.asarray(x, dtype=np.float64)


def potential_temperature(temperature, pressure):
    """Potential temperature theta = T (p0 / p) ** kappa.

    Parameters
    ----------
    temperature : array_like
        Air temperature T (K), any shape.
    pressure : array_like
        Pressure p (Pa), broadcastable with ``temperature``.

    Returns
    -------
    numpy.ndarray
        theta (K), the broadcast shape.  p0 = 1000 hPa, kappa = R_d / c_pd
        (:mod:`parcelcast.constants`).

    References
    ----------
    Poisson's equation for dry adiabatic processes; WMO-No. 8 (2018), Annex 4.B.
    Bolton, D., 1980: The computation of equivalent potential temperature.
    Mon. Wea. Rev., 108, 1046-1053 (eq. 7, with kappa = 0.2854).

    Examples
    --------
    >>> round(float(potential_temperature(273.15, 85000.0)), 2)
    286.14
    """
    return _f(temperature) * (P0 / _f(pressure)) ** KAPPA


def temperature_from_potential_temperature(theta, pressure):
    """Temperature (K) at ``pressure`` (Pa) of air with potential temperature ``theta`` (K)."""
    return _f(theta) * (_f(pressure) / P0) ** KAPPA


def dry_adiabat(temperature_start, pressure_start, pressure):
    """Temperature (K) along a dry adiabat from (T0, p0) to ``pressure`` (Pa).

    ``temperature_start`` and ``pressure_start`` broadcast against ``pressure``;
    e.g. shapes ``(..., 1)`` and ``(nlev,)`` give ``(..., nlev)``.
    """
    return _f(temperature_start) * (_f(pressure) / _f(pressure_start)) ** KAPPA


def virtual_temperature(temperature, mixing_ratio):
    """Virtual temperature T_v = T (1 + r/eps) / (1 + r) (K).

    Parameters
    ----------
    temperature : array_like
        T (K).
    mixing_ratio : array_like
        Water-vapour mixing ratio r (kg/kg), broadcastable.

    References
    ----------
    Wallace, J. M. and P. V. Hobbs, 2006: Atmospheric Science, 2nd ed., eq. (3.60);
    WMO-No. 8 (2018) Annex 4.B.
    """
    r = _f(mixing_ratio)
    return _f(temperature) * (1.0 + r / EPSILON) / (1.0 + r)


def density(pressure, temperature, mixing_ratio=0.0):
    """Density of moist air rho = p / (R_d T_v) (kg m-3) from p (Pa), T (K), r (kg/kg)."""
    return _f(pressure) / (RD * virtual_temperature(temperature, mixing_ratio))


def thickness(pressure_bottom, pressure_top, mean_virtual_temperature):
    """Hypsometric thickness dz = (R_d <T_v> / g0) ln(p_bottom / p_top) (m).

    Parameters
    ----------
    pressure_bottom, pressure_top : array_like
        Pressures bounding the layer (Pa), p_bottom > p_top for a positive thickness.
    mean_virtual_temperature : array_like
        Layer mean virtual temperature, averaged in ln p (K).

    References
    ----------
    Hypsometric equation, e.g. Wallace and Hobbs (2006), eq. (3.29).
    """
    return RD * _f(mean_virtual_temperature) / G0 * np.log(_f(pressure_bottom) / _f(pressure_top))


def static_stability(temperature, pressure):
    """Static stability in pressure coordinates S_p = R_d T / (c_p p) - dT/dp (K Pa-1).

    S_p = -(T / theta) d(theta)/dp; positive for a stable column, and the
    vertical-motion term of the temperature budget is ``omega * S_p`` (K/s,
    warming where air sinks, omega > 0, in a stable column).

    Parameters
    ----------
    temperature : array_like, shape (..., nlev)
        Temperature (K) of one or many columns, the level axis last.
    pressure : array_like, shape (nlev,) or (..., nlev)
        Pressure (Pa) of the levels, in any monotonic order.

    Returns
    -------
    numpy.ndarray, shape (..., nlev)
        S_p (K/Pa).  dT/dp by centred differences on a non-uniform grid inside
        (second-order), one-sided at the two ends; NaN where a needed value is NaN.

    Examples
    --------
    An isothermal column has S_p = R_d T / (c_p p):

    >>> p = np.array([100000.0, 85000.0, 70000.0])
    >>> s = static_stability(np.full(3, 250.0), p)
    >>> bool(np.allclose(s, 287.047 * 250.0 / (1004.0 * p)))
    True
    """
    t = _f(temperature)
    p = np.broadcast_to(_f(pressure), t.shape)
    if t.shape[-1] < 2:
        raise ValueError("static_stability needs at least two levels")
    dtdp = np.empty_like(t)
    dtdp[..., 0] = (t[..., 1] - t[..., 0]) / (p[..., 1] - p[..., 0])
    dtdp[..., -1] = (t[..., -1] - t[..., -2]) / (p[..., -1] - p[..., -2])
    if t.shape[-1] > 2:
        w = centred_weights(p[..., 1:-1] - p[..., :-2], p[..., 2:] - p[..., 1:-1])
        dtdp[..., 1:-1] = w[..., 0] * t[..., :-2] + w[..., 1] * t[..., 1:-1] + w[..., 2] * t[..., 2:]
    return RD * t / (CPD * p) - dtdp
