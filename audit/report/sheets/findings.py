"""The Findings sheet: one row per finding, most severe first, its columns from the column
registry (:data:`audit.report.columns.FINDINGS`); the step and the stream link to their rows."""

from __future__ import annotations

from typing import Any

from audit.findings import ERROR, NAMES, Finding
from audit.report.columns import FINDINGS as COLUMNS
from audit.report.columns import OWN
from audit.report.display import unit
from audit.report.sheets.context import EXCHANGERS, FINDINGS, STEPS, STREAMS, Book, cell_value
from audit.report.workbook_cells import BOLD, FILLS, FORMATS, GENERAL, PLAIN, location

CHARTED = ("internal-pinch", "temperature-cross")
"""Findings whose name links to the exchanger's T–Q chart on the Exchangers sheet."""

WIDTHS = {
    "message": 70,
    "probable_causes": 50,
    "tolerance_basis": 50,
    "accepted": 30,
    "contributors": 30,
    "meaning": 40,
}


def _own(book: Book, f: Finding, key: str) -> Any:
    """A workbook-only cell, or one the sheet writes its own way."""
    if key == "unit":
        return unit(f.quantity) if f.quantity else ""
    if key == "margin_unit":
        return unit(f.quantity, difference=True)
    if key == "meaning":
        return NAMES[f.name]
    if key == "contributors":
        return ", ".join(c.input for c in f.contributors or ())
    raise KeyError(key)


def write(book: Book) -> None:
    sh = book.sheets[FINDINGS]
    columns = COLUMNS.sheet_columns()
    sh.header(COLUMNS.headers())
    for key, width in WIDTHS.items():
        sh.fix(COLUMNS.sheet_order.index(key) + 1, width)
    for row, f in enumerate(book.findings, start=2):
        value_fmt = FORMATS.get(f.quantity or "", GENERAL)
        for col, column in enumerate(columns, start=1):
            key = column.key
            if key == "severity":
                sh.put(
                    row,
                    col,
                    f.severity,
                    fill=FILLS[f.severity],
                    font=BOLD if f.severity == ERROR else PLAIN,
                )
            elif key == "name" and f.name in CHARTED and f.step in book.exchanger_row:
                # the finding links to its exchanger's T–Q chart
                sh.put(row, col, f.name, link=location(EXCHANGERS, book.exchanger_row[f.step]))
            elif key == "step":
                if f.step:
                    sh.put(row, col, f.step, link=location(STEPS, book.step_row.get(f.step, 1)))
            elif key == "stream":
                if f.stream:
                    sh.put(row, col, f.stream, link=location(STREAMS, book.stream_row.get(f.stream, 1)))
            elif not column.machine or key == "contributors":
                sh.put(row, col, _own(book, f, key), wrap=column.wrap)
            else:
                own = column.quantity == OWN
                quantity = f.quantity if own else column.quantity
                fmt = value_fmt if own else column.fmt
                sh.put(row, col, cell_value(column, f, quantity), fmt=fmt, wrap=column.wrap)
    if not book.findings:
        sh.put(2, 1, "no findings")
    sh.table(len(book.findings) + 1, freeze="C2")
