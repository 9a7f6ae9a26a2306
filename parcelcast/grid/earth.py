"""The Earth's radius of an analysis: from the file's grid definition, else a stated default.

What belongs here: reading the radius a file declares (GRIB "shape of the Earth", CF
``grid_mapping`` attributes), recording it on the canonical dataset's ``lat``/``lon``
coordinates (attributes ``earth_radius_m`` and ``earth_radius_source``, which travel with
every field cut from the dataset), and reading it back for the spherical metric and the
trajectories.

* GRIB (WMO Manual on Codes, GRIB2 code table 3.2; GRIB1 section 2 resolution flags), as
  eccodes decodes it: a sphere gives the key ``radius`` (GFS: shape 6, 6,371,229 m; GRIB1
  files state 6,367,470 m, the edition's sphere), an oblate spheroid ``earthMajorAxis``
  and ``earthMinorAxis``.
* CF 1.10 appendix F: ``earth_radius``, or ``semi_major_axis`` with ``semi_minor_axis``
  or ``inverse_flattening``.

A spheroid is used through its mean radius R1 = (2a + b) / 3 (IUGG definition, Moritz
2000): our metric is spherical.  A file that states nothing gets :data:`DEFAULT_RADIUS`
(``parcelcast.constants.EARTH_RADIUS``, 6,371,000 m: the IUGG mean radius rounded to
metres), and the source says that it is the default.
"""

from __future__ import annotations

from parcelcast.constants import EARTH_RADIUS

DEFAULT_RADIUS = EARTH_RADIUS
DEFAULT_SOURCE = ("default: IUGG mean Earth radius 6371000 m (parcelcast.constants.EARTH_RADIUS); "
                  "the file states none")
RADIUS_ATTR = "earth_radius_m"
SOURCE_ATTR = "earth_radius_source"


def mean_radius(semi_major: float, semi_minor: float) -> float:
    """IUGG mean radius R1 = (2a + b) / 3 (m) of a spheroid with semi-axes a, b (m)."""
    return (2.0 * float(semi_major) + float(semi_minor)) / 3.0


def from_grib_keys(keys: dict):
    """``(radius_m, source)`` from eccodes keys ``radius`` or ``earthMajorAxis``/
    ``earthMinorAxis`` (and ``shapeOfTheEarth`` for the text); None if none is given."""
    shape = keys.get("shapeOfTheEarth")
    code = f" (shape of the Earth code {int(shape)})" if shape is not None else ""
    if keys.get("radius"):
        return float(keys["radius"]), f"GRIB grid definition: sphere of radius {keys['radius']:.0f} m{code}"
    if keys.get("earthMajorAxis") and keys.get("earthMinorAxis"):
        a, b = float(keys["earthMajorAxis"]), float(keys["earthMinorAxis"])
        return mean_radius(a, b), (f"GRIB grid definition: spheroid a = {a:.0f} m, b = {b:.0f} m{code}; "
                                   "mean radius (2a + b)/3")
    return None


def from_cf(attrs: dict):
    """``(radius_m, source)`` from the attributes of a CF grid-mapping variable; None if they
    state no size of the Earth."""
    if "earth_radius" in attrs:
        r = float(attrs["earth_radius"])
        return r, f"CF grid_mapping earth_radius = {r:.0f} m"
    if "semi_major_axis" in attrs:
        a = float(attrs["semi_major_axis"])
        if "semi_minor_axis" in attrs:
            b = float(attrs["semi_minor_axis"])
        elif float(attrs.get("inverse_flattening", 0.0)) > 0:
            b = a * (1.0 - 1.0 / float(attrs["inverse_flattening"]))
        else:
            b = a
        return mean_radius(a, b), (f"CF grid_mapping spheroid a = {a:.0f} m, b = {b:.0f} m; "
                                   "mean radius (2a + b)/3")
    return None


def from_netcdf(raw):
    """``(radius_m, source)`` from the CF ``grid_mapping`` named by the variables of a raw
    NetCDF dataset; None when there is none or it states no size."""
    names = {v.attrs.get("grid_mapping") for v in raw.data_vars.values()} - {None}
    for name in sorted(names):
        if name in raw.variables:
            found = from_cf(raw[name].attrs)
            if found is not None:
                return found
    return None


def declare(ds, found) -> None:
    """Record ``found`` (``(radius_m, source)`` or None: the default) on ``ds``'s lat/lon
    coordinates, in place."""
    radius, source = found if found is not None else (DEFAULT_RADIUS, DEFAULT_SOURCE)
    for name in ("lat", "lon"):
        if name in ds.coords:
            ds[name].attrs[RADIUS_ATTR] = float(radius)
            ds[name].attrs[SOURCE_ATTR] = source


def radius_of(obj) -> float:
    """The Earth's radius (m) recorded on ``obj``'s latitude coordinate, else the default."""
    if "lat" in obj.coords:
        return float(obj["lat"].attrs.get(RADIUS_ATTR, DEFAULT_RADIUS))
    return DEFAULT_RADIUS


def source_of(obj) -> str:
    """Where :func:`radius_of` comes from, in words."""
    if "lat" in obj.coords:
        return str(obj["lat"].attrs.get(SOURCE_ATTR, DEFAULT_SOURCE))
    return DEFAULT_SOURCE
