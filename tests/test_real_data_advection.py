"""Real open data (../shared/data, see PROVENANCE.md there): the operators against a realistic
atmosphere.  Figures are printed (``pytest -s``) and the bounds are argued beside each assert.
"""

from __future__ import annotations

import numpy as np
import pytest

from datasets import RD, data_file, grib_field
from parcelcast.advection import advection_on_level
from parcelcast.geostrophic import geostrophic_wind
from parcelcast.io.analysis import open_analysis
from parcelcast.layers import layer_mean, layer_mean_temperature

pytestmark = pytest.mark.realdata

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ENS = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
ERAI = "erainterim-monthly-jan-jul-uvz.nc"


@pytest.fixture(scope="module")
def gfs():
    return open_analysis(data_file(GFS))


@pytest.fixture(scope="module")
def erai():
    return open_analysis(data_file(ERAI))


@pytest.fixture(scope="module")
def ens():
    return open_analysis(data_file(ENS))


@pytest.mark.parametrize("band", [(30.0, 60.0), (-60.0, -30.0)], ids=["north", "south"])
def test_erainterim_geostrophic_wind_matches_analysed_wind_500hpa(erai, band):
    """ERA-Interim monthly means (Jan, Jul), 500 hPa, 30-60 deg of each hemisphere.

    Bound: away from the equator and the boundary layer the flow is close to geostrophic; the
    ageostrophic part of the wind is typically 10-20 % of it at synoptic scale (Holton & Hakim
    2013, sec. 2.4.1 scale analysis, Rossby number ~0.1; textbook/common practice), and smaller
    in monthly means, where transient ageostrophic motions average out.  So we require a
    correlation of the vector components above 0.95 and a mean relative vector difference
    mean|Vg - V| / mean|V| below 0.2.  (Measured: see the printed figures.)
    """
    level = erai.sel(level=50_000.0)
    ug, vg = geostrophic_wind(level)
    sel = {"lat": slice(*band)}
    u, v = level["u"].sel(sel).values, level["v"].sel(sel).values
    ug, vg = ug.sel(sel).values, vg.sel(sel).values
    assert np.isfinite(ug).all() and np.isfinite(vg).all()
    corr = np.corrcoef(np.concatenate([u.ravel(), v.ravel()]),
                       np.concatenate([ug.ravel(), vg.ravel()]))[0, 1]
    rel = np.mean(np.hypot(ug - u, vg - v)) / np.mean(np.hypot(u, v))
    corr_v = np.corrcoef(v.ravel(), vg.ravel())[0, 1]
    print(f"\nERA-Interim 500 hPa {band}: corr(u,v components) = {corr:.4f}, "
          f"corr(v) = {corr_v:.4f}, mean |Vg-V|/mean|V| = {rel:.3f}")
    assert corr > 0.95
    assert corr_v > 0.9  # the meridional part alone, a stricter test of dPhi/dx and cos(lat)
    assert rel < 0.2


def test_gfs_layer_mean_temperature_from_thickness_vs_mean_of_t(gfs):
    """GFS 2011-10-11 00 UTC: 1000-500 hPa layer-mean temperature from the thickness (hypsometric,
    that is the mean *virtual* temperature) against the ln(p)-weighted mean of t.

    They differ by the virtual-temperature effect Tv - T ~= 0.61 q T (Wallace & Hobbs 2006,
    eq. 3.60): with layer-mean q from ~0 (cold, dry) to ~10 g/kg (humid tropics), 0 to ~2 K,
    positive on average.  Bounds: every point -0.2 .. 3 K (0.2 K for the trapezoid in ln p over
    13 levels and the model's own hydrostatic discretisation), mean 0.2 .. 1.5 K, and the tropics
    (moister) on average warmer-by-moisture than the polar caps.  Points where 1000 hPa is
    below the ground (surface pressure < 1000 hPa) are excluded: there the model extrapolates.
    """
    tv = layer_mean_temperature(gfs, 100_000.0, 50_000.0)
    tm = layer_mean(gfs["temperature"], 100_000.0, 50_000.0)
    above_ground = gfs["surface_pressure"] >= 100_000.0
    diff = (tv - tm).where(above_ground).isel(time=0)
    # a second route for the thickness temperature: the hypsometric equation by hand
    phi = gfs["geopotential"]
    by_hand = (phi.sel(level=50_000.0) - phi.sel(level=100_000.0)) / (RD * np.log(2.0))
    np.testing.assert_allclose(tv.values, by_hand.values, rtol=1e-12)
    values = diff.values[np.isfinite(diff.values)]
    tropics = float(diff.sel(lat=slice(-30, 30)).mean())
    polar = float(diff.where(np.abs(diff["lat"]) >= 60).mean())
    print(f"\nGFS Tv(thickness) - mean T, 1000-500 hPa, {values.size} points: mean {values.mean():.3f} K,"
          f" min {values.min():.3f}, max {values.max():.3f}; tropics {tropics:.2f}, polar {polar:.2f}")
    assert values.size > 3000
    assert values.min() > -0.2 and values.max() < 3.0
    assert 0.2 < values.mean() < 1.5
    assert tropics > polar


