"""Stream and claim tables: a balance's streams (and, optionally, its steps' claims) read from a
spreadsheet.

This is the one INPUT module allowed to read spreadsheets: ``.xlsx``/``.xlsm`` workbooks through
openpyxl (formulas are never evaluated here and macros never run; a formula cell gives the value the
spreadsheet program saved) and ``.csv`` files through the standard ``csv`` module. Writing workbooks
is a report (:mod:`audit.report`).

A balance file names its tables, relative to its own folder::

    streams_from: {file: quillon-bay-streams.xlsx, sheet: streams}
    claims_from: {file: quillon-bay-streams.xlsx, sheet: claims}     # optional

**Stream table.** One header row (the first filled row, or ``header_row``), then one row per
stream. A header is a stream field and, for a quantity, its unit in square brackets::

    id | fluid | T [degC] | P [barg] | quality | h [kJ/kg] | s [kJ/(kg K)] | flow [t/h] | phase |
    description

A numeric cell and its header's unit become the quantity string the balance file would hold
(``105.73`` under ``T [degC]`` → ``"105.73 degC"``), so all unit handling stays in
:mod:`audit.units`. A quantity may have several columns with different units (``P [barg]`` and
``P [bar]``); a row fills at most one of them. A header without a unit takes cells written with their
own unit (``"10.8 t/h"``). ``quality`` takes no unit; ``composition`` is text like
``N2: 0.79, O2: 0.21``. Other headers can be mapped with ``columns`` (field → header as written, or
``{header: ..., unit: ...}``) or skipped with ``ignore_columns``.

**Claim table.** Columns ``step | field | value | unit`` (``note`` is free text, not read): each row
sets one field of one step of the balance file, e.g. ``T1 | shaft_power | 1.148 | MW``. A value
without a unit is taken as written (a number, or text such as ``counter-current``).

Rules: empty rows and trailing blank columns are ignored; everything else is read or refused. Merged
cells, text in a numeric cell, unknown headers or units, a stream id used twice, a formula with no
saved value and a value given both in the table and in the balance file are errors that name the
table file, the sheet and the cell (``streams.xlsx, sheet 'HB rev C', cell D14``). Tables must lie
inside the balance file's folder tree unless the caller allows otherwise (``--allow-outside``), so
an audit never reads arbitrary files named by a balance it was handed.
"""

from __future__ import annotations

import copy
import csv
import difflib
import hashlib
import io
import os
import re
import typing
import warnings
from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ConfigDict, Field, ValidationError

from audit import units
from audit.errors import InputError, InputErrors, Problem, UnitError
from audit.input.document import MAX_FILE_BYTES, Document
from audit.model.streams import StreamSpec

SOURCE_KEYS = ("streams_from", "claims_from")
"""The balance-file keys that name tables."""

STREAM_KINDS: dict[str, str] = {
    "T": "temperature",
    "P": "pressure",
    "h": "specific_enthalpy",
    "s": "specific_entropy",
    "velocity": "velocity",
    "elevation": "length",
    "flow": "flow",
    "quality": "fraction",
    "composition": "mapping",
}
"""How a stream table reads each field's cells; any other stream field is text."""

STREAM_TEMPLATE_HEADERS = [
    "id", "fluid", "T [degC]", "P [barg]", "quality", "h [kJ/kg]", "s [kJ/(kg K)]", "flow [t/h]",
    "phase", "description",
]
"""The headers of an empty stream table (``plant-audit template``)."""

CLAIM_HEADERS = ["step", "field", "value", "unit", "note"]
"""The headers of a claim table; ``note`` is free text and is not read."""

MAX_CELLS = 2_000_000
"""Largest sheet read [cells]; a stream table of a large site is a few thousand cells."""

_TABLE_SUFFIXES = {".xlsx", ".xlsm", ".csv"}
_PLAIN_NUMBER = re.compile(r"^[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?$")
_DECIMAL_COMMA = re.compile(r"^[-+]?\d+,\d+$")
_QUANTITY_TEXT = re.compile(r"^[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?\s+\S.*$")
_HEADER = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?$")
_NO_UNIT = {"", "-"}


# -- where the tables are named -----------------------------------------------------------------
class ColumnSpec(BaseModel):
    """A column of a table named by its header as written, with the unit of its cells."""

    model_config = ConfigDict(extra="forbid")

    header: str = Field(min_length=1, description="the header text as written in the table")
    unit: str | None = Field(None, description="the unit of the column's numbers, e.g. 'degC'")


