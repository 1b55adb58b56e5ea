"""The Method sheet: sign convention, units, equations, the tolerances of this balance with what
each allows, and the published sources (the words are in :mod:`audit.report.workbook_method`)."""

from __future__ import annotations

from audit.model.tolerances import Tolerances
from audit.report.display import shown, unit
from audit.report.sheets.context import METHOD, TOLERANCE_QUANTITY, Book
from audit.report.workbook_cells import (
    FORMATS,
    GENERAL,
    HEADER_FILL,
    HEADER_FONT,
    SECTION_FONT,
    TITLE_FONT,
)
from audit.report.workbook_method import METHOD_TEXT, SOURCES


def write(book: Book) -> None:
    sh = book.sheets[METHOD]
    sh.put(1, 1, "How the numbers are made", font=TITLE_FONT, width=False)
    row = 3
    for topic, text in METHOD_TEXT:
        sh.put(row, 1, topic, font=HEADER_FONT, wrap=True)
        sh.put(row, 2, text, wrap=True)
        row += 1
    row += 1
    sh.put(row, 1, "Tolerances of this balance", font=SECTION_FONT, width=False)
    row += 1
    for col, title in enumerate(["tolerance", "what it allows", "value", "unit"], start=1):
        sh.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
    row += 1
    fields = Tolerances.model_fields
    for name, value in book.result.tolerances.items():
        quantity = TOLERANCE_QUANTITY.get(name)
        description = fields[name].description if name in fields else ""
        sh.put(row, 1, name)
        sh.put(row, 2, description or "", wrap=True)
        sh.put(row, 3, shown(value, quantity, difference=True), fmt=FORMATS.get(quantity or "", GENERAL))
        sh.put(row, 4, unit(quantity, difference=True) if quantity else "SI")
        row += 1
    sh.put(
        row,
        2,
        "The defaults are common practice for design balances (no published "
        "source); a balance overrides them under balance: tolerances:, a step under its "
        "own tolerances:.",
        wrap=True,
    )
    row += 2
    row = _equations_of_state(book, row)
    sh.put(row, 1, "Published sources", font=SECTION_FONT, width=False)
    row += 1
    for col, title in enumerate(["used for", "source"], start=1):
        sh.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
    row += 1
    for used_for, source in SOURCES:
        sh.put(row, 1, used_for, wrap=True)
        sh.put(row, 2, source, wrap=True)
        row += 1
    sh.fix(1, 34)
    sh.fix(2, 100)
    sh.fix(3, 12)
    sh.fit()


def _equations_of_state(book: Book, row: int) -> int:
    """The equation of state each fluid of this balance was evaluated on, with its citation (from
    the provenance); the next free row."""
    sh = book.sheets[METHOD]
    text = book.result.provenance.get("equations of state", "")
    if not text:
        return row
    sh.put(row, 1, "Equations of state of this balance", font=SECTION_FONT, width=False)
    row += 1
    for col, title in enumerate(["fluid", "equation of state and source"], start=1):
        sh.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
    row += 1
    for entry in text.split("; "):
        fluid, _, source = entry.partition(": ")
        sh.put(row, 1, fluid)
        sh.put(row, 2, source, wrap=True)
        row += 1
    return row + 1
