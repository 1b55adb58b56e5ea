"""The night run survives its environment: paths a batch cannot use are reported (never skipped in
silence), a FIFO never hangs it, one slow file cannot stop it, signals stop its workers and leave
the previous reports as they were, concurrent runs publish whole sets, and the run history never
costs a report."""

from __future__ import annotations

import os
import shutil
import signal
import sqlite3
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from conftest import ROOT, SAMPLE

import audit.history
from audit.batch import Job, Missing, audit_job, discover, run_batch
from audit.commands.main import main
from audit.executors import LocalProcesses
from audit.exitcodes import EXIT_FINDINGS, EXIT_HISTORY, EXIT_INPUT, EXIT_PASS
from audit.history import record
from audit.outcomes import INTERNAL, INVALID

CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


def command(*args: str) -> list[str]:
    return [sys.executable, "-m", "audit", *args]


def environment() -> dict[str, str]:
    return {**os.environ, "PYTHONPATH": str(ROOT)}


@pytest.fixture
def night(tmp_path: Path) -> Path:
    folder = tmp_path / "night"
    folder.mkdir()
    shutil.copy(CLEAN, folder / "clean.yaml")
    return folder


# -- nothing skipped in silence ---------------------------------------------------------------
def test_an_unreadable_folder_is_a_reported_problem(
    night: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    locked = night / "locked"
    locked.mkdir()
    shutil.copy(CLEAN, locked / "hidden-from-us.yaml")
    real = os.scandir

    def scandir(path: object = ".") -> object:  # chmod 000 does not stop root: refuse here
        if os.fspath(path) == str(locked):  # type: ignore[arg-type]
            raise PermissionError(13, "Permission denied", str(locked))
        return real(path)  # type: ignore[arg-type]

    monkeypatch.setattr(os, "scandir", scandir)
    found = discover([night])
    assert Missing(str(locked), "the folder cannot be read: Permission denied") in found
    assert str(night / "clean.yaml") in found


@pytest.mark.skipif(os.geteuid() == 0, reason="root reads a folder whatever its permissions")
def test_an_unreadable_folder_counts_in_the_exit_code(
    night: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    locked = night / "locked"
    locked.mkdir()
    shutil.copy(CLEAN, locked / "x.yaml")
    locked.chmod(0)
    try:
        assert main(["batch", str(night), "--workers", "1"]) == EXIT_INPUT
    finally:
        locked.chmod(0o755)
    assert "the folder cannot be read: Permission denied" in capsys.readouterr().out


def test_broken_links_special_files_and_trailing_spaces_are_reported(night: Path) -> None:
    (night / "gone.yaml").symlink_to(night / "nowhere.yaml")
    os.mkfifo(night / "pipe.yaml")
    shutil.copy(CLEAN, night / "spaced.yaml ")
    found = discover([night])
    assert found == [
        str(night / "clean.yaml"),
        Missing(str(night / "gone.yaml"), "is a broken link (it points to nothing)"),
        Missing(
            str(night / "pipe.yaml"),
            "is not a regular file (a FIFO, a device or a socket); not read",
        ),
        Missing(
            str(night / "spaced.yaml "),
            "the name ends in spaces or invisible characters after '.yaml'/'.yml'; not audited: "
            "rename the file",
        ),
    ]


def test_a_name_that_is_not_utf8_is_audited_and_reported_escaped(
    night: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    odd = os.path.join(os.fsencode(night), b"caf\xe9.yaml")
    try:
        shutil.copy(CLEAN, odd)
    except OSError:
        pytest.skip("this file system refuses names that are not UTF-8")
    junit, database = tmp_path / "j.xml", tmp_path / "h.sqlite"
    argv = ["batch", str(night), "-o", str(tmp_path / "out"), "--junit", str(junit)]
    assert main([*argv, "--history", str(database), "--workers", "1"]) == EXIT_PASS
    out = capsys.readouterr().out
    assert "caf\\xe9.yaml" in out
    names = [case.get("classname") for case in ET.parse(junit).getroot().iter("testcase")]
    assert any("caf\\xe9" in (name or "") for name in names)  # dotted, without the suffix
    with sqlite3.connect(database) as connection:
        files = [row[0] for row in connection.execute("SELECT file FROM runs")]
    assert any(f.endswith("caf\\xe9.yaml") for f in files)
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == [
        "caf.html",
        "caf.xlsx",
        "clean.html",
        "clean.xlsx",
        "index.html",
        "summary.xlsx",
    ]


# -- no hang: a FIFO, a slow file -------------------------------------------------------------
def test_a_fifo_fed_to_batch_does_not_hang_it(night: Path, tmp_path: Path) -> None:
    fifo = night / "feed.yaml"
    os.mkfifo(fifo)
    junit = tmp_path / "j.xml"
    done = subprocess.run(
        command("batch", str(night), str(fifo), "--junit", str(junit), "--workers", "1"),
        capture_output=True,
        env=environment(),
        timeout=120,
    )
    assert done.returncode == EXIT_INPUT
    assert (
        f"{fifo}: is not a regular file (a FIFO, a device or a socket); not read" in done.stdout.decode()
    )
    assert "Batch: 2 files (1 pass, 1 invalid); exit code 2" in done.stdout.decode()
    assert junit.is_file()


def slow_on_seeded(job: Job) -> object:
    if Path(job.path).name == "seeded.yaml":
        time.sleep(60)
    return audit_job(job)


def test_a_file_past_the_time_limit_is_stopped_and_the_night_goes_on(night: Path) -> None:
    shutil.copy(SEEDED, night / "seeded.yaml")
    started = time.monotonic()
    outcomes = run_batch(
        [night],
        executor=LocalProcesses(1, timeout=3.0),
        task=slow_on_seeded,  # type: ignore[arg-type]
    )
    assert time.monotonic() - started < 40
    by_name = {Path(o.path).name: o for o in outcomes}
    assert by_name["seeded.yaml"].status == INTERNAL
    assert by_name["seeded.yaml"].problems == [
        "the file took longer than the time limit of 3 s (--timeout); its worker was stopped"
    ]
    assert by_name["clean.yaml"].verdict() == "PASS"


def test_timeout_values_are_checked(capsys: pytest.CaptureFixture[str]) -> None:
    for value in ("nan", "-1", "soon"):
        with pytest.raises(SystemExit):
            main(["batch", str(CLEAN), "--timeout", value])
        assert f"'{value}' is not a time limit in seconds" in capsys.readouterr().err


# -- signals and crashes ----------------------------------------------------------------------
def children(pid: int) -> set[int]:
    """The processes whose parent is ``pid`` (from /proc)."""
    found = set()
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == pid:
                found.add(int(entry.name))
    return found


def alive(pid: int) -> bool:
    try:
        state = (Path("/proc") / str(pid) / "stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


def many(folder: Path, count: int) -> None:
    for index in range(count):
        shutil.copy(SEEDED, folder / f"plant-{index:02d}.yaml")


def previous_set(out: Path) -> dict[str, bytes]:
    out.mkdir()
    old = {"summary.xlsx": b"old summary", "plant-00.xlsx": b"old workbook"}
    for name, data in old.items():
        (out / name).write_bytes(data)
    return old


def wait_for_workers(process: subprocess.Popen, count: int) -> set[int]:
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        workers = children(process.pid)
        if len(workers) >= count:
            return workers
        time.sleep(0.05)
    raise AssertionError("the batch started no workers")


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc (Linux)")
@pytest.mark.parametrize(("signum", "code"), [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
def test_a_signal_stops_the_workers_and_keeps_the_previous_set(
    night: Path, tmp_path: Path, signum: int, code: int
) -> None:
    many(night, 12)
    out = tmp_path / "out"
    old = previous_set(out)
    process = subprocess.Popen(
        command("batch", str(night), "-o", str(out), "--workers", "2"),
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        env=environment(),
    )
    workers = wait_for_workers(process, 2)
    time.sleep(1.0)  # let them work
    process.send_signal(signum)
    _, err = process.communicate(timeout=60)
    assert process.returncode == code, err.decode()
    assert "Traceback" not in err.decode()
    time.sleep(0.2)
    assert not [pid for pid in workers if alive(pid)]
    assert {p.name: p.read_bytes() for p in out.iterdir()} == old  # no temporary file, no new report


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc (Linux)")
def test_workers_die_with_their_parent(night: Path, tmp_path: Path) -> None:
    many(night, 12)
    out = tmp_path / "out"
    old = previous_set(out)
    process = subprocess.Popen(
        command("batch", str(night), "-o", str(out), "--workers", "2"),
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        env=environment(),
    )
    workers = wait_for_workers(process, 2)
    process.kill()  # no chance to clean up: the kernel ends the workers
    process.wait(timeout=30)
    deadline = time.monotonic() + 10
    while any(alive(pid) for pid in workers) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert not [pid for pid in workers if alive(pid)]
    reports = {p.name: p.read_bytes() for p in out.iterdir() if not p.name.startswith(".")}
    assert reports == old  # the previous set is whole (a killed parent may leave temporary files)


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc (Linux)")
def test_a_worker_killed_mid_run_is_that_files_internal_error(night: Path, tmp_path: Path) -> None:
    many(night, 6)
    out = tmp_path / "out"
    process = subprocess.Popen(
        command("batch", str(night), "-o", str(out), "--workers", "1"),
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        env=environment(),
    )
    (worker,) = wait_for_workers(process, 1)
    os.kill(worker, signal.SIGKILL)
    output, err = process.communicate(timeout=300)
    text = output.decode()
    assert process.returncode == 3, err.decode()
    assert "the worker process ended unexpectedly (exit code -9) while auditing this file" in text
    assert "Batch: 7 files (" in text
    assert not [p.name for p in out.iterdir() if p.name.endswith(".tmp")]


def test_two_runs_on_the_same_outputs_leave_one_runs_set(tmp_path: Path) -> None:
    out = tmp_path / "out"
    runs = []
    for balance in (CLEAN, SEEDED):
        argv = ["check", str(balance), "--json", str(out / "r.json"), "--junit", str(out / "j.xml")]
        runs.append(command(*argv, "-o", str(out / "r.xlsx"), "-q"))
    for _ in range(2):
        processes = [subprocess.Popen(a, env=environment(), stdout=subprocess.DEVNULL) for a in runs]
        for process in processes:
            process.wait(timeout=300)
        import json

        openpyxl = pytest.importorskip("openpyxl")
        written = json.loads((out / "r.json").read_text(encoding="utf-8"))["balance"]["file"]
        junit = (out / "j.xml").read_text(encoding="utf-8")
        book = openpyxl.load_workbook(out / "r.xlsx", read_only=True)
        cells = " ".join(
            str(v) for ws in book.worksheets for row in ws.iter_rows(values_only=True) for v in row if v
        )
        other = str(SEEDED if written == str(CLEAN) else CLEAN)
        assert Path(written).name in junit and Path(other).name not in junit
        assert Path(written).name in cells and Path(other).name not in cells
        assert not [p.name for p in out.iterdir() if p.name.endswith(".tmp")]


# -- the history never costs a report ---------------------------------------------------------
def damaged_history(tmp_path: Path) -> Path:
    database = tmp_path / "h.sqlite"
    for _ in range(3):
        record(database, [audit_job(Job(str(SEEDED)))])
    size = database.stat().st_size
    with open(database, "r+b") as handle:  # bytes overwritten in the middle of the file
        handle.seek(size // 2)
        handle.write(b"\xa5" * 4096)
    return database


def test_a_damaged_history_keeps_the_reports_and_the_exit_code(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    database = damaged_history(tmp_path)
    json_file = tmp_path / "r.json"
    argv = ["check", str(CLEAN), "--json", str(json_file), "--history", str(database), "-q"]
    assert main(argv) == EXIT_PASS
    err = capsys.readouterr().err
    assert f"warning: {database}: the history file is damaged" in err
    assert "(the reports are written; the audit's exit code is kept)" in err
    assert json_file.is_file()
    assert main([*argv, "--fail-on-history"]) == EXIT_HISTORY  # only when asked
    capsys.readouterr()
    assert main(["batch", str(SEEDED), "--history", str(database)]) == EXIT_FINDINGS
    assert "the history file is damaged" in capsys.readouterr().err


def test_a_locked_history_waits_briefly_and_keeps_the_reports(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    database = tmp_path / "h.sqlite"
    record(database, [])
    monkeypatch.setattr(audit.history, "LOCK_TIMEOUT", 0.2)
    holder = sqlite3.connect(database)
    holder.execute("BEGIN EXCLUSIVE")
    try:
        started = time.monotonic()
        argv = ["check", str(CLEAN), "--json", str(tmp_path / "r.json")]
        assert main([*argv, "--history", str(database), "-q"]) == EXIT_PASS
        assert time.monotonic() - started < 20
    finally:
        holder.rollback()
        holder.close()
    err = capsys.readouterr().err
    assert "the history file is locked by another process (waited 0 s); this run was not recorded" in err
    assert (tmp_path / "r.json").is_file()


@pytest.mark.parametrize(
    ("pragma", "message"),
    [
        ("PRAGMA query_only = ON", "the history file is read-only; this run was not recorded"),
        ("a full disk", "the disk holding the history file is full; this run was not recorded"),
    ],
)
def test_a_read_only_or_full_history_is_a_warning(
    tmp_path: Path,
    monkeypatch: pytest.MonkeyPatch,
    capsys: pytest.CaptureFixture[str],
    pragma: str,
    message: str,
) -> None:
    database = tmp_path / "h.sqlite"
    record(database, [])
    real = sqlite3.connect

    class Full:
        """A connection on a full disk: SQLite's own error for every insert."""

        def __init__(self, connection: sqlite3.Connection) -> None:
            self.connection = connection

        def execute(self, sql: str, *args: object) -> object:
            if sql.startswith("INSERT"):
                raise sqlite3.OperationalError("database or disk is full")
            return self.connection.execute(sql, *args)

        def __getattr__(self, name: str) -> object:
            return getattr(self.connection, name)

    def connect(*args: object, **kwargs: object) -> object:
        # chmod cannot make a file read-only for root, nor can a test fill a disk: SQLite is
        # told to refuse writes, or answers as on a full disk
        connection = real(*args, **kwargs)  # type: ignore[arg-type]
        if pragma.startswith("PRAGMA"):
            connection.execute(pragma)
            return connection
        return Full(connection)

    monkeypatch.setattr(sqlite3, "connect", connect)
    assert main(["check", str(SEEDED), "--history", str(database), "-q"]) == EXIT_FINDINGS
    assert message in capsys.readouterr().err


def test_a_history_of_another_version_is_named_so(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    database = tmp_path / "h.sqlite"
    with sqlite3.connect(database) as connection:
        connection.execute("PRAGMA user_version = 99")
    assert main(["check", str(CLEAN), "--history", str(database), "-q"]) == EXIT_PASS
    assert "the run history has schema version 99; this plant-audit reads version 1" in (
        capsys.readouterr().err
    )
    assert main(["history", str(CLEAN), "--history", str(database)]) == EXIT_INPUT
    assert "(it was written by another version)" in capsys.readouterr().err


def test_invalid_outcome_of_a_missing_path_is_invalid() -> None:
    (outcome,) = run_batch(["/nonexistent/plant.yaml"])
    assert outcome.status == INVALID


def test_a_balance_named_as_a_folder_or_unreadable_is_reported(
    night: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    (night / "odd.yaml").mkdir()
    shutil.copy(CLEAN, night / "closed.yaml")
    real = os.access

    def access(path: object, mode: int, **kwargs: object) -> bool:  # root reads every file
        return False if os.fspath(path).endswith("closed.yaml") else real(path, mode)  # type: ignore

    monkeypatch.setattr(os, "access", access)
    found = discover([night / "odd.yaml", night / "closed.yaml"])
    assert found == [
        Missing(str(night / "odd.yaml"), "the folder holds no balance file (*.yaml, *.yml)"),
        Missing(str(night / "closed.yaml"), "cannot be read: permission denied"),
    ]
