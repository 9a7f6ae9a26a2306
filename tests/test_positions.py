"""Positions as people type them (issue 10 item 1): a southern or western position as its own
word, hemisphere letters, and clear refusals of impossible or unreadable pairs."""

from __future__ import annotations

import argparse
import subprocess

import pytest

from datasets import cli_command
from parcelcast import __version__
from parcelcast.cli import COMMANDS, build_parser, main
from parcelcast.cli._common import attach_negative_values, lat_lon


def _position_options(command: str) -> list[argparse.Action]:
    parser = build_parser(command)
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return [a for a in sub.choices[command]._actions if a.type is lat_lon]


def _minimal_args(command: str) -> list[str]:
    """The required arguments of each command, so that parsing reaches the position."""
    return {
        "advect": ["f.nc", "--level", "850"],
        "track": ["f.nc", "--level", "850", "--back", "6"],
        "split": ["f.nc", "--level", "850", "--start", "2026-01-01T00", "--end", "2026-01-01T12"],
        "profile": ["f.nc"],
        "climate": ["f.nc", "--level", "850", "--window", "24"],
    }.get(command, ["f.nc"])


POSITION_COMMANDS = [c for c in COMMANDS if _position_options(c)]


def test_every_command_with_a_position_is_covered():
    # The commands of the list (advect, track, split, profile) all take a position.
    assert {"advect", "track", "split", "profile"} <= set(POSITION_COMMANDS)


@pytest.mark.parametrize("command", POSITION_COMMANDS)
@pytest.mark.parametrize("typed", [["-33.9,151.2"], ["33.9S,151.2E"], ["=-33.9,151.2"]])
def test_southern_position_as_its_own_word(command, typed):
    for action in _position_options(command):
        flag = action.option_strings[0]
        words = [flag + typed[0]] if typed[0].startswith("=") else [flag, *typed]
        argv = attach_negative_values([command, *_minimal_args(command), *words])
        args = build_parser(command).parse_args(argv)
        assert getattr(args, action.dest) == (-33.9, 151.2), (command, flag, typed)


@pytest.mark.parametrize("text, expected", [
    ("40.5N,97.2W", (40.5, -97.2)),
    ("40.5n, 97.2w", (40.5, -97.2)),
    ("-45,170", (-45.0, 170.0)),
    ("0,-0.5", (0.0, -0.5)),
    ("90,360", (90.0, 360.0)),
    ("52.1\u00b0N,1.5\u00b0W", (52.1, -1.5)),
])
def test_positions_read(text, expected):
    assert lat_lon(text) == expected


@pytest.mark.parametrize("text, needle", [
    ("95,0", "latitude 95.0 is outside -90..90"),
    ("-90.5,0", "latitude -90.5 is outside"),
    ("10,400", "longitude 400.0 is outside"),
    ("nan,0", "not a finite number"),
    ("10,inf", "not a finite number"),
    ("52", "expected LAT,LON"),
    ("52,1,3", "expected LAT,LON"),
    ("fifty,one", "expected LAT,LON"),
    ("1W,52N", "marks a longitude but stands in the latitude place"),
    ("-40S,10", "both a sign and a hemisphere letter"),
    (",", "expected LAT,LON"),
])
def test_bad_positions_refused(text, needle, capsys):
    with pytest.raises(argparse.ArgumentTypeError, match=needle):
        lat_lon(text)
    with pytest.raises(SystemExit) as exc:  # and through the command line: usage status 2
        main(["advect", "f.nc", "--level", "850", "--at", text])
    assert exc.value.code == 2
    err = capsys.readouterr().err
    assert needle in err and "Traceback" not in err


def test_negative_values_only_join_options():
    assert attach_negative_values(["advect", "-h"]) == ["advect", "-h"]
    assert attach_negative_values(["--lat", "-33", "--json"]) == ["--lat=-33", "--json"]
    assert attach_negative_values(["--", "-3,4"]) == ["--", "-3,4"]


def test_profile_lat_lon_options(capsys):
    args = build_parser("profile").parse_args(
        attach_negative_values(["profile", "s.csv", "--lat", "-33.9", "--lon", "151.2E"]))
    assert (args.lat, args.lon) == (-33.9, 151.2)
    with pytest.raises(SystemExit):
        main(["profile", "s.csv", "--lat", "nan"])
    assert "not a finite number" in capsys.readouterr().err


def test_version():
    done = subprocess.run([*cli_command(), "--version"], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0 and done.stdout.strip() == f"parcelcast {__version__}"
