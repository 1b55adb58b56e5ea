"""Accepted findings: a reviewer's acceptance clears the gate but stays visible; expired and
unmatched acceptances are reported; bad acceptance files are clear input errors.

The expected findings are always computed from an audit of the same balance without acceptances
(`audit.run` on a copy of the sample plant), never pinned.
"""

from __future__ import annotations

import shutil
import textwrap
from datetime import date
from pathlib import Path

import pytest

import audit
from audit.commands.main import main
from audit.errors import InputError
from audit.results import AuditResult
from audit.review.acceptance import beside_file, is_acceptance_file

SEEDED = Path(__file__).resolve().parents[1] / "sample_plant" / "quillon-bay-seeded.yaml"
FAR_FUTURE = "2999-12-31"


@pytest.fixture(scope="module")
def plain() -> AuditResult:
    """The seeded revision audited without any acceptance."""
    return audit.run(SEEDED)


@pytest.fixture
def seeded(tmp_path: Path) -> Path:
    target = tmp_path / "plant.yaml"
    shutil.copy(SEEDED, target)
    return target


def write_accepted(balance: Path, entries: list[dict]) -> Path:
    lines = ["accepted:"]
    for entry in entries:
        first = True
        for key, value in entry.items():
            lines.append(f"  {'- ' if first else '  '}{key}: {value}")
            first = False
    path = balance.with_name(balance.stem + ".accepted.yaml")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def every_finding(result) -> list[dict]:
    """One acceptance per finding of ``result``: by its step, or by its stream (a finding on a
    stream's state alone, such as a glycol below its freezing point)."""
    found = dict.fromkeys((f.step, f.name, f.stream) for f in result.findings)
    return [
        entry(step, name) if step is not None else stream_entry(str(stream), name)
        for step, name, stream in found
    ]


def stream_entry(stream: str, finding: str) -> dict:
    return {
        "stream": stream,
        "finding": finding,
        "reason": "vendor curve pending",
        "accepted_by": "process lead",
        "expires": FAR_FUTURE,
    }


def entry(step: str, finding: str, expires: str = FAR_FUTURE, **more: str) -> dict:
    return {
        "step": step,
        "finding": finding,
        "reason": "vendor curve pending",
        "accepted_by": "process lead",
        "expires": expires,
        **more,
    }


def test_beside_file_is_found_by_the_balance_stem(seeded: Path) -> None:
    assert beside_file(seeded) is None
    path = write_accepted(seeded, [entry("T1", "work-above-bound")])
    assert beside_file(seeded) == path
    assert is_acceptance_file(path) and not is_acceptance_file(seeded)


def test_accepted_finding_stays_visible_but_no_longer_fails(seeded: Path, plain) -> None:
    targets = [f for f in plain.findings if f.step == "T1"]
    assert targets, "the seeded revision has findings at T1 (sample_plant/README.md)"
    write_accepted(seeded, [entry("T1", name) for name in dict.fromkeys(f.name for f in targets)])
    result = audit.run(seeded)
    # every finding is still there, in the same order, with the same values
    assert [(f.step, f.name, f.margin) for f in result.findings] == [
        (f.step, f.name, f.margin) for f in plain.findings
    ]
    for f in result.findings:
        if f.step == "T1":
            assert f.accepted == f"vendor curve pending (accepted by process lead, until {FAR_FUTURE})"
        else:
            assert f.accepted is None
    assert result.counts(include_accepted=False)["error"] == (plain.counts()["error"] - len(targets))
    assert result.counts() == plain.counts()


def test_all_findings_accepted_passes_the_gate(seeded: Path, plain) -> None:
    write_accepted(seeded, every_finding(plain))
    result = audit.run(seeded)
    assert plain.fails("error")
    assert not result.fails("error") and not result.fails("warning")
    assert all(f.accepted for f in result.findings)
    assert len(result.findings) == len(plain.findings)


