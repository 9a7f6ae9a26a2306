"""`parcelcast review` on both case studies: it writes a whole report.

Checks: every output is written; review.json is strict JSON (no NaN); the report carries
the guidance notice; the timeline's parts add up to the observed change at every time
(the residual's definition); on the invented demo, the residual over the window matches
the heating the demo imposes (`parcelcast.demo.diurnal_heating`) within the time-interpolation error
of 3-hourly fields (0.05 K; measured 0.03 K).
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest

from datasets import data_file
from parcelcast import demo
from parcelcast.cli import DISCLAIMER, main

CASES = Path(__file__).resolve().parents[1] / "case_studies"
OUTPUTS = ("report.md", "report.html", "timeline.png", "split-maps.png", "trajectories.png",
           "timeline.csv", "review.json", "split-fields.nc")


def _strict_json(path):
    def refuse(constant):
        raise ValueError(f"{path} holds {constant}, which is not JSON")

    return json.loads(path.read_text(), parse_constant=refuse)


def _check_outputs(out):
    for name in OUTPUTS:
        assert (out / name).is_file() and (out / name).stat().st_size > 0, name
    assert DISCLAIMER in (out / "report.md").read_text()
    assert "not an official forecast" in (out / "report.html").read_text()
    # one template for both pages: the same sections in the same order (the Method too)
    import re

    html_sections = re.findall(r"<h2>(.*?)</h2>", (out / "report.html").read_text())
    md_sections = re.findall(r"^## (.*)$", (out / "report.md").read_text(), flags=re.M)
    assert html_sections == md_sections and "Method" in md_sections
    with open(out / "timeline.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    for row in rows:
        vertical = float(row["vertical_K"]) if row["vertical_K"] else 0.0
        total = float(row["advective_K"]) + vertical + float(row["residual_K"])
        assert total == pytest.approx(float(row["observed_change_K"]), abs=2e-4)  # 4-decimal CSV
    return rows, _strict_json(out / "review.json")


def test_review_of_the_demo_case(tmp_path):
    demo.write_scenario(tmp_path / "demo-analysis.nc")
    case = tmp_path / "case.toml"
    text = (CASES / "demo" / "case.toml").read_text()
    case.write_text(text.replace('"data/demo-analysis.nc"', '"demo-analysis.nc"'))
    out = tmp_path / "review"
    assert main(["review", str(case), "--out", str(out)]) == 0
    rows, summary = _check_outputs(out)
    assert len(rows) == 8  # 06 UTC to 03 UTC next day, 3-hourly: the start and 7 times
    start = (np.datetime64("2026-03-14T06:00") - demo.START) / np.timedelta64(1, "s")
    end = (np.datetime64("2026-03-15T03:00") - demo.START) / np.timedelta64(1, "s")
    imposed = demo.diurnal_heating(end, 850.0)[0] - demo.diurnal_heating(start, 850.0)[0]
    assert summary["residual_K"] == pytest.approx(imposed, abs=0.05)
    assert summary["lagrangian"]["non_advective_K"] == pytest.approx(imposed, abs=0.05)
    # uniform heating: both views agree (issue 13): the report says so and says what they mean
    assert summary["consistency"]["consistent"] is True
    assert abs(summary["consistency"]["eulerian_minus_lagrangian_K"]) < 0.1
    report = (out / "report.md").read_text()
    assert "## Do the two views agree?" in report and "along the air's path" in report


@pytest.mark.realdata
def test_review_of_the_era5_case(tmp_path, monkeypatch):
    path = data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1")
    monkeypatch.setenv("PARCELCAST_DATA", str(path.parent))
    out = tmp_path / "review"
    assert main(["review", str(CASES / "era5-winter-2017" / "case.toml"), "--out", str(out)]) == 0
    rows, summary = _check_outputs(out)
    assert len(rows) == 4  # 00, 12, 00, 12 UTC
    assert summary["vertical_K"] is None  # no omega in this file: not available, never 0
    assert len(summary["observed_change_members_K"]) == 10
    # issue 13: the two advective estimates differ by ~4-5 K of an 11 K change: said, not hidden
    c = summary["consistency"]
    assert c["consistent"] is False and c["footing"] == "ensemble mean of 10 members"
    assert any(w.startswith("inconsistent split") for w in c["warnings"])
    for name in ("report.md", "report.html"):
        text = (out / name).read_text()
        assert "NOT consistent" in text and "never forced together" in text
        assert "(diabatic)" not in text
