"""The batch summary workbook: one row per file, and every finding of every file.

Sheets:

* ``Summary``: the run (time, gate, files by verdict, the caution), then per file: file, balance,
  revision, verdict, open findings by severity, accepted findings, the worst open finding, total
  exergy destroyed [kW], what is new since the file's last recorded run, a link to the file's own
  workbook, and the problems of an invalid file or an internal error;
* ``Findings``: one row per finding of every audited file, accepted ones marked.

Written with XlsxWriter in constant-memory mode (:mod:`audit.report.plain_book`): numbers in
engineering units with number formats, every sheet printing landscape one page wide with its header
row on every page; the document's times are the run time, so the same outcomes give the same bytes.
Written atomically by :func:`audit.report.files.write_atomically`.
"""

from __future__ import annotations

import os
from collections import Counter
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, BinaryIO

from audit.clock import run_time
from audit.findings import ERROR, INFO, WARNING
from audit.outcomes import (
    FAIL,
    PASS,
    VERDICT_INTERNAL,
    VERDICT_INVALID,
    VERDICT_SKIPPED,
    VERDICT_UNWRITTEN,
    FileOutcome,
    finding_key,
)
from audit.report.display import shown, unit
from audit.report.files import write_atomically
from audit.report.plain_book import BOLD, TITLE, PlainBook
from audit.report.workbook_cells import FORMATS, INTEGER

CAUTION = (
    "The audit checks thermodynamic consistency only; it is not a safety or "
    "code-compliance review. Defer to local codes and licensed engineers."
)

_VERDICT_FILL = {
    PASS: "D8EED8",
    FAIL: "F6D5D1",
    VERDICT_INVALID: "FBE8C8",
    VERDICT_INTERNAL: "E0D4EC",
    VERDICT_UNWRITTEN: "E0D4EC",
    VERDICT_SKIPPED: "EEEEEE",  # not a balance (audit.discovery)
}

SUMMARY_COLUMNS = [
    ("File", 36),
    ("Balance", 22),
    ("Revision", 10),
    ("Verdict", 11),
    ("Errors", 7),
    ("Warnings", 9),
    ("Info", 6),
    ("Accepted", 9),
    ("Worst finding", 50),
    ("Exergy destroyed [kW]", 12),
    ("New since last run", 34),
    ("Workbook", 26),
    ("Problems", 50),
]
SUMMARY_FORMATS = [None, None, None, None, INTEGER, INTEGER, INTEGER, INTEGER, None]
SUMMARY_FORMATS += [FORMATS["power"], None, None, None]
SUMMARY_WRAP = (0, 8, 10, 11, 12)
FINDING_COLUMNS = [
    ("File", 36),
    ("Step", 9),
    ("Stream", 9),
    ("Severity", 9),
    ("Finding", 24),
    ("Accepted", 30),
    ("New since last run", 10),
    ("Margin", 12),
    ("Unit", 8),
    ("Message", 70),
]
FALLBACK_FORMAT = "0.0000"
"""The number format of a value whose quantity has no format of its own."""


def number_format(quantity: str | None, difference: bool = False) -> str:
    """The number format of a value of ``quantity`` in its display unit."""
    if difference and quantity == "temperature":
        quantity = "temperature_difference"
    return FORMATS.get(quantity or "", FALLBACK_FORMAT)


def summary_rows(
    outcomes: list[FileOutcome], output: str | Path | None = None, fail_on: str = "error"
) -> list[list[Any]]:
    """The Summary sheet's rows (one per file), as plain values; the workbook column is the
    workbook's path relative to ``output``."""
    rows = []
    for outcome in outcomes:
        result = outcome.result
        counts = result.counts(include_accepted=False) if result else {}
        worst = outcome.worst_finding()
        link = None
        if outcome.workbook:
            link = os.path.relpath(outcome.workbook, output) if output is not None else outcome.workbook
        rows.append(
            [
                outcome.path,
                result.name if result else None,
                result.revision if result else None,
                outcome.verdict(fail_on),
                counts.get(ERROR) if result else None,
                counts.get(WARNING) if result else None,
                counts.get(INFO) if result else None,
                sum(1 for f in result.findings if f.accepted) if result else None,
                (
                    f"{worst.severity} {worst.name} at {worst.step or worst.stream or 'plant'}: "
                    f"{worst.message}"
                )
                if worst
                else None,
                shown(result.plant.exergy_destroyed, "power") if result else None,
                outcome.history_note() or None,
                link,
                "\n".join(outcome.problems) or None,
            ]
        )
    return rows