class TableSource(BaseModel):
    """A table a balance takes streams or claims from: a .xlsx or .csv file beside the balance."""

    model_config = ConfigDict(extra="forbid")

    file: str = Field(min_length=1, description="the .xlsx or .csv file, relative to the balance")
    sheet: str | None = Field(
        None, description="the workbook's sheet; default: the only sheet, or the one named "
        "'streams' (stream tables) or 'claims' (claim tables)")
    header_row: int | None = Field(
        None, ge=1, description="the row of the headers (1 = first row); default: the first "
        "filled row")
    columns: dict[str, str | ColumnSpec] = Field(
        default_factory=dict, description="field → header as written (with '[unit]'), or "
        "{header, unit}, for tables whose headers are not in the standard form")
    ignore_columns: list[str] = Field(
        default_factory=list, description="headers of columns the audit does not read")
    delimiter: str = Field(",", min_length=1, max_length=1,
                           description="field separator of a .csv file")


@dataclass(frozen=True)
class TableFile:
    """A table file read for a balance: as shown in messages, its SHA-256, its sheet, its rows."""

    display: str
    sha256: str
    sheet: str | None
    rows: int


# -- the raw grid ----------------------------------------------------------------------------------
@dataclass(frozen=True)
class _Cell:
    value: Any = None
    formula: str | None = None  # a formula with no saved value
    error: str | None = None  # a saved error value such as '#DIV/0!'

    @property
    def blank(self) -> bool:
        if self.formula is not None or self.error is not None:
            return False
        return self.value is None or (isinstance(self.value, str) and not self.value.strip())


@dataclass
class _Grid:
    display: str
    sheet: str | None
    rows: list[tuple[int, list[_Cell]]]  # (1-based row number, cells by 0-based column)
    merged: list[tuple[str, int, int, int, int]] = field(default_factory=list)
    sha256: str = ""

    def cell(self, row: int, index: int) -> str:
        where = f"cell {column_letter(index)}{row}"
        return f"sheet '{self.sheet}', {where}" if self.sheet is not None else where

    def row(self, row: int) -> str:
        return f"sheet '{self.sheet}', row {row}" if self.sheet is not None else f"row {row}"


def column_letter(index: int) -> str:
    """The spreadsheet letter of a 0-based column index (0 → A, 26 → AA)."""
    letters = ""
    index += 1
    while index:
        index, remainder = divmod(index - 1, 26)
        letters = chr(ord("A") + remainder) + letters
    return letters


class _Bad(Exception):
    """A cell that cannot be read (the message names the problem, the caller the cell)."""


# -- resolving a document's tables ----------------------------------------------------------------
def resolve(document: Document, allow_outside: bool = False) -> tuple[Document, list[TableFile]]:
    """Merge the streams and claims a balance takes from tables into its data.

    Returns a new :class:`~audit.input.document.Document` whose ``cells`` say which cell each merged value
    came from, and the table files read. Raises :class:`~audit.errors.InputError` (or
    :class:`~audit.errors.InputErrors`) naming the balance line or the table cell of each problem.
    """
    data = document.data
    if not isinstance(data, dict) or not any(key in data for key in SOURCE_KEYS):
        return document, []
    new = dict(data)
    cells = dict(document.cells)
    problems: list[Problem] = []
    grids: dict[tuple[Path, str | None], _Grid] = {}
    read: list[TableFile] = []
    for key in SOURCE_KEYS:
        if key not in data:
            continue
        source = _source(document, key)
        grid = _load(document, key, source, allow_outside, grids)
        if key == "streams_from":
            problems += _merge_streams(document, new, cells, grid, source)
        else:
            problems += _merge_claims(document, new, cells, grid, source)
        count = sum(1 for _, row in grid.rows if not all(c.blank for c in row))
        table = TableFile(grid.display, grid.sha256, grid.sheet, count)
        if table not in read:
            read.append(table)
    if problems:
        raise InputErrors(problems)
    return Document(data=new, file=document.file, positions=document.positions, cells=cells), read


def _source(document: Document, key: str) -> TableSource:
    raw = document.data[key]
    if isinstance(raw, str):
        raw = {"file": raw}
    try:
        return TableSource.model_validate(raw)
    except ValidationError as exc:
        problems = []
        for error in exc.errors(include_url=False):
            loc = tuple(part for part in error["loc"] if part not in ("str", "ColumnSpec"))
            kind = error["type"]
            if kind == "extra_forbidden":
                allowed = sorted(TableSource.model_fields)
                close = difflib.get_close_matches(str(loc[-1]), allowed, n=1)
                message = f"unknown field '{loc[-1]}'" + (
                    f"; did you mean '{close[0]}'?" if close else "")
            elif kind == "missing":
                message = f"'{loc[-1]}' is required here"
            elif kind in ("model_type", "dict_type") and not loc:
                message = ("a table is named by its file, e.g. 'streams.xlsx', or by a mapping "
                           "with 'file' and optionally 'sheet'")
            else:
                message = error["msg"]
            path = (key, *loc)
            problems.append(Problem(message, **document.place(path),
                                    field_path=".".join(str(p) for p in path)))
        raise InputErrors(problems) from None


