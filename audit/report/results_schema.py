"""The published JSON Schema of the JSON results (``schemas/plant-audit-results.schema.json``),
built from the column registry and the result records' field types, so it follows them.

Regenerate with ``plant-audit schema --results -o schemas/plant-audit-results.schema.json``; a test
fails when the committed file differs, and validates every JSON output of the tests against it.
"""

from __future__ import annotations

import dataclasses
import inspect
import json
from typing import Any, get_args

from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.findings import SEVERITY_RANK, Finding
from audit.report.columns import FINDINGS, STEPS, STREAMS, Table
from audit.report.plain_tables import json_units
from audit.results import PlantTotals, StepResult, StreamResult
from audit.results.delegated import Delegated

RESULTS_SCHEMA_FILE = "plant-audit-results.schema.json"
_NUMBER = {"type": ["number", "null"]}  # non-finite numbers are written as null


def _annotations(record: type) -> dict[str, str]:
    hints = {f.name: str(f.type) for f in dataclasses.fields(record)}
    for name, member in inspect.getmembers(record):
        if isinstance(member, Delegated):  # a value of a composed part, typed Delegated[...]
            (kind,) = get_args(getattr(member, "__orig_class__", Delegated[Any])) or (Any,)
            hints[name] = kind.__name__ if isinstance(kind, type) else str(kind)
        elif isinstance(member, property):  # (Delegated is a property too: asked first)
            hints[name] = str(member.fget.__annotations__.get("return"))
    return hints


def _of(annotation: str) -> dict[str, Any]:
    """The JSON Schema of a field from its type annotation (as text)."""
    optional = "None" in annotation
    base = annotation.replace(" | None", "").strip()
    if base in ("float", "int"):
        return dict(_NUMBER)
    if base == "bool":
        return {"type": "boolean"}
    if base == "str":
        return {"type": ["string", "null"]} if optional else {"type": "string"}
    if base.startswith(("list", "tuple")):
        return {"type": "array"}
    if base.startswith("dict"):
        kind: dict[str, Any] = {"type": ["object", "null"] if optional else "object"}
        if base == "dict[str, float]":
            kind["additionalProperties"] = _NUMBER
        return kind
    return {}


def _rows(table: Table, record: type, description: str) -> dict[str, Any]:
    hints = _annotations(record)
    keys = [c.key for c in table.machine_columns if c.json]
    required = [c.key for c in table.machine_columns if c.json and not c.omit_none]
    return {
        "type": "array",
        "description": description,
        "items": {
            "type": "object",
            "required": required,  # a field left out where it is None (omit_none) is optional
            "additionalProperties": False,
            "properties": {key: _of(hints.get(key, "")) for key in keys},
        },
    }


