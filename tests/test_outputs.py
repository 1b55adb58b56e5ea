"""Outputs go only where outputs belong (:mod:`audit.report.publish`): refused before anything is
written when an output is an input (by identity, through links), another output, a special file
or the wrong kind of path; written all-or-nothing; the same input gives the same bytes; signals
and a closed pipe end cleanly."""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import stat
import subprocess
import sys
from pathlib import Path

import pytest
from conftest import ROOT, SAMPLE

from audit.commands.main import Terminated, main
from audit.errors import InputError
from audit.exitcodes import (
    EXIT_FINDINGS,
    EXIT_INPUT,
    EXIT_INTERRUPTED,
    EXIT_PASS,
    EXIT_REPORT,
    EXIT_TERMINATED,
)
from audit.report.publish import Output, check_outputs

CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


@pytest.fixture
def site(tmp_path: Path) -> Path:
    """A balance that reads a stream table, beside its acceptance file."""
    folder = tmp_path / "site"
    folder.mkdir()
    shutil.copy(SAMPLE / "quillon-bay-table.yaml", folder / "plant.yaml")
    shutil.copy(SAMPLE / "quillon-bay-streams.xlsx", folder / "quillon-bay-streams.xlsx")
    (folder / "plant.accepted.yaml").write_text("accepted: []\n", encoding="utf-8")
    return folder


def snapshot(folder: Path) -> dict[str, bytes]:
    """Every file below ``folder`` with its bytes (links not followed)."""
    return {
        str(p.relative_to(folder)): p.read_bytes()
        for p in sorted(folder.rglob("*"))
        if p.is_file() and not p.is_symlink()
    }


def refused(argv: list[str], capsys: pytest.CaptureFixture[str]) -> str:
    code = main(argv)
    err = capsys.readouterr().err
    assert code == EXIT_INPUT, err
    assert "Traceback" not in err
    return err


# -- an output never replaces an input (identity, not path text) ------------------------------
@pytest.mark.parametrize(
    ("option", "target", "what"),
    [
        ("--json", "plant.yaml", "the balance file"),
        ("-o", "plant.yaml", "the balance file"),
        ("--junit", "plant.yaml", "the balance file"),
        ("-o", "quillon-bay-streams.xlsx", "the stream table"),
        ("--json", "plant.accepted.yaml", "the acceptance file"),
    ],
)
def test_an_output_aimed_at_an_input_is_refused_and_nothing_written(
    site: Path, capsys: pytest.CaptureFixture[str], option: str, target: str, what: str
) -> None:
    before = snapshot(site)
    err = refused(["check", str(site / "plant.yaml"), option, str(site / target), "-q"], capsys)
    assert f"would be written over {what}" in err
    assert snapshot(site) == before


