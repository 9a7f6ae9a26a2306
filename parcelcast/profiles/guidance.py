"""Afternoon top-temperature guidance from a morning profile.

Common forecasting practice (not a published formula): when daytime heating mixes
the boundary layer up to a level p_top, air from there reaches the ground along a
dry adiabat, so the afternoon top temperature is

    T_max = T(p_top) (p_sfc / p_top) ** kappa  (+ the advected change expected by then).

By default p_top is 150 hPa above the surface pressure (about 850 hPa at a
low-lying station, the usual rule of thumb); the forecaster may give another
level, e.g. the top of the expected mixed layer.  This ignores the diurnal change
at p_top itself, cloud and precipitation, sea breezes and surface moisture: it is
guidance for a trained forecaster, not a forecast.
"""

from __future__ import annotations

import numpy as np

from parcelcast.thermo.constants import KAPPA
from parcelcast.thermo.parcel import interpolate_at_pressure

__all__ = ["top_temperature_guidance", "DEFAULT_MIXING_DEPTH"]

#: depth (Pa) of the mixed layer assumed by default.
DEFAULT_MIXING_DEPTH = 15000.0


def top_temperature_guidance(pressure, temperature, mixing_top_pressure=None, advective_change=0.0,
                             surface_pressure=None):
    """Top (maximum) temperature guidance by mixing down along a dry adiabat.

    Parameters
    ----------
    pressure : (nlev,) Pa, decreasing (ground first).
    temperature : (nlev,) K.
    mixing_top_pressure : float, optional
        Top of the expected mixed layer (Pa); default surface pressure - 150 hPa.
    advective_change : float
        Temperature change (K) expected from advection by the afternoon; added.
    surface_pressure : float, optional
        Default: the lowest level's pressure.

    Returns
    -------
    dict
        ``temperature_K`` (guidance), ``mixing_top_hPa``, ``temperature_at_top_K``,
        ``advective_change_K``, ``method``.
    """
    p = np.asarray(pressure, dtype=np.float64)
    t = np.asarray(temperature, dtype=np.float64)
    psfc = float(p[0] if surface_pressure is None else surface_pressure)
    ptop = psfc - DEFAULT_MIXING_DEPTH if mixing_top_pressure is None else float(mixing_top_pressure)
    t_top = float(interpolate_at_pressure(p, t, ptop))
    tmax = t_top * (psfc / ptop) ** KAPPA + float(advective_change)
    return {
        "temperature_K": tmax,
        "mixing_top_hPa": ptop / 100.0,
        "temperature_at_top_K": t_top,
        "advective_change_K": float(advective_change),
        "method": "temperature at the top of the expected mixed layer brought down a dry adiabat "
                  "(common forecasting practice)",
    }
