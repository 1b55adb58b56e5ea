"""The batch summary workbook: one row per file, and every finding of every file.

Sheets:

* ``Summary``: the run (time, gate, files by verdict, the caution), then per file: file, balance,
  revision, verdict, open findings by severity, accepted findings, the worst open finding, total
  exergy destroyed [kW], what is new since the file's last recorded run, a link to the file's own
  workbook, and the problems of an invalid file or an internal error;
* ``Findings``: one row per finding of every audited file, accepted ones marked.

Written atomically by :func:`audit.report.files.write_atomically`.
"""

from __future__ import annotations

import math
import os
from collections import Counter
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

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

CAUTION = (
    "The audit checks thermodynamic consistency only; it is not a safety or "
    "code-compliance review. Defer to local codes and licensed engineers."
)

_FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
_HEADER_FILL = PatternFill("solid", fgColor="DDE4EE")
_VERDICT_FILL = {
    PASS: PatternFill("solid", fgColor="D8EED8"),
    FAIL: PatternFill("solid", fgColor="F6D5D1"),
    VERDICT_INVALID: PatternFill("solid", fgColor="FBE8C8"),
    VERDICT_INTERNAL: PatternFill("solid", fgColor="E0D4EC"),
    VERDICT_UNWRITTEN: PatternFill("solid", fgColor="E0D4EC"),
    VERDICT_SKIPPED: PatternFill("solid", fgColor="EEEEEE"),  # not a balance (audit.discovery)
}

SUMMARY_COLUMNS = [
    ("File", 48),
    ("Balance", 30),
    ("Revision", 12),
    ("Verdict", 15),
    ("Errors", 8),
    ("Warnings", 10),
    ("Info", 6),
    ("Accepted", 10),
    ("Worst finding", 60),
    ("Exergy destroyed [kW]", 14),
    ("New since last run", 50),
    ("Workbook", 36),
    ("Problems", 80),
]
FINDING_COLUMNS = [
    ("File", 48),
    ("Step", 10),
    ("Stream", 10),
    ("Severity", 9),
    ("Finding", 28),
    ("Accepted", 40),
    ("New since last run", 12),
    ("Margin", 12),
    ("Unit", 10),
    ("Message", 100),
]


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
    book = Workbook()
    sheet = book.active
    sheet.title = "Summary"
    verdicts = Counter(o.verdict(fail_on) for o in outcomes)
    when = (run_at or run_time()).astimezone(timezone.utc)
    append_row(sheet, ["plant-audit batch summary"])
    sheet["A1"].font = Font(bold=True, size=14)
    append_row(sheet, ["Run at (UTC)", when.strftime("%Y-%m-%d %H:%M:%S")])
    append_row(sheet, ["Fails on", f"findings at or above '{fail_on}' that no reviewer accepted"])
    append_row(
        sheet,
        [
            "Files",
            f"{len(outcomes)}: "
            + ", ".join(
                f"{verdicts[v]} {v.lower()}"
                for v in (PASS, FAIL, VERDICT_INVALID, VERDICT_INTERNAL)
                + ((VERDICT_UNWRITTEN,) if verdicts[VERDICT_UNWRITTEN] else ())
            ),
        ],
    )
    append_row(sheet, ["Caution", CAUTION])
    append_row(sheet, [])
    write_header(sheet, SUMMARY_COLUMNS)
    header_row = sheet.max_row
    link_column = [c for c, _ in SUMMARY_COLUMNS].index("Workbook") + 1
    verdict_column = [c for c, _ in SUMMARY_COLUMNS].index("Verdict") + 1
    for row in summary_rows(outcomes, path.parent, fail_on):
        append_row(sheet, row)
        r = sheet.max_row
        link = sheet.cell(r, link_column)
        if link.value:
            link.hyperlink = str(link.value)
            link.style = "Hyperlink"
        verdict = sheet.cell(r, verdict_column)
        verdict.fill = _VERDICT_FILL[verdict.value]
        sheet.cell(r, len(SUMMARY_COLUMNS)).alignment = Alignment(wrap_text=True, vertical="top")
    sheet.freeze_panes = sheet.cell(header_row + 1, 2)
    sheet.auto_filter.ref = (
        f"A{header_row}:{get_column_letter(len(SUMMARY_COLUMNS))}{max(sheet.max_row, header_row)}"
    )

    findings = book.create_sheet("Findings")
    write_header(findings, FINDING_COLUMNS)
    for outcome in outcomes:
        if outcome.result is None:
            continue
        compared = outcome.recorded and outcome.previous_run is not None
        new = set(outcome.new_since_last or []) if compared else None
        for f in outcome.result.findings:
            difference = f.quantity == "temperature"
            append_row(
                findings,
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
            )
    findings.freeze_panes = "B2"
    findings.auto_filter.ref = f"A1:{get_column_letter(len(FINDING_COLUMNS))}{findings.max_row}"
    append_row(findings, [])
    append_row(findings, [CAUTION])
    write_atomically(path, book.save, "the batch summary workbook")
    return path


def write_header(sheet: Worksheet, columns: list[tuple[str, int]]) -> None:
    """Append a bold header row and set the column widths."""
    row = append_row(sheet, [name for name, _ in columns])
    for index, (_, width) in enumerate(columns, start=1):
        cell = sheet.cell(row, index)
        cell.font = Font(bold=True)
        cell.fill = _HEADER_FILL
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        sheet.column_dimensions[get_column_letter(index)].width = width


def append_row(sheet: Worksheet, values: list[object]) -> int:
    """Append a row; text is stored as text (never read as a formula: text starting with ``=``,
    ``+``, ``-``, ``@`` also gets the quote prefix) without the control characters a workbook
    cannot hold; non-finite numbers become empty cells. Returns the row number."""
    row = sheet.max_row + 1 if sheet.max_row > 1 or sheet["A1"].value is not None else 1
    sheet.cell(row, 1)  # an empty row still takes its place
    for column, value in enumerate(values, start=1):
        cell = sheet.cell(row, column)
        if isinstance(value, str):
            text = ILLEGAL_CHARACTERS_RE.sub("\ufffd", value)
            cell.value = text
            cell.data_type = "s"
            if text.startswith(_FORMULA_TRIGGERS):
                cell.quotePrefix = True
        elif isinstance(value, float) and not math.isfinite(value):
            cell.value = None
        else:
            cell.value = value
    return row