def write_batch_workbook(
    outcomes: list[FileOutcome], path: str | Path, fail_on: str = "error", run_at: datetime | None = None
) -> Path:
    """Write the batch summary workbook to ``path`` (atomically); return the path. Raises
    :class:`audit.errors.ReportError` when the file cannot be written."""
    path = Path(path)
    when = (run_at or run_time()).astimezone(timezone.utc)

    def write(stream: BinaryIO) -> None:
        book = PlainBook(
            stream,
            "plant-audit batch summary",
            when,
            f"batch of {len(outcomes)} files, run at {when:%Y-%m-%d %H:%M:%S} UTC",
            None,
        )
        _summary(book, outcomes, path, fail_on, when)
        _findings(book, outcomes)
        book.close()

    write_atomically(path, write, "the batch summary workbook")
    return path


def _summary(
    book: PlainBook, outcomes: list[FileOutcome], path: Path, fail_on: str, when: datetime
) -> None:
    sheet = book.sheet("Summary", [w for _, w in SUMMARY_COLUMNS])
    verdicts = Counter(o.verdict(fail_on) for o in outcomes)
    sheet.line(["plant-audit batch summary"], style=TITLE)
    sheet.line(["Run at (UTC)", when.strftime("%Y-%m-%d %H:%M:%S")], styles={0: BOLD})
    sheet.line(
        ["Fails on", f"findings at or above '{fail_on}' that no reviewer accepted"], styles={0: BOLD}
    )
    files = f"{len(outcomes)}: " + ", ".join(
        f"{verdicts[v]} {v.lower()}"
        for v in (PASS, FAIL, VERDICT_INVALID, VERDICT_INTERNAL)
        + ((VERDICT_UNWRITTEN,) if verdicts[VERDICT_UNWRITTEN] else ())
    )
    sheet.line(["Files", files], styles={0: BOLD})
    sheet.line(["Caution", CAUTION], styles={0: BOLD})
    sheet.line([])
    sheet.header([c for c, _ in SUMMARY_COLUMNS])
    link_column = [c for c, _ in SUMMARY_COLUMNS].index("Workbook")
    verdict_column = [c for c, _ in SUMMARY_COLUMNS].index("Verdict")
    last = sheet.header_row
    for row in summary_rows(outcomes, path.parent, fail_on):
        fill = {"bg_color": "#" + _VERDICT_FILL[row[verdict_column]], "pattern": 1}
        target = row[link_column]
        last = sheet.line(
            row,
            SUMMARY_FORMATS,
            wrap=SUMMARY_WRAP,
            links={link_column: "external:" + target} if target else None,
            styles={verdict_column: fill},
        )
    sheet.finish(last, freeze=(sheet.header_row, 1))


def _findings(book: PlainBook, outcomes: list[FileOutcome]) -> None:
    sheet = book.sheet("Findings", [w for _, w in FINDING_COLUMNS])
    sheet.header([c for c, _ in FINDING_COLUMNS])
    last = 1
    for outcome in outcomes:
        if outcome.result is None:
            continue
        compared = outcome.recorded and outcome.previous_run is not None
        new = set(outcome.new_since_last or []) if compared else None
        for f in outcome.result.findings:
            difference = f.quantity == "temperature"
            formats: list[str | None] = [None] * 7 + [number_format(f.quantity, difference)]
            last = sheet.line(
                [
                    outcome.path,
                    f.step,
                    f.stream,
                    f.severity,
                    f.name,
                    f.accepted,
                    None if new is None else ("yes" if finding_key(f) in new else "no"),
                    shown(f.margin, f.quantity, difference=difference),
                    unit(f.quantity, difference=difference),
                    f.message,
                ],
                formats,
                wrap=(0, 5, 9),
            )
    sheet.finish(last, freeze=(1, 1))
    sheet.line([])
    sheet.line([CAUTION])
