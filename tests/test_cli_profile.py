"""``parcelcast profile``: the JSON contract for a CSV profile and for a GFS column."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from parcelcast.cli import main
from datasets import data_file

CSV = """pressure_hPa,height_m,temperature_degC,dewpoint_degC,wind_direction_deg,wind_speed_kt
1000,110,24.0,17.0,180,10
925,780,19.0,14.0,200,20
850,1500,14.0,9.0,230,25
700,3100,2.0,-6.0,250,35
500,5750,-14.0,-30.0,260,50
300,9350,-40.0,,270,70
"""
PARCELS = {"surface", "mixed_layer", "most_unstable"}


def _check_contract(doc):
    assert isinstance(doc["lcl_hPa"], float) and isinstance(doc["lcl_temperature_K"], float)
    for key in ("cape_J_per_kg", "cin_J_per_kg"):
        assert set(doc[key]) == PARCELS
        assert all(v is None or isinstance(v, float) for v in doc[key].values())
    for key in ("lifted_index_K", "precipitable_water_mm", "freezing_level_m"):
        assert key in doc
    assert isinstance(doc["layers"], list) and doc["layers"]
    for lay in doc["layers"]:
        assert {"bottom_hPa", "top_hPa", "advection_K_per_h"} <= set(lay)
    assert "not an official forecast" in doc["disclaimer"]


def test_csv_json_contract(tmp_path, capsys):
    path = tmp_path / "s.csv"
    path.write_text(CSV)
    assert main(["profile", str(path), "--lat", "50", "--lon", "0", "--time", "2024-06-01T12:00", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    _check_contract(doc)
    assert doc["time"] == "2024-06-01T12:00:00Z" and doc["latitude"] == 50.0
    assert doc["cape_J_per_kg"]["surface"] > 0 and doc["cin_J_per_kg"]["surface"] <= 0
    assert any("humidity missing" in n for n in doc["notes"])


def test_csv_text_and_plot(tmp_path, capsys):
    path = tmp_path / "s.csv"
    path.write_text(CSV)
    out = tmp_path / "d.png"
    assert main(["profile", str(path), "--plot", str(out)]) == 0
    text = capsys.readouterr().out
    assert "CAPE" in text and "not an official forecast" in text
    assert out.read_bytes()[:4] == b"\x89PNG"


def test_bad_csv_exit_3_with_row(tmp_path, capsys):
    path = tmp_path / "bad.csv"
    path.write_text(CSV.replace("850,1500", "925,1500"))
    assert main(["profile", str(path), "--json"]) == 3  # unreadable input
    err = capsys.readouterr().err
    assert "row 4" in err and "duplicated level" in err


def test_help_does_not_import_heavy_modules():
    code = ("import sys; from parcelcast.cli import build_parser; build_parser('profile'); "
            "print(sorted(m for m in ('matplotlib', 'xarray', 'scipy', 'parcelcast.thermo') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


@pytest.mark.realdata
def test_gfs_column_json_contract(capsys, tmp_path):
    path = data_file("gfs-20111008T00-f072-global-2p5deg.grb2")
    out = tmp_path / "gfs.png"
    assert main(["profile", str(path), "--at", "46.25,8.75", "--time", "2011-10-11T00:00", "--json",
                 "--plot", str(out)]) == 0
    doc = json.loads(capsys.readouterr().out)
    _check_contract(doc)
    assert doc["time"] == "2011-10-11T00:00:00Z"
    assert len(doc["gridded_layers"]) == len(doc["layers"])
    assert out.is_file()
