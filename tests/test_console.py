"""The console report: fitted to 80-120 columns, words never broken, colour only when wanted, a
step table and a plain verdict line."""

from __future__ import annotations

import re

import pytest
from conftest import SAMPLE

import audit
from audit.commands.main import main
from audit.report.console import (
    colour_wanted,
    findings_summary,
    step_table,
    stream_table,
    verdict_line,
)
from audit.wording import safe_text

ANSI = re.compile(r"\x1b\[[0-9;]*m")


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SAMPLE / "quillon-bay-seeded.yaml")


@pytest.mark.parametrize("width", [80, 100, 120])
def test_every_line_fits_the_width(seeded, width: int) -> None:
    for text in (
        stream_table(seeded, width),
        step_table(seeded, width),
        findings_summary(seeded, width=width),
    ):
        assert max(len(line) for line in text.splitlines()) <= width


@pytest.mark.parametrize("width", [80, 100])
def test_messages_wrap_at_words(seeded, width: int) -> None:
    words = set(findings_summary(seeded, width=width).split())
    for finding in seeded.findings:
        assert set(finding.message.split()) <= words, finding.message


def test_numbers_are_never_broken(seeded) -> None:
    text = stream_table(seeded, 80)
    for stream in seeded.streams:
        row = next(line for line in text.splitlines() if line.split()[:1] == [stream.id])
        assert f"{stream.T - 273.15:.2f}" in row and f"{stream.h / 1e3:.1f}" in row


def test_tables_say_absolute_and_list_the_steps(seeded) -> None:
    text = stream_table(seeded, 100)
    assert text.startswith("Streams (pressures absolute)") and "P abs" in text
    assert "Basis of h and s. formation: S01," in text
    steps = step_table(seeded, 100)
    assert re.search(r"T1\s+turbine\s+0\.0\s+1450\.0\s+249\.7\s+105\.0%\s+3 errors", steps)
    assert re.search(r"V1\s+valve\s+.*\s+ok$", steps, re.MULTILINE)


def test_the_verdict_line_is_plain(seeded) -> None:
    assert findings_summary(seeded, width=100).splitlines()[-1] == "FAIL: 20 errors"
    clean = audit.run(SAMPLE / "quillon-bay-clean.yaml")
    assert findings_summary(clean, width=100).splitlines()[-1] == "PASS"
    measured = audit.run(SAMPLE / "quillon-bay-measured.yaml")
    assert verdict_line(measured, "warning").plain == "FAIL: 5 errors, 1 warning"


def test_colour_only_on_a_terminal_without_no_color(seeded) -> None:
    assert colour_wanted(True, {}) is True
    assert colour_wanted(False, {}) is False
    assert colour_wanted(True, {"NO_COLOR": "1"}) is False
    assert colour_wanted(True, {"NO_COLOR": ""}) is True
    assert colour_wanted(True, {"TERM": "dumb"}) is False
    coloured = findings_summary(seeded, width=100, colour=True)
    assert "\x1b[1;31mERROR" in coloured
    plain = "\n".join(line.rstrip() for line in ANSI.sub("", coloured).splitlines())
    assert plain == findings_summary(seeded, width=100)
    assert not ANSI.search(findings_summary(seeded, width=100))


def test_the_command_fits_columns_and_writes_no_colour_when_piped(
    monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    monkeypatch.setenv("COLUMNS", "90")
    assert main(["check", str(SAMPLE / "quillon-bay-seeded.yaml")]) == 1
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 90
    assert "\x1b[" not in out
    assert out.rstrip().endswith("FAIL: 20 errors")


def test_text_from_the_balance_is_made_safe() -> None:
    assert safe_text("S1\x1b[31m") == "S1\\x1b[31m"
    assert safe_text("a\nb\tc") == "a b c"
    assert safe_text("x\u202ey") == "x\\u202ey"
    assert safe_text("[bold]S1[/bold]") == "[bold]S1[/bold]"
