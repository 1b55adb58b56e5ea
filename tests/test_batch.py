"""Batches: every file audited in worker processes, broken files reported without stopping the
others, the summary workbook and the JUnit XML right, the exit code that of the worst file.

Expected verdicts and counts come from `audit.run` on each file on its own (or from the sample
plant's README: the clean revision has no finding, the seeded one fails), never from pinned output.
"""

from __future__ import annotations

import os
import pickle
import shutil
import sys
import xml.etree.ElementTree as ET
from dataclasses import asdict
from pathlib import Path

import pytest

import audit
from audit.batch import SUMMARY_NAME, Job, Missing, audit_job, discover, run_batch, workbook_names
from audit.commands.main import main
from audit.errors import InputError
from audit.executors import DaskCluster, LocalProcesses, TaskFailed
from audit.exitcodes import EXIT_FINDINGS, EXIT_INPUT, EXIT_INTERNAL, EXIT_PASS
from audit.findings import at_or_above
from audit.outcomes import AUDITED, INTERNAL, INVALID, FileOutcome, batch_exit_code
from audit.report.junit import junit_tree

SAMPLE = Path(__file__).resolve().parents[1] / "sample_plant"


@pytest.fixture
def plant_folder(tmp_path: Path) -> Path:
    """A shared folder as a nightly job finds it: two revisions, a copy in a sub-folder, a file
    that is not YAML, one that breaks the schema, and files that are no balances."""
    site = tmp_path / "site"
    (site / "area 2").mkdir(parents=True)
    shutil.copy(SAMPLE / "quillon-bay-clean.yaml", site / "clean.yaml")
    shutil.copy(SAMPLE / "quillon-bay-seeded.yaml", site / "seeded.yaml")
    shutil.copy(SAMPLE / "quillon-bay-clean.yaml", site / "area 2" / "clean.yml")
    (site / "broken.yaml").write_text("balance: {name: broken\nstreams: [", encoding="utf-8")
    (site / "invalid.yaml").write_text(
        "balance: {name: x}\nstreams:\n  S1: {fluid: Water, T: 20 degC, P: 1 bar, flow: 1 kg/s,"
        " colour: blue}\n",
        encoding="utf-8",
    )
    (site / "notes.txt").write_text("not a balance", encoding="utf-8")
    (site / ".hidden.yaml").write_text("editor swap file", encoding="utf-8")
    (site / "seeded.accepted.yaml").write_text("accepted: []\n", encoding="utf-8")
    return site


def expected_exit(path: str, fail_on: str = "error") -> int:
    """The exit code of one file, from a direct audit of it."""
    try:
        result = audit.run(path)
    except InputError:
        return EXIT_INPUT
    return EXIT_FINDINGS if result.fails(fail_on) else EXIT_PASS


def comparable(outcome: FileOutcome) -> tuple:
    """Everything of an outcome except run times (provenance holds the time of the run)."""
    result = None
    if outcome.result is not None:
        data = asdict(outcome.result)
        data.pop("provenance")
        data.pop("step_seconds")  # run times too
        result = data
    return (outcome.path, outcome.status, outcome.problems, outcome.sha256, result)


# -- discovery and names ---------------------------------------------------------------------------
def test_discover_finds_balances_recursively_and_skips_the_rest(plant_folder: Path) -> None:
    found = discover([plant_folder])
    names = [os.path.relpath(f, plant_folder) for f in found]
    assert names == sorted(
        ["area 2/clean.yml", "broken.yaml", "clean.yaml", "invalid.yaml", "seeded.yaml"]
    )


def test_discover_globs_files_duplicates_and_missing(plant_folder: Path) -> None:
    found = discover(
        [
            plant_folder / "s*.yaml",
            plant_folder / "seeded.yaml",
            plant_folder / "nothing-*.yaml",
            plant_folder / "absent.yaml",
        ]
    )
    assert found[0] == str(plant_folder / "seeded.yaml")
    assert found[1:] == [
        Missing(str(plant_folder / "nothing-*.yaml"), "the pattern matches no balance file"),
        Missing(str(plant_folder / "absent.yaml"), "no such file or folder"),
    ]


def test_workbook_names_follow_the_paths_without_collisions() -> None:
    files = [
        "plants/a/x.yaml",
        "plants/b/x.yaml",
        "plants/a/y.yaml",
        "plants/a/y.yml",
        "plants/a/Y.yaml",
        "plants/summary.yaml",
        "plants/a/we ird=name.yaml",
    ]
    names = workbook_names(files)
    assert names == {
        "plants/a/x.yaml": "a__x.xlsx",
        "plants/b/x.yaml": "b__x.xlsx",
        "plants/a/y.yaml": "a__y.xlsx",
        "plants/a/y.yml": "a__y-2.xlsx",
        "plants/a/Y.yaml": "a__Y-3.xlsx",
        "plants/summary.yaml": "summary-2.xlsx",
        "plants/a/we ird=name.yaml": "a__we_ird_name.xlsx",
    }
    assert len({n.lower() for n in names.values()} | {SUMMARY_NAME}) == len(files) + 1