def test_expired_acceptance_fails_again_and_says_so(seeded: Path, plain) -> None:
    write_accepted(seeded, [entry("C1", "input-below-minimum", expires="2020-06-30")])
    result = audit.run(seeded)
    below = [f for f in result.findings if (f.step, f.name) == ("C1", "input-below-minimum")]
    assert below and not any(f.accepted for f in below)
    expired = [f for f in result.findings if f.name == "acceptance-expired"]
    assert len(expired) == 1
    assert expired[0].severity == "warning" and expired[0].step == "C1"
    assert "by process lead expired on 2020-06-30; the finding counts again" in expired[0].message
    assert "plant.accepted.yaml:2" in expired[0].message  # where it was written


def test_acceptance_holds_through_its_expiry_day(seeded: Path) -> None:
    write_accepted(seeded, [entry("C1", "input-below-minimum", expires="2030-01-15")])
    on_the_day = audit.run(seeded, today=date(2030, 1, 15))
    day_after = audit.run(seeded, today=date(2030, 1, 16))
    assert [
        f.accepted is not None
        for f in on_the_day.findings
        if (f.step, f.name) == ("C1", "input-below-minimum")
    ] == [True]
    assert not any(f.name == "acceptance-expired" for f in on_the_day.findings)
    assert [
        f.accepted for f in day_after.findings if (f.step, f.name) == ("C1", "input-below-minimum")
    ] == [None]
    assert any(f.name == "acceptance-expired" for f in day_after.findings)


def test_unmatched_acceptance_is_reported(seeded: Path, plain) -> None:
    write_accepted(seeded, [entry("T9", "work-above-bound"), entry("P1", "wet-exhaust")])
    result = audit.run(seeded)
    unmatched = [f for f in result.findings if f.name == "acceptance-unmatched"]
    assert [f.step for f in unmatched] == ["T9", "P1"]
    assert all(f.severity == "warning" for f in unmatched)
    assert "an acceptance of 'work-above-bound' at step T9" in unmatched[0].message
    assert "matches no finding of this audit" in unmatched[0].message
    assert len(result.findings) == len(plain.findings) + 2


def test_unmatched_acceptance_fails_a_warning_gate_only(tmp_path: Path) -> None:
    clean = tmp_path / "clean.yaml"
    shutil.copy(SEEDED.with_name("quillon-bay-clean.yaml"), clean)
    assert not audit.run(clean).findings  # the clean revision has no finding (its README)
    write_accepted(clean, [entry("T1", "work-above-bound")])
    result = audit.run(clean)
    assert [f.name for f in result.findings] == ["acceptance-unmatched"]
    assert not result.fails("error") and result.fails("warning")


def test_acceptance_inside_the_balance(seeded: Path, plain) -> None:
    text = seeded.read_text(encoding="utf-8") + textwrap.dedent(f"""
        accepted:
          - step: SP1
            finding: mass-imbalance
            reason: meter M-12 under recalibration
            accepted_by: site reviewer
            expires: {FAR_FUTURE}
          - stream: S99
            finding: phase-mismatch
            reason: old note
            accepted_by: site reviewer
            expires: {FAR_FUTURE}
        """)
    seeded.write_text(text, encoding="utf-8")
    line = text.splitlines().index("  - step: SP1") + 1
    result = audit.run(seeded)
    mass = [f for f in result.findings if f.name == "mass-imbalance"]
    assert [f.accepted for f in mass] == [
        f"meter M-12 under recalibration (accepted by site reviewer, until {FAR_FUTURE})"
    ]
    unmatched = [f for f in result.findings if f.name == "acceptance-unmatched"]
    assert len(unmatched) == 1 and unmatched[0].stream == "S99"
    assert "at stream S99" in unmatched[0].message
    assert f"plant.yaml:{line + 5}" in unmatched[0].message


