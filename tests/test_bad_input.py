"""Bad input (issue 2 item 8): each refused with a clear error naming file and quantity,
exit status 2 from the command line, nothing written, and the input left as it was."""

from __future__ import annotations

import hashlib

import numpy as np
import pytest

from datasets import data_file, raw_cf, small_atmosphere, write_netcdf
from parcelcast.advection import advection, advection_on_level
from parcelcast.cli import main
from parcelcast.errors import (EXIT_STATUS, ImplausibleValuesError, IncompleteInputError, ParcelcastError,
                               SelectionError, UnitsError, VariableNotFoundError)
from parcelcast.io.analysis import open_analysis
from parcelcast.sampling import area_mean, value_at

CORRUPTED = "era5-levels-corrupted.grb1"
MISSING = "fields-with-missing-values.grb1"


def _write(tmp_path, name="in.nc", edit=None, **kw):
    lat, lon, t, u, v = small_atmosphere(seed=2, **kw)
    raw = raw_cf(lat, lon, t, u, v)
    if edit is not None:
        raw = edit(raw)
    return write_netcdf(raw, tmp_path / name)


def _fingerprint(path):
    return hashlib.sha256(path.read_bytes()).hexdigest(), path.stat().st_mtime_ns


def cli_refuses(tmp_path, capsys, args, *needles):
    """Run ``parcelcast advect`` in-process; assert a documented error status (not the
    internal-fault status 1), the needles in stderr, and that neither --out nor --map was
    written. Returns stderr."""
    out, png = tmp_path / "out.nc", tmp_path / "map.png"
    before = sorted(p.name for p in tmp_path.iterdir())
    status = main(["advect", *args, "--out", str(out), "--map", str(png), "--json"])
    captured = capsys.readouterr()
    assert status in set(EXIT_STATUS.values()) - {0, 1}, captured
    assert captured.out == ""  # no partial JSON on stdout
    for needle in needles:
        assert needle in captured.err, (needle, captured.err)
    assert not out.exists() and not png.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # no temporary leftovers either
    return captured.err


# ----------------------------------------------------------------------------- variable missing
def test_variable_missing_lists_what_was_found(tmp_path, capsys):
    path = _write(tmp_path, edit=lambda ds: ds.drop_vars(["u", "v"]))
    before = _fingerprint(path)
    with pytest.raises(VariableNotFoundError) as err:
        advection_on_level(open_analysis(path), 850.0)
    msg = str(err.value)
    assert str(path) in msg and "'u'" in msg and "t" in err.value.found
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "'u'",
                "Variables present: t")
    assert _fingerprint(path) == before


def test_var_override_naming_nothing(tmp_path, capsys):
    path = _write(tmp_path)
    with pytest.raises(VariableNotFoundError, match="TMP_850"):
        open_analysis(path, {"temperature": "TMP_850"})
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850", "--var", "temperature=TMP_850"],
                "TMP_850", str(path))


def test_unknown_var_role(tmp_path, capsys):
    path = _write(tmp_path)
    with pytest.raises(ParcelcastError, match="unknown role"):
        open_analysis(path, {"temprature": "t"})
    err = cli_refuses(tmp_path, capsys, [str(path), "--level", "850", "--var", "temprature=t"],
                      "temprature", "known roles")
    assert "temperature" in err


# ---------------------------------------------------------------------------------------- units
def test_units_missing_asks_to_state_them(tmp_path, capsys):
    def drop(ds):
        del ds["t"].attrs["units"]
        return ds

    path = _write(tmp_path, edit=drop)
    with pytest.raises(UnitsError) as err:
        open_analysis(path)
    assert "has no units" in str(err.value) and "State the units" in str(err.value)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "'t'",
                "State the units")


def test_units_impossible_for_the_quantity(tmp_path, capsys):
    # a variable declared air_temperature with units of speed: impossible, the user must say
    def wrong(ds):
        ds["t"].attrs["units"] = "m s-1"
        return ds

    path = _write(tmp_path, edit=wrong)
    with pytest.raises(UnitsError) as err:
        advection_on_level(open_analysis(path), 850.0)
    assert "m s-1" in str(err.value) and str(path) in str(err.value)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "m s-1",
                "State the units")


def test_unparseable_units(tmp_path, capsys):
    def wrong(ds):
        ds["u"].attrs["units"] = "furlongs per fortnightz"
        return ds

    path = _write(tmp_path, edit=wrong)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path),
                "furlongs per fortnightz")


def test_level_units_missing(tmp_path, capsys):
    def drop(ds):
        del ds["plev"].attrs["units"]
        return ds

    path = _write(tmp_path, edit=drop)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "plev", "no units")