def test_gfs_850hpa_advection_magnitudes_typical(gfs):
    """850 hPa temperature advection with the analysed wind, mid-latitudes.

    Typical values used by forecasters: a few tenths of a K per hour in ordinary flow, 1-3 K/h
    in strong fronts, rarely above ~5 K/h on a 2.5 deg grid (common practice; not a published
    threshold).  Bounds: the 95th percentile of |adv| in 30-60 deg of each hemisphere between
    0.2 and 3 K/h; the median below 0.5 K/h; the maximum below 10 K/h.
    """
    fields = advection_on_level(gfs, 850.0)
    adv = np.abs(fields["temperature_advection"]) * 3600.0
    assert fields["temperature_advection"].attrs["units"] == "K s-1"
    for band in ((30.0, 60.0), (-60.0, -30.0)):
        values = adv.sel(lat=slice(*band)).values
        p50, p95, top = np.nanpercentile(values, 50), np.nanpercentile(values, 95), np.nanmax(values)
        print(f"\nGFS 850 hPa |advection| {band}: median {p50:.3f}, p95 {p95:.3f}, max {top:.3f} K/h")
        assert 0.2 < p95 < 3.0
        assert p50 < 0.5
        assert top < 10.0
    # missing: the pole rows (eastward derivative undefined there) and, elsewhere, exactly the
    # points where 850 hPa lies below the ground by the file's surface pressure (read with eccodes)
    missing = fields["temperature_advection"].isnull()
    _, _, sp = grib_field(data_file(GFS), "sp", 0, "surface")
    below = int((sp[1:-1] < 850e2).sum())
    assert bool(missing.isel(lat=[0, -1]).all())
    assert int(missing.sum()) == 2 * gfs.sizes["lon"] + below and below > 500


def test_era5_ensemble_geostrophic_advection_keeps_members(ens):
    """ERA5 ensemble (no winds): geostrophic temperature advection at 850 hPa per member."""
    when = np.datetime64("2017-01-01T12:00", "ns")
    fields = advection_on_level(ens, 850.0, when, wind="geostrophic")
    adv = fields["temperature_advection"]
    assert adv.dims == ("member", "lat", "lon") and adv.sizes["member"] == 10
    # NaN exactly within the stated equatorial band (10 deg, parcelcast.geostrophic) and the poles
    lat = adv["lat"].values
    masked = (np.abs(lat) < 10.0) | (np.abs(lat) == 90.0)
    assert bool(adv.isel(lat=np.flatnonzero(masked)).isnull().all())
    assert bool(adv.isel(lat=np.flatnonzero(~masked)).notnull().all())
    # the members differ, but far less than the signal (an ensemble of data assimilation)
    mid = adv.sel(lat=slice(30, 60)) * 3600.0
    spread = float(mid.std("member").mean())
    signal = float(np.abs(mid.mean("member")).mean())
    p95 = float(np.nanpercentile(np.abs(mid.values), 95))
    print(f"\nERA5 ens 850 hPa geostrophic |adv| 30-60N: mean {signal:.3f} K/h, p95 {p95:.3f},"
          f" member spread {spread:.4f} K/h")
    assert 0.0 < spread < 0.5 * signal
    assert 0.2 < p95 < 3.0  # same common-practice range as above
    # geostrophic wind magnitude at 850 hPa mid-latitudes: mostly below ~40 m/s (common practice)
    speed = np.hypot(fields["u"], fields["v"]).sel(lat=slice(30, 60))
    assert float(speed.quantile(0.95)) < 40.0