def _fail(document: Document, path: tuple, message: str) -> InputError:
    return InputError(message, **document.place(path), field_path=".".join(map(str, path)))


def _load(document: Document, key: str, source: TableSource, allow_outside: bool,
          grids: dict[tuple[Path, str | None], _Grid]) -> _Grid:
    """Find, check and read the table file named under ``key``."""
    here = (key, "file") if isinstance(document.data[key], dict) else (key,)
    written = Path(source.file)
    folder = Path(document.file).parent
    target = written if written.is_absolute() else folder / written
    display = os.path.normpath(str(target))
    resolved = target.resolve()
    home = folder.resolve()
    if not allow_outside and not resolved.is_relative_to(home):
        raise _fail(document, here, (
            f"the table '{source.file}' is outside the balance file's folder ({home}); an audit "
            "reads only files inside that folder tree unless allowed (--allow-outside on the "
            "command line, allow_outside=True in Python)"))
    suffix = resolved.suffix.lower()
    if suffix in (".xls", ".ods", ".xlsb"):
        raise _fail(document, here, (
            f"the table '{source.file}' is a {suffix} file, which plant-audit does not read; "
            "save it as .xlsx or .csv"))
    if suffix not in _TABLE_SUFFIXES:
        raise _fail(document, here, (
            f"the table '{source.file}' is neither a .xlsx nor a .csv file"))
    if not resolved.exists():
        raise _fail(document, here, f"the table '{display}' does not exist")
    if resolved.is_dir():
        raise _fail(document, here, f"the table '{display}' is a folder, not a file")
    size = resolved.stat().st_size
    if size > MAX_FILE_BYTES:
        raise _fail(document, here, (
            f"the table '{display}' is {size / 1e6:.1f} MB, larger than the "
            f"{MAX_FILE_BYTES / 1e6:.0f} MB a table may be"))
    if suffix == ".csv" and source.sheet is not None:
        raise _fail(document, (key, "sheet"), (
            f"'{display}' is a CSV file, which has no sheets; remove 'sheet'"))
    cache_key = (resolved, source.sheet)
    if cache_key in grids:
        return grids[cache_key]
    raw = resolved.read_bytes()
    if suffix == ".csv":
        grid = _read_csv(raw, display, source.delimiter, lambda m: _fail(document, here, m))
    else:
        default = "streams" if key == "streams_from" else "claims"
        grid = _read_workbook(raw, display, source.sheet, default,
                              lambda m, p=here: _fail(document, p, m),
                              lambda m: _fail(document, (key, "sheet"), m))
    grid.sha256 = hashlib.sha256(raw).hexdigest()
    grids[cache_key] = grid
    return grid


def _read_csv(raw: bytes, display: str, delimiter: str, fail: Any) -> _Grid:
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise fail(f"the table '{display}' is not UTF-8 text (byte 0x{raw[exc.start]:02x} at "
                   f"offset {exc.start}); save it as 'CSV UTF-8'") from None
    rows = []
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    try:
        for number, record in enumerate(reader, start=1):
            rows.append((number, [_Cell(value) for value in record]))
    except csv.Error as exc:
        raise fail(f"the table '{display}' is not valid CSV near record {reader.line_num}: "
                   f"{exc}") from None
    return _Grid(display=display, sheet=None, rows=rows)


def _read_workbook(raw: bytes, display: str, sheet: str | None, default: str, fail: Any,
                   fail_sheet: Any) -> _Grid:
    import zipfile

    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # openpyxl warns of extensions it does not read
            values = openpyxl.load_workbook(io.BytesIO(raw), data_only=True)
            formulas = openpyxl.load_workbook(io.BytesIO(raw), data_only=False)
    except (zipfile.BadZipFile, InvalidFileException, KeyError, OSError, ValueError,
            TypeError, EOFError) as exc:
        raise fail(f"the table '{display}' cannot be read as an .xlsx workbook ({exc})") from None
    names = values.sheetnames
    if sheet is None:
        if len(names) == 1:
            sheet = names[0]
        elif default in names:
            sheet = default
        else:
            raise fail(f"the workbook '{display}' has several sheets ({_listing(names)}); say "
                       "which one with 'sheet'")
    elif sheet not in names:
        close = difflib.get_close_matches(sheet, names, n=1)
        raise fail_sheet(f"the workbook '{display}' has no sheet '{sheet}'; its sheets are "
                         f"{_listing(names)}" + (f"; did you mean '{close[0]}'?" if close else ""))
    values_sheet, formula_sheet = values[sheet], formulas[sheet]
    height, width = values_sheet.max_row, values_sheet.max_column
    if height * width > MAX_CELLS:
        raise fail(f"the sheet '{sheet}' of '{display}' spans {height:,} rows and {width:,} "
                   f"columns, more than the {MAX_CELLS:,} cells a table may have; delete the "
                   "unused rows and columns")
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
            cells.append(_Cell(value, formula, error))
        rows.append((row[0].row, cells))
    merged = [(str(r), r.min_row, r.min_col, r.max_row, r.max_col)
              for r in values_sheet.merged_cells.ranges]
    return _Grid(display=display, sheet=sheet, rows=rows, merged=merged)


