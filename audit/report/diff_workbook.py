"""The comparison workbook of two revisions (``plant-audit diff OLD NEW -o diff.xlsx``).

Sheets: ``Summary`` (the two revisions, counts, the gate, the caution), ``Findings`` (new, resolved
and changed findings with both margins), ``Changes`` (stream states and step claims that changed,
in engineering units, and the streams and steps added or removed). Written with XlsxWriter
(:mod:`audit.report.plain_book`): numbers with number formats, every sheet printing landscape one
page wide; the document's times are the run time (``SOURCE_DATE_EPOCH``). Written atomically.
"""

from __future__ import annotations

from pathlib import Path
from typing import BinaryIO

from audit.clock import run_time
from audit.diff import CHANGED, NEW, RESOLVED, RevisionDiff
from audit.report.batch_workbook import CAUTION, number_format
from audit.report.display import shown, unit
from audit.report.files import write_atomically
from audit.report.plain_book import BOLD, TITLE, PlainBook
from audit.report.workbook_cells import INTEGER

_STATUS_FILL = {NEW: "F6D5D1", RESOLVED: "D8EED8", CHANGED: "FBE8C8"}

FINDING_COLUMNS = [
    ("Status", 10),
    ("Step", 9),
    ("Stream", 9),
    ("Finding", 24),
    ("Severity (old)", 10),
    ("Severity (new)", 10),
    ("Margin (old)", 12),
    ("Margin (new)", 12),
    ("Unit", 8),
    ("What changed", 30),
    ("Accepted (new)", 30),
    ("Message", 70),
]
CHANGE_COLUMNS = [
    ("Where", 8),
    ("Id", 12),
    ("Property", 16),
    ("Old", 16),
    ("New", 16),
    ("Unit", 10),
]


def write_diff_workbook(diff: RevisionDiff, path: str | Path, fail_on: str = "error") -> Path:
    """Write the comparison workbook to ``path`` (atomically); return the path. Raises
    :class:`audit.errors.ReportError` when the file cannot be written."""
    path = Path(path)
    revision = f"{diff.old_revision or 'not stated'} → {diff.new_revision or 'not stated'}"

    def write(stream: BinaryIO) -> None:
        book = PlainBook(
            stream,
            "plant-audit revision comparison",
            run_time(),
            f"{Path(diff.old_file).name} → {Path(diff.new_file).name}",
            revision,
        )
        _summary(book, diff, fail_on)
        _findings(book, diff)
        _changes(book, diff)
        book.close()

    write_atomically(path, write, "the comparison workbook")
    return path


def _summary(book: PlainBook, diff: RevisionDiff, fail_on: str) -> None:
    sheet = book.sheet("Summary", [20, 60, 16])
    sheet.line(["plant-audit revision comparison"], style=TITLE)
    label = {0: BOLD}
    sheet.line(["Old", diff.old_file, diff.old_revision], styles=label, wrap=(1,))
    sheet.line(["New", diff.new_file, diff.new_revision], styles=label, wrap=(1,))
    for name, status in (
        ("New findings", NEW),
        ("Resolved findings", RESOLVED),
        ("Changed findings", CHANGED),
    ):
        sheet.line([name, len(diff.with_status(status))], [None, INTEGER], styles=label)
    streams = len({c.id for c in diff.changes if c.where == "stream"})
    steps = len({c.id for c in diff.changes if c.where == "step"})
    sheet.line(["Streams changed", streams], [None, INTEGER], styles=label)
    sheet.line(["Steps changed", steps], [None, INTEGER], styles=label)
    failing = diff.new_failing(fail_on)
    gate = (
        f"{'FAIL' if failing else 'PASS'}: {len(failing)} new finding(s) at or "
        f"above '{fail_on}' that no reviewer accepted"
    )
    sheet.line(["Gate", gate], styles=label, wrap=(1,))
    tolerance = f"relative {diff.rtol:g} plus an absolute floor per quantity"
    sheet.line(["Tolerance", tolerance], styles=label)
    sheet.line(["Caution", CAUTION], styles=label, wrap=(1,))
    sheet.finish()


def _findings(book: PlainBook, diff: RevisionDiff) -> None:
    sheet = book.sheet("Findings", [w for _, w in FINDING_COLUMNS])
    sheet.header([c for c, _ in FINDING_COLUMNS])
    last = 1
    for change in diff.findings:
        f = change.new or change.old
        assert f is not None
        difference = f.quantity == "temperature"
        fmt = number_format(f.quantity, difference)
        last = sheet.line(
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
            [None] * 6 + [fmt, fmt],
            wrap=(9, 10, 11),
            styles={0: {"bg_color": "#" + _STATUS_FILL[change.status], "pattern": 1}},
        )
    sheet.finish(last, freeze=(1, 1))


def _changes(book: PlainBook, diff: RevisionDiff) -> None:
    sheet = book.sheet("Changes", [w for _, w in CHANGE_COLUMNS])
    sheet.header([c for c, _ in CHANGE_COLUMNS])
    last = 1
    for c in diff.changes:
        old, new = c.old, c.new
        if not isinstance(old, str) and not isinstance(new, str):
            old, new = shown(old, c.quantity), shown(new, c.quantity)
        fmt = number_format(c.quantity)
        last = sheet.line(
            [c.where, c.id, c.field, old, new, unit(c.quantity)], [None, None, None, fmt, fmt]
        )
    for label, ids in (
        ("stream added", diff.streams_added),
        ("stream removed", diff.streams_removed),
        ("step added", diff.steps_added),
        ("step removed", diff.steps_removed),
    ):
        for i in ids:
            last = sheet.line([label.split()[0], i, label.split()[1]])
    sheet.finish(last, freeze=(1, 0))
