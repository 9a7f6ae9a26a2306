"""``parcelcast climate`` end to end: JSON, the streamed CSV and NetCDF, the plot."""

from __future__ import annotations

import json
import subprocess

import numpy as np
import pytest

from climate_records import wave_record
from datasets import cli_command


@pytest.fixture(scope="module")
def record(tmp_path_factory):
    path = tmp_path_factory.mktemp("cli-climate") / "wave.nc"
    wave_record(days=10, omega_pa_s=0.2).to_netcdf(path)
    return path


def _run(*args):
    return subprocess.run([*cli_command(), "climate", *map(str, args)], capture_output=True,
                          text=True, timeout=300)


def test_json_csv_netcdf_and_plot_agree(record, tmp_path):
    import pandas as pd
    import xarray as xr

    csv, nc, png = tmp_path / "w.csv", tmp_path / "w.nc", tmp_path / "w.png"
    done = _run(record, "--at", "50,10", "--level", "850", "--window", "24", "--json", "--out", csv)
    assert done.returncode == 0, done.stderr
    result = json.loads(done.stdout)
    windows = result["windows"]
    assert len(windows) == 10 and windows[0]["start"] == "2024-01-24T00:00:00Z"
    for w in windows:
        total = w["advective_K"] + w["vertical_K"] + w["residual_K"]
        assert total == pytest.approx(w["observed_change_K"], abs=1e-9)
    months = {m["month"]: m for m in result["summary"]["by_month"]}
    assert list(months) == ["2024-01", "2024-02"] and months["2024-01"]["windows"] == 8
    jan = [w["advective_K"] for w in windows if w["start"].startswith("2024-01")]
    assert months["2024-01"]["advective"]["mean_K"] == pytest.approx(np.mean(jan), abs=1e-4)
    assert result["level_hPa"] == 850.0 and "guidance" in result["disclaimer"]

    done = _run(record, "--at", "50,10", "--level", "850", "--window", "24", "--out", nc,
                "--plot", png)
    assert done.returncode == 0, done.stderr
    table = pd.read_csv(csv, comment="#")
    assert np.allclose(table["advective_K"], [w["advective_K"] for w in windows], atol=1e-4)
    with xr.open_dataset(nc) as ds:
        assert np.allclose(ds["residual"].values, [w["residual_K"] for w in windows], atol=1e-4)
        assert str(ds["time"].values[1])[:13] == "2024-01-25T00"
    assert png.stat().st_size > 10_000


def test_surface_level_reported_as_such_and_no_matplotlib_without_plot(record):
    code = ("import sys; from parcelcast.cli import main; rc = main(sys.argv[1:]); "
            "print('matplotlib' in sys.modules, file=sys.stderr); sys.exit(rc)")
    import sys

    done = subprocess.run([sys.executable, "-c", code, "climate", str(record), "--at", "50,10",
                           "--level", "surface", "--window", "24", "--json"],
                          capture_output=True, text=True, timeout=300)
    # the synthetic record has no 2-m temperature: a clear error naming what is missing
    assert done.returncode == 4  # missing quantity (errors.EXIT_STATUS)
    assert "near_surface_temperature" in done.stderr and "False" in done.stderr


def test_bad_input_is_refused_with_a_reason(record, capsys):
    from parcelcast.cli import main

    def refused(*args):
        assert main(["climate", str(record), *args]) in (2, 3, 4, 5)  # a class of errors.EXIT_STATUS
        return capsys.readouterr().err

    assert "does not fit in the record" in refused("--at", "50,10", "--level", "850", "--window", "500")
    err = refused("--at", "50,10", "--level", "600", "--window", "24")
    assert "600 hPa" in err and "850" in err
    assert "--out PATH.nc" in refused("--level", "850", "--window", "24")  # maps need a file
    with pytest.raises(SystemExit):
        main(["climate", str(record), "--at", "50,10", "--level", "high", "--window", "24"])
    assert "'surface'" in capsys.readouterr().err


def test_a_pressure_level_asked_of_a_surface_file_names_what_is_there(capsys):
    from datasets import data_file
    from parcelcast.cli import main

    path = data_file("era5-t2m-2019-03-hourly-uk.grb1")
    assert main(["climate", str(path), "--at", "52,-1", "--level", "850", "--window", "24"]) == 4  # missing quantity
    err = capsys.readouterr().err
    assert "no variable for any of 'temperature'" in err and "Variables present: t2m" in err