def _listing(names: list[str]) -> str:
    return ", ".join(f"'{n}'" for n in names)


# -- headers -------------------------------------------------------------------------------------
@dataclass
class _Column:
    index: int
    header: str
    field: str
    unit: str | None


def _header_row(grid: _Grid, source: TableSource) -> int | None:
    if source.header_row is not None:
        return source.header_row
    for number, cells in grid.rows:
        if not all(c.blank for c in cells):
            return number
    return None


def _columns(grid: _Grid, header_row: int, source: TableSource, kinds: dict[str, str],
             has_site: bool, document: Document, key: str
             ) -> tuple[list[_Column], set[int], list[Problem]]:
    """Read the header row: the columns, the ignored column indices, and the problems."""
    problems: list[Problem] = []
    cells = next((c for n, c in grid.rows if n == header_row), [])
    ignore = {name.strip().casefold() for name in source.ignore_columns}
    mapped: dict[str, tuple[str, str | None]] = {}
    for name, spec in source.columns.items():
        if name not in kinds:
            close = difflib.get_close_matches(name, list(kinds), n=1)
            problems.append(Problem(
                f"'{name}' is not a field a table column can give" + (
                    f"; did you mean '{close[0]}'?" if close else ""),
                **document.place((key, "columns", name))))
            continue
        if isinstance(spec, ColumnSpec):
            mapped[spec.header.strip().casefold()] = (name, spec.unit)
        else:
            match = _HEADER.match(spec.strip())
            unit = match.group("unit") if match else None
            mapped[spec.strip().casefold()] = (name, unit)
    lower = {name.casefold(): name for name in kinds}
    columns: list[_Column] = []
    ignored: set[int] = set()
    found: set[str] = set()
    for index, cell in enumerate(cells):
        place = grid.cell(header_row, index)
        if cell.formula is not None or cell.error is not None:
            problems.append(Problem("a header must be plain text, not a formula or an error value",
                                    file=grid.display, cell=place))
            continue
        if cell.blank:
            continue
        header = _text(cell.value).strip()
        folded = header.casefold()
        if folded in ignore:
            ignored.add(index)
            found.add(folded)
            continue
        if folded in mapped:
            name, unit = mapped[folded]
            found.add(folded)
        else:
            match = _HEADER.match(header)
            name = lower.get(match.group("name").casefold()) if match else None
            unit = match.group("unit") if match else None
            if name is None:
                known = list(kinds)
                stem = match.group("name") if match else header
                close = difflib.get_close_matches(stem, known, n=1)
                hint = f"; did you mean '{close[0]}'?" if close else (
                    "; map it under 'columns' or list it under 'ignore_columns'")
                if source.header_row is None and close == []:
                    hint += (" (if the headers are not in the table's first filled row, give "
                             "'header_row')")
                problems.append(Problem(f"unknown column header '{header}'{hint}",
                                        file=grid.display, cell=place))
                continue
        unit = unit.strip() if unit is not None else None
        if unit in _NO_UNIT:
            unit = None
        message = _unit_problem(name, kinds[name], unit, header, has_site)
        if message:
            problems.append(Problem(message, file=grid.display, cell=place))
            continue
        columns.append(_Column(index, header, name, unit))
    for name, _spec in source.columns.items():
        spec_header = _spec.header if isinstance(_spec, ColumnSpec) else _spec
        if name in kinds and spec_header.strip().casefold() not in found:
            problems.append(Problem(
                f"the table has no column headed '{spec_header.strip()}' (row {header_row})",
                **document.place((key, "columns", name))))
    for header in source.ignore_columns:
        if header.strip().casefold() not in found:
            index = source.ignore_columns.index(header)
            problems.append(Problem(
                f"the table has no column headed '{header.strip()}' (row {header_row})",
                **document.place((key, "ignore_columns", index))))
    seen: dict[tuple[str, str | None], _Column] = {}
    for column in columns:
        text_like = kinds[column.field] not in _QUANTITY_KINDS
        tag = (column.field, None if text_like else column.unit)
        if tag in seen:
            first = seen[tag]
            problems.append(Problem(
                f"the column '{column.header}' gives the same thing as column "
                f"{column_letter(first.index)} ('{first.header}'); keep one",
                file=grid.display, cell=grid.cell(header_row, column.index)))
        seen.setdefault(tag, column)
    return columns, ignored, problems


