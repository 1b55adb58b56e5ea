"""A table file read into a grid of cells with their positions: ``.csv`` through the standard
``csv`` module, ``.xlsx``/``.xlsm`` through openpyxl (formulas are never evaluated and macros never
run; a formula cell gives the value the spreadsheet program saved).

This is the one input module that imports a spreadsheet library; writing workbooks is a report
(:mod:`audit.report`)."""

from __future__ import annotations

import csv
import difflib
import io
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

MAX_CELLS = 200_000
"""Largest sheet read [cells]; a stream table of a large site is a few thousand cells. Checked on
the sheet's XML before the workbook is loaded (:mod:`audit.input.tables.package`)."""

Fail = Callable[[str], Exception]
"""Makes the error for a message about the table file as a whole (the caller knows the place)."""


@dataclass(frozen=True)
class Cell:
    """One cell: its saved value, or a formula with no saved value, or a saved error value."""

    value: Any = None
    formula: str | None = None  # a formula with no saved value
    error: str | None = None  # a saved error value such as '#DIV/0!'

    @property
    def blank(self) -> bool:
        if self.formula is not None or self.error is not None:
            return False
        return self.value is None or (isinstance(self.value, str) and not self.value.strip())


@dataclass
class Grid:
    """A sheet (or a CSV file) as rows of cells, with its merged ranges and the file's SHA-256."""

    display: str
    sheet: str | None
    rows: list[tuple[int, list[Cell]]]  # (1-based row number, cells by 0-based column)
    merged: list[tuple[str, int, int, int, int]] = field(default_factory=list)
    sha256: str = ""

    def cell(self, row: int, index: int) -> str:
        """A cell as messages name it: ``sheet 'streams', cell D14``."""
        where = f"cell {column_letter(index)}{row}"
        return f"sheet '{self.sheet}', {where}" if self.sheet is not None else where

    def row(self, row: int) -> str:
        """A row as messages name it: ``sheet 'streams', row 14``."""
        return f"sheet '{self.sheet}', row {row}" if self.sheet is not None else f"row {row}"

    def filled_rows(self) -> int:
        """How many rows hold at least one value."""
        return sum(1 for _, row in self.rows if not all(c.blank for c in row))


def column_letter(index: int) -> str:
    """The spreadsheet letter of a 0-based column index (0 → A, 26 → AA)."""
    letters = ""
    index += 1
    while index:
        index, remainder = divmod(index - 1, 26)
        letters = chr(ord("A") + remainder) + letters
    return letters


def read_csv(raw: bytes, display: str, delimiter: str, fail: Fail) -> Grid:
    """The cells of a UTF-8 CSV file (``display`` names it in messages)."""
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise fail(
            f"the table '{display}' is not UTF-8 text (byte 0x{raw[exc.start]:02x} at "
            f"offset {exc.start}); save it as 'CSV UTF-8'"
        ) from None
    rows = []
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)
    try:
        for number, record in enumerate(reader, start=1):
            rows.append((number, [Cell(value) for value in record]))
    except csv.Error as exc:
        reason = str(exc)
        if "unexpected end of data" in reason:
            start = _open_quote_line(text, delimiter)
            reason = (
                "a quoted field is never closed"
                + (f" (its quote opens on line {start})" if start else "")
                + "; close the quote or remove it"
            )
        raise fail(
            f"the table '{display}' is not valid CSV near line {reader.line_num}: {reason}"
        ) from None
    _check_delimiter(rows, display, delimiter, fail)
    return Grid(display=display, sheet=None, rows=rows)


def _open_quote_line(text: str, delimiter: str) -> int | None:
    """The line on which the quoted field that never closes begins."""
    inside, start = False, None
    for number, line in enumerate(text.split("\n"), start=1):
        for position, character in enumerate(line):
            if character != '"':
                continue
            if not inside and (position == 0 or line[position - 1] == delimiter):
                inside, start = True, number
            elif inside:
                inside = False
    return start if inside else None


