"""Shared fixtures: where the real open data live (``../shared/data`` or ``PARCELCAST_DATA``).

Kept small and generic: other test files add their own fixtures beside their tests.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from datasets import data_dir


@pytest.fixture(scope="session")
def shared_data() -> Path:
    """The real-data folder (see its PROVENANCE.md); skips with a reason when it is absent.

    Tests needing one file call ``datasets.data_file(name)``, which skips when that file is absent.
    """
    folder = data_dir()
    if not folder.is_dir():
        pytest.skip(f"real-data folder {folder} not found (set PARCELCAST_DATA to it)")
    return folder


@pytest.fixture(scope="session", autouse=True)
def _maps_from_packaged_shapes(tmp_path_factory):
    """Cartopy finds no cached downloads: maps must draw from the Natural Earth shapes in the
    package (``parcelcast/data/natural_earth``); a download attempt is an error (pyproject
    ``filterwarnings``: ``cartopy.io.DownloadWarning``)."""
    import cartopy

    cartopy.config["data_dir"] = tmp_path_factory.mktemp("cartopy-downloads-not-allowed")
    yield
