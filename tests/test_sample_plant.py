"""The sample site: the clean revision passes with no finding, the seeded revision reports exactly
the seeded errors listed in sample_plant/README.md (keep the two in step)."""

from __future__ import annotations

import json

import pytest
from conftest import SAMPLE, names

import audit
from audit.commands.main import main
from audit.model.balance import SCHEMA_FILE
from audit.reading import schema_text

ROOT = SAMPLE.parent

EXPECTED_SEEDED = {
    ("T1", "work-above-bound"),
    ("T1", "energy-imbalance"),
    ("C1", "input-below-minimum"),
    ("C1", "energy-imbalance"),
    ("HX1", "internal-pinch"),
    ("EV1", "valve-not-isenthalpic"),
    ("EV1", "negative-entropy-generation"),
    ("R1", "energy-imbalance"),
    ("SP1", "mass-imbalance"),
    ("B1", "heating-value-mismatch"),
    ("EL1", "input-below-minimum"),
    ("EL1", "power-mismatch"),
    ("EL1", "energy-imbalance"),
    ("T1", "section-efficiency-above-one"),
    ("F1", "drum-split-off-lever-rule"),
    ("F1", "energy-imbalance"),
    ("F1", "input-below-minimum"),
    (None, "below-freezing-point"),
    ("CH1", "cop-above-reversible"),
    ("CT1", "water-below-wet-bulb"),
}


def test_clean_revision_passes(capsys):
    assert main(["check", str(SAMPLE / "quillon-bay-clean.yaml")]) == 0
    out = capsys.readouterr().out
    assert out.rstrip().endswith("PASS")
    assert "0 error, 0 warning" in out


def test_seeded_revision_reports_exactly_the_seeded_errors(capsys, tmp_path):
    result = audit.run(SAMPLE / "quillon-bay-seeded.yaml")
    assert names(result) == EXPECTED_SEEDED
    for finding in result.findings:
        assert finding.margin is not None and finding.margin > 0, finding
    json_path = tmp_path / "seeded.json"
    assert main(["check", str(SAMPLE / "quillon-bay-seeded.yaml"), "--json", str(json_path)]) == 1
    data = json.loads(json_path.read_text(encoding="utf-8"))
    assert data["format"] == "plant-audit-results"
    assert {(f["step"], f["name"]) for f in data["findings"]} == EXPECTED_SEEDED
    assert "FAIL: " in capsys.readouterr().out


def test_seeded_margins_match_the_readme():
    # The margins quoted in sample_plant/README.md, to the digits printed there.
    result = audit.run(SAMPLE / "quillon-bay-seeded.yaml")
    by_name = {(f.step, f.name): f for f in result.findings}
    assert round(by_name[("T1", "work-above-bound")].bound / 1e6, 2) == 1.38
    assert round(by_name[("T1", "section-efficiency-above-one")].claimed, 3) == 1.063
    assert round(by_name[("F1", "drum-split-off-lever-rule")].bound * 3.6, 4) == 0.3915
    assert round(by_name[(None, "below-freezing-point")].bound - 273.15, 2) == -5.08
    assert round(by_name[("C1", "input-below-minimum")].bound / -1e3, 1) == 123.5
    assert round(by_name[("HX1", "internal-pinch")].margin, 1) == 6.6
    assert round(by_name[("SP1", "mass-imbalance")].margin, 3) == 0.306
    # analytic: with constant heat capacities the sides' entropic mean temperatures are the log means
    # 5 K / ln(270.15/265.15) = 267.65 K (glycol) and 5 K / ln(308.15/303.15) = 305.64 K (condenser
    # water); COP_rev = 267.65 / (305.64 - 267.65) = 7.045
    assert by_name[("CH1", "cop-above-reversible")].bound == pytest.approx(7.045, abs=0.01)
    assert round(by_name[("CT1", "water-below-wet-bulb")].margin, 2) == 0.87


def test_sample_files_point_editors_at_the_schema():
    for path in SAMPLE.glob("*.yaml"):
        first = path.read_text(encoding="utf-8").splitlines()[0]
        assert first == f"# yaml-language-server: $schema=../schemas/{SCHEMA_FILE}", path


def test_committed_schema_is_current():
    committed = (ROOT / "schemas" / SCHEMA_FILE).read_text(encoding="utf-8")
    assert committed == schema_text(), (
        "schemas/ is out of date: run `plant-audit schema -o schemas/" + SCHEMA_FILE + "`"
    )
