"""The findings workbook: what a reviewer or an auditor opens (``plant-audit check FILE -o X.xlsx``).

Sheets, in this order:

* **Overview**: the balance, its file and SHA-256, the dead state, the site pressure, the verdict at
  the chosen threshold, counts by severity, the plant's network as a picture (failing steps red or
  amber), plant totals, tolerances, versions, run time and the safety caution;
* **Findings**: one row per finding, most severe first, linked to its step's (or stream's) row;
* **Steps**: every step's balances; the first-law residual is a live formula over the cells of the
  same row that hold Q, W and the enthalpy flows in and out, beside the solver's own residual;
* **Streams**: every stream's state and flow;
* **Heat flows**: every heat flow across a step's boundary, with its boundary temperature;
* **Exchangers**: per heat exchanger its duty, approaches, LMTD and smallest approach, and a T–Q
  chart of both sides with the smallest approach marked;
* **Exergy losses**: exergy destroyed per flow step, largest first, and a bar chart of it;
* **Reconciliation** (written by ``plant-audit reconcile FILE -o X.xlsx`` only): the global test,
  the gross errors and every reading measured and reconciled (:mod:`audit.report.sheets.reconciliation`);
* **Method**: sign convention, equations, tolerances and the published sources.

One module per sheet in :mod:`audit.report.sheets`; the columns of the Findings, Steps and Streams
sheets come from the column registry (:mod:`audit.report.columns`) that the JSON and CSV writers
read too. Cell writing is in :mod:`audit.report.workbook_cells`, the file in
:mod:`audit.report.workbook_file`, the words in :mod:`audit.report.workbook_method`. What the
workbook keeps to:

* it renders :mod:`audit.results` objects and computes no physics: values are converted to the
  engineering units of :mod:`audit.report.display` (named in every header) and formatted;
* numbers are stored as numbers with number formats, never as text; vessels (batch steps) are totals
  [J], shown in kJ (kJ/K) in the same columns as the rates, with a ``basis`` column and the unit in
  the number format of every energy cell of the Steps and Heat flows sheets, so rates and totals
  never mix silently; the Exergy losses chart holds rates only;
* no user text is ever evaluated as a formula (formula or CSV injection): every text cell is written
  as an explicit string, and text that starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage
  return also carries the quote prefix, so that editing the cell keeps it text;
* the file is written atomically (:func:`audit.report.files.write_atomically`): a crash leaves the
  previous file untouched and no temporary file; a file that cannot be written raises
  :class:`audit.errors.ReportError` (exit code 4);
* every sheet prints on A4 landscape, one page wide, with its header row on every page, a page
  header naming the balance and its revision and a footer with the sheet and the page
  (:mod:`audit.report.printing`);
* the same result gives the same bytes (the network picture too): the document's created and
  modified times are the run time from ``result.provenance``, and every zip entry has the
  writer's fixed time;
* every formula is written with its cached value (the solver's residual, equal to the formula's
  arithmetic to rounding), so readers that do not calculate (pandas, openpyxl with
  ``data_only=True``, file previews) and LibreOffice, which by default shows an .xlsx file's cached
  values, show the number; Excel recalculates on load (the file asks for it), and LibreOffice does
  on Data ▸ Calculate ▸ Recalculate Hard or when set to recalculate on load;
* it is written in two passes by the same sheet code (:mod:`audit.report.workbook_cells`): one
  measures column widths, row heights and each column's common style, the other writes the cells
  into XlsxWriter's constant-memory worksheets, one row at a time as XML of our own
  (:mod:`audit.report.workbook_rows`, the same bytes as XlsxWriter's cell writer), styles set per
  column: no cell stays in memory once its row is written (what does grow with the rows: the
  measured row heights, and XlsxWriter's record of each link and row height until the file is
  closed).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, BinaryIO

from audit.findings import SEVERITY_RANK
from audit.reconcile.records import Reconciliation
from audit.report import workbook_file
from audit.report.files import write_atomically
from audit.report.printing import set_up_page
from audit.report.sheets import (
    exchangers,
    exergy,
    findings,
    heat,
    method,
    overview,
    reconciliation,
    steps,
    streams,
)
from audit.report.sheets.context import (
    EXCHANGERS,
    EXERGY,
    FINDINGS,
    HEAT,
    METHOD,
    OVERVIEW,
    SHEETS,
    STEPS,
    STREAMS,
    TOLERANCE_QUANTITY,
    Book,
)
from audit.report.workbook_cells import Layout, safe_text
from audit.results import AuditResult

__all__ = [
    "EXCHANGERS",
    "EXERGY",
    "FINDINGS",
    "HEAT",
    "METHOD",
    "OVERVIEW",
    "SHEETS",
    "STEPS",
    "STREAMS",
    "TOLERANCE_QUANTITY",
    "build",
    "write_workbook",
]

WRITERS = (overview, findings, steps, streams, heat, exchangers, exergy, reconciliation, method)
"""The sheet modules, in the order of :func:`~audit.report.sheets.context.titles` (the
Reconciliation sheet writes nothing without a reconciliation)."""


def measure(
    result: AuditResult, fail_on: str = "error", reconciliation: Reconciliation | None = None
) -> dict[str, Layout]:
    """The first pass: every sheet's column widths, row heights and column styles."""
    book = Book(result, fail_on, reconciliation=reconciliation)
    for module in WRITERS:
        module.write(book)
    return {title: sheet.layout for title, sheet in book.sheets.items()}


def build(
    result: AuditResult,
    fail_on: str,
    wb: Any,
    layouts: dict[str, Layout],
    reconciliation: Reconciliation | None = None,
) -> Book:
    """The second pass: every sheet of ``result`` written into ``wb`` (an XlsxWriter workbook)
    and set up for printing."""
    book = Book(result, fail_on, wb, layouts, reconciliation)
    for module in WRITERS:
        module.write(book)
    result = book.result
    for title, sheet in book.sheets.items():
        sheet.finish()
        # Landscape A4, one page wide, the header row on every page (audit.report.printing).
        # (the Exchangers sheet's blocks below its table have headers of their own)
        header_row = sheet.header_row if sheet.header_titles and title != EXCHANGERS else 0
        set_up_page(sheet.ws, "plant-audit findings", result.name, result.revision, header_row)
    return book


def write_workbook(
    result: AuditResult,
    path: str | Path,
    fail_on: str = "error",
    reconciliation: Reconciliation | None = None,
) -> None:
    """Write the findings workbook of ``result`` to ``path`` (an .xlsx file), atomically.

    ``fail_on`` ("error" or "warning") sets the verdict shown on the overview; with a
    ``reconciliation`` the workbook has the Reconciliation sheet, referenced from the Overview. Raises
    :class:`audit.errors.ReportError` when the file cannot be written there.
    """
    if fail_on not in SEVERITY_RANK:
        raise ValueError(f"fail_on must be one of {sorted(SEVERITY_RANK)}, not {fail_on!r}")
    layouts = measure(result, fail_on, reconciliation)
    when = workbook_file.run_time(result)
    title = safe_text(f"plant-audit findings: {result.name}")

    def write(stream: BinaryIO) -> None:
        wb = workbook_file.open_workbook(stream, title, when)
        build(result, fail_on, wb, layouts, reconciliation)
        workbook_file.close(wb)

    write_atomically(path, write, "the workbook")