_QUANTITY_KINDS = {"temperature", "pressure", "specific_enthalpy", "specific_entropy", "velocity",
                   "length", "flow"}


def _unit_problem(name: str, kind: str, unit: str | None, header: str, has_site: bool
                  ) -> str | None:
    if unit is None:
        return None
    if kind not in _QUANTITY_KINDS:
        what = "a fraction from 0 to 1" if kind == "fraction" else "not a quantity"
        return f"the column '{header}': {name} is {what} and takes no unit"
    probe = f"1 {unit}"
    try:
        if kind == "flow":
            units.to_flow(probe)
        else:
            units.to_si(probe, kind, site_pressure=units.STANDARD_ATMOSPHERE)
    except UnitError as exc:
        if "unknown unit" in exc.problem.message:
            return f"unknown unit '{unit}' in the header '{header}'"
        return (f"the header '{header}' gives the unit '{unit}', which is not a unit of "
                f"{kind.replace('_', ' ')}" + (
                    f" (such as {units.KINDS[kind].example})" if kind in units.KINDS else ""))
    if kind == "pressure" and not has_site:
        try:
            units.to_si(probe, kind)
        except UnitError:
            return (f"the header '{header}' gives a gauge pressure unit, but the balance declares "
                    "no site_pressure; add 'site_pressure' (the atmospheric pressure at the site, "
                    "e.g. '1.013 bar') under 'balance', or use an absolute unit such as 'bar'")
    return None


def _merged_problems(grid: _Grid, header_row: int, columns: list[_Column]) -> list[Problem]:
    problems = []
    last = max((c.index for c in columns), default=-1) + 1
    for text, min_row, min_col, max_row, _max_col in grid.merged:
        if max_row < header_row or min_col - 1 >= last:
            continue  # a title block above the table, or notes to its right
        if min_row <= header_row:
            message = (f"the header cells {text} are merged; give each column its own header "
                       "cell")
        else:
            message = (f"the cells {text} are merged: a merged cell keeps its value in its first "
                       "cell only; unmerge them and write the value in each cell")
        problems.append(Problem(message, file=grid.display, cell=grid.cell(min_row, min_col - 1)))
    return problems


# -- cells -------------------------------------------------------------------------------------------
def _text(value: Any) -> str:
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return str(value)


def _number_text(value: Any) -> str:
    """The number in a cell, as text that reads back to the same float."""
    if isinstance(value, bool):
        raise _Bad(f"{_text(value)} is not a number")
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, (datetime, date, time, timedelta)):
        raise _Bad(f"'{value}' is a date or time, not a number (the spreadsheet may have read "
                   "the entry as a date; format the cell as a number)")
    text = str(value).strip()
    if _PLAIN_NUMBER.match(text):
        return text
    if _DECIMAL_COMMA.match(text):
        raise _Bad(f"'{text}' is not a number; write the decimal point as '.'")
    raise _Bad(f"'{text}' is not a number")


def _number(value: Any) -> int | float:
    text = _number_text(value)
    try:
        return int(text)
    except ValueError:
        return float(text)


def _cell_value(cell: _Cell, kind: str, unit: str | None, header: str) -> Any:
    """The value a cell gives its field, in the form the balance file would write it."""
    if cell.formula is not None:
        raise _Bad(f"the formula '{cell.formula}' has no saved value (the file was written by a "
                   "program that does not calculate formulas); open and save it in a spreadsheet "
                   "program, or write the value")
    if cell.error is not None:
        raise _Bad(f"the cell shows the error value '{cell.error}'")
    value = cell.value
    if kind in _QUANTITY_KINDS:
        if unit is not None:
            if isinstance(value, str) and _QUANTITY_TEXT.match(value.strip()):
                raise _Bad(f"'{value.strip()}' is not a number; the column '{header}' gives the "
                           f"unit ({unit}); for another unit, add a column such as "
                           f"'{header.split('[')[0].strip()} [{value.split()[-1]}]'")
            return f"{_number_text(value)} {unit}"
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            raise _Bad(f"'{_text(value)}' has no unit, and the column '{header}' gives none; "
                       f"write the unit in the header, like '{header} [unit]', or in the cell")
        return str(value).strip()
    if kind == "fraction":
        return _number(value)
    if kind == "mapping":
        return _mapping(value)
    return _text(value).strip()


