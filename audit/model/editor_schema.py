"""The balance schema made for editors and off-the-shelf validators (standard keywords only).

pydantic's schema needs three repairs before a plain JSON Schema validator reads it well:

* the steps are a ``oneOf`` told apart by an OpenAPI ``discriminator``, which validators ignore:
  one misspelt field of a turbine then fails every branch and gives dozens of errors ("'compressor'
  was expected", ...). Here each kind's definition is selected by ``if``/``then`` on its ``kind``
  ``const``, so a misspelt field of a known kind gives one error, and an unknown kind one error too;
* a bound written on a quantity field (``Field(ge=0)`` on a text-with-unit type) leaks pydantic's
  own ``ge``/``gt``/``le``/``lt`` into the schema: they become ``minimum``, ``exclusiveMinimum``,
  ``maximum``, ``exclusiveMaximum``;
* a ``$schema:`` key at the top of the file (how an editor is pointed at the schema) is allowed.

:func:`acceptance_schema` is the schema of an acceptance file (``*.accepted.yaml``).
"""

from __future__ import annotations

import json
from typing import Any

from pydantic import BaseModel

from audit.model.acceptance import Acceptance

SCHEMA_URI = "https://json-schema.org/draft/2020-12/schema"
ACCEPTANCE_SCHEMA_FILE = "plant-audit-accepted.schema.json"
SCHEMA_VERSION = "1"
SCHEMA_FILE = "plant-audit-balance.schema.json"
SCHEMA_KEY = "$schema"
"""A top-level key a balance or acceptance file may hold for editors; the model ignores it."""

_LEAKED = {"ge": "minimum", "gt": "exclusiveMinimum", "le": "maximum", "lt": "exclusiveMaximum"}
_SCHEMA_PROPERTY = {
    "type": "string",
    "description": "the JSON Schema this file follows (for editors; plant-audit ignores it)",
}


def standard_keywords(node: Any) -> Any:
    """``node`` with pydantic's leaked bound names turned into JSON Schema keywords (recursively;
    the names of properties are left alone)."""
    if isinstance(node, list):
        return [standard_keywords(n) for n in node]
    if not isinstance(node, dict):
        return node
    out: dict[str, Any] = {}
    for key, value in node.items():
        if key in ("properties", "$defs", "patternProperties"):
            out[key] = {name: standard_keywords(sub) for name, sub in value.items()}
        else:
            out[_LEAKED.get(str(key), str(key))] = standard_keywords(value)
    return out


def select_kinds(schema: dict[str, Any]) -> dict[str, Any]:
    """Replace the discriminated ``oneOf`` of the steps by one ``if``/``then`` per kind."""
    steps = schema.get("properties", {}).get("steps", {})
    items = steps.get("items", {})
    mapping = items.get("discriminator", {}).get("mapping")
    if not mapping:
        return schema
    steps["items"] = {
        "type": "object",
        "required": ["kind"],
        "properties": {"kind": {"enum": sorted(mapping), "description": "the kind of equipment"}},
        "allOf": [
            {
                "if": {"properties": {"kind": {"const": kind}}, "required": ["kind"]},
                "then": {"$ref": reference},
            }
            for kind, reference in sorted(mapping.items())
        ],
    }
    return schema


def editor_schema(schema: dict[str, Any]) -> dict[str, Any]:
    """pydantic's schema of a balance file, repaired for editors (see the module docstring)."""
    schema = select_kinds(standard_keywords(schema))
    schema.setdefault("properties", {})[SCHEMA_KEY] = dict(_SCHEMA_PROPERTY)
    return schema


def acceptance_schema() -> dict[str, Any]:
    """The JSON Schema of an acceptance file: one key, ``accepted:``, with a list of acceptances."""
    item = standard_keywords(_model_schema(Acceptance))
    definitions = item.pop("$defs", {})
    item["anyOf"] = [{"required": ["step"]}, {"required": ["stream"]}]
    return {
        "$schema": SCHEMA_URI,
        "$id": f"https://plant-audit.invalid/schemas/{ACCEPTANCE_SCHEMA_FILE}",
        "title": "plant-audit acceptances",
        "description": "Findings a reviewer has accepted, in the file <balance>.accepted.yaml "
        "beside a balance. Each acceptance names the finding and its step (or stream), why it "
        "may stand, who accepted it and the last day it holds.",
        "type": "object",
        "required": ["accepted"],
        "additionalProperties": False,
        "properties": {
            SCHEMA_KEY: dict(_SCHEMA_PROPERTY),
            "accepted": {"type": "array", "items": item},
        },
        **({"$defs": definitions} if definitions else {}),
    }


def _model_schema(model: type[BaseModel]) -> dict[str, Any]:
    return model.model_json_schema(mode="validation")


def acceptance_schema_text() -> str:
    return json.dumps(acceptance_schema(), indent=2, ensure_ascii=False, sort_keys=True) + "\n"


def balance_schema(model: type[BaseModel]) -> dict:
    """The JSON Schema of a balance file (for editors), as committed in ``schemas/``: pydantic's,
    with standard keywords only and each step kind selected by its ``kind`` (:func:`editor_schema`).
    No streams at all is valid: a balance of vessels (closed steps) has none."""
    schema = editor_schema(model.model_json_schema(mode="validation"))
    schema["$schema"] = SCHEMA_URI
    schema["$id"] = f"https://plant-audit.invalid/schemas/{SCHEMA_FILE}"
    schema["description"] = (
        f"A plant energy balance for plant-audit (schema version {SCHEMA_VERSION}). Quantities "
        "are strings with units, e.g. '420 degC', '40 barg', '12 t/h', '2.5 MW'."
    )
    return schema
