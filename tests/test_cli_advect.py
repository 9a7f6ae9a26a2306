"""``parcelcast advect``: the JSON contract, NetCDF/PNG outputs, and a fast --help.

The advection at a point is checked against an independent computation: numpy.gradient
(second-order, edge_order=2) on the raw values, the spherical metric d/dx = 1/(a cos lat) d/dlon,
and bilinear interpolation written out by hand.
"""

from __future__ import annotations

import json
import subprocess
import sys
import time

import numpy as np
import pytest
import xarray as xr

from datasets import A, cli_command, data_file, grib_field, raw_cf, small_atmosphere, write_netcdf
from parcelcast.cli import main

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
CONTRACT = {"time", "level_hPa", "lat", "lon", "temperature_K", "u_m_s", "v_m_s",
            "advection_K_per_h"}


def _advection_by_numpy(lat, lon, t, u, v, periodic=False):
    """-(u dT/dx + v dT/dy) with numpy.gradient on the raw grid (any lat order)."""
    lam, phi = np.deg2rad(lon), np.deg2rad(lat)
    if periodic:  # wrap one column each side, then drop them
        t_ext = np.concatenate([t[:, -1:], t, t[:, :1]], axis=1)
        lam_ext = np.concatenate([[lam[-1] - 2 * np.pi], lam, [lam[0] + 2 * np.pi]])
        dtdlam = np.gradient(t_ext, lam_ext, axis=1)[:, 1:-1]
    else:
        dtdlam = np.gradient(t, lam, axis=1, edge_order=2)
    dtdphi = np.gradient(t, phi, axis=0, edge_order=2)
    with np.errstate(divide="ignore", invalid="ignore"):
        return -(u * dtdlam / (A * np.cos(phi)[:, None]) + v * dtdphi / A)


def _bilinear(lat, lon, field, plat, plon):
    """Bilinear interpolation by hand on a grid with ascending lon and any lat order."""
    j = np.searchsorted(lat, plat) if lat[0] < lat[-1] else lat.size - np.searchsorted(lat[::-1], plat)
    j0, j1 = (j - 1, j) if lat[0] < lat[-1] else (j - 1, j)
    i1 = int(np.searchsorted(lon, plon))
    i0 = i1 - 1
    wy = (plat - lat[j0]) / (lat[j1] - lat[j0])
    wx = (plon - lon[i0]) / (lon[i1] - lon[i0])
    return ((1 - wy) * (1 - wx) * field[j0, i0] + (1 - wy) * wx * field[j0, i1]
            + wy * (1 - wx) * field[j1, i0] + wy * wx * field[j1, i1])


def _run_json(capsys, args):
    status = main(["advect", *args, "--json"])
    captured = capsys.readouterr()
    assert status == 0, captured.err
    return json.loads(captured.out)


# --------------------------------------------------------------------------------------- NetCDF
@pytest.fixture()
def netcdf_case(tmp_path):
    lat, lon, t, u, v = small_atmosphere(seed=11, lon0=-20.0, dlon=3.0, nx=15)
    path = write_netcdf(raw_cf(lat, lon, t, u, v, lat_descending=True), tmp_path / "an.nc")
    return path, lat, lon, t, u, v


def test_json_contract_on_netcdf(netcdf_case, capsys):
    path, lat, lon, t, u, v = netcdf_case
    plat, plon = 47.3, 4.6
    out = _run_json(capsys, [str(path), "--level", "850", "--at", f"{plat},{plon}"])
    assert CONTRACT <= set(out)
    assert out["time"] == "2024-01-15T12:00:00Z"  # datasets.TIME, ISO UTC
    assert out["level_hPa"] == 850 and out["lat"] == plat and out["lon"] == plon
    assert out["temperature_K"] == pytest.approx(_bilinear(lat, lon, t, plat, plon), abs=1e-3)
    assert out["u_m_s"] == pytest.approx(_bilinear(lat, lon, u, plat, plon), abs=1e-3)
    assert out["v_m_s"] == pytest.approx(_bilinear(lat, lon, v, plat, plon), abs=1e-3)
    adv = _advection_by_numpy(lat, lon, t, u, v) * 3600.0
    expected = _bilinear(lat, lon, adv, plat, plon)
    assert out["advection_K_per_h"] == pytest.approx(expected, rel=1e-6, abs=1e-4)
    assert abs(expected) > 1e-3  # a real signal, not zero by construction


def test_out_netcdf_and_map_png(netcdf_case, tmp_path, capsys):
    path, lat, lon, t, u, v = netcdf_case
    nc, png = tmp_path / "adv.nc", tmp_path / "adv.png"
    status = main(["advect", str(path), "--level", "850", "--out", str(nc), "--map", str(png)])
    captured = capsys.readouterr()
    assert status == 0, captured.err
    assert "850" in captured.out  # the text summary
    with xr.open_dataset(nc, engine="netcdf4") as written:
        adv = written["temperature_advection"]
        assert adv.attrs["standard_name"] == "tendency_of_air_temperature_due_to_advection"
        assert adv.attrs["units"] == "K s-1"
        np.testing.assert_allclose(adv.values, _advection_by_numpy(lat, lon, t, u, v),
                                   rtol=1e-9, atol=1e-15)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 10_000


