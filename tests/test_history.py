"""Run history: runs recorded in SQLite; new findings since a file's last run; the history command.

The expected findings come from `audit.run` on the same files, never from pinned lists.
"""

from __future__ import annotations

import hashlib
import shutil
import sqlite3
from datetime import datetime, timezone
from pathlib import Path

import pytest

import audit
from audit.batch import Job, audit_job
from audit.commands.main import main
from audit.errors import InputError
from audit.exitcodes import EXIT_FINDINGS, EXIT_INPUT, EXIT_PASS
from audit.history import SCHEMA_VERSION, file_key, record, runs
from audit.outcomes import finding_key

SAMPLE = Path(__file__).resolve().parents[1] / "sample_plant"
CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


def at(hour: int) -> datetime:
    return datetime(2026, 3, 2, hour, 0, 0, tzinfo=timezone.utc)


@pytest.fixture
def plant(tmp_path: Path) -> Path:
    """A balance file whose content is replaced revision by revision."""
    path = tmp_path / "plant.yaml"
    shutil.copy(CLEAN, path)
    return path


def test_runs_are_recorded_and_new_findings_named(tmp_path: Path, plant: Path) -> None:
    database = tmp_path / "history.sqlite"
    first = record(database, [audit_job(Job(str(plant)))], now=at(1))[0]
    assert first.recorded and first.previous_run is None
    assert first.history_note() == "first audited run"

    shutil.copy(SEEDED, plant)  # the next revision of the same file
    second = record(database, [audit_job(Job(str(plant)))], now=at(2))[0]
    expected = [finding_key(f) for f in audit.run(SEEDED).findings]
    assert second.previous_run == "2026-03-02T01:00:00Z"
    assert set(second.new_since_last) == set(expected) - {
        finding_key(f) for f in audit.run(CLEAN).findings
    }
    assert second.history_note().startswith(f"{len(set(expected))} new since 2026-03-02T01:00:00Z")

    third = record(database, [audit_job(Job(str(plant)))], now=at(3))[0]
    assert third.new_since_last == []
    assert third.history_note() == "nothing new since 2026-03-02T02:00:00Z"

    history = runs(database, plant)
    assert [r.run_at for r in history] == [
        "2026-03-02T03:00:00Z",
        "2026-03-02T02:00:00Z",
        "2026-03-02T01:00:00Z",
    ]
    newest = history[0]
    seeded = audit.run(SEEDED)
    assert newest.file == file_key(plant)
    assert newest.sha256 == hashlib.sha256(plant.read_bytes()).hexdigest()
    assert (newest.revision, newest.verdict, newest.status) == (seeded.revision, "FAIL", "audited")
    assert newest.errors == seeded.counts()["error"]
    assert newest.findings == expected
    assert history[2].verdict == "PASS" and history[2].findings == []


def test_invalid_runs_are_recorded_with_their_problems(tmp_path: Path) -> None:
    database = tmp_path / "history.sqlite"
    broken = tmp_path / "broken.yaml"
    broken.write_text("balance: [", encoding="utf-8")
    record(database, [audit_job(Job(str(broken)))], now=at(1))
    (run,) = runs(database, broken)
    assert (run.status, run.verdict) == ("invalid", "INVALID")
    assert "not valid YAML" in run.problems[0]
    with sqlite3.connect(database) as connection:
        assert connection.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION


def test_new_findings_compare_with_the_last_audited_run(tmp_path: Path, plant: Path) -> None:
    """An invalid revision in between does not make every finding of the next one new."""
    database = tmp_path / "history.sqlite"
    shutil.copy(SEEDED, plant)
    record(database, [audit_job(Job(str(plant)))], now=at(1))
    plant.write_text("balance: [", encoding="utf-8")
    broken = record(database, [audit_job(Job(str(plant)))], now=at(2))[0]
    assert broken.history_note() == "recorded" and broken.new_since_last is None
    shutil.copy(SEEDED, plant)
    again = record(database, [audit_job(Job(str(plant)))], now=at(3))[0]
    assert again.previous_run == "2026-03-02T01:00:00Z" and again.new_since_last == []


