"""The bad-input corpus: every malformed balance is refused with exit code 2, a message that names the
file and the line (and the field where there is one), no traceback, and no report written.

The corpus lives in ``tests/bad_inputs/`` with its index ``cases.yaml`` (what each file gets wrong,
its exit code, the line and the message fragments it must produce). Cases that cannot be small
committed files (a 50 MB file, a folder, bytes that are not UTF-8, control characters, an unreadable
file) are generated here into ``tmp_path``.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from audit.commands.main import main
from audit.input import document as loader

CORPUS = Path(__file__).resolve().parent / "bad_inputs"
CASES: dict[str, dict] = yaml.safe_load((CORPUS / "cases.yaml").read_text(encoding="utf-8"))

GOOD = (
    "balance:\n  name: generated bad input\n  site_pressure: 1.013 bar\n"
    "streams:\n  S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s}\n"
)


def run_check(path: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> tuple[int, str]:
    """Run ``plant-audit check`` in-process asking for every report; return (exit code, stderr)
    after asserting that nothing but the error report was produced."""
    outputs = tmp_path / "reports"
    workbook, json_file, csv_dir = outputs / "out.xlsx", outputs / "out.json", outputs / "csv"
    code = main(
        ["check", str(path), "-o", str(workbook), "--json", str(json_file), "--csv", str(csv_dir)]
    )
    captured = capsys.readouterr()
    assert captured.out == "", "an invalid balance must print nothing but its error report"
    assert "Traceback" not in captured.err and "internal error" not in captured.err
    assert captured.err.startswith("error: ")
    assert all(line.startswith("error: ") for line in captured.err.splitlines())
    assert not outputs.exists(), "no report may be written for an invalid balance"
    return code, captured.err


def test_every_corpus_file_has_a_case():
    files = {p.name for p in CORPUS.glob("*.yaml")} - {"cases.yaml"}
    assert files == set(CASES), (
        f"files without a case: {sorted(files - set(CASES))}; cases "
        f"without a file: {sorted(set(CASES) - files)}"
    )
    assert len(CASES) >= 60
    for name, case in CASES.items():
        assert set(case) == {"what", "exit", "line", "expect"}, name
        assert case["expect"], f"{name}: a case must expect at least one message fragment"


@pytest.mark.parametrize("name", sorted(CASES))
def test_corpus_case(name, tmp_path, capsys):
    case = CASES[name]
    code, err = run_check(CORPUS / name, tmp_path, capsys)
    assert code == case["exit"], err
    first = err.splitlines()[0]
    assert f"{name}:{case['line']}:" in first, f"expected {name}:{case['line']}: in {first!r}"
    for fragment in case["expect"]:
        assert fragment in err, f"{fragment!r} not in {err!r}"


# -- generated cases ----------------------------------------------------------------------------------
def test_file_over_the_size_limit(tmp_path, capsys):
    path = tmp_path / "huge.yaml"
    padding = b"# " + b"x" * 1021 + b"\n"  # 1 KiB lines of comment
    with path.open("wb") as handle:
        handle.write(GOOD.encode())
        for _ in range(50 * 1024):  # 50 MiB in all
            handle.write(padding)
    assert path.stat().st_size > 50 * 2**20 > loader.MAX_FILE_BYTES
    code, err = run_check(path, tmp_path, capsys)
    assert code == 2
    assert "huge.yaml: the file is 50.0 MiB, larger than the 20 MiB a balance file may be" in err


def test_folder_given_as_file(tmp_path, capsys):
    folder = tmp_path / "balances.yaml"
    folder.mkdir()
    code, err = run_check(folder, tmp_path, capsys)
    assert code == 2
    assert "balances.yaml: is a folder, not a balance file" in err


def test_missing_file(tmp_path, capsys):
    code, err = run_check(tmp_path / "nowhere.yaml", tmp_path, capsys)
    assert code == 2
    assert "nowhere.yaml: no such file" in err


def test_latin1_bytes(tmp_path, capsys):
    path = tmp_path / "latin1.yaml"
    path.write_bytes(
        (GOOD + "  S2: {fluid: Water, T: 20 °C, P: 5 bar, flow: 1 kg/s}\n").encode("latin-1")
    )
    code, err = run_check(path, tmp_path, capsys)
    assert code == 2
    assert "latin1.yaml:6: the file is not valid UTF-8 text (byte 0xb0 at offset" in err


def test_utf16_file(tmp_path, capsys):
    path = tmp_path / "utf16.yaml"
    path.write_bytes(GOOD.encode("utf-16"))
    code, err = run_check(path, tmp_path, capsys)
    assert code == 2
    assert "utf16.yaml:1: the file is not valid UTF-8 text (byte 0xff at offset 0)" in err


@pytest.mark.parametrize("character", ["\x00", "\x07", "\x1b"])
def test_control_character(character, tmp_path, capsys):
    path = tmp_path / "control.yaml"
    path.write_text(
        GOOD + f"  S2: {{fluid: Wa{character}ter, T: 20 degC, P: 5 bar, flow: 1 kg/s}}\n",
        encoding="utf-8",
    )
    code, err = run_check(path, tmp_path, capsys)
    assert code == 2
    assert (
        f"control.yaml:6:17: not valid YAML: the control character #x{ord(character):04x} is not allowed"
    ) in err


def test_unreadable_file(tmp_path, capsys, monkeypatch):
    path = tmp_path / "locked.yaml"
    path.write_text(GOOD, encoding="utf-8")

    def refuse(self: Path, *args: object, **kwargs: object) -> bytes:
        raise PermissionError(13, "Permission denied", str(self))

    monkeypatch.setattr(Path, "open", refuse)  # a permission test cannot rely on chmod as root
    code, err = run_check(path, tmp_path, capsys)
    assert code == 2
    assert "locked.yaml: cannot be read: Permission denied" in err


def test_invalid_date_is_kept_as_text(tmp_path):
    """A revision written like a date that does not exist (2024-02-30) is text, not a crash."""
    from audit.reading import parse_balance

    balance, _ = parse_balance(
        GOOD.replace("  site_pressure", "  revision: 2024-02-30\n  site_pressure")
    )
    assert balance.balance.revision == "2024-02-30"


def test_real_process_exit_code_and_no_traceback(tmp_path):
    """The command line as a user runs it: exit 2 and a one-line message, nothing written."""
    json_file, name = tmp_path / "out.json", "yaml_python_apply_tag.yaml"
    done = subprocess.run(
        [sys.executable, "-m", "audit", "check", str(CORPUS / name), "--json", str(json_file)],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 2, done.stderr
    assert done.stdout == ""
    assert "Traceback" not in done.stderr
    assert done.stderr.startswith(f"error: {CORPUS / name}:8:14: the tag ")
    assert not json_file.exists()


def test_fuzzed_inputs_sample():
    """A fixed-seed sample of the fuzzer's inputs (tests/fuzz_loader.py, which runs for as long as
    it is told): each is refused with an InputError or audited, never anything else."""
    from fuzz_loader import INPUTS, check_text
    from hypothesis import HealthCheck, given, settings

    @settings(
        max_examples=40,
        derandomize=True,
        database=None,
        deadline=None,
        suppress_health_check=list(HealthCheck),
    )
    @given(INPUTS)
    def never_a_crash(text: str) -> None:
        problem = check_text(text)
        assert problem is None, f"{problem}\n--- input ---\n{text}"

    never_a_crash()


def test_fuzzed_tables_sample():
    """A fixed-seed sample of the fuzzer's table mode (``tests/fuzz_loader.py --tables``): stream
    tables as CSV and as damaged workbooks, each refused with an InputError or audited."""
    from fuzz_tables import TABLES, check_table
    from hypothesis import HealthCheck, given, settings

    @settings(
        max_examples=30,
        derandomize=True,
        database=None,
        deadline=None,
        suppress_health_check=list(HealthCheck),
    )
    @given(TABLES)
    def never_a_crash(table: tuple[str, bytes, str]) -> None:
        problem = check_table(table)
        assert problem is None, f"{problem}\n--- table options ---\n{table[2]}"

    never_a_crash()
