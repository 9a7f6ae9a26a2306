"""Numbers that say what they are (issue 13 item 6): the parcel behind each index, the
freezing level above sea level and above the ground, "CIN 0" rather than "-0"."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from parcelcast.cli import main
from parcelcast.cli.profile import _number
from parcelcast.profiles import analyse
from test_profiles_indices import make


def _linear_column(ground_m, surface_c=15.0):
    """A 6.5 K/km column from a ground at ``ground_m`` above sea level (ICAO standard lapse rate)."""
    z = ground_m + np.arange(0.0, 10001.0, 500.0)
    t = surface_c - 6.5e-3 * (z - ground_m)
    p = 1013.25 * (1 - 2.25577e-5 * z) ** 5.25588  # standard-atmosphere pressure (troposphere)
    return make(p, t, t - 8.0, z=z)


@pytest.mark.parametrize("ground_m", [0.0, 1200.0])
def test_freezing_level_above_sea_level_and_above_ground(ground_m):
    res = analyse(_linear_column(ground_m))
    above_ground = 15.0 / 6.5e-3  # 0 degC this far above a 15 degC ground, by hand
    assert res["freezing_level_above_ground_m"] == pytest.approx(above_ground, rel=1e-9)
    assert res["freezing_level_m"] == pytest.approx(ground_m + above_ground, rel=1e-9)
    assert res["minus10_level_above_ground_m"] == pytest.approx(25.0 / 6.5e-3, rel=1e-9)
    assert "freezing_level_missing_because" not in res


def test_a_column_below_freezing_says_why_the_level_is_missing():
    res = analyse(_linear_column(300.0, surface_c=-5.0))
    assert math.isnan(res["freezing_level_m"]) and math.isnan(res["freezing_level_above_ground_m"])
    assert "below the ground" in res["freezing_level_missing_because"]


def test_index_parcels_are_named():
    res = analyse(_linear_column(0.0))
    assert res["index_parcels"] == {"lcl_hPa": "surface", "lifted_index_K": "mixed_layer",
                                    "showalter_index_K": "850 hPa"}
    # the named parcel is the one behind the number
    assert res["lifted_index_K"] == res["lifted_index_by_parcel_K"]["mixed_layer"]
    assert res["lcl_pressure_hPa"]["surface"] == pytest.approx(res["lcl_hPa"], rel=1e-12)


def test_no_minus_zero():
    assert _number(-0.0) == "0" and _number(-0.3) == "0" and _number(-0.004, "{:+.2f}") == "0.00"
    assert _number(-0.6) == "-1" and _number(-0.3, "{:.1f}") == "-0.3" and _number(None) == "--"


def test_stable_column_prints_cin_0(tmp_path, capsys):
    csv = tmp_path / "stable.csv"
    rows = ["pressure_hPa,temperature_degC,dewpoint_degC,wind_direction_deg,wind_speed_kt"]
    for p, t in ((1000, 2.0), (925, 3.0), (850, 1.0), (700, -8.0), (500, -25.0), (300, -50.0)):
        rows.append(f"{p},{t},{t - 10.0},270,20")
    csv.write_text("\n".join(rows) + "\n")
    assert main(["profile", str(csv), "--lat", "50", "--lon", "0", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert all(v == 0.0 and math.copysign(1.0, v) == 1.0 for v in doc["cin_J_per_kg"].values())
    assert main(["profile", str(csv), "--lat", "50", "--lon", "0"]) == 0
    text = capsys.readouterr().out
    assert "-0 " not in text and "CIN      0 J/kg" in text
    assert "lifted index (mixed-layer parcel)" in text and "LCL (surface parcel)" in text
    assert "m above sea level" in text and "m above ground" in text
