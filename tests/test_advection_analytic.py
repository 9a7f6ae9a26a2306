"""Advection, geostrophic wind, layer means and sampling on analytic fields with exact answers.

Each expected value is derived by hand in ``tests/datasets.py`` or beside the check.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from datasets import (A, G0, RD, canonical, linear_geopotential, solid_body_rotation,
                      synthetic_case, translating_wave, uniform_gradient)  # noqa: F401 (fixture)
from parcelcast.advection import advection, advection_array, advection_on_level
from parcelcast.errors import SelectionError
from parcelcast.geostrophic import geostrophic_wind
from parcelcast.grid import grid_for
from parcelcast.layers import layer_mean, layer_mean_temperature
from parcelcast.sampling import area_mean, value_at


def _adv(ds):
    return advection(ds["temperature"], ds["u"], ds["v"]).isel(time=0, level=0).values


def test_uniform_gradient_exact():
    # linear in lat (rad) and lon (rad): centred and one-sided differences are exact
    ds, exact = uniform_gradient()
    np.testing.assert_allclose(_adv(ds), exact, rtol=1e-9, atol=1e-15)
    # sign convention: wind blowing from cold to warm is cold advection (negative)
    assert _adv(ds)[0, 0] < 0 and exact[0, 0] < 0


def test_named_fields_close_to_exact(synthetic_case):
    # every named field at its default (1-2 deg) resolution: second-order error is small
    name, ds, exact = synthetic_case
    got = _adv(ds)
    scale = np.abs(exact).max()
    assert np.nanmax(np.abs(got - exact)) < 2e-3 * scale, name


@pytest.mark.parametrize("make", [solid_body_rotation, translating_wave])
def test_advection_second_order_convergence(make):
    errors = []
    for step in (4.0, 2.0, 1.0):
        lat = np.arange(-60.0, 60.01, step) if make is solid_body_rotation else np.arange(
            20.0, 70.01, step)
        lon = np.arange(-180.0, 180.0, step)
        ds, exact = make(lat=lat, lon=lon)
        errors.append(np.nanmax(np.abs(_adv(ds) - exact)))
    orders = np.log2(np.array(errors[:-1]) / np.array(errors[1:]))
    assert np.all((orders > 1.8) & (orders < 2.2)), orders


def test_translating_wave_budget_local_change_equals_advection_plus_heating():
    # the local change of T computed by a centred difference in time of the dataset itself
    # (second route, no spatial derivative) equals advection + heating H
    heating = 3e-5
    dt = 60.0
    ds0, _ = translating_wave(seconds=0.0, heating_k_per_s=heating)
    dsm, _ = translating_wave(seconds=-dt, heating_k_per_s=heating)
    dsp, _ = translating_wave(seconds=dt, heating_k_per_s=heating)
    local = (dsp["temperature"] - dsm["temperature"]).isel(time=0, level=0).values / (2 * dt)
    adv = _adv(ds0)
    err = np.abs(local - (adv + heating))
    # spatial truncation of the centred difference for sin(k lon): relative (k h)^2 / 6 =
    # (5 * 1 deg in rad)^2 / 6 = 1.3e-3 (Taylor expansion by hand); time step error is smaller
    assert err.max() < 2e-3 * np.abs(adv).max()
    assert err.max() > 0  # the two routes are really different


def test_geostrophic_wind_exact_for_linear_geopotential_and_equator_masked():
    lat = np.arange(-40.0, 40.01, 2.0)
    lon = np.arange(0.0, 40.01, 2.0)
    phi, ug_exact, vg_exact = linear_geopotential(lat, lon)
    ds = canonical(lat, lon, 280.0, 0.0, 0.0, geopotential=phi)
    ug, vg = geostrophic_wind(ds)
    ug, vg = ug.isel(time=0, level=0).values, vg.isel(time=0, level=0).values
    outside = np.abs(lat) >= 10.0  # EQUATORIAL_BAND_DEG = 10 (stated in parcelcast.geostrophic)
    np.testing.assert_allclose(ug[outside], ug_exact[outside], rtol=1e-9)
    np.testing.assert_allclose(vg[outside], vg_exact[outside], rtol=1e-9)
    assert np.isnan(ug[~outside]).all() and np.isnan(vg[~outside]).all()
    # Northern Hemisphere, geopotential falling northward: westerly geostrophic wind
    assert ug[lat == 30.0][0, 0] > 0


def test_geostrophic_refuses_height_given_as_geopotential():
    # the canonical role is m2 s-2; a DataArray in metres handed in directly must be refused
    # (silently using metres as m2 s-2 would give winds 9.8 times too weak). Files in gpm are
    # converted by open_analysis (tests/test_io_reading.py).
    from parcelcast.errors import UnitsError

    lat = np.arange(20.0, 60.01, 2.0)
    lon = np.arange(0.0, 40.01, 2.0)
    phi, _, _ = linear_geopotential(lat, lon)
    ds = canonical(lat, lon, 280.0, 0.0, 0.0, geopotential=phi / G0)
    ds["geopotential"].attrs["units"] = "m"
    with pytest.raises(UnitsError, match="'m'"):
        geostrophic_wind(ds)


def test_layer_mean_temperature_isothermal_atmosphere():
    # isothermal hydrostatic atmosphere: Phi(p) = Rd T ln(p0/p) (Wallace & Hobbs 2006 eq. 3.24
    # integrated); the layer mean from thickness is T exactly
    lat = np.arange(30.0, 50.01, 5.0)
    lon = np.arange(0.0, 20.01, 5.0)
    levels = np.array([100_000.0, 85_000.0, 70_000.0, 50_000.0])
    t_iso = 255.0
    phi = RD * t_iso * np.log(101_325.0 / levels)[None, :, None, None] * np.ones((1, 4, 5, 5))
    ds = canonical(lat, lon, t_iso, 0.0, 0.0, levels_pa=levels, geopotential=phi)
    tv = layer_mean_temperature(ds, 100_000.0, 50_000.0)
    np.testing.assert_allclose(tv.values, t_iso, rtol=1e-12)
    assert tv.attrs["units"] == "K"


def test_layer_mean_is_exact_for_temperature_linear_in_ln_p():
    # trapezoid in ln p is exact for a linear function of ln p: mean = value at the mid ln p,
    # i.e. T(sqrt(p_b p_t)) by hand
    lat = np.arange(30.0, 50.01, 5.0)
    lon = np.arange(0.0, 20.01, 5.0)
    levels = np.array([100_000.0, 92_500.0, 85_000.0, 70_000.0, 50_000.0, 30_000.0])
    t = 288.0 + 40.0 * np.log(levels / 100_000.0)
    ds = canonical(lat, lon, t[None, :, None, None] * np.ones((1, 6, 5, 5)), 0.0, 0.0,
                   levels_pa=levels)
    mean = layer_mean(ds["temperature"], 100_000.0, 50_000.0)
    np.testing.assert_allclose(mean.values, 288.0 + 40.0 * np.log(np.sqrt(0.5)), rtol=1e-12)


def test_value_at_bilinear_exact_for_bilinear_field_and_dateline():
    # f = 2 lat + 3 lon' is reproduced exactly by bilinear interpolation (second route: the formula)
    lat = np.arange(40.0, 60.01, 2.5)
    lon = np.arange(170.0, 190.01, 2.5)  # regional grid across the dateline (canonical 170..190)
    lat2, lon2 = np.meshgrid(lat, lon, indexing="ij")
    da = xr.DataArray(2 * lat2 + 3 * lon2, dims=("lat", "lon"), coords={"lat": lat, "lon": lon},
                      attrs={"units": "K"})
    assert float(value_at(da, 51.3, 176.2)) == pytest.approx(2 * 51.3 + 3 * 176.2, rel=1e-12)
    # -175.4 east is 184.6 in the grid's own range
    assert float(value_at(da, 51.3, -175.4)) == pytest.approx(2 * 51.3 + 3 * 184.6, rel=1e-12)
    with pytest.raises(SelectionError, match="170..190"):
        value_at(da, 51.3, 160.0)
    with pytest.raises(SelectionError):
        value_at(da, 65.0, 176.0)


def test_area_mean_constant_and_missing_counted():
    lat = np.arange(40.0, 60.01, 1.0)
    lon = np.arange(-10.0, 10.01, 1.0)
    values = np.full((lat.size, lon.size), 3.0)
    values[10, 10] = np.nan
    da = xr.DataArray(values, dims=("lat", "lon"), coords={"lat": lat, "lon": lon})
    mean, info = area_mean(da, 50.0, 0.0, half_width_deg=2.0)
    assert float(mean) == pytest.approx(3.0)
    assert info == {"points": 25, "missing": 1,  # 5 x 5 box, the centre missing
                    "missing_by_reason": {"missing in the input": 1}}


def test_result_metadata_cf():
    ds, _ = uniform_gradient()
    adv = advection(ds["temperature"], ds["u"], ds["v"])
    assert adv.attrs["standard_name"] == "tendency_of_air_temperature_due_to_advection"
    assert adv.attrs["units"] == "K s-1"
    assert adv.dims == ds["temperature"].dims


def test_wind_in_knots_converted_in_advection():
    # 1 knot = 1852/3600 m/s (international nautical mile, exact by definition)
    ds, exact = uniform_gradient()
    u = ds["u"] / (1852.0 / 3600.0)
    v = ds["v"] / (1852.0 / 3600.0)
    u.attrs["units"] = v.attrs["units"] = "knots"
    got = advection(ds["temperature"], u, v).isel(time=0, level=0).values
    np.testing.assert_allclose(got, exact, rtol=1e-9, atol=1e-15)


def test_advection_on_level_geostrophic_and_missing_count():
    lat = np.arange(20.0, 60.01, 2.0)
    lon = np.arange(0.0, 40.01, 2.0)
    phi, ug_exact, vg_exact = linear_geopotential(lat, lon)
    lat2, lon2 = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    t = 270.0 + 10.0 * lat2  # dT/dy = 10 / a exactly
    ds = canonical(lat, lon, t, 0.0, 0.0, geopotential=phi)
    ds["temperature"].values[0, 0, 5, 5] = np.nan
    out = advection_on_level(ds, 850.0, wind="geostrophic")
    exact = -vg_exact * 10.0 / A
    got = out["temperature_advection"].values
    stencil_hit = np.isnan(got)
    # NaN spreads only to the point and its stencil neighbours (5-point cross)
    assert stencil_hit.sum() == 5 and out.attrs["missing_points"] == 5
    np.testing.assert_allclose(got[~stencil_hit], exact[~stencil_hit], rtol=1e-9)


# ------------------------------------------------------------------------------------ dask
def test_dask_chunked_equals_in_memory_and_is_lazy():
    import dask
    lat = np.arange(20.0, 70.01, 2.0)
    lon = np.arange(-180.0, 180.0, 4.0)
    times = np.datetime64("2024-01-01T00", "ns") + np.arange(4) * np.timedelta64(6, "h")
    levels = np.array([85_000.0, 70_000.0, 50_000.0])
    rng = np.random.default_rng(3)
    shape = (times.size, levels.size, lat.size, lon.size)
    ds = canonical(lat, lon, 270 + rng.normal(0, 3, shape), rng.normal(10, 5, shape),
                   rng.normal(0, 5, shape), levels_pa=levels, times=times)
    eager = advection(ds["temperature"], ds["u"], ds["v"])
    chunked = ds.chunk({"time": 1, "level": 1})
    lazy = advection(chunked["temperature"], chunked["u"], chunked["v"])
    assert dask.is_dask_collection(lazy.data)
    assert lazy.chunks is not None and lazy.chunks[0] == (1,) * 4
    np.testing.assert_allclose(lazy.compute().values, eager.values, rtol=1e-12, atol=1e-15)


def test_dask_geostrophic_lazy():
    import dask
    lat = np.arange(20.0, 60.01, 2.0)
    lon = np.arange(0.0, 40.01, 2.0)
    phi, ug_exact, _ = linear_geopotential(lat, lon)
    ds = canonical(lat, lon, 280.0, 0.0, 0.0, geopotential=phi).chunk({"time": 1, "level": 1})
    ug, vg = geostrophic_wind(ds)
    assert dask.is_dask_collection(ug.data)
    np.testing.assert_allclose(ug.compute().isel(time=0, level=0).values, ug_exact, rtol=1e-9)


def test_numpy_layer_matches_xarray_layer():
    ds, exact = solid_body_rotation()
    g = grid_for(ds)
    direct = advection_array(ds["temperature"].values, ds["u"].values, ds["v"].values, g)
    np.testing.assert_array_equal(direct[0, 0], _adv(ds))


def test_dask_through_open_analysis(tmp_path):
    # chunks requested at reading time: the canonical variables and the advection stay lazy,
    # and the computed result equals the in-memory one
    import dask
    from datasets import TIME, raw_cf, small_atmosphere, write_netcdf
    from parcelcast.io.analysis import open_analysis

    lat, lon, t, u, v = small_atmosphere(seed=1)
    times = TIME + np.arange(4) * np.timedelta64(6, "h")
    path = write_netcdf(raw_cf(lat, lon, t, u, v, levels_hpa=(850.0, 700.0), times=times),
                        tmp_path / "x.nc")
    lazy_ds = open_analysis(path, chunks={"time": 1, "plev": 1})
    assert all(dask.is_dask_collection(lazy_ds[k].data) for k in ("temperature", "u", "v"))
    lazy = advection(lazy_ds["temperature"], lazy_ds["u"], lazy_ds["v"])
    assert dask.is_dask_collection(lazy.data)
    eager_ds = open_analysis(path)
    eager = advection(eager_ds["temperature"], eager_ds["u"], eager_ds["v"])
    np.testing.assert_allclose(lazy.compute().values, eager.values, rtol=1e-12, atol=1e-15)