def test_a_report_folder_linked_to_the_balance_folder_is_seen_through(
    site: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    link = tmp_path / "reports"
    link.symlink_to(site, target_is_directory=True)
    before = snapshot(site)
    err = refused(["check", str(site / "plant.yaml"), "--json", str(link / "plant.yaml")], capsys)
    assert f"{link / 'plant.yaml'}: the JSON results would be written over the balance file" in err
    err = refused(
        ["check", str(site / "plant.yaml"), "-o", str(link / "quillon-bay-streams.xlsx")], capsys
    )
    assert "the findings workbook would be written over the stream table" in err
    assert snapshot(site) == before


def test_csv_folder_holding_the_table_of_the_same_name_is_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    """A balance reading ``streams.csv`` and ``--csv`` into its own folder would write over it."""
    folder = tmp_path / "csvsite"
    folder.mkdir()
    text = (SAMPLE / "quillon-bay-table.yaml").read_text(encoding="utf-8")
    (folder / "plant.yaml").write_text(
        text.replace("{file: quillon-bay-streams.xlsx, sheet: streams}", "streams.csv"),
        encoding="utf-8",
    )
    (folder / "streams.csv").write_text("id,fluid\n", encoding="utf-8")
    before = snapshot(folder)
    with pytest.raises(
        InputError, match="the CSV table of streams would be written over the stream table"
    ):
        check_outputs(
            [Output(folder / "streams.csv", "the CSV table of streams")],
            [(folder / "streams.csv", "the stream table")],
        )
    main(["check", str(folder / "plant.yaml"), "--csv", str(folder), "-q"])
    assert snapshot(folder) == before
    capsys.readouterr()


def test_a_hard_link_to_the_balance_is_the_same_file(
    site: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    alias = site / "results.json"
    os.link(site / "plant.yaml", alias)
    before = snapshot(site)
    err = refused(["check", str(site / "plant.yaml"), "--json", str(alias)], capsys)
    assert "would be written over the balance file" in err
    assert snapshot(site) == before


def test_two_outputs_on_one_file_and_history_onto_an_output_are_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "r.json"
    err = refused(["check", str(CLEAN), "--json", str(out), "--junit", str(out)], capsys)
    assert "the JUnit XML would be written over the JSON results" in err
    err = refused(["check", str(CLEAN), "--json", str(out), "--history", str(out)], capsys)
    assert "the JSON results would be written over the run history" in err
    err = refused(
        ["check", str(CLEAN), "--json", str(tmp_path / "o" / "r.json"), "-o", str(tmp_path / "o")],
        capsys,
    )
    assert "would go into a folder where the findings workbook is to be written as a file" in err
    assert list(tmp_path.iterdir()) == []


def test_other_commands_refuse_to_write_over_their_input(
    site: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = snapshot(site)
    balance = str(site / "plant.yaml")
    refused(["convert", balance, "-o", balance], capsys)
    refused(["diff", str(CLEAN), balance, "-o", balance], capsys)
    refused(["reconcile", balance, "--json", balance], capsys)
    refused(["reconcile", balance, "-o", str(site / "quillon-bay-streams.xlsx")], capsys)
    refused(["schema", "-o", str(tmp_path)], capsys)
    assert snapshot(site) == before


# -- special files and the wrong kind of path -------------------------------------------------
def test_a_device_is_never_replaced(capsys: pytest.CaptureFixture[str]) -> None:
    """Run as root, writing by rename would replace /dev/null with a regular file."""
    err = refused(["check", str(CLEAN), "--json", os.devnull, "-q"], capsys)
    assert "/dev/null: is a device, not a regular file" in err
    assert stat.S_ISCHR(os.stat(os.devnull).st_mode)


def test_a_fifo_and_a_socket_are_refused_without_blocking(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    err = refused(["check", str(CLEAN), "--junit", str(fifo), "-q"], capsys)
    assert "is a FIFO (named pipe), not a regular file" in err
    import socket

    path = tmp_path / "s"
    with socket.socket(socket.AF_UNIX) as server:
        server.bind(str(path))
        err = refused(["check", str(CLEAN), "-o", str(path), "-q"], capsys)
    assert "is a socket, not a regular file" in err


def test_a_file_where_a_folder_is_wanted_is_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    target = tmp_path / "r.json"
    target.write_text("old", encoding="utf-8")
    err = refused(["check", str(CLEAN), "--csv", str(target)], capsys)
    assert "is a file, but the CSV folder needs a folder here" in err
    err = refused(["batch", str(CLEAN), "-o", str(target)], capsys)
    assert "is a file, but the output folder needs a folder here" in err
    assert target.read_text(encoding="utf-8") == "old"


def test_over_long_names_and_broken_links_are_clean_errors(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    err = refused(["check", str(CLEAN), "--json", str(tmp_path / ("x" * 300))], capsys)
    assert "longer than the 255 bytes a file name may have" in err
    deep = tmp_path / "/".join(["d" * 200] * 25)
    err = refused(["check", str(CLEAN), "--json", str(deep / "r.json")], capsys)
    assert "paths are limited to 4095" in err
    dangling = tmp_path / "dangling.json"
    dangling.symlink_to(tmp_path / "nowhere" / "x.json")
    err = refused(["check", str(CLEAN), "--json", str(dangling)], capsys)
    assert "is a symbolic link to nothing (a broken link)" in err


def test_standard_output_is_offered_explicitly(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(CLEAN), "--json", "-"]) == EXIT_PASS
    captured = capsys.readouterr()
    assert json.loads(captured.out)["balance"]["file"] == str(CLEAN)
    assert captured.err.endswith("\nPASS\n")  # the console text moves to the standard error
    err = refused(["check", str(CLEAN), "--junit", "-"], capsys)
    assert "'-' (the standard output) is offered for --json only, not for the JUnit XML" in err


# -- all or nothing ---------------------------------------------------------------------------
def test_a_disk_filling_up_halfway_leaves_the_old_set(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    json_file, workbook = tmp_path / "r.json", tmp_path / "r.xlsx"
    json_file.write_text("old json", encoding="utf-8")
    workbook.write_bytes(b"old workbook")
    calls = []
    real_fsync = os.fsync

    def fsync(fd: int) -> None:
        calls.append(fd)
        if len(calls) == 2:
            raise OSError(28, "No space left on device")
        real_fsync(fd)

    monkeypatch.setattr(os, "fsync", fsync)
    code = main(["check", str(CLEAN), "--json", str(json_file), "-o", str(workbook), "-q"])
    assert code == EXIT_REPORT
    assert "No space left on device (a report could not be written)" in capsys.readouterr().err
    assert json_file.read_text(encoding="utf-8") == "old json"
    assert workbook.read_bytes() == b"old workbook"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.json", "r.xlsx"]


@pytest.mark.parametrize(
    ("signal_error", "code"), [(KeyboardInterrupt, EXIT_INTERRUPTED), (Terminated, EXIT_TERMINATED)]
)
def test_an_interrupt_while_writing_exits_130_or_143_and_removes_temporary_files(
    tmp_path: Path,
    monkeypatch: pytest.MonkeyPatch,
    capsys: pytest.CaptureFixture[str],
    signal_error: type[BaseException],
    code: int,
) -> None:
    json_file = tmp_path / "r.json"
    json_file.write_text("old json", encoding="utf-8")

    def interrupted(*args: object, **kwargs: object) -> None:
        raise signal_error()

    import audit.report.workbook

    monkeypatch.setattr(audit.report.workbook, "write_workbook", interrupted)
    assert main(["check", str(CLEAN), "--json", str(json_file), "-o", str(tmp_path / "r.xlsx")]) == code
    assert "temporary files removed, earlier reports kept" in capsys.readouterr().err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.json"]
    assert json_file.read_text(encoding="utf-8") == "old json"


# -- promises: the same bytes, the umask ------------------------------------------------------
def test_source_date_epoch_gives_the_same_bytes(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")  # 2023-11-14 22:13:20 UTC
    runs = []
    for name in ("a", "b"):
        folder = tmp_path / name
        argv = ["check", str(SEEDED), "--json", str(folder / "r.json"), "-o", str(folder / "r.xlsx")]
        assert main([*argv, "--csv", str(folder / "csv"), "-q"]) == EXIT_FINDINGS
        runs.append(snapshot(folder))
    assert runs[0] == runs[1]
    provenance = json.loads(runs[0]["r.json"])["provenance"]
    assert provenance["run at (UTC)"] == "2023-11-14 22:13:20"
    assert "solve time [s]" not in provenance
    capsys.readouterr()


def test_every_report_follows_the_umask(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    old = os.umask(0o027)
    try:
        argv = ["check", str(CLEAN), "--json", str(tmp_path / "r.json"), "-o", str(tmp_path / "r.xlsx")]
        assert main([*argv, "--junit", str(tmp_path / "j.xml"), "-q"]) == EXIT_PASS
    finally:
        os.umask(old)
    for name in ("r.json", "r.xlsx", "j.xml"):
        assert stat.S_IMODE(os.stat(tmp_path / name).st_mode) == 0o640, name
    capsys.readouterr()


# -- the machine around the run: pipes --------------------------------------------------------
def command(*args: str) -> list[str]:
    return [sys.executable, "-m", "audit", *args]


def environment() -> dict[str, str]:
    return {**os.environ, "PYTHONPATH": str(ROOT)}


def test_a_closed_pipe_prints_no_traceback_and_keeps_the_exit_code() -> None:
    process = subprocess.Popen(
        command("check", str(SEEDED)),
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        env=environment(),
    )
    assert process.stdout is not None and process.stderr is not None
    process.stdout.readline()
    process.stdout.close()  # the reader goes away, as `| head -1` does
    err = process.stderr.read().decode()
    assert process.wait(timeout=120) == EXIT_FINDINGS
    assert "Traceback" not in err and "BrokenPipe" not in err


@pytest.mark.parametrize("name", ["-", "/dev/stdin"])
def test_piped_input_is_read_once_hashed_and_recorded(tmp_path: Path, name: str) -> None:
    data = SEEDED.read_bytes()
    database = tmp_path / "h.sqlite"
    done = subprocess.run(
        command("check", name, "--json", str(tmp_path / "r.json"), "--history", str(database), "-q"),
        input=data,
        capture_output=True,
        env=environment(),
        timeout=120,
    )
    assert done.returncode == EXIT_FINDINGS, done.stderr.decode()
    sha256 = hashlib.sha256(data).hexdigest()
    assert json.loads((tmp_path / "r.json").read_text(encoding="utf-8"))["balance"]["sha256"] == sha256
    import sqlite3

    with sqlite3.connect(database) as connection:
        rows = connection.execute("SELECT file, sha256, status FROM runs").fetchall()
    key = "-" if name == "-" else "/dev/stdin"
    assert rows == [(key, sha256, "audited")]


# -- the remaining messages -------------------------------------------------------------------
def test_messages_about_inputs_and_outputs_of_odd_kinds(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    err = refused(["check", "/dev/zero", "-q"], capsys)
    assert (
        "/dev/zero: is not a regular file (a character device); give the path of a balance file" in err
    )
    err = refused(["check", str(CLEAN), "--csv", "-"], capsys)
    assert "--csv writes a folder of files; '-' (the standard output) is not one" in err
    loop = tmp_path / "loop"
    loop.symlink_to(loop)
    err = refused(["check", str(CLEAN), "--json", str(loop / "r.json")], capsys)
    assert "the path holds a loop of symbolic links" in err

    class Terminal:
        def isatty(self) -> bool:
            return True

    monkeypatch.setattr(sys, "stdin", Terminal())
    err = refused(["check", "-"], capsys)
    assert "'-' reads the balance from the standard input, but nothing is piped to it" in err


def test_messages_about_odd_history_files(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    empty = tmp_path / "empty.sqlite"
    empty.write_bytes(b"")
    assert main(["history", str(CLEAN), "--history", str(empty)]) == EXIT_INPUT
    assert "the file holds no run history (an empty database)" in capsys.readouterr().err
    (tmp_path / "folder.sqlite").mkdir()
    code = main(["check", str(CLEAN), "-q", "--history", str(tmp_path / "folder.sqlite")])
    assert code == EXIT_INPUT  # an output of the run that is a folder is refused before the audit
    assert "is a folder, but the run history needs a file name here" in capsys.readouterr().err
    from audit.errors import HistoryError
    from audit.history import record

    with pytest.raises(HistoryError, match="the history file is not a regular file"):
        record(tmp_path / "folder.sqlite", [])
    blocker = tmp_path / "blocker"
    blocker.write_text("", encoding="utf-8")
    with pytest.raises(HistoryError, match="the run history cannot be opened: "):
        record(blocker / "h.sqlite", [])
