"""The Steps sheet: every step's balances, its columns from the column registry
(:data:`audit.report.columns.STEPS`). The first-law residual is a live formula over the cells of
the same row that hold Q, W and the enthalpy flows in and out, beside the solver's own residual;
its cell turns red while it exceeds the step's energy tolerance. Vessels (batch steps) are totals
in kJ (kJ/K) in the same columns, with their basis named and the unit in every energy cell's
number format."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

from audit.findings import ERROR
from audit.report.columns import STEPS as COLUMNS
from audit.report.columns import VESSEL_QUANTITY, Column
from audit.report.display import shown, unit
from audit.report.sheets.context import (
    FINDINGS,
    RATE_BASIS,
    STEPS,
    TOTAL_BASIS,
    Book,
    cell_reader,
    marker,
    worst,
)
from audit.report.workbook_cells import (
    BOLD,
    FILLS,
    FORMATS,
    PLAIN,
    Formula,
    column_letter,
    location,
    with_unit,
)
from audit.results import StepResult

FLOW_ONLY = ("KE_PE_in", "KE_PE_out", "mass_residual")
"""Columns a vessel leaves empty (no kinetic or potential energy flows, no mass flows)."""

WIDTHS = {"description": 32, "notes": 40}


def _format(column: Column, quantity: str | None) -> str | None:
    if column.fmt is not None:
        return column.fmt
    if quantity in ("power", "energy", "entropy_rate", "entropy"):
        return with_unit(FORMATS[quantity], unit(quantity))
    return FORMATS[quantity] if quantity else None


def _plan(column: Column, batch: bool) -> tuple[Column, Callable[[Any], Any], str | None]:
    """A column with its cell reader and number format on a flow step's row or a vessel's."""
    quantity = column.quantity
    if batch and quantity in VESSEL_QUANTITY:
        quantity = VESSEL_QUANTITY[quantity]
    return column, cell_reader(column, quantity, StepResult), _format(column, quantity)


def write(book: Book) -> None:
    sh = book.sheets[STEPS]
    columns = COLUMNS.sheet_columns()
    sh.header(COLUMNS.headers())
    for key, width in WIDTHS.items():
        sh.fix(COLUMNS.sheet_order.index(key) + 1, width)
    letter = {c.key: column_letter(index) for index, c in enumerate(columns, start=1)}
    # each column's quantity and number format, for flow steps and for vessels (batch steps)
    plans = {batch: [_plan(c, batch) for c in columns] for batch in (False, True)}
    # the columns written below one by one, and the others: plain cells read through their plans
    at = {c.key: col for col, c in enumerate(columns, start=1)}
    own = ("id", "findings", "basis", "residual_formula")
    plain_plans = {
        batch: [
            (col, read, fmt, column.wrap)
            for col, (column, read, fmt) in enumerate(plans[batch], start=1)
            if column.key not in own and not (batch and column.key in FLOW_ONLY)
        ]
        for batch in (False, True)
    }
    residual_fmt = {batch: plans[batch][at["residual_formula"] - 1][2] for batch in (False, True)}
    plain = sh.plain
    for row, s in enumerate(book.result.steps, start=2):
        worst_severity = worst(book.result.findings_for(s.id))
        fill = FILLS[worst_severity] if worst_severity else None
        sh.put(row, at["id"], s.id, fill=fill, font=BOLD if worst_severity == ERROR else PLAIN)
        if worst_severity:
            sh.put(
                row,
                at["findings"],
                marker(worst_severity, len(book.result.findings_for(s.id))),
                fill=fill,
                link=location(FINDINGS, book.first_finding_row[("step", s.id)]),
            )
        else:
            plain(row, at["findings"], "none")
        plain(row, at["basis"], TOTAL_BASIS if s.batch else RATE_BASIS)
        formula = residual_formula(s, row, letter)
        sh.put(row, at["residual_formula"], formula, fmt=residual_fmt[s.batch])
        for col, read, fmt, wrap in plain_plans[s.batch]:
            plain(row, col, read(s), fmt, wrap)
    sh.table(len(book.result.steps) + 1)
    if book.result.steps:
        # The formula's cell turns red while |residual| exceeds the step's energy tolerance,
        # also after an auditor edits Q, W or an enthalpy flow.
        residual = letter["residual_formula"]
        tolerance = letter["energy_tolerance"]
        last = len(book.result.steps) + 1
        sh.highlight(
            f"{residual}2:{residual}{last}",
            f"AND(ISNUMBER({residual}2),ABS({residual}2)>{tolerance}2)",
            FILLS[ERROR],
            BOLD,
        )


def residual_formula(s: StepResult, row: int, letter: dict[str, str]) -> Any:
    """Q − W − (H_out − H_in) − (KE_PE_out − KE_PE_in) over this row's cells (vessels:
    Q − W − (H_out − H_in), where H holds m·u); its cached value is the solver's residual. None
    when an input is not finite."""
    inputs = [s.Q, s.W, s.H_in, s.H_out] + ([] if s.batch else [s.KE_PE_in, s.KE_PE_out])
    if not all(math.isfinite(v) for v in inputs):
        return None
    q, w, h_in, h_out = letter["Q"], letter["W"], letter["H_in"], letter["H_out"]
    text = f"={q}{row}-{w}{row}-({h_out}{row}-{h_in}{row})"
    if not s.batch:
        k_in, k_out = letter["KE_PE_in"], letter["KE_PE_out"]
        text += f"-({k_out}{row}-{k_in}{row})"
    return Formula(text, shown(s.energy_residual, "energy" if s.batch else "power"))
