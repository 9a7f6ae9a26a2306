"""Extra constants for the thermodynamics, each with its source.

The shared table :mod:`parcelcast.constants` holds the gas constants, c_p of dry
air, kappa, g0 and the reference pressure; they are re-exported here so the
thermodynamic modules import one place.  Values are plain SI floats.
"""

from __future__ import annotations

from parcelcast.constants import (  # noqa: F401  (re-exported)
    DRY_AIR_GAS_CONSTANT as RD,
    DRY_AIR_SPECIFIC_HEAT_P as CPD,
    EPSILON,
    KAPPA,
    REFERENCE_PRESSURE as P0,
    STANDARD_GRAVITY as G0,
    WATER_VAPOUR_GAS_CONSTANT as RV,
)

#: 0 degC in kelvin (K). SI definition of the Celsius scale.
T_ZERO_C = 273.15
#: Triple point of water (K). IAPWS-95 (Wagner and Pruss 2002).
T_TRIPLE = 273.16
#: Pressure at the triple point of water (Pa). IAPWS-95 (Wagner and Pruss 2002), 611.657 Pa.
P_TRIPLE = 611.657
#: Critical temperature of water (K). IAPWS-95 (Wagner and Pruss 2002).
T_CRITICAL = 647.096
#: Critical pressure of water (Pa). IAPWS-95 (Wagner and Pruss 2002), 22.064 MPa.
P_CRITICAL = 22.064e6
#: Specific heat of water vapour at constant pressure (J kg-1 K-1). Romps (2017) uses 1870;
#: Bolton (1980) 1875 +/- 4 near 0 degC. We use Romps' value where his LCL is computed.
CPV = 1870.0
#: Specific heat of liquid water (J kg-1 K-1). Romps (2017) value (4190); 4186-4218 in
#: tables near 0 degC.
CL = 4190.0
#: Specific heat of ice (J kg-1 K-1). Romps (2017) value.
CI = 2106.0
#: Latent heat of vaporisation at 0 degC (J kg-1). Bolton (1980) eq. (2): 2.501e6.
LV0 = 2.501e6
#: Linear decrease of L_v with temperature (J kg-1 K-1). Bolton (1980) eq. (2): 2370.
DLV_DT = 2370.0
#: Density of liquid water (kg m-3) used to turn precipitable water in kg m-2 into mm.
#: Common meteorological practice (WMO-No. 8): 1000 kg m-3.
RHO_WATER = 1000.0

# Romps (2017) reference-implementation constants (his Python LCL code): triple-point
# energies E0v = 2.3740e6 J/kg and E0s = 0.3337e6 J/kg, gas constants Rair = 287.04,
# Rvap = 461.0, cva = 719, cvv = 1418, cvl = 4119, cvs = 1861 (all recalled from memory
# of the published paper; see design_notes/thermodynamics.md).
ROMPS_RAIR = 287.04
ROMPS_RVAP = 461.0
ROMPS_CVA = 719.0
ROMPS_CVV = 1418.0
ROMPS_CVL = 4119.0
ROMPS_CVS = 1861.0
ROMPS_E0V = 2.3740e6
ROMPS_E0S = 0.3337e6
ROMPS_PTRIP = 611.65
ROMPS_TTRIP = 273.16