def _mapping(value: Any) -> dict[str, Any] | str:
    """A composition cell: ``N2: 0.79, O2: 0.21`` (braces optional), or a name such as ``air``."""
    text = _text(value).strip()
    example = "write it like 'N2: 0.79, O2: 0.21', or give a name such as 'air'"
    if ":" not in text and "," not in text:
        if any(ch.isdigit() for ch in text) and not re.search(r"[A-Za-z]{3}", text):
            raise _Bad(f"'{text}' is not a composition; {example}")
        return text  # a named composition; the stream validation says whether it is known
    if text.startswith("{") and text.endswith("}"):
        text = text[1:-1]
    result: dict[str, Any] = {}
    for part in text.split(","):
        name, colon, amount = part.partition(":")
        name = name.strip().strip("'\"")
        if not colon or not name or not amount.strip():
            raise _Bad(f"'{_text(value).strip()}' is not a composition; {example}")
        if name in result:
            raise _Bad(f"'{name}' is written twice in the composition")
        try:
            result[name] = _number(amount.strip())
        except _Bad:
            raise _Bad(f"'{amount.strip()}' (for {name}) is not a number; {example}") from None
    return result


# -- stream tables ---------------------------------------------------------------------------------
def stream_kinds() -> dict[str, str]:
    """Field → how its cells are read, for every field a stream table may give (with ``id``)."""
    kinds = {"id": "text"}
    for name in StreamSpec.model_fields:
        kinds[name] = STREAM_KINDS.get(name, "text")
    return kinds


def stream_template_headers() -> list[str]:
    """The headers of an empty stream table: :data:`STREAM_TEMPLATE_HEADERS`, and ``composition``
    when streams take one."""
    extra = ["composition"] if "composition" in StreamSpec.model_fields else []
    return [*STREAM_TEMPLATE_HEADERS[:-1], *extra, STREAM_TEMPLATE_HEADERS[-1]]


def stream_choices() -> dict[str, list[str]]:
    """Header → the words a stream field accepts, for fields limited to a list (``phase``)."""
    choices = {}
    for name, info in StreamSpec.model_fields.items():
        words = [w for arg in typing.get_args(info.annotation)
                 for w in (typing.get_args(arg) if typing.get_origin(arg) is typing.Literal
                           else [])]
        if typing.get_origin(info.annotation) is typing.Literal:
            words = list(typing.get_args(info.annotation))
        if words and all(isinstance(w, str) for w in words):
            choices[name] = words
    return choices


def _has_site(data: dict) -> bool:
    info = data.get("balance")
    return isinstance(info, dict) and info.get("site_pressure") is not None


def _merge_streams(document: Document, new: dict, cells: dict, grid: _Grid,
                   source: TableSource) -> list[Problem]:
    kinds = stream_kinds()
    header_row = _header_row(grid, source)
    if header_row is None:
        return [Problem("the stream table is empty", file=grid.display,
                        cell=grid.row(1) if grid.sheet is None else f"sheet '{grid.sheet}'")]
    columns, ignored, problems = _columns(grid, header_row, source, kinds,
                                          _has_site(document.data), document, "streams_from")
    problems += _merged_problems(grid, header_row, columns)
    if problems:
        return problems  # the rows cannot be read reliably
    by_index = {c.index: c for c in columns}
    id_column = next((c for c in columns if c.field == "id"), None)
    if id_column is None:
        return problems + [Problem("the stream table needs an 'id' column (the stream ids)",
                                   file=grid.display, cell=grid.row(header_row))]
    inline = document.data.get("streams")
    streams: dict[str, dict] = {}
    first_cell: dict[str, str] = {}
    for number, row in grid.rows:
        if number <= header_row or all(c.blank for c in row):
            continue
        id_cell = row[id_column.index] if id_column.index < len(row) else _Cell()
        id_place = grid.cell(number, id_column.index)
        if id_cell.blank:
            problems.append(Problem("this row has values but no stream id", file=grid.display,
                                    cell=id_place))
            continue
        try:
            stream_id = _cell_value(id_cell, "text", None, id_column.header)
        except _Bad as exc:
            problems.append(Problem(str(exc), file=grid.display, cell=id_place))
            continue
        where = f"stream {stream_id}"
        if stream_id in first_cell:
            problems.append(Problem(
                f"the stream id '{stream_id}' is used twice in the table (also in "
                f"{first_cell[stream_id]})", file=grid.display, cell=id_place, where=where))
            continue
        if isinstance(inline, dict) and stream_id in inline:
            line, _ = document.position(("streams", stream_id))
            problems.append(Problem(
                f"stream {stream_id} is written both in the balance file ({document.file}, line "
                f"{line}) and in this table; a stream is written in one place",
                file=grid.display, cell=id_place, where=where))
            continue
        first_cell[stream_id] = id_place
        record: dict[str, Any] = {}
        places: dict[str, str] = {}
        for index, cell in enumerate(row):
            if index == id_column.index or cell.blank or index in ignored:
                continue
            place = grid.cell(number, index)
            column = by_index.get(index)
            if column is None:
                problems.append(Problem(
                    f"this cell has a value but column {column_letter(index)} has no header",
                    file=grid.display, cell=place, where=where))
                continue
            try:
                value = _cell_value(cell, kinds[column.field], column.unit, column.header)
            except _Bad as exc:
                problems.append(Problem(str(exc), file=grid.display, cell=place, where=where))
                continue
            if column.field in record:
                problems.append(Problem(
                    f"{column.field} is given twice in this row ({places[column.field].split()[-1]}"
                    f" and {place.split()[-1]}); leave one of them empty", file=grid.display,
                    cell=place, where=where))
                continue
            record[column.field] = value
            places[column.field] = place
        streams[stream_id] = record
        cells[("streams", stream_id)] = (grid.display, grid.row(number))
        cells[("streams", stream_id, "<key>")] = (grid.display, id_place)
        for name, place in places.items():
            cells[("streams", stream_id, name)] = (grid.display, place)
    if not streams and not problems:
        problems.append(Problem("the stream table has a header row but no stream rows",
                                file=grid.display, cell=grid.row(header_row)))
    if isinstance(inline, dict):
        new["streams"] = {**inline, **streams}
    elif inline is None:  # put 'streams' where 'streams_from' is, so the usual order holds
        items = list(new.items())
        new.clear()
        for key, value in items:
            if key == "streams_from":
                new["streams"] = streams
            new[key] = value
    # a 'streams' that is not a mapping is left for the balance validation to report
    return problems


