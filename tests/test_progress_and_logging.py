"""Notes and progress on stderr: drawn on a terminal, silent in a pipe, silenced by --quiet;
third-party loggers left as they are."""

from __future__ import annotations

import io
import logging
import sys

import pytest

from datasets import data_file
from parcelcast.cli import main
from parcelcast.progress import progress


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def _steps(n: int) -> None:
    with progress("opening analyses", total=n) as advance:
        for _ in range(n):
            advance()


def test_progress_draws_nothing_when_stderr_is_not_a_terminal(capsys):
    _steps(3)
    assert capsys.readouterr().err == ""


def test_progress_is_drawn_on_a_terminal(monkeypatch):
    logging.getLogger("parcelcast").setLevel(logging.INFO)
    terminal = _Terminal()
    monkeypatch.setattr(sys, "stderr", terminal)
    _steps(3)
    assert "opening analyses" in terminal.getvalue()


def test_quiet_draws_no_progress_on_a_terminal(monkeypatch):
    logging.getLogger("parcelcast").setLevel(logging.WARNING)  # what --quiet sets
    terminal = _Terminal()
    monkeypatch.setattr(sys, "stderr", terminal)
    _steps(3)
    assert terminal.getvalue() == ""


@pytest.mark.realdata
@pytest.mark.parametrize("quiet", [False, True], ids=["default", "quiet"])
def test_quiet_silences_notes_and_leaves_cfgrib_logger_alone(capsys, quiet):
    """The GFS file has one time (PROVENANCE.md): track notes that the flow is steady."""
    args = ["track", str(data_file("gfs-20111008T00-f072-global-2p5deg.grb2")), "--from", "51,12",
            "--level", "850", "--back", "3", "--json"]
    assert main((["--quiet"] if quiet else []) + args) == 0
    err = capsys.readouterr().err
    assert ("note: track: one analysis time only" in err) is not quiet
    cfgrib = logging.getLogger("cfgrib")
    assert cfgrib.level == logging.NOTSET and not cfgrib.disabled
