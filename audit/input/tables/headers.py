"""Headers: which row holds them, which field and unit each column gives, and the header problems
(unknown headers and units, a column given twice, merged header or value cells).

A header is a field and, for a quantity, its unit in square brackets (``T [degC]``); ``columns``
maps other headers to fields and ``ignore_columns`` skips columns (:class:`TableSource`)."""

from __future__ import annotations

import difflib
import re
from collections.abc import Mapping
from dataclasses import dataclass

from audit import units
from audit.errors import Problem, UnitError
from audit.input.document import Document
from audit.input.tables.cells import QUANTITY_KINDS, text
from audit.input.tables.grid import Grid, column_letter
from audit.input.tables.sources import ColumnSpec, TableSource

HEADER = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?$")
"""A header: a field name and, optionally, a unit in square brackets."""
_NO_UNIT = {"", "-"}


@dataclass
class Column:
    """A column read from the header row: its 0-based index, its header, its field and unit."""

    index: int
    header: str
    field: str
    unit: str | None


def header_row(grid: Grid, source: TableSource) -> int | None:
    """The row of the headers: ``header_row`` if given, else the first filled row (None if empty)."""
    if source.header_row is not None:
        return source.header_row
    for number, cells in grid.rows:
        if not all(c.blank for c in cells):
            return number
    return None


def has_site(data: dict) -> bool:
    """Whether the balance declares a site pressure (so gauge units can be read)."""
    info = data.get("balance")
    return isinstance(info, dict) and info.get("site_pressure") is not None


def read_columns(
    grid: Grid,
    row: int,
    source: TableSource,
    kinds: Mapping[str, str],
    site: bool,
    document: Document,
    key: str,
) -> tuple[list[Column], set[int], list[Problem]]:
    """Read the header row: the columns, the ignored column indices, and the problems.

    ``kinds`` gives each field a column may give and how its cells are read; ``site`` says whether
    the balance declares a site pressure; ``key`` is where the balance names the table."""
    problems: list[Problem] = []
    cells = next((c for n, c in grid.rows if n == row), [])
    ignore = {name.strip().casefold() for name in source.ignore_columns}
    mapped: dict[str, tuple[str, str | None]] = {}
    for name, spec in source.columns.items():
        if name not in kinds:
            close = difflib.get_close_matches(name, list(kinds), n=1)
            problems.append(
                Problem(
                    f"'{name}' is not a field a table column can give"
                    + (f"; did you mean '{close[0]}'?" if close else ""),
                    **document.place((key, "columns", name)),
                )
            )
            continue
        if isinstance(spec, ColumnSpec):
            mapped[spec.header.strip().casefold()] = (name, spec.unit)
        else:
            match = HEADER.match(spec.strip())
            mapped[spec.strip().casefold()] = (name, match.group("unit") if match else None)
    lower = {name.casefold(): name for name in kinds}
    columns: list[Column] = []
    ignored: set[int] = set()
    found: set[str] = set()
    for index, cell in enumerate(cells):
        place = grid.cell(row, index)
        if cell.formula is not None or cell.error is not None:
            problems.append(
                Problem(
                    "a header must be plain text, not a formula or an error value",
                    file=grid.display,
                    cell=place,
                )
            )
            continue
        if cell.blank:
            continue
        header = text(cell.value).strip()
        folded = header.casefold()
        if folded in ignore:
            ignored.add(index)
            found.add(folded)
            continue
        field_name: str | None
        unit: str | None
        if folded in mapped:
            field_name, unit = mapped[folded]
            found.add(folded)
        else:
            match = HEADER.match(header)
            field_name = lower.get(match.group("name").casefold()) if match else None
            unit = match.group("unit") if match else None
            if field_name is None:
                problems.append(_unknown_header(grid, place, header, match, kinds, source))
                continue
        unit = unit.strip() if unit is not None else None
        if unit in _NO_UNIT:
            unit = None
        message = unit_problem(field_name, kinds[field_name], unit, header, site)
        if message:
            problems.append(Problem(message, file=grid.display, cell=place))
            continue
        columns.append(Column(index, header, field_name, unit))
    problems += _missing_named(source, kinds, found, row, document, key)
    problems += _repeated(grid, row, columns, kinds)
    return columns, ignored, problems


