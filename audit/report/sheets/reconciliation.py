"""The Reconciliation sheet of the findings workbook (``plant-audit reconcile FILE -o X.xlsx``):
the global test on the readings as read and after removing the gross errors, the critical value
of the normalised corrections, the gross errors named (each as its set: "one of these"), then one
row per reading: measured, reconciled, correction, uncertainty before and after, normalised
correction, local redundancy, detectable bias, equivalent set and flag. Values in the display
units of :mod:`audit.report.reconciliation_text`; the sheet reads the
:class:`~audit.reconcile.records.Reconciliation` record and computes nothing."""

from __future__ import annotations

from audit.reconcile.records import Reconciliation
from audit.report.reconciliation_text import shown, unit_of
from audit.report.sheets.context import RECONCILIATION, Book
from audit.report.workbook_cells import (
    BOLD,
    FILLS,
    GENERAL,
    SECTION_FONT,
    TITLE_FONT,
    Fill,
)

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
RATIO = "0.000"
"""Number format of the normalised corrections and redundancies."""

FLAG_FILLS: dict[str, Fill] = {
    "gross error": FILLS["error"],
    "suspect": FILLS["warning"],
    "not checkable": FILLS["info"],
    "unobservable": FILLS["info"],
}


def test_lines(result: Reconciliation) -> list[tuple[str, str, bool]]:
    """(label, text, passed) of the global tests, as the Overview and this sheet show them."""
    lines = []
    for label, test in (
        ("global test, readings as read", result.first),
        ("global test, after removing the gross errors", result.final),
    ):
        lines.append(
            (
                label,
                f"γ = {test.statistic:.4g} against χ²({test.dof}, {test.confidence:.0%}) = "
                f"{test.critical:.4g}: {'passed' if test.passed else 'failed'}",
                test.passed,
            )
        )
    return lines


def write(book: Book) -> None:
    result = book.reconciliation
    if result is None:
        return
    sh = book.sheets[RECONCILIATION]
    sh.put(1, 1, f"Reconciliation of {result.name}", font=TITLE_FONT, width=False)
    sh.put(2, 1, result.caution, font=BOLD, width=False)
    row = 4
    sh.put(row, 1, "Statistical tests", font=SECTION_FONT, width=False)
    row += 1
    for label, text, passed in test_lines(result):
        sh.put(row, 1, label, width=False)
        sh.put(row, 2, text, fill=FILLS["pass"] if passed else FILLS["error"], width=False)
        row += 1
    sh.put(row, 1, "critical value of the normalised corrections", width=False)
    sh.put(row, 2, f"{result.critical_value:.3f} ({result.critical_method})", width=False)
    row += 1
    solver = (
        f"converged in {result.iterations} iterations (tolerance {result.tolerance:g} in standard "
        "uncertainties)"
        if result.converged
        else f"NOT CONVERGED: {result.message}"
    )
    sh.put(row, 1, "solver", width=False)
    sh.put(row, 2, solver, width=False)
    row += 1
    for number, elim in enumerate(result.eliminations, 1):
        who = elim.removed if len(elim.named) <= 1 else "one of " + ", ".join(elim.named)
        note = elim.note.lstrip("; ")
        sh.put(row, 1, f"gross error {number}", font=BOLD, width=False)
        sh.put(
            row,
            2,
            f"{who}: normalised correction {elim.normalised:.3g}" + (f"; {note}" if note else ""),
            fill=FILLS["error"],
            width=False,
        )
        row += 1
    for note in result.phase_notes:
        sh.put(row, 1, "phase", width=False)
        sh.put(row, 2, note, width=False)
        row += 1
    for origin in result.origins:
        sh.put(row, 1, f"{origin.step} {origin.name}", width=False)
        sh.put(row, 2, f"{origin.origin} ({origin.note})", width=False)
        row += 1
    row += 1
    sh.header(HEADERS, row)
    for r in result.readings:
        row += 1
        sh.put(row, 1, r.key)
        sh.put(row, 2, r.label)
        sh.put(row, 3, unit_of(r))
        sh.put(row, 4, shown(r, r.measured), fmt=GENERAL)
        sh.put(row, 5, shown(r, r.reconciled), fmt=GENERAL)
        sh.put(row, 6, shown(r, r.correction, True), fmt=GENERAL)
        sh.put(row, 7, shown(r, r.u_before, True), fmt=GENERAL)
        sh.put(row, 8, shown(r, r.u_after, True), fmt=GENERAL)
        sh.put(row, 9, r.normalised, fmt=RATIO)
        sh.put(row, 10, r.redundancy, fmt=RATIO)
        sh.put(row, 11, shown(r, r.detectable_bias, True), fmt=GENERAL)
        sh.put(row, 12, ", ".join(r.equivalent_set))
        sh.put(row, 13, r.flag, fill=FLAG_FILLS.get(r.flag))
    sh.table(row, freeze=f"B{sh.header_row + 1}")
