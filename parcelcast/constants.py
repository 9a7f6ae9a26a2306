"""Physical constants used by parcelcast, in SI units, each with its source.

One table, one place.  Values are plain floats (SI) because they are used in
kernels on float64 arrays; the unit is in the comment and in ``CONSTANT_UNITS``.
"""

from __future__ import annotations

# --- Earth ---------------------------------------------------------------
#: Mean radius of the Earth (m). WMO-No. 8 / common meteorological practice; the
#: value of the IUGG mean radius R1 = 6,371,008.8 m rounded to metres (Moritz 2000).
EARTH_RADIUS = 6_371_000.0
#: Angular velocity of the Earth's rotation (rad s-1). IERS Conventions (2010), Table 1.1.
EARTH_ANGULAR_VELOCITY = 7.292115e-5
#: Standard acceleration of gravity (m s-2). CGPM 1901; defines geopotential metres (WMO-No. 8).
STANDARD_GRAVITY = 9.80665

# --- Dry air and water vapour --------------------------------------------
#: Specific gas constant of dry air (J kg-1 K-1): the customary meteorological value
#: (value recalled from memory; Bolton 1980 uses 287.04). R*/M_d with CODATA 2018
#: R* = 8.314462618 and M_d = 28.9647 g/mol (US Standard Atmosphere 1976) gives 287.055,
#: 3e-5 larger: immaterial for every result here.
DRY_AIR_GAS_CONSTANT = 287.0470
#: Specific gas constant of water vapour (J kg-1 K-1). R* / M_w, M_w = 18.01528 g/mol.
WATER_VAPOUR_GAS_CONSTANT = 461.5228
#: Ratio of gas constants R_d / R_v (dimensionless), from the two values above.
EPSILON = DRY_AIR_GAS_CONSTANT / WATER_VAPOUR_GAS_CONSTANT
#: Specific heat of dry air at constant pressure (J kg-1 K-1). Bolton (1980) and
#: most textbooks (e.g. Wallace & Hobbs 2006) use 1004-1005.
DRY_AIR_SPECIFIC_HEAT_P = 1004.0
#: Poisson constant kappa = R_d / c_p (dimensionless) = 0.2859 from the two values above
#: (Bolton 1980 uses 0.2854; 2/7 = 0.2857 for an ideal diatomic gas).
KAPPA = DRY_AIR_GAS_CONSTANT / DRY_AIR_SPECIFIC_HEAT_P
#: Reference pressure for potential temperature (Pa). WMO-No. 8: 1000 hPa.
REFERENCE_PRESSURE = 100_000.0

#: Seconds per hour: rates are K s-1 in arrays and files, K h-1 for people.
SECONDS_PER_HOUR = 3600.0