# -- one file --------------------------------------------------------------------------------------
def test_outcome_with_its_result_pickles() -> None:
    outcome = audit_job(Job(str(SAMPLE / "quillon-bay-seeded.yaml")))
    assert outcome.status == AUDITED
    again = pickle.loads(pickle.dumps(outcome))
    assert comparable(again) == comparable(outcome)
    assert again.result.fails() and again.exit_code() == EXIT_FINDINGS


def test_unexpected_exception_is_that_files_internal_error(monkeypatch: pytest.MonkeyPatch) -> None:
    def broken(path: str, **_: object) -> None:
        raise ZeroDivisionError("a bug")

    monkeypatch.setattr("audit.api.run", broken)
    outcome = audit_job(Job(str(SAMPLE / "quillon-bay-clean.yaml")))
    assert outcome.status == INTERNAL
    assert len(outcome.problems) == 1
    assert outcome.problems[0].startswith(
        "internal error of plant-audit on this file: ZeroDivisionError('a bug') at test_batch.py:"
    )
    assert outcome.problems[0].endswith(" in broken (please report it with the file)")
    assert outcome.exit_code() == EXIT_INTERNAL and outcome.verdict() == "INTERNAL ERROR"


# -- batches -----------------------------------------------------------------------------------------
def test_batch_verdicts_and_exit_code_follow_each_file(plant_folder: Path) -> None:
    outcomes = run_batch([plant_folder], executor=LocalProcesses(2))
    assert [o.path for o in outcomes] == discover([plant_folder])
    for outcome in outcomes:
        assert outcome.exit_code() == expected_exit(outcome.path), outcome.path
    by_name = {Path(o.path).name: o for o in outcomes}
    assert by_name["clean.yaml"].verdict() == "PASS"  # sample_plant/README.md
    assert by_name["seeded.yaml"].verdict() == "FAIL"
    assert by_name["broken.yaml"].status == INVALID
    assert "not valid YAML" in by_name["broken.yaml"].problems[0]
    assert by_name["invalid.yaml"].status == INVALID
    assert any("unknown field 'colour'" in p for p in by_name["invalid.yaml"].problems)
    assert batch_exit_code(outcomes) == EXIT_INPUT  # invalid (2) is worse than findings (1)


def test_exit_code_order_is_internal_invalid_findings_pass() -> None:
    def outcome(status: str, fails: bool = False) -> FileOutcome:
        result = None
        if status == AUDITED:
            result = audit_job(
                Job(str(SAMPLE / ("quillon-bay-seeded.yaml" if fails else "quillon-bay-clean.yaml")))
            ).result
        return FileOutcome("f", status, result=result)

    passing, failing = outcome(AUDITED), outcome(AUDITED, fails=True)
    invalid, internal = outcome(INVALID), outcome(INTERNAL)
    assert batch_exit_code([passing]) == EXIT_PASS
    assert batch_exit_code([passing, failing]) == EXIT_FINDINGS
    assert batch_exit_code([failing, invalid, passing]) == EXIT_INPUT
    assert batch_exit_code([invalid, internal, failing]) == EXIT_INTERNAL
    assert batch_exit_code([]) == EXIT_PASS


def test_parallel_and_serial_batches_give_identical_results(plant_folder: Path) -> None:
    serial = run_batch([plant_folder], executor=LocalProcesses(1))
    parallel = run_batch([plant_folder], executor=LocalProcesses(2))
    assert [comparable(o) for o in serial] == [comparable(o) for o in parallel]


def crash_or_raise(job: Job) -> FileOutcome:
    """A task that kills its worker on one file and raises on another (module level, so a worker
    process can run it)."""
    name = Path(job.path).name
    if name == "clean.yaml":
        os._exit(7)
    if name == "seeded.yaml":
        raise MemoryError("out of memory on this file")
    return audit_job(job)


def test_a_crashing_worker_is_that_files_internal_error(plant_folder: Path) -> None:
    outcomes = run_batch([plant_folder], executor=LocalProcesses(2), task=crash_or_raise)
    by_name = {Path(o.path).name: o for o in outcomes}
    assert by_name["clean.yaml"].status == INTERNAL
    assert by_name["clean.yaml"].problems == [
        "the worker process ended unexpectedly (exit code 7) while auditing this file"
    ]
    assert by_name["seeded.yaml"].status == INTERNAL
    assert "MemoryError: out of memory on this file" in by_name["seeded.yaml"].problems[0]
    # the other files were audited all the same (invalid.yaml was held by the crashed worker)
    assert by_name["clean.yml"].verdict() == "PASS"
    assert by_name["broken.yaml"].status == INVALID
    assert by_name["invalid.yaml"].status == INVALID
    assert batch_exit_code(outcomes) == EXIT_INTERNAL


