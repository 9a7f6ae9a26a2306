"""Declarative table: how each quantity (role) is recognised in a file.

A role is found by, in order: a user override (``--var ROLE=NAME``), the CF
``standard_name``, the GRIB ``shortName`` (``GRIB_shortName`` attribute of
cfgrib) and common variable names.  Units then decide between candidates that
share a name (GRIB ``w`` is omega in Pa/s; a ``w`` in m/s is a vertical velocity).

Near-surface roles (2-m temperature, 10-m wind) state their height: a match by CF
standard name counts only with a height coordinate of that value (CF ``height``,
or cfgrib's ``heightAboveGround``), since ``air_temperature`` or ``eastward_wind``
alone could be any level; their GRIB short names (``2t``, ``10u``, ``10v``) and
common names (``t2m``, ``u10``, ``v10``) say the height themselves.
:data:`NEAR_SURFACE` maps the pressure-level roles onto them (``--level surface``).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Role:
    """How to recognise one quantity and what it becomes in the canonical dataset."""

    name: str
    standard_names: tuple[str, ...]
    grib_short_names: tuple[str, ...]
    common_names: tuple[str, ...]
    kind: str  # unit kind in parcelcast.units.QUANTITY_KINDS (the canonical SI unit)
    units: str  # canonical units attribute
    standard_name: str
    long_name: str
    on_levels: bool  # True: a pressure-level field; False: a single-level (surface) field
    also_kinds: tuple[str, ...] = ()  # other acceptable unit kinds (converted, see analysis.py)
    height_m: float | None = None  # near-surface roles: height above ground (m) of the field


ROLES: dict[str, Role] = {
    r.name: r
    for r in (
        Role("temperature", ("air_temperature",), ("t",),
             ("t", "temp", "temperature", "air", "ta", "tmp", "air_temperature"),
             "temperature", "K", "air_temperature", "air temperature", True),
        Role("u", ("eastward_wind", "grid_eastward_wind"), ("u",),
             ("u", "uwnd", "ua", "ugrd", "u_wind", "eastward_wind"),
             "speed", "m s-1", "eastward_wind", "eastward wind", True),
        Role("v", ("northward_wind", "grid_northward_wind"), ("v",),
             ("v", "vwnd", "va", "vgrd", "v_wind", "northward_wind"),
             "speed", "m s-1", "northward_wind", "northward wind", True),
        Role("geopotential", ("geopotential", "geopotential_height"), ("z", "gh"),
             ("z", "gh", "geopotential", "geopotential_height", "hgt", "zg", "phi", "height"),
             "geopotential", "m2 s-2", "geopotential", "geopotential", True,
             also_kinds=("height",)),
        Role("omega", ("lagrangian_tendency_of_air_pressure",), ("w",),
             ("omega", "w", "wap", "vvel"),
             "pressure_tendency", "Pa s-1", "lagrangian_tendency_of_air_pressure",
             "vertical velocity in pressure coordinates (omega)", True),
        Role("vertical_velocity", ("upward_air_velocity",), ("wz",),
             ("wz", "wa", "dzdt", "w", "upward_air_velocity"),
             "speed", "m s-1", "upward_air_velocity", "upward air velocity", True),
        Role("relative_humidity", ("relative_humidity",), ("r",),
             ("r", "rh", "hur", "relative_humidity"),
             "fraction", "1", "relative_humidity", "relative humidity", True),
        Role("specific_humidity", ("specific_humidity",), ("q",),
             ("q", "hus", "shum", "spfh", "specific_humidity"),
             "mixing_ratio", "kg kg-1", "specific_humidity", "specific humidity", True),
        Role("surface_pressure", ("surface_air_pressure",), ("sp",),
             ("sp", "ps", "psfc", "surface_pressure"),
             "pressure", "Pa", "surface_air_pressure", "surface pressure", False),
        Role("orography", ("surface_geopotential", "surface_altitude"), ("orog", "z"),
             ("orog", "orography", "zs", "phis", "surface_geopotential", "surface_altitude"),
             "geopotential", "m2 s-2", "surface_geopotential",
             "geopotential of the ground (orography)", False, also_kinds=("height",)),
        Role("near_surface_temperature", ("air_temperature",), ("2t", "t2m"),
             ("t2m", "2t", "tas", "t2", "temperature_2m"),
             "temperature", "K", "air_temperature", "air temperature at 2 m", False,
             height_m=2.0),
        Role("near_surface_u", ("eastward_wind",), ("10u",),
             ("u10", "10u", "uas", "u10m", "u_10m"),
             "speed", "m s-1", "eastward_wind", "eastward wind at 10 m", False, height_m=10.0),
        Role("near_surface_v", ("northward_wind",), ("10v",),
             ("v10", "10v", "vas", "v10m", "v_10m"),
             "speed", "m s-1", "northward_wind", "northward wind at 10 m", False, height_m=10.0),
    )
}

#: ``--level surface``: the near-surface role that stands for each pressure-level role
#: (2-m temperature carried by the 10-m wind; WMO practice for screen temperature and
#: surface wind)
NEAR_SURFACE: dict[str, str] = {
    "temperature": "near_surface_temperature",
    "u": "near_surface_u",
    "v": "near_surface_v",
}

#: a near-surface field's stated height must be within this of the role's height (m)
HEIGHT_TOLERANCE_M = 0.5

#: Coordinate recognition: role -> (standard_names, names, axis)
COORDINATES: dict[str, tuple[tuple[str, ...], tuple[str, ...], str]] = {
    "lat": (("latitude",), ("latitude", "lat", "nav_lat", "xlat", "lats"), "Y"),
    "lon": (("longitude",), ("longitude", "lon", "nav_lon", "xlong", "lons"), "X"),
    "level": (("air_pressure",),
              ("isobaricinhpa", "isobaricinpa", "level", "plev", "pressure", "lev", "pressure_level",
               "isobaric", "pres"), "Z"),
    "member": (("realization",), ("number", "member", "realization", "ensemble_member", "ens"), ""),
    # height above the ground of a near-surface field (kept only to recognise the field)
    "height": (("height",), ("height", "heightaboveground", "height_above_ground"), ""),
}

#: plausible range of each role's canonical SI values (checked on the first time step).
#: Sources: common meteorological practice (observed extremes of the troposphere and
#: lower stratosphere: about 170-340 K; winds below ~130 m/s; omega below ~10 Pa/s).
PLAUSIBLE_RANGE = {
    "temperature": (150.0, 350.0),
    "near_surface_temperature": (180.0, 345.0),
    "near_surface_u": (-100.0, 100.0),
    "near_surface_v": (-100.0, 100.0),
    "u": (-150.0, 150.0),
    "v": (-150.0, 150.0),
    "omega": (-30.0, 30.0),
    "vertical_velocity": (-50.0, 50.0),
    "relative_humidity": (0.0, 1.5),
    "specific_humidity": (0.0, 0.06),
    "surface_pressure": (40_000.0, 110_000.0),
    # Dead Sea shore (-430 m) to Everest (8849 m), times g0, with a margin
    "orography": (-5_000.0, 90_000.0),
}
