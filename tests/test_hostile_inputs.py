"""Hostile inputs that cannot be small committed corpus files: special files, workbooks built to
break the reader, separators and quotes in CSV tables, names with any bytes, consoles that cannot
encode, command-line values that are not sensible, and work that must stay bounded.

Each refused case asserts the exit code, that no traceback is printed, that the message names the
place (file, and line, cell or field where there is one), and that no file was created or changed
in the folder of the balance. The committed corpus is ``tests/bad_inputs/`` (tests/test_bad_inputs.py).
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
import zipfile
from pathlib import Path
from xml.dom import minidom

import openpyxl
import pytest

from audit.commands.main import main

ROOT = Path(__file__).resolve().parent.parent
HEADER = "balance:\n  name: hostile input\n  site_pressure: 1.013 bar\n"
GOOD = (
    HEADER + "streams:\n  S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s}\n"
    "  S2: {fluid: Water, T: 280 degC, P: 5 bar, flow: 1 kg/s}\n"
    "steps:\n  - {id: V1, kind: valve, inlet: S1, outlet: S2}\n"
)
STREAMS = [
    ["id", "fluid", "T [degC]", "P [bar]", "flow [t/h]"],
    ["W1", "Water", 20, 5, 10.8],
    ["W2", "Water", 80, 4.5, 10.8],
]


def snapshot(folder: Path) -> dict[str, tuple[int, int]]:
    """Every file under ``folder`` with its size and modification time."""
    found = {}
    for path in folder.rglob("*"):
        if path.is_file() and not path.is_symlink():
            info = path.stat()
            found[str(path.relative_to(folder))] = (info.st_size, info.st_mtime_ns)
    return found


def refused(args: list[str], folder: Path, capsys: pytest.CaptureFixture[str], code: int = 2) -> str:
    """Run the command line in-process asking for a JSON report inside ``folder``; assert the exit
    code, no traceback, nothing on standard output, no file created or changed; return stderr."""
    before = snapshot(folder)
    report = folder / "never.json"
    exit_code = main([*args, "--json", str(report)])
    captured = capsys.readouterr()
    assert exit_code == code, captured.err
    assert captured.out == ""
    assert "Traceback" not in captured.err and "internal error" not in captured.err
    assert captured.err.startswith("error: ")
    assert snapshot(folder) == before, "no file may be created or changed"
    return captured.err


def table_balance(folder: Path, table: str, options: str = "") -> Path:
    """A balance that takes its streams from ``table`` (a valve W1 → W2)."""
    path = folder / "balance.yaml"
    source = f"{{file: {table}{options}}}" if options else table
    path.write_text(
        HEADER + f"streams_from: {source}\nsteps:\n  - {{id: V1, kind: valve, inlet: W1, outlet: W2}}\n",
        encoding="utf-8",
    )
    return path


def workbook(path: Path, sheets: dict[str, list[list]], states: dict[str, str] | None = None) -> Path:
    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for name, rows in sheets.items():
        ws = wb.create_sheet(name)
        for row in rows:
            ws.append(row)
        ws.sheet_state = (states or {}).get(name, "visible")
    wb.save(path)
    return path


def rewrite_part(path: Path, part: str, change) -> None:  # noqa: ANN001 - a bytes -> bytes function
    """Rewrite one part of a workbook's archive with ``change``; keep the others."""
    with zipfile.ZipFile(path) as archive:
        parts = {info.filename: archive.read(info.filename) for info in archive.infolist()}
    parts[part] = change(parts[part])
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in parts.items():
            archive.writestr(name, data)


SHEET = "xl/worksheets/sheet1.xml"


