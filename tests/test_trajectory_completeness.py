"""Incomplete trajectories say so: JSON ``complete``, ``hours_covered``, statuses counted,
a warning on stderr and the text's first line.

Outside reference: the ERA5 ensemble file holds 4 analyses 12 h apart, 2017-01-01 00 UTC to
2017-01-02 12 UTC (PROVENANCE.md): 36 h, so a 48-h back trajectory arriving at the last time
can cover 36 h at most.
"""

from __future__ import annotations

import json

from datasets import data_file
from parcelcast.cli import main

ERA5 = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
TRACK = ["--from", "45,10", "--level", "850", "--wind", "geostrophic"]




def test_48h_back_on_36h_of_analyses_is_incomplete(capsys):
    assert main(["track", str(data_file(ERA5)), *TRACK, "--back", "48", "--json"]) == 0
    captured = capsys.readouterr()
    out = json.loads(captured.out)
    assert out["complete"] is False
    assert out["hours_requested"] == 48.0 and out["hours_covered"] == 36.0
    assert out["member_statuses"] == {"left_time_range": 10}  # 10 analysis members
    assert out["trajectories"] == 10 and out["trajectories_complete"] == 0
    warning = [line for line in captured.err.splitlines() if "warning" in line]
    assert len(warning) == 1 and "36 of the 48 h" in warning[0]


def test_text_output_says_so_on_its_first_line(capsys):
    assert main(["track", str(data_file(ERA5)), *TRACK, "--back", "48"]) == 0
    first = capsys.readouterr().out.splitlines()[0]
    assert first.startswith("INCOMPLETE") and "36 of the 48 h" in first


def test_series_entries_carry_their_own_completeness(capsys):
    """Arrivals at 12 UTC and 00 UTC on the 2nd, 30 h back: the first reaches 06 UTC on the
    1st (inside the file), the second would need 18 UTC on 31 December and covers 24 h."""
    assert main(["track", str(data_file(ERA5)), *TRACK, "--back", "30", "--series", "2",
                 "--series-step", "12", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    first, second = out["series"]
    assert first["complete"] is True and first["hours_covered"] == 30.0
    assert second["complete"] is False and second["hours_covered"] == 24.0
    assert out["complete"] is False and out["groups_incomplete"] == 1
    assert main(["track", str(data_file(ERA5)), *TRACK, "--back", "30", "--series", "2",
                 "--series-step", "12"]) == 0
    text = capsys.readouterr().out.splitlines()
    assert text[0].startswith("INCOMPLETE") and "the shortest 24 h" in text[0]
    assert "1 of 2 start times incomplete" in text[0]
    assert any(line.startswith("  also") and "INCOMPLETE: 24 of 30 h" in line for line in text)


def test_complete_run_says_complete(capsys):
    assert main(["track", str(data_file(ERA5)), *TRACK, "--back", "24", "--json"]) == 0
    captured = capsys.readouterr()
    out = json.loads(captured.out)
    assert out["complete"] is True and out["hours_covered"] == 24.0
    assert "warning" not in captured.err
