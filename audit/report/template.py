"""The stream-table workbook (``plant-audit template --streams FILE``): a ``streams`` sheet with the
headers and units the table reader (:mod:`audit.input.tables`) expects, a ``claims`` sheet, and an
``instructions`` sheet. The same writer lays out filled tables (the sample site's stream table).

What this module keeps to:

* it writes what it is given (headers, rows of plain values) and computes nothing;
* text is stored as text, never as a formula, whatever it starts with;
* the file is written atomically (:func:`audit.report.files.write_atomically`); the document
  times and zip entry times are fixed, so the same content gives the same bytes (a committed
  sample table does not change when it is regenerated unchanged).
"""

from __future__ import annotations

import io
import zipfile
from collections.abc import Mapping, Sequence
from datetime import datetime
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.worksheet import Worksheet
from openpyxl.writer.excel import ExcelWriter

from audit.report.files import write_bytes

_FIXED_TIME = datetime(1980, 1, 1)  # the earliest time a zip entry can hold
_HEADER_FILL = PatternFill("solid", fgColor="DDEBF7")
_HEADER_FONT = Font(bold=True)
_VALIDATED_ROWS = 2000  # rows of the streams sheet given the phase drop-down list

CAUTION = (
    "The audit checks thermodynamic consistency only; it is not a safety or "
    "code-compliance review. Defer to local codes and licensed engineers."
)

INSTRUCTIONS = [
    ("Stream table", None),
    ("One row per stream; the first row holds the headers. Empty rows are ignored.", None),
    (
        "A header is a stream field and, for a quantity, its unit in square brackets: "
        "'T [degC]', 'P [barg]', 'flow [t/h]'. Change the unit in the header to any unit plant-audit "
        "reads ('T [K]', 'P [bar]', 'P [kPa]', 'flow [kg/s]', 'flow [Nm3/h]', 'h [kJ/kg]').",
        None,
    ),
    (
        "Numbers go in the cells as numbers (105.73, not '105.73 degC'). A quantity may have several "
        "columns in different units, e.g. 'P [barg]' and 'P [bar]'; fill one of them per row.",
        None,
    ),
    (
        "Each stream needs 'id', 'fluid', 'flow' and exactly two of T, P, quality, h, s, in one of the "
        "pairs (T, P), (P, quality), (T, quality), (P, h), (P, s).",
        None,
    ),
    (
        "Gauge pressures (barg, psig, kPa(g)) need 'site_pressure' under 'balance' in the balance "
        "file; write 'P [bar]' for absolute pressures.",
        None,
    ),
    (
        "'quality' is the vapour mass fraction, 0 to 1, without a unit. 'phase' (optional) is one of "
        "the listed words and is checked against the computed state.",
        None,
    ),
    ("'fluid' is a CoolProp fluid name such as Water, Ammonia, Air, Nitrogen.", None),
    (
        "Do not merge cells inside the table. Formulas are fine if the workbook was last saved by a "
        "spreadsheet program that calculated them.",
        None,
    ),
    ("Claim table (optional)", None),
    (
        "Columns step | field | value | unit | note: each row sets one field of one step written "
        "in the balance file, e.g. T1 | shaft_power | 1.148 | MW. 'note' is not read.",
        None,
    ),
    ("A claim is written in one place: in the table or in the balance file, not in both.", None),
    ("Using the tables", None),
    ("In the balance file, next to 'balance' and 'steps':", None),
    ("  streams_from: {file: streams.xlsx, sheet: streams}", "code"),
    ("  claims_from: {file: streams.xlsx, sheet: claims}", "code"),
    (
        "The file is relative to the balance file and must be inside its folder (or run "
        "'plant-audit check --allow-outside'). Every error names the sheet and the cell.",
        None,
    ),
    (
        "'plant-audit convert BALANCE --to yaml' writes the balance with the table inlined, for review "
        "diffs in version control.",
        None,
    ),
    (CAUTION, "caution"),
]


