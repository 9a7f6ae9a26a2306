"""What the user reads when something is wrong: errors carry the facts as attributes and in
one plain message (file, quantity, what was expected, what exists); no traceback on the CLI."""

from __future__ import annotations

import subprocess

import pytest

from datasets import cli_command, data_file, raw_cf, small_atmosphere, write_netcdf
from parcelcast.advection import advection_on_level
from parcelcast.cli import main
from parcelcast.errors import SelectionError, UnitsError, VariableNotFoundError
from parcelcast.io.analysis import open_analysis


@pytest.fixture()
def nc(tmp_path):
    lat, lon, t, u, v = small_atmosphere(seed=4)
    return write_netcdf(raw_cf(lat, lon, t, u, v), tmp_path / "in.nc")


def test_variable_not_found_carries_facts(tmp_path):
    lat, lon, t, u, v = small_atmosphere(seed=4)
    path = write_netcdf(raw_cf(lat, lon, t, u, v).drop_vars("v"), tmp_path / "nov.nc")
    with pytest.raises(VariableNotFoundError) as err:
        advection_on_level(open_analysis(path), 850.0)
    assert err.value.role == "v" and str(path) in err.value.source
    assert err.value.found == ["t", "u"]
    assert "--var v=NAME" in str(err.value)


def test_units_error_carries_facts(tmp_path):
    lat, lon, t, u, v = small_atmosphere(seed=4)
    raw = raw_cf(lat, lon, t, u, v)
    raw["u"].attrs["units"] = "knotz"  # unparseable (impossible units: test_bad_input)
    path = write_netcdf(raw, tmp_path / "badu.nc")
    with pytest.raises(UnitsError) as err:
        open_analysis(path)
    assert err.value.found == "knotz" and str(path) in err.value.source
    assert "'u'" in err.value.source  # the file's variable name


@pytest.mark.realdata
def test_level_error_lists_the_files_levels():
    ds = open_analysis(data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"))
    with pytest.raises(SelectionError) as err:
        advection_on_level(ds, 700.0, wind="geostrophic")
    # PROVENANCE.md: levels 850 and 500 hPa
    assert err.value.available == "850, 500 hPa"
    assert "era5-ens" in str(err.value)
    with pytest.raises(SelectionError) as err:
        advection_on_level(ds, 850.0, "2017-01-03T00:00", wind="geostrophic")
    # 12-hourly 2017-01-01 00 UTC to 2017-01-02 12 UTC
    assert "2017-01-01 00:00" in err.value.available and "2017-01-02 12:00" in err.value.available


def test_cli_error_is_one_plain_line_without_traceback(nc):
    done = subprocess.run([*cli_command(), "advect", str(nc), "--level", "300"],
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 5  # nothing to compute: the level is not in the file
    assert "Traceback" not in done.stderr
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("parcelcast advect: error: ")
    assert "300 hPa" in lines[0] and "850 hPa" in lines[0] and str(nc) in lines[0]


@pytest.mark.parametrize("args, needle", [
    (["--at", "95,0"], "latitude 95.0 is outside"),
    (["--at", "52N"], "expected LAT,LON"),
    (["--time", "next tuesday"], "ISO 8601"),
    (["--var", "temperature"], "ROLE=NAME"),
    (["--wind", "thermal"], "invalid choice"),
])
def test_cli_argument_errors(nc, capsys, args, needle):
    with pytest.raises(SystemExit) as exc:
        main(["advect", str(nc), "--level", "850", *args])
    assert exc.value.code == 2
    assert needle in capsys.readouterr().err


def test_cli_level_required_and_no_command(nc, capsys):
    with pytest.raises(SystemExit) as exc:
        main(["advect", str(nc)])
    assert exc.value.code == 2 and "--level" in capsys.readouterr().err
    assert main([]) == 2  # no command: help and the usage status
    assert "advect" in capsys.readouterr().out
