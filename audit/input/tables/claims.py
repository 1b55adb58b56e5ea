"""Claim rows: ``step | field | value | unit`` rows that each set one field of one step of the
balance file (``T1 | shaft_power | 1.148 | MW``); ``note`` is free text and is not read. A value
without a unit is taken as written (a number, or text such as ``counter-current``)."""

from __future__ import annotations

import copy
import difflib
from typing import Any

from audit.errors import Problem
from audit.input.document import Document
from audit.input.tables.cells import (
    PLAIN_NUMBER,
    QUANTITY_TEXT,
    Bad,
    cell_value,
    check_saved,
    number_text,
)
from audit.input.tables.cells import number as read_number
from audit.input.tables.grid import Cell, Grid, column_letter
from audit.input.tables.headers import Column, has_site, header_row, merged_problems, read_columns
from audit.input.tables.sources import TableSource
from audit.input.tables.streams import CellPlaces

CLAIM_HEADERS = ["step", "field", "value", "unit", "note"]
"""The headers of a claim table; ``note`` is free text and is not read."""

_CLAIM_KINDS = {"step": "text", "field": "text", "value": "value", "unit": "text", "note": "note"}


class _Row:
    """One claim row's cells by field, and their places for messages."""

    def __init__(self, grid: Grid, number: int, cells: list[Cell], by_field: dict[str, Column]):
        self.grid, self.number, self.cells, self.by_field = grid, number, cells, by_field

    def cell(self, name: str) -> Cell:
        column = self.by_field.get(name)
        return self.cells[column.index] if column and column.index < len(self.cells) else Cell()

    def place(self, name: str) -> str:
        return self.grid.cell(self.number, self.by_field[name].index)


def merge_claims(
    document: Document, new: dict, cells: CellPlaces, grid: Grid, source: TableSource
) -> list[Problem]:
    """Set the claimed fields in a copy of ``new``'s steps and record their cells in ``cells``;
    return the problems found."""
    row = header_row(grid, source)
    if row is None:
        return []  # an empty claim table claims nothing
    columns, ignored, problems = read_columns(
        grid, row, source, _CLAIM_KINDS, has_site(document.data), document, "claims_from"
    )
    problems += merged_problems(grid, row, columns)
    if problems:
        return problems  # the rows cannot be read reliably
    by_field = {c.field: c for c in columns}
    missing = [name for name in ("step", "field", "value") if name not in by_field]
    if missing:
        return problems + [
            Problem(
                "a claim table needs the columns 'step', 'field' and 'value' (and 'unit' for "
                f"quantities); this one lacks {', '.join(repr(m) for m in missing)}",
                file=grid.display,
                cell=grid.row(row),
            )
        ]
    steps = document.data.get("steps")
    if not isinstance(steps, list):
        return problems + [
            Problem(
                "claims need steps: the balance file has no 'steps' list",
                **document.place(("claims_from",)),
            )
        ]
    new_steps = copy.deepcopy(steps)
    index_of: dict[str, int] = {}
    for i, step in enumerate(steps):
        if isinstance(step, dict) and isinstance(step.get("id"), str):
            index_of.setdefault(step["id"], i)
    known = {c.index for c in columns} | ignored
    first: dict[tuple, str] = {}
    for number, row_cells in grid.rows:
        if number <= row or all(c.blank for c in row_cells):
            continue
        for index, cell in enumerate(row_cells):
            if not cell.blank and index not in known:
                problems.append(
                    Problem(
                        f"this cell has a value but column {column_letter(index)} has no header",
                        file=grid.display,
                        cell=grid.cell(number, index),
                    )
                )
        problems += _claim(
            document, _Row(grid, number, row_cells, by_field), index_of, new_steps, first, cells
        )
    new["steps"] = new_steps
    return problems


def _claim(
    document: Document,
    row: _Row,
    index_of: dict[str, int],
    new_steps: list,
    first: dict[tuple, str],
    cells: CellPlaces,
) -> list[Problem]:
    """Read one claim row into ``new_steps``; return its problems."""
    display = row.grid.display
    texts: dict[str, str | None] = {}
    problems = []
    for name in ("step", "field", "unit"):
        if name not in row.by_field or row.cell(name).blank:
            texts[name] = None
            continue
        try:
            texts[name] = cell_value(row.cell(name), "text", None, name)
        except Bad as exc:
            problems.append(Problem(str(exc), file=display, cell=row.place(name)))
    if problems:
        return problems
    step_id, field_name, unit = texts["step"], texts["field"], texts["unit"]
    if step_id is None or field_name is None:
        name = "step" if step_id is None else "field"
        return [Problem(f"this claim row has no {name}", file=display, cell=row.place(name))]
    where = f"step {step_id}"
    value_place = row.place("value")
    if row.cell("value").blank:
        return [
            Problem(
                f"the claim '{field_name}' has no value",
                file=display,
                cell=value_place,
                where=where,
            )
        ]
    try:
        value = claim_value(row.cell("value"), unit)
    except Bad as exc:
        return [Problem(str(exc), file=display, cell=value_place, where=where)]
    if step_id not in index_of:
        close = difflib.get_close_matches(step_id, list(index_of), n=1)
        return [
            Problem(
                f"'{step_id}' is not a step of the balance file"
                + (f"; did you mean '{close[0]}'?" if close else ""),
                file=display,
                cell=row.place("step"),
            )
        ]
    index = index_of[step_id]
    parts = tuple(field_name.split("."))
    path = ("steps", index, *parts)
    if path in first:
        return [
            Problem(
                f"the claim '{field_name}' of step {step_id} is given twice in the table (also "
                f"in {first[path]})",
                file=display,
                cell=value_place,
                where=where,
            )
        ]
    first[path] = value_place
    target: Any = new_steps[index]
    for part in parts[:-1]:
        target = target.setdefault(part, {}) if isinstance(target, dict) else None
        if not isinstance(target, dict):
            break
    if not isinstance(target, dict):
        return [
            Problem(
                f"'{field_name}' does not name a field of the step",
                file=display,
                cell=row.place("field"),
                where=where,
            )
        ]
    if parts[-1] in target:
        line, _ = document.position(path)
        return [
            Problem(
                f"the claim '{field_name}' of step {step_id} is written both in the balance "
                f"file ({document.file}, line {line}) and in this table; a claim is written in "
                "one place",
                file=display,
                cell=value_place,
                where=where,
            )
        ]
    target[parts[-1]] = value
    cells[path] = (display, value_place)
    return []


def claim_value(cell: Cell, unit: str | None) -> Any:
    """The value a claim's ``value`` cell gives, with the row's ``unit`` (None: as written)."""
    check_saved(cell)
    value = cell.value
    if unit is not None:
        if isinstance(value, str) and QUANTITY_TEXT.match(value.strip()):
            raise Bad(
                f"'{value.strip()}' carries its own unit, and the row's 'unit' cell "
                f"gives '{unit}'; write the unit in one place"
            )
        return f"{number_text(value)} {unit}"
    if isinstance(value, (int, float)):  # bool included: taken as written
        return value
    written = str(value).strip()
    if PLAIN_NUMBER.match(written):
        return read_number(written)
    return written