def _check_delimiter(rows: list, display: str, delimiter: str, fail: Fail) -> None:
    """Refuse a table whose header row is one cell holding another common separator: the file
    separates its fields with ';' or a tab, and 'delimiter' says so."""
    for _, cells in rows:
        if all(c.blank for c in cells):
            continue
        if len(cells) == 1 and isinstance(cells[0].value, str):
            for other, name in ((";", "';'"), ("\t", "a tab"), ("|", "'|'")):
                if other != delimiter and other in cells[0].value:
                    spelt = "'\\t'" if other == "\t" else f"'{other}'"
                    raise fail(
                        f"the table '{display}' reads as one column: its fields seem to be "
                        f"separated by {name}, not '{delimiter}'; say so with "
                        f"'delimiter: {spelt}' under the table's entry (e.g. streams_from: "
                        f"{{file: ..., delimiter: {spelt}}})"
                    )
        return


def read_workbook(
    raw: bytes, display: str, sheet: str | None, default: str, fail: Fail, fail_sheet: Fail
) -> Grid:
    """The cells of one sheet of a workbook: ``sheet``, or else the only sheet, or else the one
    named ``default``. ``fail_sheet`` makes the error for a sheet the workbook lacks."""
    import zipfile

    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

    from audit.input.tables.package import check_package  # zip and XML: for a workbook only

    declared = check_package(raw, display, MAX_CELLS, fail)
    hidden = {info.name: info.state for info in declared if info.state != "visible"}
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # openpyxl warns of extensions it does not read
            values = openpyxl.load_workbook(io.BytesIO(raw), data_only=True)
            formulas = openpyxl.load_workbook(io.BytesIO(raw), data_only=False)
    except (
        zipfile.BadZipFile,
        InvalidFileException,
        KeyError,
        OSError,
        ValueError,
        TypeError,
        EOFError,
        SyntaxError,  # a part that is not well-formed XML (ElementTree's and lxml's errors)
        AttributeError,  # a part missing what openpyxl expects of it
        IndexError,
    ) as exc:
        raise fail(f"the table '{display}' cannot be read as an .xlsx workbook ({exc})") from None
    names = [name for name in values.sheetnames if name not in hidden]
    if sheet is not None and sheet in hidden:
        raise fail_sheet(
            f"the sheet '{sheet}' of '{display}' is {_HIDDEN[hidden[sheet]]}: a reviewer looking at "
            "the workbook does not see it; make it visible to read it"
        )
    if not names:
        raise fail(f"the workbook '{display}' has no visible sheet")
    if sheet is None:
        if len(names) == 1:
            sheet = names[0]
        elif default in names:
            sheet = default
        else:
            raise fail(
                f"the workbook '{display}' has several sheets ({_listing(names)}); say "
                "which one with 'sheet'"
            )
    elif sheet not in names:
        close = difflib.get_close_matches(sheet, names, n=1)
        raise fail_sheet(
            f"the workbook '{display}' has no sheet '{sheet}'; its sheets are "
            f"{_listing(names)}" + (f"; did you mean '{close[0]}'?" if close else "")
        )
    values_sheet, formula_sheet = values[sheet], formulas[sheet]
    height, width = values_sheet.max_row, values_sheet.max_column
    if height * width > MAX_CELLS:
        raise fail(
            f"the sheet '{sheet}' of '{display}' spans {height:,} rows and {width:,} "
            f"columns, more than the {MAX_CELLS:,} cells a table may have; delete the "
            "unused rows and columns"
        )
    rows = []
    for row in values_sheet.iter_rows(min_row=1, max_row=height, min_col=1, max_col=width):
        cells = []
        for value_cell in row:
            value, formula, error = value_cell.value, None, None
            if value_cell.data_type == "e":
                error, value = str(value), None
            elif value is None:
                written = formula_sheet.cell(row=value_cell.row, column=value_cell.column)
                if written.data_type == "f":
                    text = getattr(written.value, "text", written.value)
                    formula = str(text)
            cells.append(Cell(value, formula, error))
        rows.append((row[0].row, cells))
    merged = [
        (str(r), r.min_row, r.min_col, r.max_row, r.max_col) for r in values_sheet.merged_cells.ranges
    ]
    return Grid(display=display, sheet=sheet, rows=rows, merged=merged)


_HIDDEN = {
    "hidden": "hidden",
    "veryHidden": "very hidden (hidden so that the sheet tabs do not list it)",
}


def _listing(names: list[str]) -> str:
    return ", ".join(f"'{n}'" for n in names)
