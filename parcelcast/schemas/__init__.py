"""JSON Schemas (draft 2020-12) of every JSON document parcelcast writes, one per command.

``advect``, ``track``, ``split``, ``profile`` (their ``--json`` output; ``track --out FILE.json``
writes the same document) and ``review`` (``review.json``).  Every document carries
``schema_version`` (:data:`SCHEMA_VERSION`, major.minor): a new minor version only adds
properties (the schemas allow properties they do not list), a new major version may change
or remove them.  The schemas ship with the package::

    >>> from parcelcast.schemas import load
    >>> load("track")["required"][:2]
    ['schema_version', 'disclaimer']
"""

from __future__ import annotations

import json
from importlib import resources

SCHEMA_VERSION = "1.0"
COMMANDS = ("advect", "track", "split", "profile", "review")


def load(command: str) -> dict:
    """The JSON Schema of ``command``'s JSON document (a dict)."""
    if command not in COMMANDS:
        raise ValueError(f"no JSON schema for {command!r}; schemas exist for {', '.join(COMMANDS)}")
    text = resources.files(__name__).joinpath(f"{command}.schema.json").read_text(encoding="utf-8")
    return json.loads(text)


def stamp(document: dict) -> dict:
    """``document`` with ``schema_version`` as its first key (the document is not modified)."""
    return {"schema_version": SCHEMA_VERSION, **{k: v for k, v in document.items()
                                                 if k != "schema_version"}}


def validate(document: dict, command: str) -> None:
    """Check ``document`` against ``command``'s schema (needs the ``jsonschema`` package)."""
    import jsonschema

    jsonschema.validate(document, load(command), cls=jsonschema.Draft202012Validator)
