"""Coastlines and borders come from the Natural Earth shapes shipped in the package, offline.

Source of the shapes: Natural Earth (public domain), 1:110m and 1:50m, see README and
../shared/data/PROVENANCE.md.  A download attempt turns into an error (pyproject filterwarnings).
"""

from __future__ import annotations

import cartopy.io
import cartopy.io.shapereader as shapereader
import pytest

from parcelcast.render import geography

SHAPES = [("physical", "coastline"), ("cultural", "admin_0_boundary_lines_land")]


@pytest.mark.parametrize("scale", ["110m", "50m"])
@pytest.mark.parametrize("category,name", SHAPES)
def test_packaged_shapes_are_read_without_download(scale, category, name):
    folder = geography.use_packaged_shapes()
    path = shapereader.natural_earth(resolution=scale, category=category, name=name)
    assert str(path).startswith(str(folder))
    records = list(shapereader.Reader(path).geometries())
    # Natural Earth coastlines and land borders have hundreds of line strings at these scales
    assert len(records) > 100


def test_a_download_attempt_fails_the_tests():
    """The 1:10m shapes are not shipped: cartopy would download them; here that is an error."""
    geography.use_packaged_shapes()
    with pytest.raises(cartopy.io.DownloadWarning):
        shapereader.natural_earth(resolution="10m", category="physical", name="coastline")


def test_scale_follows_the_area():
    assert geography.scale_for([40, 60, -10, 20]) == "50m"
    assert geography.scale_for([-90, 90, -180, 180]) == "110m"
    assert geography.scale_for(None) == "110m"
