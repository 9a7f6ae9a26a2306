"""Lifting condensation level (LCL) of air lifted dry-adiabatically.

Two formulations:

* :func:`lcl_romps` -- the exact analytic LCL of Romps (2017) with the Lambert W
  function (his eq. 22a and its constants), giving height, temperature and pressure.
* :func:`lcl_temperature_bolton` -- Bolton's (1980) empirical LCL temperature
  (eqs. 15, 21 and 22), stated accurate to about 0.1 K, with pressure from Poisson's
  equation.  Used with Bolton's equivalent potential temperature.
"""

from __future__ import annotations

import numpy as np

from parcelcast.thermo.lambert import lambert_w_lower
from parcelcast.thermo.constants import (
    G0,
    KAPPA,
    ROMPS_CVA,
    ROMPS_CVL,
    ROMPS_CVV,
    ROMPS_E0V,
    ROMPS_PTRIP,
    ROMPS_RAIR,
    ROMPS_RVAP,
    ROMPS_TTRIP,
)
from parcelcast.thermo.moisture import relative_humidity_from_dewpoint

__all__ = ["romps_saturation_vapour_pressure", "lcl_romps", "lcl_temperature_bolton", "lcl_pressure_bolton"]

_CPA = ROMPS_CVA + ROMPS_RAIR
_CPV = ROMPS_CVV + ROMPS_RVAP


def romps_saturation_vapour_pressure(temperature):
    """Saturation vapour pressure over liquid (Pa) consistent with Romps (2017), eq. (4).

    The Rankine-Kirchhoff form with constant heat capacities used by Romps'
    exact LCL; T in K.
    """
    t = np.asarray(temperature, dtype=np.float64)
    return (
        ROMPS_PTRIP
        * (t / ROMPS_TTRIP) ** ((_CPV - ROMPS_CVL) / ROMPS_RVAP)
        * np.exp((ROMPS_E0V - (ROMPS_CVV - ROMPS_CVL) * ROMPS_TTRIP) / ROMPS_RVAP * (1 / ROMPS_TTRIP - 1 / t))
    )


def lcl_romps(pressure, temperature, relative_humidity=None, dewpoint=None):
    """Exact LCL of Romps (2017): (pressure Pa, temperature K, height above the parcel m).

    Parameters
    ----------
    pressure : array_like
        Parcel pressure p (Pa).
    temperature : array_like
        Parcel temperature T (K).
    relative_humidity : array_like, optional
        Relative humidity over liquid (fraction 0-1) with respect to Romps'
        saturation vapour pressure.  Give this or ``dewpoint``.
    dewpoint : array_like, optional
        Dew point (K); converted to relative humidity with the WMO-No. 8 Magnus
        formula (``relative_humidity_from_dewpoint``).

    Returns
    -------
    p_lcl, t_lcl, z_lcl : numpy.ndarray
        LCL pressure (Pa), temperature (K) and height above the parcel's level (m),
        broadcast shape.  A saturated parcel has its LCL at its own level.

    References
    ----------
    Romps, D. M., 2017: Exact expression for the lifting condensation level.
    J. Atmos. Sci., 74, 3891-3900, eq. (22a); the temperature follows from
    T_LCL = T - g z_LCL / c_pm and the pressure from p (T_LCL/T)^(c_pm/R_m).
    """
    p = np.asarray(pressure, dtype=np.float64)
    t = np.asarray(temperature, dtype=np.float64)
    if relative_humidity is None:
        if dewpoint is None:
            raise ValueError("give relative_humidity or dewpoint")
        rh = relative_humidity_from_dewpoint(t, dewpoint)
    else:
        rh = np.asarray(relative_humidity, dtype=np.float64)
    rh = np.minimum(rh, 1.0)
    pv = rh * romps_saturation_vapour_pressure(t)
    qv = ROMPS_RAIR * pv / (ROMPS_RVAP * p + (ROMPS_RAIR - ROMPS_RVAP) * pv)
    rm = (1 - qv) * ROMPS_RAIR + qv * ROMPS_RVAP
    cpm = (1 - qv) * _CPA + qv * _CPV
    e0 = ROMPS_E0V - (ROMPS_CVV - ROMPS_CVL) * ROMPS_TTRIP
    a = -(_CPV - ROMPS_CVL) / ROMPS_RVAP + cpm / rm
    b = -e0 / (ROMPS_RVAP * t)
    c = rh * np.exp(b)  # = pv/pvstar(T) * exp(-E0/(Rv T))
    with np.errstate(divide="ignore", invalid="ignore"):
        w = lambert_w_lower(b / a * c ** (1 / a))
        t_lcl = t * b / (a * w)
    t_lcl = np.where(rh >= 1.0, t, t_lcl)
    z = cpm * (t - t_lcl) / G0
    p_lcl = p * (t_lcl / t) ** (cpm / rm)
    return p_lcl, t_lcl, z


def lcl_temperature_bolton(temperature, dewpoint=None, vapour_pressure=None, relative_humidity=None):
    """LCL temperature T_L (K) of Bolton (1980).

    Uses eq. (15) from the dew point, eq. (21) from the vapour pressure, or eq. (22)
    from relative humidity (fraction), whichever is given (in that order).

    References
    ----------
    Bolton, D., 1980: Mon. Wea. Rev., 108, 1046-1053, eqs. (15), (21), (22);
    stated accuracy about 0.1 K for -35 <= T_L <= 35 degC.
    """
    t = np.asarray(temperature, dtype=np.float64)
    if dewpoint is not None:
        td = np.asarray(dewpoint, dtype=np.float64)
        return 1.0 / (1.0 / (td - 56.0) + np.log(t / td) / 800.0) + 56.0
    if vapour_pressure is not None:
        e_hpa = np.asarray(vapour_pressure, dtype=np.float64) / 100.0
        return 2840.0 / (3.5 * np.log(t) - np.log(e_hpa) - 4.805) + 55.0
    if relative_humidity is not None:
        u = np.asarray(relative_humidity, dtype=np.float64)
        return 1.0 / (1.0 / (t - 55.0) - np.log(u) / 2840.0) + 55.0
    raise ValueError("give dewpoint, vapour_pressure or relative_humidity")


def lcl_pressure_bolton(pressure, temperature, lcl_temperature):
    """LCL pressure (Pa) by Poisson's equation p_L = p (T_L / T)^(1/kappa) (dry kappa)."""
    return np.asarray(pressure, dtype=np.float64) * (
        np.asarray(lcl_temperature, dtype=np.float64) / np.asarray(temperature, dtype=np.float64)
    ) ** (1.0 / KAPPA)