def write_table_workbook(
    path: str | Path,
    stream_headers: Sequence[str],
    stream_rows: Sequence[Sequence[Any]] = (),
    claim_headers: Sequence[str] = (),
    claim_rows: Sequence[Sequence[Any]] = (),
    choices: Mapping[str, Sequence[str]] | None = None,
    title: str | None = None,
) -> None:
    """Write a stream-table workbook to ``path`` (an .xlsx file), atomically.

    ``stream_headers`` and ``claim_headers`` are the header rows (an empty ``claim_headers``
    leaves the claims sheet out), the rows are plain cell values (None for an empty cell),
    ``choices`` maps a header to the words its drop-down list offers (e.g. ``phase``), and
    ``title`` names the workbook in its document properties. Raises
    :class:`audit.errors.ReportError` when the file cannot be written there.
    """
    wb = Workbook()
    streams = wb.active
    streams.title = "streams"
    _table(streams, stream_headers, stream_rows, choices or {})
    if claim_headers:
        _table(wb.create_sheet("claims"), claim_headers, claim_rows, {})
    _instructions(wb.create_sheet("instructions"))
    wb.properties.creator = "plant-audit"
    wb.properties.title = _safe(title or "plant-audit stream table")
    wb.properties.created = _FIXED_TIME
    wb.properties.modified = _FIXED_TIME
    write_bytes(path, _package(wb), "the stream-table workbook")


def _safe(text: str) -> str:
    return ILLEGAL_CHARACTERS_RE.sub("\ufffd", text)


def _put(ws: Worksheet, row: int, col: int, value: Any) -> None:
    cell = ws.cell(row=row, column=col)
    if isinstance(value, str):
        cell.value = _safe(value)
        cell.data_type = "s"  # text stays text, even when it starts with '='
    else:
        cell.value = value


def _table(
    ws: Worksheet,
    headers: Sequence[str],
    rows: Sequence[Sequence[Any]],
    choices: Mapping[str, Sequence[str]],
) -> None:
    widths = [len(h) for h in headers]
    for col, header in enumerate(headers, start=1):
        _put(ws, 1, col, header)
        cell = ws.cell(row=1, column=col)
        cell.font = _HEADER_FONT
        cell.fill = _HEADER_FILL
        cell.alignment = Alignment(horizontal="center")
    for r, row in enumerate(rows, start=2):
        for col, value in enumerate(row, start=1):
            if value is not None:
                _put(ws, r, col, value)
                widths[col - 1] = max(widths[col - 1], len(str(value)))
    for col, width in enumerate(widths, start=1):
        ws.column_dimensions[get_column_letter(col)].width = min(max(width + 2, 8), 60)
    ws.freeze_panes = "B2"
    for header, words in choices.items():
        if header not in headers:
            continue
        letter = get_column_letter(list(headers).index(header) + 1)
        check = DataValidation(
            type="list",
            formula1='"' + ",".join(words) + '"',
            allow_blank=True,
            showErrorMessage=True,
            errorTitle=f"{header}",
            error="Pick one of the listed words.",
        )
        check.add(f"{letter}2:{letter}{max(_VALIDATED_ROWS, len(rows) + 1)}")
        ws.add_data_validation(check)


def _instructions(ws: Worksheet) -> None:
    ws.column_dimensions["A"].width = 110
    headings = {"Stream table", "Claim table (optional)", "Using the tables"}
    row = 1
    for text, style in INSTRUCTIONS:
        if text in headings and row > 1:
            row += 1
        _put(ws, row, 1, text)
        cell = ws.cell(row=row, column=1)
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        if text in headings:
            cell.font = Font(bold=True, size=12)
        elif style == "code":
            cell.font = Font(name="Consolas")
        elif style == "caution":
            cell.font = Font(bold=True, color="9C0006")
        row += 1


def _package(wb: Workbook) -> bytes:
    """openpyxl's parts, re-zipped with fixed entry times (reproducible bytes)."""
    raw = io.BytesIO()
    with zipfile.ZipFile(raw, "w", zipfile.ZIP_DEFLATED) as archive:
        ExcelWriter(wb, archive).write_data()  # save_workbook would stamp 'modified' with now
    out = io.BytesIO()
    with zipfile.ZipFile(raw) as source, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as target:
        for info in source.infolist():
            entry = zipfile.ZipInfo(info.filename, date_time=_FIXED_TIME.timetuple()[:6])
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.create_system = 0
            target.writestr(entry, source.read(info.filename))
    return out.getvalue()
