"""Model relative humidity as the model means it (over water, ice, or mixed phase).

Outside reference: the GFS file's own total precipitable water ``pwat`` (NCEP GFS
2011-10-08 00 UTC +72 h, ``../shared/data/gfs-20111008T00-f072-global-2p5deg.grb2``),
integrated by the model on its own levels, against our column from ``t`` and ``r`` on
pressure levels.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from datasets import data_file
from parcelcast.cli import main
from parcelcast.thermo import saturation_vapour_pressure
from parcelcast.thermo.model_humidity import RULES, rule_for, saturation_vapour_pressure_model

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"


def test_rules_at_their_anchor_temperatures():
    water = lambda t: saturation_vapour_pressure(t, "water")  # noqa: E731
    ice = lambda t: saturation_vapour_pressure(t, "ice")  # noqa: E731
    ncep, ecmwf = RULES["ncep"], RULES["ecmwf"]
    for rule in (ncep, ecmwf):
        assert saturation_vapour_pressure_model(280.0, rule) == water(280.0)
        assert saturation_vapour_pressure_model(240.0, rule) == ice(240.0)
    # NCEP: halfway (-10 degC from the triple point) is the plain mean; ECMWF: weight ((T - 250.16)/23)**2
    assert saturation_vapour_pressure_model(263.16, ncep) == pytest.approx(0.5 * (water(263.16) + ice(263.16)))
    w = ((263.15 - 250.16) / 23.0) ** 2
    assert saturation_vapour_pressure_model(263.15, ecmwf) == pytest.approx(w * water(263.15) + (1 - w) * ice(263.15))
    # the figures: over water overstates vapour pressure by ~10 % at -10 degC, ~48 % at -40 degC
    assert water(263.15) / ice(263.15) - 1 == pytest.approx(0.10, abs=0.01)
    assert water(233.15) / ice(233.15) - 1 == pytest.approx(0.48, abs=0.02)


@given(st.floats(200.0, 320.0))
def test_mixed_rules_lie_between_ice_and_water(t):
    lo = min(saturation_vapour_pressure(t, "ice"), saturation_vapour_pressure(t, "water"))
    hi = max(saturation_vapour_pressure(t, "ice"), saturation_vapour_pressure(t, "water"))
    for name in ("ncep", "ecmwf", "ice", "water"):
        assert lo * (1 - 1e-12) <= saturation_vapour_pressure_model(t, RULES[name]) <= hi * (1 + 1e-12)


def test_rule_choice_from_centre_and_override():
    assert rule_for(7)[0].name == "ncep" and "NCEP" in rule_for(7)[1]
    assert rule_for(98)[0].name == "ecmwf"
    assert rule_for(None)[0].name == "water" and "unknown" in rule_for(None)[1]
    assert rule_for(7, "water")[0].name == "water"
    assert rule_for(98, "mixed")[0].name == "ecmwf"
    assert rule_for(None, "mixed")[0].name == "ncep"


def _pwat(path):
    """The model's total precipitable water (kg m-2) and its grid, straight from eccodes."""
    import pyproj  # noqa: F401  # PROJ before eccodes
    import eccodes

    with open(path, "rb") as fh:
        while (h := eccodes.codes_grib_new_from_file(fh)) is not None:
            try:
                if eccodes.codes_get(h, "shortName") == "pwat":
                    ni, nj = eccodes.codes_get(h, "Ni"), eccodes.codes_get(h, "Nj")
                    vals = eccodes.codes_get_values(h).reshape(nj, ni)
                    lat0, lat1 = eccodes.codes_get(h, "latitudeOfFirstGridPointInDegrees"), \
                        eccodes.codes_get(h, "latitudeOfLastGridPointInDegrees")
                    assert eccodes.codes_get(h, "units") == "kg m**-2"
                    return vals, np.linspace(lat0, lat1, nj), np.arange(ni) * 360.0 / ni
            finally:
                eccodes.codes_release(h)
    raise AssertionError("no pwat in the GFS file")


def test_column_precipitable_water_against_the_models_own(tmp_path):
    """40 points (5 latitudes 50S-50N x 8 longitudes), at grid points of the 2.5-degree grid
    so that no horizontal interpolation enters either side.  Measured here: median |error|
    over water 1.8 % (90th percentile 5.6 %), over ice below 0 degC 0.72 % (1.9 %), with the
    detected NCEP mixed rule 0.46 % (1.2 %); the issue measured 3.8 % and 0.65 % on its own
    40 points.  Bound 1 %: the model integrates on its native levels to the top, our column
    has 21 pressure levels to 100 hPa and a ground level with the lowest level's dew point,
    which leaves a few tenths of a percent either way.  Over water must be at least 2.5
    times worse, and the mixed rule better than pure ice."""
    from parcelcast.io.analysis import open_analysis
    from parcelcast.profiles import column_from_analysis, precipitable_water

    path = data_file(GFS)
    ds = open_analysis([path])
    pwat, lats, lons = _pwat(path)
    errors = {"water": [], "ice": [], "auto": []}
    for lat in (-50.0, -25.0, 0.0, 25.0, 50.0):
        for lon in np.arange(8) * 45.0 + 10.0:
            ref = pwat[int(np.argmin(np.abs(lats - lat))), int(np.argmin(np.abs(lons - lon)))]
            for over in errors:
                prof = column_from_analysis(ds, lat, lon, humidity_over=None if over == "auto" else over)
                errors[over].append(precipitable_water(prof.pressure, prof.dewpoint) / ref - 1.0)
            assert prof.humidity_rule["rule"] == "ncep"  # detected: GRIB centre 7
    med = {k: float(np.median(np.abs(v))) for k, v in errors.items()}
    assert med["auto"] < 0.01
    assert med["water"] > 2.5 * med["auto"]
    assert med["auto"] < med["ice"]
    assert np.median(errors["water"]) > 0  # over water overstates the vapour


def test_profile_json_states_the_rule(capsys):
    path = str(data_file(GFS))
    assert main(["profile", path, "--at", "50,10", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["humidity_rule"]["rule"] == "ncep" and "centre 7" in doc["humidity_rule"]["chosen"]
    assert main(["profile", path, "--at", "50,10", "--json", "--humidity-over", "ice"]) == 0
    doc_ice = json.loads(capsys.readouterr().out)
    assert doc_ice["humidity_rule"]["rule"] == "ice" and "--humidity-over ice" in doc_ice["humidity_rule"]["chosen"]
    assert doc_ice["precipitable_water_mm"] < doc["precipitable_water_mm"]


def test_sounding_dew_points_stay_over_water(tmp_path, capsys):
    from parcelcast.profiles import read_profile_csv

    path = tmp_path / "s.csv"
    path.write_text("pressure_hPa,temperature_degC,dewpoint_degC\n1000,5,0\n850,-5,-12\n700,-15,-25\n500,-30,-40\n")
    assert main(["profile", str(path), "--json", "--humidity-over", "ice"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert "humidity_rule" not in doc and any("over water (WMO practice)" in n for n in doc["notes"])
    np.testing.assert_allclose(read_profile_csv(path).dewpoint - 273.15, [0.0, -12.0, -25.0, -40.0], atol=1e-9)
