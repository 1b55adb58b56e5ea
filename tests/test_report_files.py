"""Report files: the one atomic writer (:mod:`audit.report.files`), exit code 4 for a report that
cannot be written, file modes that follow the umask, and the column registry
(:mod:`audit.report.columns`) that the JSON, the CSV tables and the workbook read."""

from __future__ import annotations

import csv
import dataclasses
import json
import os
import tempfile
from pathlib import Path

import pytest
from conftest import SAMPLE

import audit
from audit.batch import Job, audit_job
from audit.commands.main import main
from audit.errors import ReportError
from audit.exitcodes import EXIT_INPUT, EXIT_INTERNAL, EXIT_PASS, EXIT_REPORT
from audit.findings import Finding
from audit.outcomes import AUDITED, INTERNAL, UNWRITTEN, FileOutcome, batch_exit_code
from audit.report import columns
from audit.report.files import write_text
from audit.report.junit import junit_tree
from audit.report.machine import to_dict, write_csv
from audit.report.plain_tables import plain_headers
from audit.results import STEP_FIELDS, STREAM_FIELDS, StepResult, StreamResult

CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SEEDED)


# -- a path that cannot hold the report: refused before writing (exit 2) ---------------------------
@pytest.mark.parametrize("option", ["--json", "--csv", "-o", "--junit"])
def test_report_below_a_file_is_refused_before_writing(tmp_path, capsys, option):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("a file, not a folder", encoding="utf-8")
    target = blocker / "report.out"
    code = main(["check", str(CLEAN), option, str(target), "-q"])
    err = capsys.readouterr().err
    assert code == EXIT_INPUT
    assert err.startswith(f"error: {target}")
    assert f"{blocker} is a file, not a folder" in err
    assert "internal error" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["not-a-folder"]


def test_report_onto_a_folder_is_refused_before_writing(tmp_path, capsys):
    target = tmp_path / "results.json"
    target.mkdir()
    code = main(["check", str(CLEAN), "--json", str(target), "-q"])
    err = capsys.readouterr().err
    assert code == EXIT_INPUT
    assert err == (f"error: {target}: is a folder, but the JSON results needs a file name here\n")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["results.json"]  # no temporary file


# -- exit code 4 ---------------------------------------------------------------------------------


def test_read_only_folder_is_exit_code_4(tmp_path, capsys, monkeypatch):
    # A permission test cannot rely on chmod when the tests run as root: the folder refuses the
    # temporary file the way a read-only folder does.
    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    code = main(["check", str(CLEAN), "--json", str(tmp_path / "x.json"), "-q"])
    err = capsys.readouterr().err
    assert code == EXIT_REPORT
    assert err == (
        f"error: {tmp_path / 'x.json'}: cannot write the JSON results: Permission "
        "denied (a report could not be written)\n"
    )


def test_report_error_names_path_what_and_reason():
    error = ReportError("/tmp/x.json", "the JSON results", "Permission denied")
    assert (error.path, error.what, error.reason) == (
        "/tmp/x.json",
        "the JSON results",
        "Permission denied",
    )
    assert str(error) == "/tmp/x.json: cannot write the JSON results: Permission denied"


def test_failed_write_keeps_the_old_file_and_leaves_no_temporary(tmp_path, monkeypatch):
    path = tmp_path / "x.json"
    path.write_text("previous", encoding="utf-8")

    def full(fd: int) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", full)
    with pytest.raises(ReportError, match="x.json: cannot write the JSON results: No space left"):
        write_text(path, "new", "the JSON results")
    assert path.read_text(encoding="utf-8") == "previous"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["x.json"]