def exit_on_odd(number: int) -> int:
    if number % 2:
        os._exit(3)
    return 10 * number


@pytest.mark.parametrize("workers", [1, 2])
def test_dead_workers_lose_only_the_item_they_died_on(workers: int) -> None:
    got = list(LocalProcesses(workers).map_unordered(exit_on_odd, list(range(7))))
    assert sorted(index for index, _ in got) == list(range(7))  # each item once
    for index, value in got:
        if index % 2:
            assert value == TaskFailed(
                "the worker process ended unexpectedly (exit code 3) while auditing this file"
            )
        else:
            assert value == 10 * index


def test_local_processes_report_every_item_once() -> None:
    items = list(range(7))
    got = dict(LocalProcesses(3).map_unordered(abs, items))
    assert got == {i: i for i in items}
    failed = dict(LocalProcesses(2).map_unordered(os.path.basename, [1, "a/b"]))
    assert isinstance(failed[0], TaskFailed) and "TypeError" in failed[0].message
    assert failed[1] == "b"


# -- the command line ---------------------------------------------------------------------------------
def read_sheet(path: Path, title: str) -> list[tuple]:
    openpyxl = pytest.importorskip("openpyxl")
    book = openpyxl.load_workbook(path)
    return list(book[title].iter_rows(values_only=True))


