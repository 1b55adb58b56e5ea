"""The balance and acceptance schemas, read by an off-the-shelf validator as an editor would."""

from __future__ import annotations

import copy
import json
from pathlib import Path
from typing import Any

import pytest
import yaml
from conftest import ROOT, SAMPLE

import audit
from audit.model.editor_schema import ACCEPTANCE_SCHEMA_FILE, acceptance_schema_text
from audit.reading import schema_text

jsonschema = pytest.importorskip("jsonschema")

SCHEMAS = ROOT / "schemas"
BALANCE_SCHEMA = SCHEMAS / "plant-audit-balance.schema.json"
ACCEPTANCE_SCHEMA = SCHEMAS / ACCEPTANCE_SCHEMA_FILE

# The keywords of JSON Schema 2020-12 (core, applicator, validation, metadata, format, content)
STANDARD = {
    "$schema", "$id", "$ref", "$defs", "$comment", "$anchor", "$dynamicRef", "$dynamicAnchor",
    "allOf", "anyOf", "oneOf", "not", "if", "then", "else", "properties", "patternProperties",
    "additionalProperties", "propertyNames", "items", "prefixItems", "contains", "type", "enum",
    "const", "multipleOf", "maximum", "exclusiveMaximum", "minimum", "exclusiveMinimum",
    "maxLength", "minLength", "pattern", "maxItems", "minItems", "uniqueItems", "maxContains",
    "minContains", "maxProperties", "minProperties", "required", "dependentRequired",
    "dependentSchemas", "unevaluatedItems", "unevaluatedProperties", "title", "description",
    "default", "deprecated", "readOnly", "writeOnly", "examples", "format",
}  # fmt: skip


def _validator(path: Path) -> Any:
    schema = json.loads(path.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)  # valid against the meta-schema
    return jsonschema.Draft202012Validator(schema)


def _keywords(node: Any, found: set[str]) -> set[str]:
    if isinstance(node, list):
        for item in node:
            _keywords(item, found)
    elif isinstance(node, dict):
        for key, value in node.items():
            found.add(key)
            if key in ("properties", "$defs", "patternProperties"):
                for sub in value.values():
                    _keywords(sub, found)
            elif key not in ("default", "examples", "const", "enum"):
                _keywords(value, found)
    return found


def test_committed_schemas_are_current() -> None:
    # If this fails: plant-audit schema -o ...; plant-audit schema --accepted -o ...
    assert BALANCE_SCHEMA.read_text(encoding="utf-8") == schema_text()
    assert ACCEPTANCE_SCHEMA.read_text(encoding="utf-8") == acceptance_schema_text()


@pytest.mark.parametrize("path", [BALANCE_SCHEMA, ACCEPTANCE_SCHEMA])
def test_schemas_use_standard_keywords_only(path: Path) -> None:
    schema = json.loads(path.read_text(encoding="utf-8"))
    assert _keywords(schema, set()) - STANDARD == set()
    assert "discriminator" not in path.read_text(encoding="utf-8")


@pytest.fixture(scope="module")
def clean() -> dict:
    return yaml.safe_load((SAMPLE / "quillon-bay-clean.yaml").read_text(encoding="utf-8"))


def test_good_samples_give_no_message() -> None:
    check = _validator(BALANCE_SCHEMA)
    for path in sorted(SAMPLE.glob("quillon-bay-*.yaml")):
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        assert list(check.iter_errors(data)) == [], path.name


def _messages(data: dict) -> list[str]:
    return [e.message for e in _validator(BALANCE_SCHEMA).iter_errors(data)]


def test_a_misspelt_field_of_a_known_kind_gives_one_message(clean: dict) -> None:
    data = copy.deepcopy(clean)
    turbine = next(s for s in data["steps"] if s["kind"] == "turbine")
    turbine["shaft_powr"] = turbine.pop("shaft_power")
    assert _messages(data) == ["Additional properties are not allowed ('shaft_powr' was unexpected)"]


def test_an_unknown_kind_gives_one_message(clean: dict) -> None:
    data = copy.deepcopy(clean)
    data["steps"][0]["kind"] = "pumpp"
    (message,) = _messages(data)
    assert message.startswith("'pumpp' is not one of ['chiller', 'compressor', 'cooler',")


def test_a_negative_tolerance_is_refused_by_the_standard_minimum(clean: dict) -> None:
    data = copy.deepcopy(clean)
    data["balance"]["tolerances"] = {"energy_relative": -0.1}
    assert _messages(data) == ["-0.1 is less than the minimum of 0"]


def test_a_schema_key_is_accepted_by_schema_and_model(clean: dict, tmp_path: Path) -> None:
    data = {"$schema": "../schemas/plant-audit-balance.schema.json", **copy.deepcopy(clean)}
    assert _messages(data) == []
    text = (SAMPLE / "quillon-bay-clean.yaml").read_text(encoding="utf-8")
    path = tmp_path / "plant.yaml"
    path.write_text('"$schema": ../schemas/plant-audit-balance.schema.json\n' + text, encoding="utf-8")
    accepted = tmp_path / "plant.accepted.yaml"
    accepted.write_text(
        '"$schema": plant-audit-accepted.schema.json\naccepted:\n  - finding: energy-imbalance\n'
        "    step: T1\n    reason: meter pending\n    accepted_by: site reviewer\n"
        "    expires: 2999-01-01\n",
        encoding="utf-8",
    )
    assert audit.run(path).counts()["error"] == 0  # read like the clean sample, the key ignored


def test_the_acceptance_schema(tmp_path: Path) -> None:
    check = _validator(ACCEPTANCE_SCHEMA)
    good = {
        "accepted": [
            {
                "finding": "energy-imbalance",
                "step": "T1",
                "reason": "meter pending",
                "accepted_by": "site reviewer",
                "expires": "2999-01-01",
            }
        ]
    }
    assert list(check.iter_errors(good)) == []
    bad = copy.deepcopy(good)
    del bad["accepted"][0]["expires"]
    assert [e.message for e in check.iter_errors(bad)] == ["'expires' is a required property"]
    nowhere = copy.deepcopy(good)
    del nowhere["accepted"][0]["step"]
    assert len(list(check.iter_errors(nowhere))) == 1