def _unknown_header(
    grid: Grid,
    place: str,
    header: str,
    match: re.Match[str] | None,
    kinds: Mapping[str, str],
    source: TableSource,
) -> Problem:
    stem = match.group("name") if match else header
    close = difflib.get_close_matches(stem, list(kinds), n=1)
    hint = (
        f"; did you mean '{close[0]}'?"
        if close
        else "; map it under 'columns' or list it under 'ignore_columns'"
    )
    if source.header_row is None and close == []:
        hint += " (if the headers are not in the table's first filled row, give 'header_row')"
    return Problem(f"unknown column header '{header}'{hint}", file=grid.display, cell=place)


def _missing_named(
    source: TableSource,
    kinds: Mapping[str, str],
    found: set[str],
    row: int,
    document: Document,
    key: str,
) -> list[Problem]:
    """Headers named under ``columns`` or ``ignore_columns`` that the header row lacks."""
    problems = []
    for name, spec in source.columns.items():
        spec_header = spec.header if isinstance(spec, ColumnSpec) else spec
        if name in kinds and spec_header.strip().casefold() not in found:
            problems.append(
                Problem(
                    f"the table has no column headed '{spec_header.strip()}' (row {row})",
                    **document.place((key, "columns", name)),
                )
            )
    for header in source.ignore_columns:
        if header.strip().casefold() not in found:
            index = source.ignore_columns.index(header)
            problems.append(
                Problem(
                    f"the table has no column headed '{header.strip()}' (row {row})",
                    **document.place((key, "ignore_columns", index)),
                )
            )
    return problems


def _repeated(grid: Grid, row: int, columns: list[Column], kinds: Mapping[str, str]) -> list[Problem]:
    """Columns that give the same field in the same unit (or the same text field twice)."""
    problems = []
    seen: dict[tuple[str, str | None], Column] = {}
    for column in columns:
        text_like = kinds[column.field] not in QUANTITY_KINDS
        tag = (column.field, None if text_like else column.unit)
        if tag in seen:
            first = seen[tag]
            problems.append(
                Problem(
                    f"the column '{column.header}' gives the same thing as column "
                    f"{column_letter(first.index)} ('{first.header}'); keep one",
                    file=grid.display,
                    cell=grid.cell(row, column.index),
                )
            )
        seen.setdefault(tag, column)
    return problems


def unit_problem(name: str, kind: str, unit: str | None, header: str, site: bool) -> str | None:
    """What is wrong with the unit a header gives its field, or None."""
    if unit is None:
        return None
    if kind not in QUANTITY_KINDS:
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
        return (
            f"the header '{header}' gives the unit '{unit}', which is not a unit of "
            f"{kind.replace('_', ' ')}"
            + (f" (such as {units.KINDS[kind].example})" if kind in units.KINDS else "")
        )
    if kind == "pressure" and not site:
        try:
            units.to_si(probe, kind)
        except UnitError:
            return (
                f"the header '{header}' gives a gauge pressure unit, but the balance declares "
                "no site_pressure; add 'site_pressure' (the atmospheric pressure at the site, "
                "e.g. '1.013 bar') under 'balance', or use an absolute unit such as 'bar'"
            )
    return None


def merged_problems(grid: Grid, row: int, columns: list[Column]) -> list[Problem]:
    """Merged cells in the header row or among the table's values."""
    problems = []
    last = max((c.index for c in columns), default=-1) + 1
    for written, min_row, min_col, max_row, _max_col in grid.merged:
        if max_row < row or min_col - 1 >= last:
            continue  # a title block above the table, or notes to its right
        if min_row <= row:
            message = f"the header cells {written} are merged; give each column its own header cell"
        else:
            message = (
                f"the cells {written} are merged: a merged cell keeps its value in its first "
                "cell only; unmerge them and write the value in each cell"
            )
        problems.append(Problem(message, file=grid.display, cell=grid.cell(min_row, min_col - 1)))
    return problems