def test_batch_command_writes_summary_workbooks_and_junit(
    plant_folder: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "out"
    junit = tmp_path / "audit.xml"
    code = main(["batch", str(plant_folder), "-o", str(out), "--workers", "2", "--junit", str(junit)])
    assert code == EXIT_INPUT
    files = discover([plant_folder])
    printed = capsys.readouterr().out.splitlines()
    # not a terminal: no progress bar, one line per file and the verdict
    assert len(printed) == len(files) + 1
    assert printed[-1].startswith(f"Batch: {len(files)} files (")
    assert "exit code 2" in printed[-1] and "not a safety or code-compliance review" in printed[-1]

    rows = read_sheet(out / SUMMARY_NAME, "Summary")
    header_at = next(i for i, row in enumerate(rows) if row[0] == "File")
    header, body = rows[header_at], rows[header_at + 1 :]
    column = {name: header.index(name) for name in header}
    assert [row[column["File"]] for row in body] == files
    names = workbook_names(files)
    for row in body:
        path = row[column["File"]]
        result = None
        try:
            result = audit.run(path)
        except InputError as exc:
            assert row[column["Verdict"]] == "INVALID"
            assert row[column["Problems"]] == "\n".join(str(p) for p in exc.problems)
            assert row[column["Workbook"]] is None
            assert not (out / names[path]).exists()
            continue
        assert row[column["Verdict"]] == ("FAIL" if result.fails() else "PASS")
        counts = result.counts()
        assert (row[column["Errors"]], row[column["Warnings"]], row[column["Info"]]) == (
            counts["error"],
            counts["warning"],
            counts["info"],
        )
        assert row[column["Workbook"]] == names[path]
        assert (out / names[path]).is_file()
        assert row[column["Exergy destroyed [kW]"]] == pytest.approx(
            result.plant.exergy_destroyed / 1e3, rel=1e-9
        )
        worst = row[column["Worst finding"]]
        assert (worst is None) == (not result.findings)
        if worst:
            assert worst.startswith("error ")
    audited = [names[f] for f in files if expected_exit(f) != EXIT_INPUT]
    assert {p.name for p in out.iterdir()} == {
        SUMMARY_NAME,
        "index.html",  # the HTML reports and their index (audit.report.html.index)
        *audited,
        *(str(Path(name).with_suffix(".html")) for name in audited),
    }

    tree = ET.parse(junit)
    suites = tree.getroot().findall("testsuite")
    assert [s.get("name") for s in suites] == files
    for suite in suites:
        path = suite.get("name")
        try:
            result = audit.run(path)
        except InputError:
            assert (suite.get("tests"), suite.get("errors")) == ("1", "1")
            assert suite.find("testcase/error").get("type") == "invalid-input"
            continue
        failing_steps = {f.step or "plant" for f in result.findings if at_or_above(f.severity, "error")}
        assert int(suite.get("tests")) == len(result.steps) + 1
        assert int(suite.get("failures")) == len(failing_steps)
        failed = {
            c.get("name").split()[0] for c in suite.findall("testcase") if c.find("failure") is not None
        }
        assert failed == failing_steps
    root = tree.getroot()
    assert int(root.get("tests")) == sum(int(s.get("tests")) for s in suites)
    assert int(root.get("errors")) == 2  # broken.yaml and invalid.yaml


def test_batch_command_quiet_and_fail_on_warning(
    plant_folder: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    clean = [str(plant_folder / "clean.yaml"), str(plant_folder / "area 2")]
    assert main(["batch", *clean, "-q", "--workers", "1"]) == EXIT_PASS
    assert capsys.readouterr().out.splitlines() == [
        "Batch: 2 files (2 pass); exit code 0. Consistency check only: not a safety or "
        "code-compliance review; defer to local codes and licensed engineers."
    ]
    seeded = str(plant_folder / "seeded.yaml")
    assert main(["batch", seeded, "-q", "--fail-on", "warning"]) == EXIT_FINDINGS


def test_batch_command_reports_a_missing_path(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["batch", str(tmp_path / "gone")]) == EXIT_INPUT
    assert f"INVALID        {tmp_path / 'gone'}: no such file or folder" in capsys.readouterr().out


def test_batch_rejects_zero_workers(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit):
        main(["batch", ".", "--workers", "0"])
    assert "must be at least 1" in capsys.readouterr().err


def test_check_command_writes_junit_for_an_invalid_file(
    plant_folder: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    junit = tmp_path / "check.xml"
    assert main(["check", str(plant_folder / "broken.yaml"), "--junit", str(junit)]) == EXIT_INPUT
    assert "not valid YAML" in capsys.readouterr().err
    case = ET.parse(junit).getroot().find("testsuite/testcase")
    assert case.get("name") == "load and validate"
    assert "not valid YAML" in case.find("error").get("message")


def test_junit_marks_accepted_findings_as_passing(plant_folder: Path) -> None:
    seeded = plant_folder / "seeded.yaml"
    plain = audit.run(seeded)
    t1 = dict.fromkeys(f.name for f in plain.findings if f.step == "T1")
    (plant_folder / "seeded.accepted.yaml").write_text(
        "accepted:\n"
        + "".join(
            f"  - {{step: T1, finding: {name}, reason: re-rating, accepted_by: A. Lund, "
            f"expires: 2999-01-01}}\n"
            for name in t1
        ),
        encoding="utf-8",
    )
    outcome = audit_job(Job(str(seeded)))
    suite = junit_tree([outcome]).getroot().find("testsuite")
    cases = {c.get("name").split()[0]: c for c in suite.findall("testcase")}
    assert cases["T1"].find("failure") is None
    assert cases["T1"].find("system-out").text.count("[ACCEPTED: re-rating") == len(t1)
    failing_steps = {f.step for f in plain.findings if f.step != "T1"}
    assert int(suite.get("failures")) == len(failing_steps)


# -- a Dask cluster (optional) ------------------------------------------------------------------------
def test_batch_on_a_dask_cluster_matches_local(plant_folder: Path) -> None:
    distributed = pytest.importorskip("dask.distributed")
    local = run_batch([plant_folder], executor=LocalProcesses(1))
    with distributed.Client(
        processes=False, n_workers=1, threads_per_worker=1, dashboard_address=None
    ) as client:
        on_cluster = run_batch([plant_folder], executor=DaskCluster(client=client))
    assert [comparable(o) for o in on_cluster] == [comparable(o) for o in local]


def test_batch_command_with_a_scheduler_address(
    plant_folder: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    distributed = pytest.importorskip("dask.distributed")
    with distributed.LocalCluster(
        processes=False, n_workers=1, threads_per_worker=1, dashboard_address=None
    ) as cluster:
        code = main(
            [
                "batch",
                str(plant_folder / "clean.yaml"),
                str(plant_folder / "seeded.yaml"),
                "--scheduler",
                cluster.scheduler_address,
                "--workers",
                "4",
            ]
        )
    assert code == EXIT_FINDINGS
    captured = capsys.readouterr()
    assert "--workers is ignored with --scheduler" in captured.err
    assert captured.out.splitlines()[-1].startswith("Batch: 2 files (1 pass, 1 fail)")


def test_dask_missing_is_a_clear_error(monkeypatch: pytest.MonkeyPatch, plant_folder: Path) -> None:
    monkeypatch.setitem(sys.modules, "dask.distributed", None)  # as if not installed
    with pytest.raises(
        InputError,
        match=r"needs the 'distributed' extra: pip install "
        r"'plant-audit\[distributed\]'",
    ):
        run_batch([plant_folder / "clean.yaml"], executor=DaskCluster(address="tcp://nowhere:1"))


def test_dask_executor_needs_an_address_or_a_client() -> None:
    with pytest.raises(ValueError, match="give the scheduler address or a client, not both"):
        DaskCluster()


def test_help_names_the_summary_workbook(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit):
        main(["batch", "--help"])
    assert SUMMARY_NAME in capsys.readouterr().out