def results_schema() -> dict[str, Any]:
    """The JSON Schema of :func:`audit.report.machine.to_dict`'s structure."""
    from audit.report.machine import JSON_VERSION

    plant = {f.name: _of(str(f.type)) for f in dataclasses.fields(PlantTotals)}
    severities = sorted(SEVERITY_RANK)
    findings = _rows(FINDINGS, Finding, "the findings, in the SI unit of each one's quantity")
    findings["items"]["properties"]["severity"] = {"enum": severities}
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": f"https://plant-audit.invalid/schemas/{RESULTS_SCHEMA_FILE}",
        "title": "plant-audit results",
        "description": f"The JSON results of plant-audit (format version {JSON_VERSION}), SI units "
        "throughout; 'units' names the unit of every numeric field.",
        "type": "object",
        "required": [
            "format",
            "version",
            "balance",
            "provenance",
            "verdict",
            "units",
            "streams",
            "steps",
            "findings",
            "plant",
        ],  # fmt: skip
        "additionalProperties": False,
        "properties": {
            "format": {"const": "plant-audit-results"},
            "version": {"const": JSON_VERSION},
            "balance": {
                "type": "object",
                "required": ["name", "id", "revision", "file", "sha256", "dead_state"],
                "properties": {
                    "name": {"type": "string"},
                    "id": {"type": ["string", "null"]},
                    "revision": {"type": ["string", "null"]},
                    "file": {"type": "string"},
                    "sha256": {"type": "string"},
                    "dead_state": {
                        "type": "object",
                        "required": ["T", "P"],
                        "properties": {"T": _NUMBER, "P": _NUMBER},
                    },
                    "site_pressure": _NUMBER,
                    "tolerances": {"type": "object", "additionalProperties": _NUMBER},
                },
            },
            "provenance": {"type": "object", "additionalProperties": {"type": "string"}},
            "verdict": {
                "type": "object",
                "required": ["counts", "fail_on", "marginal", "passed", "exit_code"],
                "additionalProperties": False,
                "properties": {
                    "counts": {
                        "type": "object",
                        "required": severities,
                        "additionalProperties": False,
                        "properties": {s: {"type": "integer", "minimum": 0} for s in severities},
                    },
                    "fail_on": {"enum": ["error", "warning"]},
                    "marginal": {"type": "boolean"},
                    "passed": {"type": "boolean"},
                    "exit_code": {"enum": [EXIT_PASS, EXIT_FINDINGS]},
                },
            },
            "units": {"const": json_units()},
            "streams": _rows(STREAMS, StreamResult, "the streams' states and flows"),
            "steps": _rows(
                STEPS, StepResult, "the steps; rates in W for flow steps, totals in J for vessels"
            ),
            "findings": findings,
            "plant": {
                "type": "object",
                "required": list(plant),
                "additionalProperties": False,
                "properties": plant,
            },
            "reconciliation": _reconciliation(),
        },
    }


def _record(record: type, extra: dict[str, Any] | None = None) -> dict[str, Any]:
    """An object with the fields of a dataclass ``record`` (and ``extra`` properties)."""
    properties = {f.name: _of(str(f.type)) for f in dataclasses.fields(record)}
    properties.update(extra or {})
    return {
        "type": "object",
        "required": sorted(properties),
        "additionalProperties": False,
        "properties": properties,
    }


def _reconciliation() -> dict[str, Any]:
    """The ``reconciliation`` section (``plant-audit reconcile`` only;
    :mod:`audit.report.reconciliation_json`)."""
    from audit.reconcile.records import (
        FLAGS,
        Elimination,
        FindingOrigin,
        GlobalTest,
        Reading,
        Reconciliation,
    )
    from audit.report.reconciliation_json import SECTION_KEYS

    test = _record(GlobalTest, {"passed": {"type": "boolean"}})
    elimination = _record(Elimination, {"after": test, "equivalent_set": {"type": "array"}})
    reading = _record(Reading, {"correction": dict(_NUMBER)})
    reading["properties"]["flag"] = {"enum": list(FLAGS)}
    section = _record(
        Reconciliation,
        {
            "first": test,
            "final": test,
            "readings": {"type": "array", "items": reading},
            "eliminations": {"type": "array", "items": elimination},
            "origins": {"type": "array", "items": _record(FindingOrigin)},
            "constraints": {
                "type": "array",
                "items": {
                    "type": "object",
                    "required": ["constraint", "residual", "unit"],
                    "additionalProperties": False,
                    "properties": {
                        "constraint": {"type": "string"},
                        "residual": dict(_NUMBER),
                        "unit": {"type": "string"},
                    },
                },
            },
            "gross_errors": {"type": "array", "items": {"type": "array", "items": {"type": "string"}}},
            "unobservable": {"type": "array", "items": {"type": "string"}},
            "fails": {"type": "boolean"},
        },
    )
    section["required"] = list(SECTION_KEYS)
    section["description"] = (
        "plant-audit reconcile only: the readings adjusted together so that every balance closes, "
        "the global test, the gross errors named (each a set: one of these); SI units. A "
        "statistical estimate, not a calibration."
    )
    return section


def results_schema_text() -> str:
    return json.dumps(results_schema(), indent=2, ensure_ascii=False, sort_keys=True) + "\n"
