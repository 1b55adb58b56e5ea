"""The comparison workbook of two revisions (``plant-audit diff OLD NEW -o diff.xlsx``).

Sheets: ``Summary`` (the two revisions, counts, the gate, the caution), ``Findings`` (new, resolved
and changed findings with both margins), ``Changes`` (stream states and step claims that changed,
in engineering units, and the streams and steps added or removed). Written atomically.
"""

from __future__ import annotations

from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Font, PatternFill

from audit.diff import CHANGED, NEW, RESOLVED, RevisionDiff
from audit.report.batch_workbook import CAUTION, append_row, write_header
from audit.report.display import shown, unit
from audit.report.files import write_atomically

_STATUS_FILL = {
    NEW: PatternFill("solid", fgColor="F6D5D1"),
    RESOLVED: PatternFill("solid", fgColor="D8EED8"),
    CHANGED: PatternFill("solid", fgColor="FBE8C8"),
}

FINDING_COLUMNS = [
    ("Status", 10),
    ("Step", 10),
    ("Stream", 10),
    ("Finding", 28),
    ("Severity (old)", 10),
    ("Severity (new)", 10),
    ("Margin (old)", 12),
    ("Margin (new)", 12),
    ("Unit", 8),
    ("What changed", 30),
    ("Accepted (new)", 40),
    ("Message", 100),
]
CHANGE_COLUMNS = [
    ("Where", 8),
    ("Id", 12),
    ("Property", 12),
    ("Old", 16),
    ("New", 16),
    ("Unit", 10),
]


def write_diff_workbook(diff: RevisionDiff, path: str | Path, fail_on: str = "error") -> Path:
    """Write the comparison workbook to ``path`` (atomically); return the path. Raises
    :class:`audit.errors.ReportError` when the file cannot be written."""
    path = Path(path)
    book = Workbook()
    sheet = book.active
    sheet.title = "Summary"
    append_row(sheet, ["plant-audit revision comparison"])
    sheet["A1"].font = Font(bold=True, size=14)
    append_row(sheet, ["Old", diff.old_file, diff.old_revision])
    append_row(sheet, ["New", diff.new_file, diff.new_revision])
    for label, status in (
        ("New findings", NEW),
        ("Resolved findings", RESOLVED),
        ("Changed findings", CHANGED),
    ):
        append_row(sheet, [label, len(diff.with_status(status))])
    append_row(sheet, ["Streams changed", len({c.id for c in diff.changes if c.where == "stream"})])
    append_row(sheet, ["Steps changed", len({c.id for c in diff.changes if c.where == "step"})])
    failing = diff.new_failing(fail_on)
    append_row(
        sheet,
        [
            "Gate",
            f"{'FAIL' if failing else 'PASS'}: {len(failing)} new finding(s) at or "
            f"above '{fail_on}' that no reviewer accepted",
        ],
    )
    append_row(sheet, ["Tolerance", f"relative {diff.rtol:g} plus an absolute floor per quantity"])
    append_row(sheet, ["Caution", CAUTION])
    sheet.column_dimensions["A"].width = 20
    sheet.column_dimensions["B"].width = 60

    findings = book.create_sheet("Findings")
    write_header(findings, FINDING_COLUMNS)
    for change in diff.findings:
        f = change.new or change.old
        assert f is not None
        difference = f.quantity == "temperature"
        append_row(
            findings,
            [
                change.status,
                f.step,
                f.stream,
                f.name,
                change.old.severity if change.old else None,
                change.new.severity if change.new else None,
                shown(change.old.margin, f.quantity, difference) if change.old else None,
                shown(change.new.margin, f.quantity, difference) if change.new else None,
                unit(f.quantity, difference),
                "; ".join(change.what) or None,
                change.new.accepted if change.new else None,
                f.message,
            ],
        )
        findings.cell(findings.max_row, 1).fill = _STATUS_FILL[change.status]
    findings.freeze_panes = "B2"

    changes = book.create_sheet("Changes")
    write_header(changes, CHANGE_COLUMNS)
    for c in diff.changes:
        old, new = c.old, c.new
        if not isinstance(old, str) and not isinstance(new, str):
            old, new = shown(old, c.quantity), shown(new, c.quantity)
        append_row(changes, [c.where, c.id, c.field, old, new, unit(c.quantity)])
    for label, ids in (
        ("stream added", diff.streams_added),
        ("stream removed", diff.streams_removed),
        ("step added", diff.steps_added),
        ("step removed", diff.steps_removed),
    ):
        for i in ids:
            append_row(changes, [label.split()[0], i, label.split()[1]])
    changes.freeze_panes = "A2"
    write_atomically(path, book.save, "the comparison workbook")
    return path
