"""Reading and validating profile CSV files (units through pint, clear errors with rows)."""

from __future__ import annotations

import numpy as np
import pytest

from parcelcast.errors import ProfileError, UnitsError
from parcelcast.profiles import read_profile_csv

BASE = """pressure_hPa,height_m,temperature_degC,dewpoint_degC,wind_direction_deg,wind_speed_kt
1000,110,24.0,17.0,180,10
925,780,19.0,14.0,200,20
850,1500,14.0,9.0,230,25
700,3100,2.0,-6.0,250,35
500,5750,-14.0,-30.0,260,50
300,9350,-40.0,,270,70
"""


def write(tmp_path, text, name="s.csv"):
    path = tmp_path / name
    path.write_text(text)
    return path


def test_reads_units_and_wind(tmp_path):
    prof = read_profile_csv(write(tmp_path, BASE), latitude=51.0, longitude=-1.0)
    np.testing.assert_allclose(prof.pressure[:2], [100000.0, 92500.0])
    assert prof.temperature[0] == pytest.approx(297.15)
    # wind from 180 deg at 10 kt blows northward: v = +10 kt = 5.144 m/s (1 kt = 1852/3600 m/s)
    assert prof.u[0] == pytest.approx(0.0, abs=1e-9) and prof.v[0] == pytest.approx(10 * 1852 / 3600)
    assert prof.u[-1] == pytest.approx(70 * 1852 / 3600)
    assert any("humidity missing above 500 hPa" in n for n in prof.notes)
    assert prof.latitude == 51.0


def test_any_column_order_and_other_units(tmp_path):
    text = ("v_m_s,temperature_K,u_m_s,relative_humidity_percent,pressure_Pa,height_ft\n"
            "2,300,1,50,100000,0\n3,290,2,60,85000,4921.26\n4,270,3,40,70000,9842.52\n")
    prof = read_profile_csv(write(tmp_path, text))
    np.testing.assert_allclose(prof.height, [0.0, 1500.0, 3000.0], atol=1e-3)
    np.testing.assert_allclose(prof.u, [1, 2, 3])
    # dew point from RH: e = 0.5 e_w(300 K) (WMO Magnus), so T_d < T and RH round-trips
    from parcelcast.thermo import relative_humidity_from_dewpoint

    assert relative_humidity_from_dewpoint(300.0, prof.dewpoint[0]) == pytest.approx(0.5, rel=1e-9)


def test_top_first_files_are_reversed(tmp_path):
    lines = BASE.strip().splitlines()
    prof = read_profile_csv(write(tmp_path, "\n".join([lines[0]] + lines[1:][::-1]) + "\n"))
    assert prof.pressure[0] == 100000.0 and any("reversed" in n for n in prof.notes)


def test_missing_heights_are_hypsometric(tmp_path):
    text = "\n".join(",".join(r.split(",")[i] for i in (0, 2, 3)) for r in BASE.strip().splitlines()) + "\n"
    prof = read_profile_csv(write(tmp_path, text))
    assert prof.height[0] == 0.0
    # 1000-500 hPa thickness of this column is about 5.6 km
    assert 5400 < prof.height[4] < 5800


@pytest.mark.parametrize("row,column,old,new,match", [
    (4, "pressure_hPa", "850,1500", "925,1500", "row 4, column pressure_hPa: duplicated level 925"),
    (5, "pressure_hPa", "700,3100", "950,3100", "row 5, column pressure_hPa: pressure 950 hPa is not below"),
    (3, "dewpoint_degC", "19.0,14.0", "19.0,21.0", "row 3, column dewpoint_degC: dew point 21.0 degC is above"),
    (4, "temperature_degC", "14.0,9.0", "abc,9.0", "row 4, column temperature_degC: 'abc' is not a number"),
    (2, "temperature_degC", "24.0,17.0", "524.0,17.0", "row 2, column temperature_degC: value out of"),
])
def test_errors_name_row_and_column(tmp_path, row, column, old, new, match):
    with pytest.raises(ProfileError, match=match):
        read_profile_csv(write(tmp_path, BASE.replace(old, new)))


def test_unit_errors(tmp_path):
    with pytest.raises(UnitsError, match="temperature_parsecs"):
        read_profile_csv(write(tmp_path, BASE.replace("temperature_degC", "temperature_parsecs")))
    with pytest.raises(UnitsError, match="wind_speed_kg"):
        read_profile_csv(write(tmp_path, BASE.replace("wind_speed_kt", "wind_speed_kg")))
    with pytest.raises(ProfileError, match="no humidity column"):
        read_profile_csv(write(tmp_path, BASE.replace("dewpoint_degC", "colour_name")))


def test_superadiabatic_layer_flagged_not_rejected(tmp_path):
    prof = read_profile_csv(write(tmp_path, BASE.replace("1000,110,24.0", "1000,110,34.0")))
    assert any("superadiabatic" in n and "1000-925" in n for n in prof.notes)