def test_batch_file_whose_workbook_cannot_be_written(tmp_path):
    blocker = tmp_path / "blocker"
    blocker.write_text("", encoding="utf-8")
    outcome = audit_job(Job(path=str(CLEAN), workbook=str(blocker / "clean.xlsx")))
    assert outcome.status == UNWRITTEN and outcome.result is not None
    assert outcome.problems == [
        f"{blocker / 'clean.xlsx'}: cannot write the workbook: {blocker} is a file, not a folder"
    ]
    assert outcome.exit_code() == EXIT_REPORT and outcome.verdict() == "REPORT NOT WRITTEN"
    internal = FileOutcome("x.yaml", INTERNAL)
    passing = FileOutcome(str(CLEAN), AUDITED, result=outcome.result)
    assert batch_exit_code([passing, outcome]) == EXIT_REPORT
    assert batch_exit_code([outcome, internal]) == EXIT_INTERNAL  # an internal error is worse
    suite = junit_tree([outcome]).getroot().find("testsuite")
    assert suite is not None
    error = suite.find("testcase[@name='write the workbook']/error")
    assert error is not None and error.get("type") == "report-not-written"
    assert error.get("message") == outcome.problems[0]


# -- file modes ------------------------------------------------------------------------------------
def test_json_and_csv_modes_follow_the_umask(tmp_path):
    old = os.umask(0o027)
    try:
        code = main(
            [
                "check",
                str(CLEAN),
                "--json",
                str(tmp_path / "x.json"),
                "--csv",
                str(tmp_path / "csv"),
                "-q",
            ]
        )
    finally:
        os.umask(old)
    assert code == EXIT_PASS
    for path in [tmp_path / "x.json", *(tmp_path / "csv").iterdir()]:
        assert path.stat().st_mode & 0o777 == 0o640, path


# -- the column registry ---------------------------------------------------------------------------
@pytest.mark.parametrize(
    "table, record",
    [(columns.STREAMS, StreamResult), (columns.STEPS, StepResult), (columns.FINDINGS, Finding)],
)
def test_registry_lists_every_field_in_field_order(table, record):
    """Adding a field to a result object fails here until the registry lists it."""
    published = {StepResult: STEP_FIELDS, StreamResult: STREAM_FIELDS}.get(record) or [
        f.name for f in dataclasses.fields(record)
    ]
    assert [c.key for c in table.machine_columns] == list(published)
    assert len(table.sheet_order) == len(set(table.sheet_order))
    assert all(table.column(key).header for key in table.sheet_order)


def test_json_fields_come_from_the_registry(seeded):
    data = to_dict(seeded)
    for name, table in (
        ("streams", columns.STREAMS),
        ("steps", columns.STEPS),
        ("findings", columns.FINDINGS),
    ):
        keys = [c.key for c in table.machine_columns if c.json]
        always = [c.key for c in table.machine_columns if c.json and not c.omit_none]
        assert all(set(always) <= set(row) <= set(keys) for row in data[name]), name
    json.dumps(data)  # plain data only


def test_csv_headers_come_from_the_registry(seeded, tmp_path):
    write_csv(seeded, tmp_path)
    for table in columns.TABLES:
        with open(tmp_path / f"{table.name}.csv", newline="", encoding="utf-8") as handle:
            header = next(csv.reader(handle))
        # the registry's columns, each with its SI unit; a column left out where it is None
        # (omit_none) is absent from a table without it
        plain = plain_headers(table)
        assert list(dict.fromkeys(h.split(" [")[0] for h in plain if h != "unit")) == [
            c.key for c in table.machine_columns if c.csv and not c.flatten and not c.omit_none
        ]
        assert header[: len(plain)] == plain, table.name
        assert all(h.startswith("extra.") for h in header[len(plain) :]), table.name


def test_csv_of_a_result_without_findings_has_the_header(seeded, tmp_path):
    empty = dataclasses.replace(seeded, findings=[])
    write_csv(empty, tmp_path)
    text = (tmp_path / "findings.csv").read_text(encoding="utf-8")
    assert text.splitlines() == [",".join(plain_headers(columns.FINDINGS))]


def test_largest_mass_residual():
    assert columns.largest({"Water": -2.0e-3, "Air": 1.0e-3}) == 2.0e-3
    assert columns.largest({}) == 0.0


def test_old_report_paths_are_gone():
    """One writer: the modules that wrote files their own way no longer do."""
    root = Path(audit.__file__).parent
    writers = [
        p.relative_to(root).as_posix()
        for p in root.rglob("*.py")
        if "mkstemp" in p.read_text(encoding="utf-8")
    ]
    assert writers == ["report/files.py"]