# -- special files ----------------------------------------------------------------------------------
def run_process(args: list[str], timeout: float = 120) -> subprocess.CompletedProcess[str]:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run(
        [sys.executable, "-m", "audit", *args], capture_output=True, text=True, timeout=timeout, env=env
    )


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_fifo_as_stream_table_does_not_hang(tmp_path):
    os.mkfifo(tmp_path / "streams.csv")
    balance = table_balance(tmp_path, "streams.csv")
    done = run_process(["check", str(balance)], timeout=120)  # a hang fails here
    assert done.returncode == 2, done.stderr
    assert "Traceback" not in done.stderr
    assert "balance.yaml:4:" in done.stderr
    assert "streams.csv' is not a regular file (a named pipe, a device or a socket)" in done.stderr


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_fifo_as_balance_does_not_hang(tmp_path):
    os.mkfifo(tmp_path / "plant.yaml")
    done = run_process(["check", str(tmp_path / "plant.yaml")], timeout=120)
    assert done.returncode == 2, done.stderr
    assert "plant.yaml: is not a regular file (a named pipe); give the path of a balance file" in (
        done.stderr
    )


@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="no /dev/zero on this system")
def test_dev_zero_is_refused_before_it_is_read(tmp_path, capsys):
    started = time.monotonic()
    err = refused(["check", "/dev/zero"], tmp_path, capsys)
    assert time.monotonic() - started < 30
    assert "/dev/zero: is not a regular file (a character device)" in err


