"""Every JSON document carries schema_version and meets the JSON Schema shipped for its command
(issue 10 item 5 / brief item 6).  Outside reference: the JSON Schema 2020-12 specification,
through the ``jsonschema`` package's Draft202012Validator."""

from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path

import pytest

from parcelcast import demo
from parcelcast.cli import main
from parcelcast.schemas import COMMANDS, SCHEMA_VERSION, load, validate

import jsonschema  # noqa: E402

CASES = Path(__file__).resolve().parents[1] / "case_studies"
SOUNDING = """pressure_hPa,temperature_degC,dewpoint_degC,wind_direction_deg,wind_speed_kt
1000,20,15,180,10
925,15,10,200,20
850,10,5,220,25
700,0,-5,250,30
500,-15,-25,270,40
"""


@pytest.fixture(scope="module")
def documents(tmp_path_factory):
    """The JSON of every command, from the demo scenario (a few seconds)."""
    folder = tmp_path_factory.mktemp("json")
    analysis = folder / "demo-analysis.nc"
    demo.write_scenario(analysis)
    common = [str(analysis), "--level", "850"]
    runs = {
        "advect at a point": ("advect", ["advect", *common, "--at", "51.5,2", "--json"]),
        "advect field": ("advect", ["advect", *common, "--json"]),
        "track": ("track", ["track", *common, "--from", "51.5,2", "--back", "6", "--members", "2",
                            "--series", "2", "--json"]),
        "split": ("split", ["split", *common, "--at", "51.5,2", "--start", "2026-03-14T06",
                            "--end", "2026-03-15T03", "--guidance", "--json"]),
        "profile csv": ("profile", ["profile", str(_write(folder / "s.csv", SOUNDING)), "--json"]),
        "profile column": ("profile", ["profile", str(analysis), "--at", "51.5,2", "--json"]),
    }
    docs = {}
    for name, (command, argv) in runs.items():
        buffer = io.StringIO()
        with contextlib.redirect_stdout(buffer):
            assert main(argv) == 0, name
        docs[name] = (command, json.loads(buffer.getvalue()))
    summary = folder / "track-file.json"
    assert main(["track", *common, "--from", "51.5,2", "--back", "6", "--out", str(summary)]) == 0
    docs["track --out .json"] = ("track", json.loads(summary.read_text()))
    case = folder / "case.toml"
    case.write_text((CASES / "demo" / "case.toml").read_text().replace(
        '"data/demo-analysis.nc"', '"demo-analysis.nc"'))
    assert main(["review", str(case), "--out", str(folder / "review")]) == 0
    docs["review.json"] = ("review", json.loads((folder / "review" / "review.json").read_text()))
    return docs


def _write(path, text):
    path.write_text(text)
    return path


@pytest.mark.parametrize("command", COMMANDS)
def test_schemas_are_valid_json_schema(command):
    schema = load(command)
    jsonschema.Draft202012Validator.check_schema(schema)
    assert {"schema_version", "disclaimer"} <= set(schema["required"])
    assert schema.get("additionalProperties", True) is True  # others add fields: stay permissive


def test_every_document_meets_its_schema(documents):
    assert {c for c, _ in documents.values()} == set(COMMANDS)
    for name, (command, doc) in documents.items():
        assert doc["schema_version"] == SCHEMA_VERSION, name
        validate(doc, command)


def test_schema_refuses_a_document_without_its_core(documents):
    command, doc = documents["split"]
    broken = {k: v for k, v in doc.items() if k != "advective_K"}
    with pytest.raises(jsonschema.ValidationError, match="advective_K"):
        validate(broken, command)
    command, doc = documents["review.json"]
    old_layout = dict(doc, lagrangian={k: v for k, v in doc["lagrangian"].items() if k != "origin"})
    with pytest.raises(jsonschema.ValidationError, match="origin"):
        validate(old_layout, command)


def test_split_and_review_share_one_layout(documents):
    split, review = documents["split"][1], documents["review.json"][1]
    shared = {"start", "end", "lat", "lon", "level_hPa", "observed_change_K", "advective_K",
              "vertical_K", "residual_K", "lagrangian"}
    assert shared <= set(split) and shared <= set(review)
    assert set(split["lagrangian"]["origin"]) == set(review["lagrangian"]["origin"]) == {"lat", "lon"}