# ----------------------------------------------------------------------------------------- GRIB
@pytest.mark.realdata
def test_json_contract_on_gfs_grib(capsys):
    path = data_file(GFS)
    plat, plon = 52.1, -1.5
    out = _run_json(capsys, [str(path), "--level", "850", "--at", f"{plat},{plon}"])
    assert CONTRACT <= set(out)
    assert out["time"] == "2011-10-11T00:00:00Z"  # PROVENANCE.md: valid 2011-10-11 00 UTC
    assert out["level_hPa"] == 850
    # independent route: eccodes values on the stored grid (lat 90..-90, lon 0..357.5)
    lat, lon, t = grib_field(path, "t", 850)
    _, _, u = grib_field(path, "u", 850)
    _, _, v = grib_field(path, "v", 850)
    adv = _advection_by_numpy(lat, lon, t, u, v, periodic=True) * 3600.0
    lon_ext = np.append(lon, 360.0)  # close the circle for the point at 358.5 E

    def at(field):
        return _bilinear(lat, lon_ext, np.concatenate([field, field[:, :1]], axis=1),
                         plat, plon % 360.0)

    assert out["temperature_K"] == pytest.approx(at(t), abs=1e-3)
    assert out["u_m_s"] == pytest.approx(at(u), abs=1e-3)
    assert out["v_m_s"] == pytest.approx(at(v), abs=1e-3)
    assert out["advection_K_per_h"] == pytest.approx(at(adv), rel=1e-6, abs=1e-4)
    print(f"\nGFS 850 hPa at {plat},{plon}: {out['advection_K_per_h']} K/h "
          f"(numpy route {at(adv):.4f})")


@pytest.mark.realdata
def test_geostrophic_json_on_ensemble_reports_members(capsys):
    path = data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1")
    out = _run_json(capsys, [str(path), "--level", "850", "--at", "50,10", "--wind", "geostrophic",
                             "--time", "2017-01-02T00:00Z"])
    assert CONTRACT <= set(out)
    assert out["time"] == "2017-01-02T00:00:00Z"
    assert len(out["members"]) == 10
    mean = np.mean([m["advection_K_per_h"] for m in out["members"]])
    assert out["advection_K_per_h"] == pytest.approx(mean, abs=2e-4)  # member mean, rounded


# ------------------------------------------------------------------------------------ start-up
HEAVY = ("xarray", "matplotlib", "cartopy", "dask", "numba", "cfgrib", "eccodes", "pandas", "numpy")


def test_help_imports_nothing_heavy():
    cmd = [*cli_command(), "--help"]
    subprocess.run(cmd, capture_output=True, check=True)  # warm the file cache once
    start = time.perf_counter()
    done = subprocess.run(cmd, capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    assert done.returncode == 0 and "advect" in done.stdout
    # "well under a second" (issue 2 item 5) is kept by importing nothing heavy (checked
    # below); the time is reported, not asserted (no timing in tests)
    print(f"\nparcelcast --help: {elapsed:.3f} s")
    probe = ("import sys\nfrom parcelcast.cli import main\n"
             "for argv in (['--help'], ['advect', '--help']):\n"
             "    try:\n        main(argv)\n    except SystemExit:\n        pass\n"
             f"print([m for m in {HEAVY!r} if m in sys.modules])\n")
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True)
    assert done.stdout.strip().splitlines()[-1] == "[]", done.stdout


def test_point_longitude_forms_agree(tmp_path, capsys):
    # the same point written as 358.5 or -1.5 (global grid stored 0..360), and -175 or 185 on a
    # regional grid across the dateline: identical answers (longitude is modulo 360)
    lat, lon, t, u, v = small_atmosphere(seed=3)
    glob = write_netcdf(raw_cf(lat, lon, t, u, v, lon_0_360=True), tmp_path / "g.nc")
    lat, lon, t, u, v = small_atmosphere(seed=3, lon0=150.0, dlon=5.0, nx=13)
    lon = np.mod(lon + 180.0, 360.0) - 180.0
    order = np.argsort(lon)
    reg = write_netcdf(raw_cf(lat, lon[order], t[:, order], u[:, order], v[:, order]),
                       tmp_path / "r.nc")
    for path, a, b in ((glob, "40,358.5", "40,-1.5"), (reg, "40,-175", "40,185")):
        first = _run_json(capsys, [str(path), "--level", "850", "--at", a])
        second = _run_json(capsys, [str(path), "--level", "850", "--at", b])
        for key in ("temperature_K", "u_m_s", "v_m_s", "advection_K_per_h"):
            assert first[key] == second[key], (path.name, key)
