"""Fuzz tests (issue 10 item 10): every reader, fed malformed input, returns a valid canonical
object or raises parcelcast's own error; see ``fuzz_contract.py``."""

from __future__ import annotations

import pytest

from fuzz_contract import INPUTS


@pytest.fixture
def scratch(tmp_path_factory):
    """A fresh folder per test (hypothesis reuses it across examples; files are overwritten)."""
    return tmp_path_factory.mktemp("fuzz")


def pytest_terminal_summary(terminalreporter):
    if INPUTS:
        terminalreporter.write_sep("-", "fuzz inputs per reader")
        for name, count in sorted(INPUTS.items()):
            terminalreporter.write_line(f"{name}: {count}")
