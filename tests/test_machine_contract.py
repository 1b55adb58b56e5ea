"""The machine outputs' contract: the JSON carries its verdict and is valid against the published
schema; the CSV tables name their units and hold plain cells."""

from __future__ import annotations

import csv
import json
import re
from pathlib import Path

import pandas as pd
import pytest
from conftest import ROOT, SAMPLE

import audit
from audit.commands.main import main
from audit.report.columns import STEPS
from audit.report.machine import to_dict, write_csv
from audit.report.plain_tables import EXTRA_UNITS, plain_frame
from audit.report.results_schema import RESULTS_SCHEMA_FILE, results_schema, results_schema_text

jsonschema = pytest.importorskip("jsonschema")

SAMPLES = sorted(SAMPLE.glob("quillon-bay-*.yaml"))
SCHEMA_PATH = ROOT / "schemas" / RESULTS_SCHEMA_FILE


@pytest.fixture(scope="module")
def results() -> dict[str, audit.results.AuditResult]:
    return {path.name: audit.run(path) for path in SAMPLES}


def validator() -> object:
    schema = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def test_the_committed_results_schema_is_current() -> None:
    # If this fails: plant-audit schema --results -o schemas/plant-audit-results.schema.json
    assert SCHEMA_PATH.read_text(encoding="utf-8") == results_schema_text()


@pytest.mark.parametrize("fail_on", ["error", "warning"])
def test_every_sample_output_is_valid_against_the_schema(results, fail_on: str) -> None:
    check = validator()
    for name, result in results.items():
        errors = [e.message for e in check.iter_errors(to_dict(result, fail_on))]  # type: ignore[attr-defined]
        assert errors == [], name


def test_the_json_carries_passed_exit_code_and_the_gate(tmp_path: Path) -> None:
    check = validator()
    for path, code in (
        (SAMPLE / "quillon-bay-clean.yaml", 0),
        (SAMPLE / "quillon-bay-measured.yaml", 1),
    ):
        out = tmp_path / f"{path.stem}.json"
        assert main(["check", str(path), "-q", "--json", str(out), "--fail-on", "warning"]) == code
        data = json.loads(out.read_text(encoding="utf-8"))
        assert list(check.iter_errors(data)) == []  # type: ignore[attr-defined]
        verdict = data["verdict"]
        assert verdict["passed"] is (code == 0) and verdict["exit_code"] == code
        assert verdict["fail_on"] == "warning" and verdict["marginal"] is False
    assert results_schema()["properties"]["verdict"]["required"] == [
        "counts", "fail_on", "marginal", "passed", "exit_code",
    ]  # fmt: skip


def test_a_changed_output_is_caught_by_the_schema(results) -> None:
    data = to_dict(results["quillon-bay-seeded.yaml"])
    data["streams"][0]["T"] = "400 K"
    data["verdict"]["passed"] = "no"
    del data["steps"][0]["Q"]
    messages = sorted(e.message for e in validator().iter_errors(data))  # type: ignore[attr-defined]
    assert messages == [
        "'400 K' is not of type 'number', 'null'",
        "'Q' is a required property",
        "'no' is not of type 'boolean'",
    ]


def _rows(path: Path) -> tuple[list[str], list[list[str]]]:
    with open(path, newline="", encoding="utf-8") as handle:
        rows = list(csv.reader(handle))
    return rows[0], rows[1:]


def test_csv_headers_name_units_and_vessels_never_share_a_column(results, tmp_path: Path) -> None:
    write_csv(results["quillon-bay-seeded.yaml"], tmp_path)
    header, rows = _rows(tmp_path / "streams.csv")
    assert header[:7] == ["id", "fluid", "T [K]", "P [Pa]", "rho [kg/m3]", "h [J/kg]", "s [J/(kg K)]"]
    header, rows = _rows(tmp_path / "steps.csv")
    assert {"Q [W]", "Q [J]", "S_gen [W/K]", "S_gen [J/K]", "exergy_destroyed [W]"} <= set(header)
    kind, batch, q_rate, q_total = (header.index(k) for k in ("kind", "batch", "Q [W]", "Q [J]"))
    for row in rows:
        if row[kind] == "vessel":
            assert row[batch] == "True" and row[q_rate] == "" and row[q_total] != ""
        else:
            assert row[q_total] == "" and row[q_rate] != ""
    header, rows = _rows(tmp_path / "findings.csv")
    assert header[header.index("quantity") + 1] == "unit" and "margin_relative [-]" in header
    power = [r for r in rows if r[header.index("quantity")] == "power"]
    assert power and all(r[header.index("unit")] == "W" for r in power)


def test_csv_cells_are_plain_values(results, tmp_path: Path) -> None:
    for name, result in results.items():
        folder = tmp_path / name
        write_csv(result, folder)
        for table in ("streams", "steps", "findings"):
            text = (folder / f"{table}.csv").read_text(encoding="utf-8")
            assert not re.search(r"\['|\(\)|\(\{|\{'", text), (name, table)
    steps = plain_frame(STEPS, results["quillon-bay-seeded.yaml"].steps)
    assert steps.loc["P1", "inlets"] == "S01" and steps.loc["P1", "claimed"] == "shaft_power; adiabatic"


def test_every_kind_specific_value_has_a_unit(results) -> None:
    reported = {key for r in results.values() for s in r.steps for key in s.extra}
    assert reported <= set(EXTRA_UNITS), reported - set(EXTRA_UNITS)


def test_dataframes_name_their_units(results) -> None:
    tables = audit.frames(results["quillon-bay-seeded.yaml"])
    steps = tables["steps"]
    assert steps.loc["T1", "W [W]"] == pytest.approx(1.45e6)
    assert pd.isna(steps.loc["CIP1", "Q [W]"]) and steps.loc["CIP1", "Q [J]"] > 0
    assert "T [K]" in tables["streams"].columns and "unit" in tables["findings"].columns
