"""The briefing's configuration: the keys of issue 9 exactly, and clear errors naming the key."""

from __future__ import annotations

import pytest

from parcelcast.brief import BriefConfigError, read_config

ISSUE_EXAMPLE = """
[station]
name = "Harbour Point"          # shown on every map and in the text
lat = 50.0
lon = 5.0
[data]
analyses = ["analyses/*.grb2"]  # paths or globs, combined along time
wind = "actual"                 # or "geostrophic"
[brief]
levels_hPa = [850, 700]
area_lat = [40.0, 60.0]         # map area, degrees
area_lon = [-10.0, 20.0]
trajectory_hours = 24
"""


def _write(tmp_path, text):
    path = tmp_path / "brief.toml"
    path.write_text(text)
    return path


def test_the_issue_example_reads(tmp_path):
    config = read_config(_write(tmp_path, ISSUE_EXAMPLE))
    assert config.station_name == "Harbour Point"
    assert (config.lat, config.lon) == (50.0, 5.0)
    assert config.analyses == [str(tmp_path / "analyses" / "*.grb2")]  # relative to the file
    assert config.levels_hpa == [850.0, 700.0]
    assert config.map_area() == [40.0, 60.0, -10.0, 20.0]
    assert config.trajectory_hours == 24.0 and config.wind == "actual"
    assert config.surface is False  # the near-surface level only when asked for
    with_surface = read_config(_write(tmp_path, ISSUE_EXAMPLE + "surface = true\n"))
    assert with_surface.surface is True


def test_unknown_key_lists_the_valid_ones(tmp_path):
    path = _write(tmp_path, ISSUE_EXAMPLE.replace("trajectory_hours = 24", "trajectory_hour = 24"))
    with pytest.raises(BriefConfigError) as err:
        read_config(path)
    text = str(err.value)
    assert "[brief] trajectory_hour" in text and "trajectory_hours" in text and "levels_hPa" in text
    assert str(path) in text


def test_unknown_table_is_refused(tmp_path):
    with pytest.raises(BriefConfigError, match=r"\[maps\]"):
        read_config(_write(tmp_path, ISSUE_EXAMPLE + "\n[maps]\ndpi = 100\n"))


@pytest.mark.parametrize("old,new,key", [
    ("lat = 50.0", "lat = 95.0", "[station] lat"),
    ("lat = 50.0", 'lat = "50"', "[station] lat"),
    ('wind = "actual"', 'wind = "thermal"', "[data] wind"),
    ("levels_hPa = [850, 700]", "levels_hPa = [850, 5]", "[brief] levels_hPa"),
    ("levels_hPa = [850, 700]", "levels_hPa = 850", "[brief] levels_hPa"),
    ("area_lat = [40.0, 60.0]", "area_lat = [60.0, 40.0]", "[brief] area_lat"),
    ("trajectory_hours = 24", "trajectory_hours = -6", "[brief] trajectory_hours"),
    ("trajectory_hours = 24", "trajectory_hours = true", "[brief] trajectory_hours"),
    ('name = "Harbour Point"', "name = 3", "[station] name"),
    ("trajectory_hours = 24", 'trajectory_hours = 24\nsurface = "yes"', "[brief] surface"),
])
def test_bad_values_name_the_key(tmp_path, old, new, key):
    assert old in ISSUE_EXAMPLE
    with pytest.raises(BriefConfigError) as err:
        read_config(_write(tmp_path, ISSUE_EXAMPLE.replace(old, new)))
    assert key in str(err.value)


def test_missing_key_and_missing_file(tmp_path):
    with pytest.raises(BriefConfigError, match=r"\[station\] lon"):
        read_config(_write(tmp_path, ISSUE_EXAMPLE.replace("lon = 5.0", "")))
    from parcelcast.errors import InputFileError

    with pytest.raises(InputFileError):
        read_config(tmp_path / "absent.toml")


def test_bad_config_exits_2_with_the_message(tmp_path, capsys):
    from parcelcast.cli import main

    path = _write(tmp_path, ISSUE_EXAMPLE.replace("lat = 50.0", "lat = 95.0"))
    assert main(["brief", str(path), "--out", str(tmp_path / "out")]) == 3  # unreadable input (errors.EXIT_STATUS), as for a case file
    assert "[station] lat" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()