# -- claim tables ----------------------------------------------------------------------------------
_CLAIM_KINDS = {"step": "text", "field": "text", "value": "value", "unit": "text", "note": "note"}


def _merge_claims(document: Document, new: dict, cells: dict, grid: _Grid,
                  source: TableSource) -> list[Problem]:
    header_row = _header_row(grid, source)
    if header_row is None:
        return []  # an empty claim table claims nothing
    columns, ignored, problems = _columns(grid, header_row, source, _CLAIM_KINDS,
                                          _has_site(document.data), document, "claims_from")
    problems += _merged_problems(grid, header_row, columns)
    if problems:
        return problems  # the rows cannot be read reliably
    by_field = {c.field: c for c in columns}
    missing = [name for name in ("step", "field", "value") if name not in by_field]
    if missing:
        return problems + [Problem(
            "a claim table needs the columns 'step', 'field' and 'value' (and 'unit' for "
            f"quantities); this one lacks {', '.join(repr(m) for m in missing)}",
            file=grid.display, cell=grid.row(header_row))]
    steps = document.data.get("steps")
    if not isinstance(steps, list):
        return problems + [Problem("claims need steps: the balance file has no 'steps' list",
                                   **document.place(("claims_from",)))]
    new_steps = copy.deepcopy(steps)
    index_of = {}
    for i, step in enumerate(steps):
        if isinstance(step, dict) and isinstance(step.get("id"), str):
            index_of.setdefault(step["id"], i)
    known = {c.index for c in columns} | ignored
    first: dict[tuple, str] = {}
    for number, row in grid.rows:
        if number <= header_row or all(c.blank for c in row):
            continue

        def cell(name: str, row: list[_Cell] = row) -> _Cell:
            column = by_field.get(name)
            return row[column.index] if column and column.index < len(row) else _Cell()

        def place(name: str, number: int = number) -> str:
            return grid.cell(number, by_field[name].index)

        stray = [i for i, c in enumerate(row) if not c.blank and i not in known]
        for index in stray:
            problems.append(Problem(
                f"this cell has a value but column {column_letter(index)} has no header",
                file=grid.display, cell=grid.cell(number, index)))
        texts = {}
        bad = False
        for name in ("step", "field", "unit"):
            if name not in by_field or cell(name).blank:
                texts[name] = None
                continue
            try:
                texts[name] = _cell_value(cell(name), "text", None, name)
            except _Bad as exc:
                problems.append(Problem(str(exc), file=grid.display, cell=place(name)))
                bad = True
        if bad:
            continue
        if texts["step"] is None or texts["field"] is None:
            name = "step" if texts["step"] is None else "field"
            problems.append(Problem(f"this claim row has no {name}", file=grid.display,
                                    cell=place(name)))
            continue
        step_id, field_name, unit = texts["step"], texts["field"], texts["unit"]
        where = f"step {step_id}"
        if cell("value").blank:
            problems.append(Problem(f"the claim '{field_name}' has no value", file=grid.display,
                                    cell=place("value"), where=where))
            continue
        try:
            value = _claim_value(cell("value"), unit)
        except _Bad as exc:
            problems.append(Problem(str(exc), file=grid.display, cell=place("value"),
                                    where=where))
            continue
        if step_id not in index_of:
            close = difflib.get_close_matches(step_id, list(index_of), n=1)
            problems.append(Problem(
                f"'{step_id}' is not a step of the balance file" + (
                    f"; did you mean '{close[0]}'?" if close else ""),
                file=grid.display, cell=place("step")))
            continue
        index = index_of[step_id]
        parts = tuple(field_name.split("."))
        path = ("steps", index, *parts)
        if path in first:
            problems.append(Problem(
                f"the claim '{field_name}' of step {step_id} is given twice in the table (also "
                f"in {first[path]})", file=grid.display, cell=place("value"), where=where))
            continue
        first[path] = place("value")
        target = new_steps[index]
        for part in parts[:-1]:
            target = target.setdefault(part, {}) if isinstance(target, dict) else None
            if not isinstance(target, dict):
                break
        if not isinstance(target, dict):
            problems.append(Problem(f"'{field_name}' does not name a field of the step",
                                    file=grid.display, cell=place("field"), where=where))
            continue
        if parts[-1] in target:
            line, _ = document.position(path)
            problems.append(Problem(
                f"the claim '{field_name}' of step {step_id} is written both in the balance "
                f"file ({document.file}, line {line}) and in this table; a claim is written in "
                "one place", file=grid.display, cell=place("value"), where=where))
            continue
        target[parts[-1]] = value
        cells[path] = (grid.display, place("value"))
    new["steps"] = new_steps
    return problems


