"""What happened to one file of a batch (or of ``check``): plain, picklable data for the reports.

A file is *audited* (it has an :class:`audit.results.AuditResult`, which passes or fails the gate),
*invalid* (an :class:`audit.errors.InputError`: the problems name file, line and field), an
*internal* error (plant-audit itself failed on it: an unexpected exception or a crashed worker), or
*unwritten*: audited, but its own workbook could not be written (an
:class:`audit.errors.ReportError`: the problem names the path and the reason).

Exit codes follow :mod:`audit.exitcodes`; a batch exits with the worst of its files, in the order
internal error (3) > report not written (4) > invalid input (2) > findings at or above
``--fail-on`` (1) > pass (0).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from audit.exitcodes import EXIT_FINDINGS, EXIT_INPUT, EXIT_INTERNAL, EXIT_PASS, EXIT_REPORT
from audit.findings import SEVERITY_RANK, Finding, at_or_above
from audit.results import AuditResult

AUDITED = "audited"
INVALID = "invalid"
INTERNAL = "internal"
UNWRITTEN = "unwritten"
SKIPPED = "skipped"  # a YAML file of a searched folder that is not a balance (audit.discovery)

PASS = "PASS"
FAIL = "FAIL"
VERDICT_INVALID = "INVALID"
VERDICT_INTERNAL = "INTERNAL ERROR"
VERDICT_UNWRITTEN = "REPORT NOT WRITTEN"
VERDICT_SKIPPED = "SKIPPED"

WORST_LAST = (EXIT_PASS, EXIT_FINDINGS, EXIT_INPUT, EXIT_REPORT, EXIT_INTERNAL)
"""Exit codes from the best to the worst outcome (a batch exits with its worst file's)."""

FindingKey = tuple[str, str, str]
"""(step, stream, finding name), with '' for a missing step or stream: how findings are matched
between runs and revisions."""


def finding_key(finding: Finding) -> FindingKey:
    return (finding.step or "", finding.stream or "", finding.name)


def describe_key(key: FindingKey) -> str:
    step, stream, name = key
    where = f"step {step}" if step else f"stream {stream}" if stream else "plant"
    return f"{name} at {where}"


@dataclass
class FileOutcome:
    """The outcome of auditing one file. ``problems`` holds the input problems (invalid) or the
    error text (internal); ``workbook`` the file's own workbook when one was written; ``sha256``
    the file's content hash when it could be read. When the run was recorded in a history
    (``recorded``), ``previous_run`` is the time of the file's last audited run before it (None:
    there was none) and ``new_since_last`` the findings that run did not have."""

    path: str
    status: str
    result: AuditResult | None = None
    problems: list[str] = field(default_factory=list)
    workbook: str | None = None
    sha256: str | None = None
    seconds: float = 0.0
    recorded: bool = False
    previous_run: str | None = None
    new_since_last: list[FindingKey] | None = None
    identity: str | None = None  # the run history's key (audit.identity); None: the file's path
    inputs: list[tuple[str, str]] = field(default_factory=list)
    staged: str | None = None

    # ``inputs``: the files the audit read (balance, tables, acceptance file) with what each is,
    # so that no report of the batch is written over one; ``staged``: the file's workbook as a
    # temporary file beside its target, until the batch publishes its reports together.

    def exit_code(self, fail_on: str = "error") -> int:
        if self.status == INTERNAL:
            return EXIT_INTERNAL
        if self.status == INVALID:
            return EXIT_INPUT
        if self.status == UNWRITTEN:
            return EXIT_REPORT
        if self.status == SKIPPED:
            return EXIT_PASS
        assert self.result is not None
        return EXIT_FINDINGS if self.result.fails(fail_on) else EXIT_PASS

    def verdict(self, fail_on: str = "error") -> str:
        if self.status == SKIPPED:
            return VERDICT_SKIPPED
        return {
            EXIT_PASS: PASS,
            EXIT_FINDINGS: FAIL,
            EXIT_INPUT: VERDICT_INVALID,
            EXIT_INTERNAL: VERDICT_INTERNAL,
            EXIT_REPORT: VERDICT_UNWRITTEN,
        }[self.exit_code(fail_on)]

    def failing(self, fail_on: str = "error") -> list[Finding]:
        """The findings that fail the gate: at or above ``fail_on`` and not accepted."""
        if self.result is None:
            return []
        return [f for f in self.result.findings if at_or_above(f.severity, fail_on) and not f.accepted]

    def history_note(self) -> str:
        """What the history says about this run: '' (not recorded), 'recorded' (no result to
        compare), 'first audited run', 'nothing new since <time of the last audited run>' or
        'N new since <time>: ...'."""
        if not self.recorded:
            return ""
        if self.result is None:
            return "recorded"
        if self.previous_run is None:
            return "first audited run"
        new = self.new_since_last or []
        if not new:
            return f"nothing new since {self.previous_run}"
        return f"{len(new)} new since {self.previous_run}: " + "; ".join(describe_key(k) for k in new)

    def worst_finding(self) -> Finding | None:
        """The most severe open (not accepted) finding; among equals, the largest relative
        margin, then the first reported."""
        if self.result is None:
            return None
        open_findings = [f for f in self.result.findings if not f.accepted]
        if not open_findings:
            return None
        return max(
            enumerate(open_findings),
            key=lambda item: (
                SEVERITY_RANK[item[1].severity],
                abs(item[1].margin_relative or 0.0),
                -item[0],
            ),
        )[1]


def batch_exit_code(outcomes: list[FileOutcome], fail_on: str = "error") -> int:
    """The exit code of a batch: the worst of its files (3 > 4 > 2 > 1 > 0, see
    :data:`WORST_LAST`); 0 for no files."""
    return max((o.exit_code(fail_on) for o in outcomes), key=WORST_LAST.index, default=EXIT_PASS)
