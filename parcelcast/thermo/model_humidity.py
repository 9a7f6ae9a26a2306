"""Relative humidity as a model means it: over water, over ice, or mixed phase.

Observations (radiosonde dew points, WMO practice) give relative humidity over water at
all temperatures.  Numerical models mostly do not: below 0 degC their relative humidity
is relative to a saturation vapour pressure that moves from water to ice.  Reading a
model's RH as over water overstates the vapour pressure by e_s,water/e_s,ice - 1, about
10 % at -10 degC and 48 % at -40 degC.  The rules here give e_s as the model defines it,

    e_s = w(T) e_s,water(T) + (1 - w(T)) e_s,ice(T),

with w = 1 above ``t_water`` and w = 0 below ``t_ice``:

* ``water``: w = 1 (observations; also the reading of an unknown source).
* ``ice``: w = 0 below 0 degC.
* ``ncep`` (NCEP GFS): over water above the triple point (273.16 K), over ice below
  253.16 K, linear in T between.  Source: the documentation block of the GFS physics
  saturation function ``fpvsx`` (``funcphys``: "over liquid for temperatures above the
  triple point, over ice for temperatures 20 degrees below the triple point, and a linear
  combination of the two for temperatures in between"), as read in public copies of that
  code; that NCEP's pressure-level RH uses it is recalled from memory, and checked here
  against the model's own precipitable water (tests/test_model_humidity.py).
* ``ecmwf`` (ECMWF IFS): over water above 0 degC, over ice below -23 degC, quadratic
  between.  Source: ECMWF's parameter definition of relative humidity (paramId 157):
  "with respect to saturation over ice below -23C and with respect to saturation over
  water above 0C. In the regime in between a quadratic interpolation is applied."  The
  weight ((T - T_ice)/(T_0 - T_ice))**2 with T_0 = 273.16 K, T_ice = T_0 - 23 K is the
  IFS mixed-phase function (IFS Documentation Part IV, cloud scheme), recalled from
  memory.  ECMWF's RH may exceed 100 % (with respect to ice); it is not capped at 100 %,
  only the dew point at the temperature.

Both phases use the WMO-No. 8 Magnus formulas of :mod:`parcelcast.thermo.saturation` (the
models use their own fits, within about 0.5 % of these).  Dew points derived from the
resulting vapour pressure are over water again, as everywhere else in parcelcast.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from parcelcast.errors import ParcelcastError
from parcelcast.thermo.saturation import saturation_vapour_pressure

__all__ = ["HumidityRule", "RULES", "CENTRE_RULES", "rule_for", "saturation_vapour_pressure_model",
           "vapour_pressure_from_model_rh"]


@dataclass(frozen=True)
class HumidityRule:
    """How a source's relative humidity is defined (see the module docstring).

    name : key in :data:`RULES`.  t_ice, t_water : K, the bounds of the mixed phase.
    exponent : power of the weight (1 linear, 2 quadratic).  source : where the rule comes from.
    """

    name: str
    t_ice: float
    t_water: float
    exponent: float
    source: str

    def weight(self, temperature):
        """Weight of saturation over water, 0..1 (float64 array)."""
        t = np.asarray(temperature, dtype=np.float64)
        if self.t_water <= self.t_ice:  # a pure phase: a step at t_water
            return np.where(t >= self.t_water, 1.0, 0.0)
        return np.clip((t - self.t_ice) / (self.t_water - self.t_ice), 0.0, 1.0) ** self.exponent

    def describe(self) -> str:
        if self.name == "water":
            return "relative humidity over water at all temperatures"
        if self.name == "ice":
            return "relative humidity over ice below 0 degC, over water above"
        shape = "linear" if self.exponent == 1 else "quadratic"
        return (f"relative humidity over water above {self.t_water - 273.15:.0f} degC, over ice below "
                f"{self.t_ice - 273.15:.0f} degC, {shape} blend between ({self.source})")


RULES = {
    "water": HumidityRule("water", 0.0, 0.0, 1.0, "WMO practice for observations"),
    "ice": HumidityRule("ice", 273.15, 273.15, 1.0, "over ice below 0 degC"),
    "ncep": HumidityRule("ncep", 253.16, 273.16, 1.0, "NCEP GFS physics, saturation function fpvsx"),
    "ecmwf": HumidityRule("ecmwf", 250.16, 273.16, 2.0, "ECMWF relative humidity definition, paramId 157"),
}

#: GRIB originating centre (WMO Common Code Table C-11) -> rule.
CENTRE_RULES = {7: "ncep", 98: "ecmwf"}
_CENTRE_NAMES = {7: "NCEP", 98: "ECMWF"}


def rule_for(centre: int | None, over: str | None = None) -> tuple[HumidityRule, str]:
    """The rule for a source and why it was chosen.

    Parameters
    ----------
    centre : GRIB originating centre, or None when unknown (NetCDF, no GRIB key).
    over : ``"water"``, ``"ice"`` or ``"mixed"`` from the user (``--humidity-over``), or None
        to decide from the centre.  ``"mixed"`` is the centre's mixed-phase rule, NCEP's
        when the centre has none known here.

    Returns
    -------
    (HumidityRule, reason)
    """
    known = CENTRE_RULES.get(centre) if centre is not None else None
    who = (f"originating centre {centre} ({_CENTRE_NAMES[centre]})" if known
           else f"originating centre {centre} (no rule known)" if centre is not None
           else "originating centre unknown")
    if over is None:
        if known:
            return RULES[known], f"detected from the GRIB {who}"
        return RULES["water"], f"{who}: read as over water (give --humidity-over to change)"
    if over in ("water", "ice"):
        return RULES[over], f"--humidity-over {over}"
    if over == "mixed":
        if known:
            return RULES[known], f"--humidity-over mixed, the rule of the {who}"
        return RULES["ncep"], f"--humidity-over mixed; {who}: NCEP's rule used"
    raise ParcelcastError(f"--humidity-over must be water, ice or mixed; got {over!r}")


def saturation_vapour_pressure_model(temperature, rule: HumidityRule):
    """Saturation vapour pressure (Pa) as the rule defines it, for temperatures in K."""
    t = np.asarray(temperature, dtype=np.float64)
    w = rule.weight(t)
    return w * saturation_vapour_pressure(t, "water") + (1.0 - w) * saturation_vapour_pressure(t, "ice")


def vapour_pressure_from_model_rh(temperature, relative_humidity, rule: HumidityRule):
    """Vapour pressure (Pa) from a model's relative humidity (fraction 0..1) under ``rule``."""
    return np.asarray(relative_humidity, dtype=np.float64) * saturation_vapour_pressure_model(temperature, rule)