def _claim_value(cell: _Cell, unit: str | None) -> Any:
    if cell.formula is not None or cell.error is not None:
        return _cell_value(cell, "text", None, "value")  # raises the formula or error message
    value = cell.value
    if unit is not None:
        if isinstance(value, str) and _QUANTITY_TEXT.match(value.strip()):
            raise _Bad(f"'{value.strip()}' carries its own unit, and the row's 'unit' cell "
                       f"gives '{unit}'; write the unit in one place")
        return f"{_number_text(value)} {unit}"
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return value
    if isinstance(value, bool):
        return value
    text = str(value).strip()
    if _PLAIN_NUMBER.match(text):
        return _number(text)
    return text


# -- writing a stream table (for templates, sample tables and conversions) -----------------------
def table_rows(streams: dict[str, dict], headers: list[str]
               ) -> tuple[list[str], list[list[Any]], list[str]]:
    """Lay out balance-file streams as a stream table.

    Starts from ``headers`` (e.g. :data:`STREAM_TEMPLATE_HEADERS`) and adds a column for each unit
    a quantity is written in that the headers lack (``P [bar]`` beside ``P [barg]``). Returns the
    headers, one row of cell values per stream, and the ids of the streams a table cannot express
    (a field that is neither a quantity with a unit, a number, a text nor a simple composition).
    """
    kinds = stream_kinds()
    headers = list(headers)
    parsed = {}
    for index, header in enumerate(headers):
        match = _HEADER.match(header.strip())
        if match is None:
            raise ValueError(f"'{header}' is not a stream-table header")
        name = match.group("name")
        unit = (match.group("unit") or "").strip() or None
        parsed[(name, unit)] = index
    records: list[dict[tuple[str, str | None], Any]] = []
    left_out: list[str] = []
    for stream_id, stream in streams.items():
        cells: dict[tuple[str, str | None], Any] = {("id", None): stream_id}
        expressible = isinstance(stream, dict)
        for name, value in (stream.items() if isinstance(stream, dict) else []):
            kind = kinds.get(name)
            if kind is None:
                expressible = False
            elif kind in _QUANTITY_KINDS and isinstance(value, str):
                match = re.match(r"^\s*(\S+)\s+(.*?)\s*$", value)
                if not match or not _PLAIN_NUMBER.match(match.group(1)) or "[" in value:
                    expressible = False
                    continue
                cells[(name, match.group(2))] = _number(match.group(1))
            elif kind == "fraction" and isinstance(value, (int, float)) and not isinstance(
                    value, bool):
                cells[(name, None)] = value
            elif kind == "mapping" and isinstance(value, str) and ":" not in value:
                cells[(name, None)] = value
            elif kind == "mapping" and isinstance(value, dict) and all(
                    isinstance(v, (int, float)) and not isinstance(v, bool) and ":" not in str(k)
                    and "," not in str(k) for k, v in value.items()):
                cells[(name, None)] = ", ".join(f"{k}: {v!r}" for k, v in value.items())
            elif kind == "text" and isinstance(value, str):
                cells[(name, None)] = value
            else:
                expressible = False
        if not expressible:
            left_out.append(stream_id)
            continue
        records.append(cells)
    order = list(parsed)  # the given headers first; a further unit goes after its field's last
    for cells in records:
        for tag in cells:
            if tag not in order:
                same = [i for i, known in enumerate(order) if known[0] == tag[0]]
                order.insert(same[-1] + 1 if same else len(order), tag)
    given = {tag: headers[index] for tag, index in parsed.items()}
    layout = [given.get(tag) or (f"{tag[0]} [{tag[1]}]" if tag[1] else tag[0]) for tag in order]
    rows = [[cells.get(tag) for tag in order] for cells in records]
    return layout, rows, left_out
