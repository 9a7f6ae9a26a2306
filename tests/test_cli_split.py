"""``parcelcast split ... --json``: the JSON contract of issue 5, item 6.

Input: the analytic drifting-ramp atmosphere of ``test_budget_analytic`` (known budget: a
uniform heating of 2 K/day, see its docstring) written to CF NetCDF and read back through
``open_analysis``.  JSON numbers are rounded to 4 decimals by the command, so "adds up" is
checked to 3 half-units of the 4th decimal (1.5e-4 K).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from parcelcast.cli import main
from test_budget_analytic import Q, drifting_atmosphere, eulerian_bound, heating

ROUNDING = 1.5e-4  # K: three values each rounded to 4 decimals


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("split")
    plain = folder / "ramp.nc"
    drifting_atmosphere(3.0).to_netcdf(plain)
    with_omega = folder / "ramp_omega.nc"
    drifting_atmosphere(3.0, levels_pa=(100_000.0, 85_000.0, 70_000.0), omega=0.0).to_netcdf(with_omega)
    return {"plain": plain, "omega": with_omega}


def run(capsys, *argv):
    rc = main(["split", *map(str, argv)])
    captured = capsys.readouterr()
    return rc, captured


def split_json(capsys, path, start, end, *extra):
    rc, captured = run(capsys, path, "--at", "50,16", "--level", "850", "--start", start,
                       "--end", end, "--members", "3", "--json", *extra)
    assert rc == 0, captured.err
    return json.loads(captured.out)


def test_json_contract_without_omega(files, capsys):
    out = split_json(capsys, files["plain"], "2021-03-01T04:30", "2021-03-01T22:10")
    for key in ("start", "end", "observed_change_K", "advective_K", "vertical_K", "residual_K",
                "lagrangian"):
        assert key in out
    assert set(out["lagrangian"]) >= {"non_advective_K", "advective_K", "spread_K"}
    assert out["start"] == "2021-03-01T04:30:00Z" and out["end"] == "2021-03-01T22:10:00Z"
    assert out["vertical_K"] is None  # not available: null, never 0
    assert out["observed_change_K"] == pytest.approx(out["advective_K"] + out["residual_K"],
                                                     abs=ROUNDING)
    lg = out["lagrangian"]
    assert lg["non_advective_K"] + lg["advective_K"] == pytest.approx(out["observed_change_K"],
                                                                     abs=ROUNDING)
    # the known heating, within the analytic tolerance (see test_budget_analytic)
    expected = heating("2021-03-01T04:30", "2021-03-01T22:10")
    bound = eulerian_bound("2021-03-01T04:30", "2021-03-01T22:10", 3.0)
    assert abs(out["residual_K"] - expected) <= bound + ROUNDING
    assert abs(lg["non_advective_K"] - expected) <= bound + 0.01 + ROUNDING
    # issue 13: the consistency object; uniform heating, so the two views agree
    c = out["consistency"]
    assert set(c) >= {"footing", "eulerian_minus_lagrangian_K", "ratio_to_observed_change",
                      "consistent", "threshold_K", "warnings", "meaning"}
    assert c["footing"] == lg["footing"] == "single analysis"
    assert c["consistent"] is True and abs(c["eulerian_minus_lagrangian_K"]) <= 2 * bound + 0.01
    assert c["eulerian_minus_lagrangian_K"] == pytest.approx(out["advective_K"] - lg["advective_K"],
                                                             abs=ROUNDING)
    assert any("no omega" in w for w in c["warnings"])
    assert out["residual_holds"] == ("diabatic heating plus errors, plus the vertical-motion term "
                                     "(not computed: no omega)")


def test_json_with_omega_reports_a_number(files, capsys):
    out = split_json(capsys, files["omega"], "2021-03-01T03:00", "2021-03-02T03:00")
    assert out["vertical_K"] == 0.0  # omega = 0 everywhere: available and zero
    assert out["observed_change_K"] == pytest.approx(
        out["advective_K"] + out["vertical_K"] + out["residual_K"], abs=ROUNDING)
    assert out["residual_K"] == pytest.approx(Q * 86400.0, abs=eulerian_bound(
        "2021-03-01T03:00", "2021-03-02T03:00", 3.0) + ROUNDING)


def test_times_without_zone_are_utc_and_offsets_converted(files, capsys):
    utc = split_json(capsys, files["plain"], "2021-03-01T04:30", "2021-03-01T22:10")
    # 06:30+02:00 = 04:30Z and 00:10+02:00 on the 2nd = 22:10Z on the 1st (by hand)
    zoned = split_json(capsys, files["plain"], "2021-03-01T06:30+02:00", "2021-03-02T00:10+02:00")
    z_suffix = split_json(capsys, files["plain"], "2021-03-01T04:30Z", "2021-03-01T22:10Z")
    assert zoned["start"] == utc["start"] == z_suffix["start"] == "2021-03-01T04:30:00Z"
    assert zoned["end"] == utc["end"] == "2021-03-01T22:10:00Z"
    for key in ("observed_change_K", "advective_K", "residual_K"):
        assert zoned[key] == utc[key] == z_suffix[key]


@pytest.mark.parametrize("start,end", [("2021-02-28T12:00", "2021-03-01T12:00"),
                                       ("2021-03-02T12:00", "2021-03-03T06:00")])
def test_window_outside_the_analysis_exits_5_listing_times(files, capsys, start, end):
    rc, captured = run(capsys, files["plain"], "--at", "50,16", "--level", "850", "--start", start,
                       "--end", end, "--json")
    assert rc == 5  # nothing to compute (parcelcast.errors.EXIT_STATUS)
    assert captured.out == ""
    # the analysis runs 2021-03-01 00 UTC to 2021-03-03 00 UTC (3-hourly)
    assert "2021-03-01T00:00" in captured.err and "2021-03-03T00:00" in captured.err
    assert "not available" in captured.err


def test_reversed_window_exits_5(files, capsys):
    rc, captured = run(capsys, files["plain"], "--at", "50,16", "--level", "850",
                       "--start", "2021-03-02T00:00", "--end", "2021-03-01T00:00")
    assert rc == 5 and "after its start" in captured.err


def test_obs_gives_the_observed_change(files, capsys, tmp_path):
    # station reports in local time +02:00, degC, with a gap 10-12 UTC (rows missing)
    csv = tmp_path / "station.csv"
    csv.write_text("time,temperature_degC\n"
                   "2021-03-01T05:00+02:00,1.5\n"   # 03Z
                   "2021-03-01T06:00+02:00,2.0\n"   # 04Z
                   "2021-03-01T07:00+02:00,3.0\n"   # 05Z
                   "2021-03-01T08:00+02:00,3.5\n"   # 06Z
                   "2021-03-01T09:00+02:00,4.0\n"   # 07Z
                   "2021-03-01T10:00+02:00,5.0\n"   # 08Z
                   "2021-03-01T14:00+02:00,6.0\n"   # 12Z (gap 08Z..12Z)
                   "2021-03-01T15:00+02:00,7.0\n"   # 13Z
                   "2021-03-01T16:00+02:00,7.25\n")  # 14Z
    # window 04:30Z (2.0 and 3.0 degC -> 2.5) to 13:30Z (7.0 and 7.25 -> 7.125): +4.625 K by hand
    out = split_json(capsys, files["plain"], "2021-03-01T04:30", "2021-03-01T13:30", "--obs", csv)
    assert out["observed_change_K"] == pytest.approx(4.625, abs=1e-9)
    assert str(csv) in out["observed_source"]
    assert out["station_gaps"] == ["2021-03-01T08:00Z to 2021-03-01T12:00Z"]
    assert out["residual_K"] == pytest.approx(out["observed_change_K"] - out["advective_K"],
                                              abs=ROUNDING)
    # the Lagrangian view measures the parcel at the analysis level, so it splits the analysed
    # change at the point, never the station series (a 2-m series is not a level's change)
    lagrangian = out["lagrangian"]
    assert lagrangian["observed_change_K"] != pytest.approx(out["observed_change_K"], abs=0.01)
    assert lagrangian["advective_K"] == pytest.approx(
        lagrangian["observed_change_K"] - lagrangian["non_advective_K"], abs=ROUNDING)
    assert "station series" in " ".join(out["notes"])


def test_obs_window_end_in_a_gap_is_not_bridged(files, capsys, tmp_path):
    csv = tmp_path / "station.csv"
    csv.write_text("time,temperature_K\n2021-03-01T03:00,275\n2021-03-01T04:00,276\n"
                   "2021-03-01T05:00,277\n2021-03-01T09:00,280\n2021-03-01T10:00,281\n")
    out = split_json(capsys, files["plain"], "2021-03-01T03:00", "2021-03-01T07:00", "--obs", csv)
    assert out["observed_change_K"] is None  # inside the 05Z-09Z gap: missing, not 278
    assert out["residual_K"] is None
    assert out["station_gaps"] == ["2021-03-01T05:00Z to 2021-03-01T09:00Z"]


def test_radius_mean(files, capsys):
    out = split_json(capsys, files["plain"], "2021-03-01T04:30", "2021-03-01T22:10",
                     "--radius-km", "300")
    # heating and advection are spatially uniform: the area mean equals the point values
    point = split_json(capsys, files["plain"], "2021-03-01T04:30", "2021-03-01T22:10")
    assert out["advective_K"] == pytest.approx(point["advective_K"], abs=ROUNDING)
    assert out["residual_K"] == pytest.approx(point["residual_K"], abs=ROUNDING)
    assert "area" in out


def test_text_output_has_disclaimer(files, capsys):
    rc, captured = run(capsys, files["plain"], "--at", "50,16", "--level", "850",
                       "--start", "2021-03-01T04:30", "--end", "2021-03-01T22:10", "--members", "1")
    assert rc == 0
    assert "n/a" in captured.out  # vertical term not available
    assert "not an official forecast" in captured.out
    assert "(diabatic)" not in captured.out  # the residual is never "diabatic" alone (issue 13)
    residual = captured.out.split("residual ")[1]
    assert np.isfinite(float(residual.split("K")[0]))
    assert "diabatic heating plus errors, plus the vertical-motion term (not computed" in residual