# -- workbooks ---------------------------------------------------------------------------------------
def test_truncated_sheet_xml(tmp_path, capsys):
    table = workbook(tmp_path / "streams.xlsx", {"streams": STREAMS})
    rewrite_part(table, SHEET, lambda data: data[: len(data) // 2])
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "balance.yaml:4:" in err
    assert "the sheet 'streams' of" in err and "is not well-formed XML" in err


@pytest.mark.parametrize(
    "declaration",
    [
        b'<!DOCTYPE lol [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">]>',
        b'<!DOCTYPE x [<!ENTITY e SYSTEM "file:///etc/passwd">]>',
    ],
    ids=["entity-expansion", "external-entity"],
)
@pytest.mark.parametrize("part", [SHEET, "xl/workbook.xml", "xl/styles.xml"])
def test_entity_declarations_are_refused(declaration, part, tmp_path, capsys):
    table = workbook(tmp_path / "streams.xlsx", {"streams": STREAMS})

    def add(data: bytes) -> bytes:
        end = data.index(b"?>") + 2 if data.startswith(b"<?xml") else 0
        return data[:end] + declaration + data[end:]

    rewrite_part(table, part, add)
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "balance.yaml:4:" in err
    assert "declares XML entities (a DOCTYPE), which no spreadsheet program writes" in err


def test_declared_dimension_over_the_cell_limit(tmp_path, capsys):
    table = workbook(tmp_path / "streams.xlsx", {"streams": STREAMS})
    rewrite_part(table, SHEET, lambda data: data.replace(b'ref="A1:E3"', b'ref="A1:ZZ999999"'))
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "the sheet 'streams' of" in err and "spans 999,999 rows and 702 columns" in err


def test_sheet_with_too_many_cells_is_refused_before_loading(tmp_path, capsys):
    from audit.input.tables import grid

    workbook(tmp_path / "streams.xlsx", {"streams": STREAMS + [["x"] * 5] * 50})
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(grid, "MAX_CELLS", 100)
        err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "holds more than 100 cells" in err or "more than the 100 cells" in err


def test_zip_bomb_part(tmp_path, capsys):
    table = workbook(tmp_path / "streams.xlsx", {"streams": STREAMS})
    with zipfile.ZipFile(table, "a", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("xl/media/padding.bin", b"\0" * (20 * 2**20))
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "the part 'xl/media/padding.bin' of the workbook" in err and "zip bomb" in err


def test_cell_written_twice_in_the_sheet_xml(tmp_path, capsys):
    table = workbook(tmp_path / "streams.xlsx", {"streams": STREAMS})

    def twice(data: bytes) -> bytes:
        start = data.index(b'<c r="C2"')
        end = data.index(b"</c>", start) + 4
        return data[:end] + data[start:end].replace(b">20<", b">900<") + data[end:]

    rewrite_part(table, SHEET, twice)
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "the sheet 'streams' of" in err and "writes cell C2 twice" in err


@pytest.mark.parametrize("state", ["hidden", "veryHidden"])
def test_hidden_sheet_is_never_read_in_place_of_the_visible_one(state, tmp_path):
    """A hidden sheet named like the default ('streams') holding other numbers: the visible
    sheet is the one read."""
    import audit

    hostile = [STREAMS[0], ["W1", "Water", 20, 5, 10.8], ["W2", "Water", 99, 4.5, 10.8]]
    workbook(tmp_path / "streams.xlsx", {"data": STREAMS, "streams": hostile}, {"streams": state})
    result = audit.run(table_balance(tmp_path, "streams.xlsx"))
    by_id = {s.id: s for s in result.streams}
    assert by_id["W2"].T == pytest.approx(353.15)  # 80 °C: the visible sheet's


@pytest.mark.parametrize("state, words", [("hidden", "is hidden"), ("veryHidden", "is very hidden")])
def test_hidden_sheet_named_is_refused(state, words, tmp_path, capsys):
    workbook(tmp_path / "streams.xlsx", {"data": STREAMS, "secret": STREAMS}, {"secret": state})
    balance = table_balance(tmp_path, "streams.xlsx", ", sheet: secret")
    err = refused(["check", str(balance)], tmp_path, capsys)
    assert "balance.yaml:4:" in err and "the sheet 'secret' of" in err and words in err


def test_only_hidden_sheets(tmp_path, capsys):
    workbook(tmp_path / "streams.xlsx", {"cover": [], "streams": STREAMS}, {"streams": "hidden"})
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "streams.xlsx, sheet 'cover': the stream table is empty" in err  # the visible sheet


def test_infinite_cell_is_named(tmp_path, capsys):
    """A number too large for a double (1e999, read as infinity) is named, not dropped (a workbook
    program writes no such cell; another tool can)."""
    rows = [STREAMS[0], ["W1", "Water", 12345, 5, 10.8], STREAMS[2]]
    table = workbook(tmp_path / "streams.xlsx", {"streams": rows})
    rewrite_part(table, SHEET, lambda data: data.replace(b"<v>12345</v>", b"<v>1e999</v>"))
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "sheet 'streams', cell C2" in err
    assert "the cell holds inf, not a finite number" in err


def test_not_a_zip_file(tmp_path, capsys):
    (tmp_path / "streams.xlsx").write_bytes(b"PK\x03\x04 truncated")
    err = refused(["check", str(table_balance(tmp_path, "streams.xlsx"))], tmp_path, capsys)
    assert "balance.yaml:4:" in err and "cannot be read as an .xlsx workbook" in err


# -- CSV tables -------------------------------------------------------------------------------------
def test_semicolon_csv_points_at_the_delimiter_option(tmp_path, capsys):
    (tmp_path / "streams.csv").write_text(
        "\n".join(";".join(str(c) for c in row) for row in STREAMS) + "\n", encoding="utf-8"
    )
    err = refused(["check", str(table_balance(tmp_path, "streams.csv"))], tmp_path, capsys)
    assert "balance.yaml:4:" in err
    assert "its fields seem to be separated by ';', not ','" in err and "delimiter: ';'" in err


def test_semicolon_csv_reads_with_the_delimiter_option(tmp_path):
    import audit

    (tmp_path / "streams.csv").write_text(
        "\n".join(";".join(str(c) for c in row) for row in STREAMS) + "\n", encoding="utf-8"
    )
    result = audit.run(table_balance(tmp_path, "streams.csv", ", delimiter: ';'"))
    assert {s.id for s in result.streams} == {"W1", "W2"}


def test_unclosed_quote_in_csv(tmp_path, capsys):
    text = 'id,fluid,T [degC],P [bar],flow [t/h]\nW1,"Water,20,5,10.8\nW2,Water,80,4.5,10.8\n'
    (tmp_path / "streams.csv").write_text(text, encoding="utf-8")
    err = refused(["check", str(table_balance(tmp_path, "streams.csv"))], tmp_path, capsys)
    assert "'flow' is required" not in err
    assert "a quoted field is never closed (its quote opens on line 2)" in err


# -- acceptance files --------------------------------------------------------------------------------
@pytest.mark.parametrize("text", ["", "\n\n", "# nothing accepted yet\n"])
def test_empty_acceptance_file(text, tmp_path, capsys):
    (tmp_path / "plant.yaml").write_text(GOOD, encoding="utf-8")
    (tmp_path / "plant.accepted.yaml").write_text(text, encoding="utf-8")
    err = refused(["check", str(tmp_path / "plant.yaml")], tmp_path, capsys)
    assert "plant.accepted.yaml:1: the acceptance file is empty" in err
    assert "an empty balance" not in err and "a balance needs" not in err


# -- names with any bytes, consoles that cannot encode -----------------------------------------------
@pytest.mark.skipif(sys.platform != "linux", reason="file names of any bytes are a Linux case")
def test_file_name_not_utf8_is_escaped(tmp_path, capsys):
    name = os.fsdecode(b"plant-\xff\x1b[2J.yaml")
    path = tmp_path / name
    path.write_text(GOOD.replace("10 bar", "10 barx"), encoding="utf-8")
    err = refused(["check", str(path)], tmp_path, capsys)
    assert "plant-\\xff\\x1b[2J.yaml:5:" in err  # the undecodable byte spelt as a byte
    assert "\x1b" not in err


def test_newline_in_file_name_does_not_forge_a_line(tmp_path, capsys):
    path = tmp_path / "plant.yaml\nVerdict: PASS"
    path.write_text(GOOD, encoding="utf-8")
    code = main(["check", str(path), "-q"])
    out = capsys.readouterr().out
    assert code == 1  # the valve is not isenthalpic
    assert out.count("\n") == 1 and "plant.yaml\\nVerdict: PASS: FAIL" in out


def test_console_that_cannot_encode(tmp_path):
    path = tmp_path / "café-plant.yaml"
    path.write_text(GOOD.replace("hostile input", "café ünïcödé ☃"), encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": str(ROOT), "PYTHONIOENCODING": "ascii"}
    done = subprocess.run(
        [sys.executable, "-m", "audit", "check", str(path)], capture_output=True, timeout=300, env=env
    )
    assert done.returncode == 1, done.stderr
    assert b"Traceback" not in done.stderr
    assert b"caf\\xe9 \\xfcn\\xefc\\xf6d\\xe9 \\u2603" in done.stdout


def test_error_message_to_a_console_that_cannot_encode(tmp_path):
    path = tmp_path / "plant.yaml"
    path.write_text(GOOD.replace("10 bar", "10 bär"), encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": str(ROOT), "PYTHONIOENCODING": "ascii"}
    done = subprocess.run(
        [sys.executable, "-m", "audit", "check", str(path)], capture_output=True, timeout=300, env=env
    )
    assert done.returncode == 2
    assert b"Traceback" not in done.stderr and b"10 b\\xe4r" in done.stderr


def test_junit_holds_only_xml_characters():
    from audit.outcomes import INVALID, FileOutcome
    from audit.report.junit import junit_tree

    hostile = "plant\x1b[2J\uffff\ud800\x00.yaml"
    outcome = FileOutcome(path=hostile, status=INVALID, problems=[f"{hostile}:1: bad\x07 value"])
    import xml.etree.ElementTree as ET

    text = ET.tostring(junit_tree([outcome]).getroot(), encoding="unicode")
    text.encode("utf-8")  # no lone surrogate left
    parsed = minidom.parseString(text.encode("utf-8"))
    suite = parsed.getElementsByTagName("testsuite")[0]
    assert suite.getAttribute("name") == "plant\\x1b[2J\\uffff\\ud800\\x00.yaml"


def test_console_report_escapes_what_it_prints():
    from audit.printable import escaped, escaped_lines

    assert escaped("S1\n\x1b[2JVerdict: PASS") == "S1\\n\\x1b[2JVerdict: PASS"
    assert escaped("C:\\plant\\b.yaml") == "C:\\plant\\b.yaml"  # ordinary text unchanged
    assert escaped("S\u200b1 \u202e") == "S\\u200b1 \\u202e"
    assert escaped_lines("a\x1b\nb") == "a\\x1b\nb"


# -- command-line values -----------------------------------------------------------------------------
@pytest.mark.parametrize(
    "args, message",
    [
        (
            ["diff", "a.yaml", "b.yaml", "--rtol", "nan"],
            "argument --rtol: 'nan' is not a relative tolerance",
        ),
        (["diff", "a.yaml", "b.yaml", "--rtol=-1e-6"], "argument --rtol: '-1e-6' is not a relative"),
        (["diff", "a.yaml", "b.yaml", "--rtol", "inf"], "argument --rtol: 'inf' is not a relative"),
        (
            ["check", "a.yaml", "--monte-carlo", "1000000000"],
            "1,000,000,000 draws is more than the 1,000,000 plant-audit makes",
        ),
        (["check", "a.yaml", "--monte-carlo", "9" * 400], "is not a number of draws"),
    ],
)
def test_command_line_values_that_are_not_sensible(args, message, tmp_path, capsys):
    before = snapshot(tmp_path)
    with pytest.raises(SystemExit) as exit_info:
        main(args)
    err = capsys.readouterr().err
    assert exit_info.value.code == 2
    assert message in err and "Traceback" not in err
    assert snapshot(tmp_path) == before


# -- what is kept, what is bounded --------------------------------------------------------------------
def test_revision_keeps_its_text():
    from audit.reading import parse_balance

    balance, _ = parse_balance(GOOD.replace("  site_pressure", "  revision: 1.10\n  site_pressure"))
    assert balance.balance.revision == "1.10"


def test_many_values_are_refused_before_composing(tmp_path, capsys, monkeypatch):
    """A file of many tiny values is refused before PyYAML composes it (a 19 MiB one composed to
    gigabytes before): the limit is checked on a streamed count, and the file is not read twice."""
    from audit.input import yaml_limits

    monkeypatch.setattr(yaml_limits, "MAX_COMPOSED_NODES", 1_000)
    path = tmp_path / "many.yaml"
    path.write_text(GOOD + "values: [" + "1, " * 5_000 + "1]\n", encoding="utf-8")
    err = refused(["check", str(path)], tmp_path, capsys)
    assert "many.yaml:9:" in err and "the file holds more than 1,000 values" in err


def test_large_mixer_review_is_bounded():
    """The review of a failing mixer of 2 000 inlets skips the per-stream slip search and the
    propagation with a note (both would grow with the square of the step's size)."""
    sys.path.insert(0, str(ROOT / "benchmarks"))
    try:
        import large_steps
    finally:
        sys.path.remove(str(ROOT / "benchmarks"))
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "mixer.yaml"
        path.write_text(large_steps.mixer_balance(2_000), encoding="utf-8")
        import audit

        started = time.process_time()
        result = audit.run(path)
        spent = time.process_time() - started
    assert spent < 30, f"{spent:.1f} s for one mixer of 2 000 inlets"
    law = [f for f in result.findings if f.step == "M1" and f.severity == "error"]
    assert law
    assert any("was not propagated: more than 300" in f.message for f in law)
    assert any(
        "the slips of its 2,001 streams were not tried" in c for f in law for c in f.probable_causes
    )


def test_step_whose_residual_is_not_finite(tmp_path, capsys):
    path = tmp_path / "plant.yaml"
    path.write_text(
        HEADER + "streams:\n  S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s}\n"
        "  S2: {fluid: Water, T: 280 degC, P: 5 bar, flow: 1 kg/s}\n"
        "steps:\n  - id: G1\n    kind: general\n    inlets: [S1]\n    outlets: [S2]\n"
        "    work_absorbed: 1.7e308 W\n    heat:\n      - added: 1.7e308 W\n",
        encoding="utf-8",
    )
    err = refused(["check", str(path)], tmp_path, capsys)
    assert "plant.yaml:8: step G1: the step's first-law residual is not a finite number" in err