# ------------------------------------------------------------------------------ implausible values
def test_celsius_labelled_kelvin(tmp_path, capsys):
    def celsius(ds):
        ds["t"] = ds["t"] - 273.15
        ds["t"].attrs = {"units": "K", "standard_name": "air_temperature"}
        return ds

    path = _write(tmp_path, edit=celsius)
    with pytest.raises(ImplausibleValuesError, match="degrees Celsius"):
        open_analysis(path)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "temperature",
                "degrees Celsius")


def test_geopotential_height_labelled_geopotential(tmp_path, capsys):
    # heights of ~1500 m stored as m2 s-2: 1500 / 9.80665 = 153 m at 850 hPa, standard atmosphere
    # 1457 m (US Standard Atmosphere 1976): a factor-of-g0 slip that must be refused
    def slip(ds):
        ds["z"] = ds["t"] * 0 + 1500.0
        ds["z"].attrs = {"units": "m2 s-2", "standard_name": "geopotential"}
        return ds

    path = _write(tmp_path, edit=slip)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850", "--wind", "geostrophic"],
                str(path), "geopotential")


# ------------------------------------------------------------------------- selection not in file
def test_level_not_in_file_lists_levels(tmp_path, capsys):
    path = _write(tmp_path)
    with pytest.raises(SelectionError, match="available: 850 hPa"):
        advection_on_level(open_analysis(path), 500.0)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "500"], "500 hPa", "850 hPa")


def test_time_not_in_file_lists_times(tmp_path, capsys):
    path = _write(tmp_path)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850", "--time", "2024-01-16T00:00"],
                "2024-01-16 00:00", "2024-01-15 12:00")


def test_point_outside_regional_grid(tmp_path, capsys):
    path = _write(tmp_path, lon0=-20.0, dlon=3.0, nx=15)  # lon -20..22, lat 20..56
    with pytest.raises(SelectionError):
        value_at(advection_on_level(open_analysis(path), 850.0), 70.0, 0.0)
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850", "--at", "52.0,60.0"],
                "52,60", "-20..22")


def test_file_missing_or_not_an_analysis(tmp_path, capsys):
    cli_refuses(tmp_path, capsys, [str(tmp_path / "nope.nc"), "--level", "850"], "nope.nc",
                "no such file")
    text = tmp_path / "notes.txt"
    text.write_text("not an analysis\n")
    cli_refuses(tmp_path, capsys, [str(text), "--level", "850"], "notes.txt", "not a NetCDF")
    cli_refuses(tmp_path, capsys, [str(tmp_path / "none-*.nc"), "--level", "850"], "none-*.nc")


# --------------------------------------------------------------------------------- damaged GRIB
@pytest.mark.realdata
def test_damaged_grib_refused_names_file_and_what_is_missing(tmp_path, capsys):
    path = data_file(CORRUPTED)
    before = _fingerprint(path)
    with pytest.raises(IncompleteInputError) as err:
        open_analysis(path)
    msg = str(err.value)
    # PROVENANCE.md: one t field on a 3-deg grid survives, the rest is lost
    assert str(path) in msg and "t" in msg and "850" in msg and "missing" in msg
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "damaged")
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850", "--wind", "geostrophic"],
                str(path), "damaged")
    # with allow_damaged the part is readable, and a calculation lacking inputs is still refused
    ds = open_analysis(path, allow_damaged=True)
    assert ds.attrs["damaged"]
    with pytest.raises(IncompleteInputError, match="geopotential"):
        advection_on_level(ds, 850.0, wind="geostrophic")
    assert _fingerprint(path) == before


# ------------------------------------------------------------------------------- missing values
@pytest.mark.realdata
def test_missing_values_never_filled_and_counted(tmp_path, capsys):
    path = data_file(MISSING)
    ds = open_analysis(path)
    t2m = ds["near_surface_temperature"]
    nan_in = t2m.isnull()
    # advection of the field: every missing input point stays missing in the output
    u = t2m * 0 + 10.0
    u.attrs["units"] = "m s-1"
    adv = advection(t2m, u, u)
    assert bool(adv.isnull().where(nan_in, True).all())
    assert int(adv.isnull().sum()) >= int(nan_in.sum())
    # area mean skips and reports missing points; a bilinear value next to a gap is NaN
    j, i = np.argwhere(nan_in.isel(time=0).values)[0]
    lat, lon = float(t2m["lat"][j]), float(t2m["lon"][i])
    assert np.isnan(float(value_at(t2m.isel(time=0), lat, lon)))
    _, info = area_mean(t2m.isel(time=0), lat, lon, half_width_deg=4.0)
    assert info["missing"] >= 1
    # the command needs upper-air temperature and wind: refused, listing what the file has
    cli_refuses(tmp_path, capsys, [str(path), "--level", "850"], str(path), "t2m")
