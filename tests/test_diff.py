"""Comparing revisions: the sample plant's clean → seeded revisions, and small edits of them.

What the seeded revision changed is listed in sample_plant/README.md (streams S06, S08, S10, S11,
S20, S60, S61, S62, S70, S71; T1 and C1 shaft power); the expected findings are computed from two
`audit.run` calls.
"""

from __future__ import annotations

import math
import shutil
from pathlib import Path

import pytest

import audit
from audit.commands.main import main
from audit.diff import CHANGED, NEW, RESOLVED, compare, differs
from audit.exitcodes import EXIT_FINDINGS, EXIT_INPUT, EXIT_PASS
from audit.outcomes import finding_key
from audit.results import AuditResult

SAMPLE = Path(__file__).resolve().parents[1] / "sample_plant"
CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


@pytest.fixture(scope="module")
def clean() -> AuditResult:
    return audit.run(CLEAN)


@pytest.fixture(scope="module")
def seeded() -> AuditResult:
    return audit.run(SEEDED)


def keys(result: AuditResult) -> set:
    return {finding_key(f) for f in result.findings}


def edited(tmp_path: Path, source: Path, old: str, new: str, name: str = "edited.yaml") -> Path:
    text = source.read_text(encoding="utf-8")
    assert text.count(old) == 1, old
    target = tmp_path / name
    target.write_text(text.replace(old, new), encoding="utf-8")
    return target


def test_clean_to_seeded_lists_exactly_the_seeded_findings_as_new(clean, seeded) -> None:
    diff = compare(clean, seeded)
    assert {c.key for c in diff.with_status(NEW)} == keys(seeded) - keys(clean)
    assert len(diff.with_status(NEW)) == len(seeded.findings)  # the clean revision has none
    assert diff.with_status(RESOLVED) == [] and diff.with_status(CHANGED) == []
    assert len(diff.new_failing("error")) == len([f for f in seeded.findings if f.severity == "error"])


def test_seeded_to_clean_resolves_them(clean, seeded) -> None:
    diff = compare(seeded, clean)
    assert {c.key for c in diff.with_status(RESOLVED)} == keys(seeded) - keys(clean)
    assert diff.with_status(NEW) == [] and diff.new_failing() == []


def test_changed_streams_and_claims_are_the_seeded_edits(clean, seeded) -> None:
    diff = compare(clean, seeded)
    assert {c.id for c in diff.changes if c.where == "stream"} == {
        "S06",
        "S08",
        "S10",
        "S11",
        "S20",
        "S60",
        "S61",
        "S62",
        "S70",
        "S71",
        "AIR1",
        "AIR2",
        "MU1",
        "BD1",
    }  # sample_plant/README.md, "what was changed"
    s11 = {c.field: c for c in diff.changes if c.id == "S11"}
    assert {"T", "mass_flow"} <= set(s11)
    assert s11["T"].old == clean.stream("S11").T and s11["T"].new == seeded.stream("S11").T
    assert math.isclose(s11["T"].new - s11["T"].old, 80.0, abs_tol=1e-9)  # 80 → 160 degC
    claims = {(c.id, c.field): c for c in diff.changes if c.where == "step"}
    # shaft power as written: T1 1.120 MW → 1.45 MW, C1 152.3 kW → 95 kW (work delivered > 0)
    assert claims["T1", "W"].old == pytest.approx(1.120e6, rel=1e-12)
    assert claims["T1", "W"].new == pytest.approx(1.45e6, rel=1e-12)
    assert claims["C1", "W"].old == pytest.approx(-152.3e3, rel=1e-12)
    assert claims["C1", "W"].new == pytest.approx(-95e3, rel=1e-12)
    assert not (diff.streams_added or diff.streams_removed or diff.steps_added or diff.steps_removed)


def test_a_revision_against_itself_is_unchanged(clean) -> None:
    diff = compare(clean, audit.run(CLEAN))
    assert diff.unchanged and diff.new_failing() == []


