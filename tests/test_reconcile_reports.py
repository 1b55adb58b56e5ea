"""The reconciliation in the reports: ``plant-audit reconcile FILE -o --json --html`` writes the
findings workbook with the Reconciliation sheet (referenced from the Overview), the JSON results
with the ``reconciliation`` section (checked against the published schema by conftest) and the
HTML report with a Reconciliation section; ``check`` writes none of it."""

from __future__ import annotations

import json

import openpyxl
import pytest
from conftest import SAMPLE

from audit.commands.main import main
from audit.report.sheets.context import RECONCILIATION, SHEETS

MEASURED = SAMPLE / "quillon-bay-measured.yaml"


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    folder = tmp_path_factory.mktemp("reconciled")
    paths = {k: folder / f"r.{k}" for k in ("xlsx", "json", "html")}
    code = main(
        [
            "reconcile",
            str(MEASURED),
            "-o",
            str(paths["xlsx"]),
            "--json",
            str(paths["json"]),
            "--html",
            str(paths["html"]),
        ]
    )
    return code, paths


def test_exit_code_is_the_reconciliations(written):
    code, _ = written
    assert code == 1  # the global test fails on the readings as read


def test_workbook_has_the_reconciliation_sheet_before_the_method(written):
    _, paths = written
    book = openpyxl.load_workbook(paths["xlsx"])
    assert book.sheetnames == [*SHEETS[:-1], RECONCILIATION, SHEETS[-1]]
    sheet = book[RECONCILIATION]
    rows = [[c for c in row if c is not None] for row in sheet.iter_rows(values_only=True)]
    header = next(r for r in rows if r and r[0] == "reading")
    assert header[:6] == ["reading", "what", "unit", "measured", "reconciled", "correction"]
    assert "normalised correction" in header and "flag" in header
    named = [r for r in rows if r and str(r[0]).startswith("gross error")]
    assert any("S20.P" in str(r[1]) and "gauge reading written as absolute" in str(r[1]) for r in named)
    s20 = next(r for r in rows if r and r[0] == "S20.P")
    assert s20[3] == pytest.approx(1.893)  # the reading as logged [bar]
    assert "gross error" in s20


def test_overview_shows_the_global_test_and_links_the_sheet(written):
    _, paths = written
    overview = openpyxl.load_workbook(paths["xlsx"])["Overview"]
    cells = {row[0].value: row[1] for row in overview.iter_rows() if row[0].value}
    assert "failed" in cells["global test, readings as read"].value
    assert "passed" in cells["global test, after removing the gross errors"].value
    assert cells["every reading"].hyperlink.location == f"'{RECONCILIATION}'!A1"


def test_json_has_the_reconciliation_section(written):
    _, paths = written
    data = json.loads(paths["json"].read_text("utf-8"))
    assert data["format"] == "plant-audit-results"
    section = data["reconciliation"]
    assert any("S20.P" in s for s in section["gross_errors"])
    assert not section["first"]["passed"] and section["final"]["passed"]


def test_html_has_the_reconciliation_section(written):
    _, paths = written
    text = paths["html"].read_text("utf-8")
    assert '<h2 id="reconciliation">Reconciliation</h2>' in text
    assert 'href="#reconciliation"' in text
    assert "gross error 2: S20.P" in text or "S20.P" in text.split('id="reconciliation"')[1]


def test_check_writes_no_reconciliation(tmp_path):
    out, book = tmp_path / "c.json", tmp_path / "c.xlsx"
    main(["check", str(MEASURED), "--json", str(out), "-o", str(book), "-q"])
    assert "reconciliation" not in json.loads(out.read_text("utf-8"))
    assert RECONCILIATION not in openpyxl.load_workbook(book).sheetnames
