"""The Earth's radius comes from the file's grid definition, else a stated default.

Outside references: the radius eccodes decodes from each GRIB file's grid definition
(GRIB2 code table 3.2: GFS declares shape 6, a sphere of 6,371,229 m; GRIB1 declares the
edition's sphere of 6,367,470 m); CF 1.10 appendix F for ``earth_radius``,
``semi_major_axis``/``semi_minor_axis``.  Analytic scaling: on a sphere of radius a every
horizontal derivative carries 1/a, so advection by a given wind scales as 1/a, geostrophic
winds as 1/a and advection by the geostrophic wind as 1/a^2; a parcel moving at a given
speed turns through an angle proportional to 1/a.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from datasets import data_file, raw_cf, small_atmosphere, write_netcdf
from parcelcast.constants import EARTH_RADIUS

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ERA5 = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"


def _eccodes_radius(path) -> float:
    import pyproj  # noqa: F401  (PROJ before eccodes)
    import eccodes

    with open(path, "rb") as handle:
        gid = eccodes.codes_grib_new_from_file(handle)
        try:
            return float(eccodes.codes_get(gid, "radius"))
        finally:
            eccodes.codes_release(gid)


@pytest.mark.parametrize("name, expected", [(GFS, 6_371_229.0), (ERA5, 6_367_470.0)])
def test_grib_files_declare_their_sphere(name, expected):
    from parcelcast.grid import grid_for
    from parcelcast.io.analysis import open_analysis

    path = data_file(name)
    assert _eccodes_radius(path) == expected
    ds = open_analysis(path, roles=("temperature",))
    grid = grid_for(ds)
    assert grid.radius == expected
    assert "GRIB grid definition" in ds["lat"].attrs["earth_radius_source"]


def _half_radius_copy(src, dst, radius_m: float) -> None:
    """The GFS t and gh messages at 850 hPa, re-declared as a sphere of ``radius_m``
    (shapeOfTheEarth 1: radius given in the message), written with eccodes."""
    import pyproj  # noqa: F401
    import eccodes

    with open(src, "rb") as fin, open(dst, "wb") as fout:
        while (gid := eccodes.codes_grib_new_from_file(fin)) is not None:
            try:
                if (eccodes.codes_get(gid, "typeOfLevel") == "isobaricInhPa"
                        and eccodes.codes_get(gid, "level") == 850
                        and eccodes.codes_get(gid, "shortName") in ("t", "gh")):
                    eccodes.codes_set(gid, "shapeOfTheEarth", 1)
                    eccodes.codes_set(gid, "scaleFactorOfRadiusOfSphericalEarth", 0)
                    eccodes.codes_set(gid, "scaledValueOfRadiusOfSphericalEarth", int(radius_m))
                    eccodes.codes_write(gid, fout)
            finally:
                eccodes.codes_release(gid)


def test_grib_with_another_radius_scales_geostrophic_advection(tmp_path):
    from parcelcast.advection import advection_on_level
    from parcelcast.io.analysis import open_analysis

    path = data_file(GFS)
    small = tmp_path / "gfs-half-radius.grb2"
    _half_radius_copy(path, small, 3_185_614.5)  # half of GFS's 6,371,229 m
    half = open_analysis(small, roles=("temperature", "geopotential"))
    assert half["lat"].attrs["earth_radius_m"] == 3_185_614.0  # integer-scaled in GRIB2
    full = open_analysis(path, roles=("temperature", "geopotential"))
    a = advection_on_level(full, 850, wind="geostrophic")["temperature_advection"].values
    b = advection_on_level(half, 850, wind="geostrophic")["temperature_advection"].values
    ratio = (6_371_229.0 / 3_185_614.0) ** 2
    ok = np.isfinite(a) & np.isfinite(b)
    assert ok.sum() > 5000
    np.testing.assert_allclose(b[ok], ratio * a[ok], rtol=1e-9, atol=1e-15)


def _cf_file(tmp_path, mapping: dict | None):
    lat, lon, t, u, v = small_atmosphere()
    raw = raw_cf(lat, lon, t, u, v)
    if mapping is not None:
        raw["crs"] = xr.DataArray(0, attrs={"grid_mapping_name": "latitude_longitude", **mapping})
        for name in ("t", "u", "v"):
            if name in raw:
                raw[name].attrs["grid_mapping"] = "crs"
    return write_netcdf(raw, tmp_path / f"cf-{len(mapping or {})}.nc")


def test_cf_grid_mapping_radius_scales_advection(tmp_path):
    from parcelcast.advection import advection_on_level
    from parcelcast.io.analysis import open_analysis

    plain = open_analysis(_cf_file(tmp_path, None))
    assert plain["lat"].attrs["earth_radius_m"] == EARTH_RADIUS
    assert plain["lat"].attrs["earth_radius_source"].startswith("default")
    double = open_analysis(_cf_file(tmp_path, {"earth_radius": 2 * EARTH_RADIUS}))
    assert double["lat"].attrs["earth_radius_m"] == 2 * EARTH_RADIUS
    a = advection_on_level(plain, 850)["temperature_advection"].values
    b = advection_on_level(double, 850)["temperature_advection"].values
    ok = np.isfinite(a)
    np.testing.assert_allclose(b[ok], 0.5 * a[ok], rtol=1e-12, atol=1e-18)


def test_cf_spheroid_uses_the_iugg_mean_radius(tmp_path):
    from parcelcast.io.analysis import open_analysis

    # WGS 84: a = 6378137 m, 1/f = 298.257223563; R1 = (2a + b)/3 = 6371008.77 m
    # (Moritz 2000, Geodetic Reference System 1980, gives R1 = 6371008.7714 m for GRS80)
    ds = open_analysis(_cf_file(tmp_path, {"semi_major_axis": 6378137.0,
                                           "inverse_flattening": 298.257223563}))
    assert ds["lat"].attrs["earth_radius_m"] == pytest.approx(6371008.77, abs=0.01)


def test_trajectories_turn_with_the_declared_radius():
    """Solid-body flow along the equator at a fixed speed: on a sphere twice as large the
    parcel covers half the longitude in the same time."""
    from parcelcast.grid import earth
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.trajectories.analytic import solid_body_dataset
    from parcelcast.units import Q_

    ds = solid_body_dataset(hours=24, step_hours=6, resolution=5.0)
    big = ds.copy()
    big["lat"] = big["lat"].copy()
    big["lon"] = big["lon"].copy()
    earth.declare(big, (2 * EARTH_RADIUS, "test: twice the default"))
    moved = []
    for data in (ds, big):
        out = compute_trajectories(data, 0.0, 0.0, Q_(500, "hPa"), Q_(12, "h"))
        lon_end = out["lon"].values[0, int(out["row_size"].values[0]) - 1]
        moved.append(((lon_end + 180.0) % 360.0) - 180.0)
    assert moved[0] > 5.0
    assert moved[1] == pytest.approx(0.5 * moved[0], rel=1e-4)
    assert out.attrs["earth_radius_m"] == 2 * EARTH_RADIUS
