"""One vocabulary of options (issue 10 item 5): the README's table matches the parsers, and the
earlier spellings still work as aliases."""

from __future__ import annotations

import argparse
import re
from pathlib import Path

import pytest

from parcelcast.cli import build_parser
from parcelcast.cli._common import attach_negative_values

README = Path(__file__).resolve().parents[1] / "README.md"


def _options(command: str) -> set[str]:
    parser = build_parser(command)
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return {o for a in sub.choices[command]._actions for o in a.option_strings}


def _table() -> list[tuple[list[str], list[str]]]:
    text = README.read_text(encoding="utf-8")
    section = text.split("### Options: one vocabulary", 1)[1].split("###", 1)[0]
    rows = []
    for line in section.splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split(" | ")]
        if len(cells) == 3 and cells[0].startswith("`--"):
            options = re.findall(r"`(--[a-z-]+)", cells[0])
            rows.append((options, [c.strip() for c in cells[2].split(",")]))
    return rows


def test_every_option_of_the_table_exists_where_it_says():
    rows = _table()
    assert len(rows) >= 10
    for options, commands in rows:
        for command in commands:
            if command in ("all",) or command.startswith("`"):
                continue
            assert set(options) <= _options(command), (options, command)


@pytest.mark.parametrize("command, new, old, dest, value", [
    ("track", "--at", "--from", "point", "-33.9,151.2"),
    ("track", "--time", "--start", "start", "2026-03-14T06"),
    ("advect", "--plot", "--map", "map", "out.png"),
])
def test_earlier_spellings_are_aliases(command, new, old, dest, value):
    base = {"track": ["f.nc", "--level", "850", "--back", "6", "--at", "1,1"],
            "advect": ["f.nc", "--level", "850"]}[command]
    parse = build_parser(command).parse_args
    a = parse(attach_negative_values([command, *base, new, value]))
    b = parse(attach_negative_values([command, *base, old, value]))
    assert getattr(a, dest) == getattr(b, dest) is not None