def test_steps_added_and_removed(tmp_path: Path, clean) -> None:
    renamed = audit.run(edited(tmp_path, CLEAN, "- id: CIP1", "- id: CIP2"))
    diff = compare(clean, renamed)
    assert (diff.steps_added, diff.steps_removed) == (["CIP2"], ["CIP1"])
    assert diff.streams_added == [] and diff.streams_removed == []


def test_margin_change_of_a_finding(tmp_path: Path, seeded) -> None:
    more = audit.run(edited(tmp_path, SEEDED, "shaft_power: 1.45 MW", "shaft_power: 1.5 MW"))
    diff = compare(seeded, more)
    changed = {c.key: c for c in diff.with_status(CHANGED)}
    work = changed[("T1", "", "work-above-bound")]
    assert work.what == ("margin",)
    # the claim rose by 50 kW with the same streams: so did the margin over the bound
    assert work.new.margin - work.old.margin == pytest.approx(50e3, rel=1e-9)
    assert diff.with_status(NEW) == [] and diff.new_failing() == []


def test_acceptance_shows_as_a_change_and_clears_the_gate(tmp_path: Path, seeded) -> None:
    copy = tmp_path / "plant.yaml"
    shutil.copy(SEEDED, copy)
    copy.with_name("plant.accepted.yaml").write_text(
        "accepted:\n  - {step: C1, finding: input-below-minimum, reason: test run pending, "
        "accepted_by: utilities reviewer, expires: 2999-01-01}\n",
        encoding="utf-8",
    )
    diff = compare(seeded, audit.run(copy))
    assert [(c.key, c.what) for c in diff.with_status(CHANGED)] == [
        (("C1", "", "input-below-minimum"), ("now accepted",))
    ]
    # and back: the acceptance ended, so the finding blocks the gate again
    back = compare(audit.run(copy), seeded)
    assert [f.name for f in back.new_failing()] == ["input-below-minimum"]


def test_differs_uses_the_absolute_floor_and_rtol() -> None:
    assert not differs(300.0, 300.0005, "temperature")  # 0.5 mK < 1 mK floor
    assert differs(300.0, 300.002, "temperature")
    assert not differs(1.0e6, 1.0e6 + 0.5, "power")  # 0.5 W < 1 W floor
    assert not differs(1.0e6, 1.01e6, "power", rtol=0.02)
    assert differs(None, 0.0, "fraction") and not differs(None, None, "fraction")
    assert not differs(math.inf, math.inf, "temperature")
    assert differs("liquid", "two-phase", None)


def test_diff_command_prints_and_writes_the_workbook(
    tmp_path: Path, seeded, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "diff.xlsx"
    assert main(["diff", str(CLEAN), str(SEEDED), "-o", str(out)]) == EXIT_FINDINGS
    text = capsys.readouterr().out
    assert f"New findings ({len(seeded.findings)}):" in text
    assert "T1: W 1120 kW → 1450 kW" in text
    assert f"Verdict: FAIL ({len(seeded.findings)} new finding(s) at or above 'error'" in text
    assert "not a safety or code-compliance review" in text
    openpyxl = pytest.importorskip("openpyxl")
    rows = list(openpyxl.load_workbook(out)["Findings"].iter_rows(values_only=True))
    assert rows[0][0] == "Status" and len(rows) == len(seeded.findings) + 1
    assert {r[0] for r in rows[1:]} == {"new"}
    assert main(["diff", str(SEEDED), str(CLEAN)]) == EXIT_PASS
    assert f"Resolved findings ({len(seeded.findings)}):" in capsys.readouterr().out


def test_diff_command_with_an_invalid_revision(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    broken = tmp_path / "broken.yaml"
    broken.write_text("balance: [", encoding="utf-8")
    assert main(["diff", str(CLEAN), str(broken)]) == EXIT_INPUT
    assert "not valid YAML" in capsys.readouterr().err