@pytest.mark.parametrize(
    ("body", "message"),
    [
        (
            "accepted:\n  - step: T1\n    finding: work-above-bond\n    reason: r\n    accepted_by: a\n"
            "    expires: 2999-01-01\n",
            r"plant\.accepted\.yaml:3:.*'work-above-bond' is not a finding name; did you mean "
            r"'work-above-bound'\?",
        ),
        (
            "accepted:\n  - step: T1\n    finding: work-above-bound\n    accepted_by: a\n"
            "    expires: 2999-01-01\n",
            r"acceptance #1, field 'accepted\[0\]\.reason': 'reason' is "
            r"required here",
        ),
        (
            "accepted:\n  - finding: work-above-bound\n    reason: r\n    accepted_by: a\n"
            "    expires: 2999-01-01\n",
            r"names the 'step' \(or the 'stream'\) of the finding",
        ),
        (
            "accepted:\n  - step: T1\n    finding: work-above-bound\n    reason: r\n    accepted_by: a\n"
            "    expires: next year\n",
            r"accepted\[0\]\.expires",
        ),
        (
            "accepted:\n  - step: T1\n    finding: acceptance-expired\n    reason: r\n"
            "    accepted_by: a\n    expires: 2999-01-01\n",
            r"cannot be accepted",
        ),
        (
            "accepted:\n  - step: T1\n    finding: work-above-bound\n    reason: '  '\n"
            "    accepted_by: a\n    expires: 2999-01-01\n    by: me\n",
            r"must not be blank(.|\n)*unknown field 'by'",
        ),
        ("- step: T1\n", r"an acceptance file holds one key, 'accepted:'"),
        ("accepted: true\n", r"'accepted' is a list of acceptances"),
    ],
)
def test_bad_acceptance_file_is_an_input_error(seeded: Path, body: str, message: str) -> None:
    seeded.with_name("plant.accepted.yaml").write_text(body, encoding="utf-8")
    with pytest.raises(InputError, match=message):
        audit.run(seeded)


def test_check_command_passes_when_known_findings_are_accepted(
    seeded: Path, plain, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["check", str(seeded), "--brief"]) == 1
    write_accepted(seeded, every_finding(plain))
    capsys.readouterr()
    assert main(["check", str(seeded), "--brief"]) == 0
    out = capsys.readouterr().out
    assert f"({len(plain.findings)} accepted by a reviewer)" in out
    assert out.count("ACCEPTED: vendor curve pending") == len(plain.findings)
    assert out.rstrip().endswith("PASS")


def test_check_command_fails_on_a_new_error_beside_accepted_ones(seeded: Path, plain) -> None:
    """The review gate: a revision whose known findings are accepted passes; the same revision
    with one more error fails."""
    write_accepted(seeded, every_finding(plain))
    assert main(["check", str(seeded), "-q"]) == 0
    text = seeded.read_text(encoding="utf-8")
    # a new error: the pump P1 now claims far less power than it takes (clean in both revisions)
    assert "P1" not in {f.step for f in plain.findings}
    start = text.index("- id: P1")
    end = text.index("shaft_power:", start)
    line_end = text.index("\n", end)
    seeded.write_text(text[:end] + "shaft_power: 0.1 kW" + text[line_end:], encoding="utf-8")
    assert main(["check", str(seeded), "-q"]) == 1


def test_every_report_shows_the_acceptance(seeded: Path, tmp_path: Path) -> None:
    """Console (above), JSON, CSV and the workbook carry the acceptance beside the finding."""
    import json

    openpyxl = pytest.importorskip("openpyxl")
    write_accepted(seeded, [entry("HX1", "internal-pinch")])
    label = f"vendor curve pending (accepted by process lead, until {FAR_FUTURE})"
    out = tmp_path / "out"
    assert (
        main(
            [
                "check",
                str(seeded),
                "-q",
                "-o",
                str(out / "plant.xlsx"),
                "--json",
                str(out / "plant.json"),
                "--csv",
                str(out),
            ]
        )
        == 1
    )
    data = json.loads((out / "plant.json").read_text(encoding="utf-8"))
    assert [f["accepted"] for f in data["findings"] if f["name"] == "internal-pinch"] == [label]
    assert label in (out / "findings.csv").read_text(encoding="utf-8")
    rows = list(openpyxl.load_workbook(out / "plant.xlsx")["Findings"].iter_rows(values_only=True))
    column = next(
        i for i, title in enumerate(rows[0]) if str(title).startswith("accepted by a reviewer")
    )
    accepted = [(r[1], r[column]) for r in rows[1:] if r[column]]
    assert accepted == [("internal-pinch", label)]
