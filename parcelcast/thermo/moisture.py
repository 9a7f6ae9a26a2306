"""Humidity variables and their conversions (float64 SI arrays).

Vapour pressure e (Pa), mixing ratio r (kg/kg of dry air), specific humidity q
(kg/kg of moist air), relative humidity U (fraction, 0-1, with respect to water
unless stated, defined as e / e_s(T) as in WMO-No. 8 practice), dew point T_d (K).
"""

from __future__ import annotations

import numpy as np

from parcelcast.thermo.constants import CPD, CPV, DLV_DT, EPSILON, LV0, T_ZERO_C
from parcelcast.thermo.saturation import (
    dewpoint_from_vapour_pressure,
    saturation_vapour_pressure,
    saturation_vapour_pressure_derivative,
)

__all__ = [
    "latent_heat_vaporisation",
    "mixing_ratio_from_vapour_pressure",
    "vapour_pressure_from_mixing_ratio",
    "saturation_mixing_ratio",
    "specific_humidity_from_mixing_ratio",
    "mixing_ratio_from_specific_humidity",
    "vapour_pressure_from_dewpoint",
    "dewpoint_from_relative_humidity",
    "relative_humidity_from_dewpoint",
    "dewpoint_from_specific_humidity",
    "specific_humidity_from_dewpoint",
    "mixing_ratio_from_dewpoint",
    "wet_bulb_temperature",
]


def _f(x):
    return np.asarray(x, dtype=np.float64)


def latent_heat_vaporisation(temperature):
    """L_v(T) = 2.501e6 - 2370 (T - 273.15) J/kg.

    References
    ----------
    Bolton, D., 1980: Mon. Wea. Rev., 108, 1046-1053, eq. (2).
    """
    return LV0 - DLV_DT * (_f(temperature) - T_ZERO_C)


def mixing_ratio_from_vapour_pressure(vapour_pressure, pressure):
    """r = eps e / (p - e) (kg/kg) from e (Pa) and total pressure p (Pa).

    References
    ----------
    WMO-No. 8 (2018), Annex 4.B; Wallace and Hobbs (2006) eq. (3.59).
    """
    e = _f(vapour_pressure)
    return EPSILON * e / (_f(pressure) - e)


def vapour_pressure_from_mixing_ratio(mixing_ratio, pressure):
    """e = p r / (eps + r) (Pa) from r (kg/kg) and p (Pa)."""
    r = _f(mixing_ratio)
    return _f(pressure) * r / (EPSILON + r)


def saturation_mixing_ratio(temperature, pressure, phase="water", method="wmo"):
    """Saturation mixing ratio r_s(T, p) (kg/kg); T in K, p in Pa."""
    return mixing_ratio_from_vapour_pressure(
        saturation_vapour_pressure(temperature, phase, method), pressure
    )


def specific_humidity_from_mixing_ratio(mixing_ratio):
    """q = r / (1 + r) (kg/kg)."""
    r = _f(mixing_ratio)
    return r / (1.0 + r)


def mixing_ratio_from_specific_humidity(specific_humidity):
    """r = q / (1 - q) (kg/kg)."""
    q = _f(specific_humidity)
    return q / (1.0 - q)


def vapour_pressure_from_dewpoint(dewpoint, method="wmo"):
    """e = e_w(T_d) (Pa) from the dew point (K), over water."""
    return saturation_vapour_pressure(dewpoint, "water", method)


def relative_humidity_from_dewpoint(temperature, dewpoint, method="wmo"):
    """U = e_w(T_d) / e_w(T) (fraction, with respect to water) from T and T_d (K)."""
    return saturation_vapour_pressure(dewpoint, "water", method) / saturation_vapour_pressure(
        temperature, "water", method
    )


def dewpoint_from_relative_humidity(temperature, relative_humidity, method="wmo"):
    """Dew point (K) from T (K) and relative humidity U (fraction 0-1, w.r.t. water).

    U = 0 (or below) gives NaN: no dew point exists for perfectly dry air.
    """
    e = _f(relative_humidity) * saturation_vapour_pressure(temperature, "water", method)
    return dewpoint_from_vapour_pressure(e, "water", method)


def dewpoint_from_specific_humidity(specific_humidity, pressure, method="wmo"):
    """Dew point (K) from q (kg/kg) and p (Pa)."""
    r = mixing_ratio_from_specific_humidity(specific_humidity)
    return dewpoint_from_vapour_pressure(vapour_pressure_from_mixing_ratio(r, pressure), "water", method)


def mixing_ratio_from_dewpoint(dewpoint, pressure, method="wmo"):
    """r (kg/kg) from T_d (K) and p (Pa)."""
    return mixing_ratio_from_vapour_pressure(vapour_pressure_from_dewpoint(dewpoint, method), pressure)


def specific_humidity_from_dewpoint(dewpoint, pressure, method="wmo"):
    """q (kg/kg) from T_d (K) and p (Pa)."""
    return specific_humidity_from_mixing_ratio(mixing_ratio_from_dewpoint(dewpoint, pressure, method))


def wet_bulb_temperature(temperature, dewpoint, pressure, method="wmo", tol=1e-6):
    """Isobaric (thermodynamic, psychrometric) wet-bulb temperature T_w (K).

    Solves the enthalpy balance of adiabatic saturation at constant pressure,
    (c_pd + r c_pv) (T - T_w) = L_v(T_w) (r_s(T_w, p) - r),
    by Newton's method, vectorised.  Over water (also below 0 degC).

    Parameters
    ----------
    temperature, dewpoint : array_like
        T and T_d (K), broadcastable.
    pressure : array_like
        p (Pa).

    Returns
    -------
    numpy.ndarray
        T_w (K), T_d <= T_w <= T.

    References
    ----------
    WMO-No. 8 (2018), Annex 4.B (thermodynamic wet-bulb temperature); Bolton (1980)
    eq. (2) for L_v(T).
    """
    t = _f(temperature)
    p = _f(pressure)
    r = mixing_ratio_from_dewpoint(dewpoint, p, method)
    cp = CPD + r * CPV
    tw = 0.5 * (t + _f(dewpoint))
    for _ in range(30):
        es = saturation_vapour_pressure(tw, "water", method)
        des = saturation_vapour_pressure_derivative(tw, "water", method)
        rs = EPSILON * es / (p - es)
        drs = EPSILON * p * des / (p - es) ** 2
        lv = latent_heat_vaporisation(tw)
        g = cp * (t - tw) - lv * (rs - r)
        dg = -cp + DLV_DT * (rs - r) - lv * drs
        step = g / dg
        tw = tw - step
        if np.all(~(np.abs(step) > tol)):
            break
    return tw
