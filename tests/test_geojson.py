"""GeoJSON output of trajectories (issue 10 item 4): valid RFC 7946, cut at the antimeridian.

Outside references: RFC 7946 section 3.1.9 (lines crossing the antimeridian are cut there,
longitudes within -180..180) and the ``geojson`` package's validator (PyPI ``geojson``).
"""

from __future__ import annotations

import json

import geojson
import numpy as np
import pytest

from datasets import write_solid_body_netcdf
from parcelcast.cli import main
from parcelcast.errors import EXIT_STATUS


@pytest.fixture(scope="module")
def dateline_file(tmp_path_factory):
    """Solid-body rotation about the pole: a parcel at 60N moves east across the dateline."""
    return write_solid_body_netcdf(tmp_path_factory.mktemp("gj") / "solid.nc")


def _lines(geometry):
    return [geometry["coordinates"]] if geometry["type"] == "LineString" else geometry["coordinates"]


def _check_rfc7946(doc):
    obj = geojson.loads(json.dumps(doc))
    assert obj.is_valid, obj.errors()
    for feature in doc["features"]:
        for line in _lines(feature["geometry"]):
            lon = np.array([p[0] for p in line])
            lat = np.array([p[1] for p in line])
            assert ((-180 <= lon) & (lon <= 180)).all() and ((-90 <= lat) & (lat <= 90)).all()
            assert (np.abs(np.diff(lon)) < 180).all()  # no segment runs the long way round


def test_line_across_the_dateline_is_cut(dateline_file, tmp_path, capsys):
    out = tmp_path / "paths.geojson"
    assert main(["track", str(dateline_file), "--from", "60,170", "--level", "500", "--ahead", "12",
                 "--out", str(out)]) == 0
    doc = json.loads(out.read_text())
    _check_rfc7946(doc)
    geometry = doc["features"][0]["geometry"]
    assert geometry["type"] == "MultiLineString" and len(geometry["coordinates"]) == 2
    west, east = geometry["coordinates"]
    assert west[-1][0] == 180.0 and east[0][0] == -180.0  # cut exactly at the antimeridian
    assert west[-1][1] == east[0][1]  # at the same latitude on both sides
    assert west[0] == [170.0, 60.0]


def test_line_away_from_the_dateline_stays_whole(dateline_file, tmp_path):
    out = tmp_path / "paths.geojson"
    assert main(["track", str(dateline_file), "--from", "60,-90", "--level", "500", "--ahead", "12",
                 "--out", str(out)]) == 0
    doc = json.loads(out.read_text())
    _check_rfc7946(doc)
    assert doc["features"][0]["geometry"]["type"] == "LineString"


def test_suffix_decides_the_format(dateline_file, tmp_path, capsys):
    common = ["track", str(dateline_file), "--from", "60,-90", "--level", "500", "--ahead", "6"]
    summary = tmp_path / "summary.json"
    assert main([*common, "--out", str(summary)]) == 0
    doc = json.loads(summary.read_text())
    assert "arrival" in doc and "type" not in doc  # the --json summary, not GeoJSON
    for bad in ("paths.xml", "paths", "paths.GEOJSONX"):
        assert main([*common, "--out", str(tmp_path / bad)]) == EXIT_STATUS["usage"]
        assert ".geojson" in capsys.readouterr().err
        assert not (tmp_path / bad).exists()