def test_accepted_findings_are_recorded_as_accepted(tmp_path: Path) -> None:
    plant = tmp_path / "plant.yaml"
    shutil.copy(SEEDED, plant)
    plant.with_name("plant.accepted.yaml").write_text(
        "accepted:\n  - {step: SP1, finding: mass-imbalance, reason: meter drift, "
        "accepted_by: site reviewer, expires: 2999-01-01}\n",
        encoding="utf-8",
    )
    database = tmp_path / "history.sqlite"
    record(database, [audit_job(Job(str(plant)))], now=at(1))
    (run,) = runs(database, plant)
    assert run.accepted == 1
    assert run.errors == audit.run(SEEDED).counts()["error"] - 1
    with sqlite3.connect(database) as connection:
        rows = connection.execute(
            "SELECT accepted FROM findings WHERE name = 'mass-imbalance'"
        ).fetchall()
    assert rows == [("meter drift (accepted by site reviewer, until 2999-01-01)",)]


def test_history_errors_are_input_errors(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="no run history here"):
        runs(tmp_path / "absent.sqlite", CLEAN)
    junk = tmp_path / "junk.sqlite"
    junk.write_text("this is not a database, it is text " * 100, encoding="utf-8")
    with pytest.raises(InputError, match="not a plant-audit run history"):
        runs(junk, CLEAN)
    newer = tmp_path / "newer.sqlite"
    with sqlite3.connect(newer) as connection:
        connection.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    with pytest.raises(InputError, match=f"has schema version {SCHEMA_VERSION + 1}"):
        runs(newer, CLEAN)


def test_check_batch_and_history_commands(
    tmp_path: Path, plant: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    database = tmp_path / "runs.sqlite"
    assert main(["check", str(plant), "--brief", "--history", str(database)]) == EXIT_PASS
    assert "History (" in capsys.readouterr().out
    shutil.copy(SEEDED, plant)
    assert main(["batch", str(tmp_path), "--history", str(database)]) == EXIT_FINDINGS
    seeded = audit.run(SEEDED)
    new = len({finding_key(f) for f in seeded.findings})
    assert f"{new} new since" in capsys.readouterr().out
    assert main(["batch", str(tmp_path), "--history", str(database)]) == EXIT_FINDINGS
    assert "nothing new since" in capsys.readouterr().out

    assert main(["history", str(plant), "--history", str(database), "--findings"]) == EXIT_PASS
    out = capsys.readouterr().out
    assert out.startswith(f"Runs of {file_key(plant)} recorded in {database}, newest first:")
    rows = [line for line in out.splitlines() if line.strip()[:1].isdigit()]
    assert len(rows) == 3
    assert rows[0].split()[-1] == "0" and rows[2].endswith("0 (first audited run)")
    assert rows[1].split()[-1] == str(new)
    assert out.count("new: ") == new

    assert main(["history", str(plant), "--history", str(database), "-n", "1"]) == EXIT_PASS
    assert (
        len([line for line in capsys.readouterr().out.splitlines() if line.strip()[:1].isdigit()]) == 1
    )


def test_history_command_messages(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["history", str(CLEAN), "--history", str(tmp_path / "none.sqlite")]) == EXIT_INPUT
    assert "none.sqlite: no run history here (record runs with --history)" in (capsys.readouterr().err)
    database = tmp_path / "runs.sqlite"
    record(database, [], now=at(1))
    assert main(["history", str(CLEAN), "--history", str(database)]) == EXIT_PASS
    # inside the repository a balance is known by its path from the repository root
    assert capsys.readouterr().out.startswith("No recorded runs of sample_plant/quillon-bay-clean.yaml")
