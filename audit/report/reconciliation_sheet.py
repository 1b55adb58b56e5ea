"""The Reconciliation sheet of the workbook (standalone: the workbook module wires it in).

Columns: reading, what, unit, measured, reconciled, correction, uncertainty before and after,
normalised correction, local redundancy, detectable bias, equivalent set, flag; above them the
global test, the gross errors and the caution."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.styles import Font

from audit.reconcile.records import Reconciliation
from audit.report.files import write_atomically
from audit.report.reconciliation_text import shown, unit_of

HEADERS = [
    "reading",
    "what",
    "unit",
    "measured",
    "reconciled",
    "correction",
    "uncertainty before (k=1)",
    "uncertainty after (k=1)",
    "normalised correction",
    "local redundancy",
    "detectable bias",
    "equivalent set",
    "flag",
]


def write_reconciliation_sheet(workbook: Any, result: Reconciliation) -> Any:
    """Add the sheet ``Reconciliation`` to an openpyxl ``workbook`` and return it."""
    sheet = workbook.create_sheet("Reconciliation")
    bold = Font(bold=True)
    sheet.append([f"Reconciliation of {result.name}"])
    sheet["A1"].font = bold
    sheet.append([result.caution])
    for label, test in (
        ("global test, readings as read", result.first),
        ("global test, after removing gross errors", result.final),
    ):
        sheet.append(
            [
                label,
                f"γ = {test.statistic:.4g}",
                f"χ²({test.dof}, {test.confidence:.0%}) = {test.critical:.4g}",
                "passed" if test.passed else "failed",
            ]
        )
    sheet.append(
        [
            "critical value of the normalised corrections",
            round(result.critical_value, 4),
            result.critical_method,
        ]
    )
    for elim in result.eliminations:
        sheet.append(
            [
                "gross error",
                "one of: " + ", ".join(elim.equivalent_set),
                round(elim.normalised, 3),
                elim.note.lstrip("; "),
            ]
        )
    sheet.append([])
    sheet.append(HEADERS)
    for cell in sheet[sheet.max_row]:
        cell.font = bold
    for r in result.readings:
        sheet.append(
            [
                r.key,
                r.label,
                unit_of(r),
                shown(r, r.measured),
                shown(r, r.reconciled),
                shown(r, r.correction, True),
                shown(r, r.u_before, True),
                shown(r, r.u_after, True),
                r.normalised,
                r.redundancy,
                shown(r, r.detectable_bias, True),
                ", ".join(r.equivalent_set),
                r.flag,
            ]
        )
    sheet.column_dimensions["A"].width = 24
    sheet.column_dimensions["B"].width = 28
    return sheet


def write_reconciliation_workbook(result: Reconciliation, path: Path) -> None:
    """A workbook holding just the Reconciliation sheet (until the full workbook includes it)."""
    workbook = Workbook()
    workbook.remove(workbook.active)
    write_reconciliation_sheet(workbook, result)
    write_atomically(path, workbook.save, "the reconciliation workbook")
