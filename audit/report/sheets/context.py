"""What every sheet of the findings workbook shares: the sheet names, the result, the sheets, the
row of each step, stream and finding (for links), and small helpers."""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from operator import attrgetter
from typing import Any

from audit.findings import SEVERITY_RANK, Finding
from audit.reconcile.records import Reconciliation
from audit.report.columns import OWN, Column
from audit.report.display import DISPLAY, in_si, shown
from audit.report.workbook_cells import Layout, Sheet
from audit.report.workbook_file import Formats
from audit.results import AuditResult, Delegated, StepResult

OVERVIEW, FINDINGS, STEPS, STREAMS, HEAT, EXCHANGERS, EXERGY, METHOD = (
    "Overview",
    "Findings",
    "Steps",
    "Streams",
    "Heat flows",
    "Exchangers",
    "Exergy losses",
    "Method",
)
SHEETS = (OVERVIEW, FINDINGS, STEPS, STREAMS, HEAT, EXCHANGERS, EXERGY, METHOD)

CHART_ROWS = 22
"""The rows a T–Q chart covers on the Exchangers sheet."""
RECONCILIATION = "Reconciliation"
"""The sheet ``plant-audit reconcile`` adds before the Method sheet."""

RATE_BASIS = "rate (kW)"
TOTAL_BASIS = "total (kJ)"

# The unit of each tolerance of :class:`audit.model.tolerances.Tolerances` (tests keep this complete).
TOLERANCE_QUANTITY = {
    "energy_relative": "fraction",
    "energy_absolute": "power",
    "energy_absolute_batch": "energy",
    "energy_floor_fraction": "fraction",
    "mass_relative": "fraction",
    "mass_absolute": "mass_flow",
    "efficiency": "fraction",
    "saturation_band": "temperature_difference",
    "state_match_temperature": "temperature_difference",
    "state_match_pressure_relative": "fraction",
    "min_approach": "temperature_difference",
    "exhaust_moisture_max": "fraction",
    "pump_subcooling_min": "temperature_difference",
    "isothermal_band": "temperature_difference",
    "isobaric_relative": "fraction",
}


class Book:
    """The workbook being written: one :class:`Sheet` per title of :data:`SHEETS`, the result,
    the gate, the findings in the Findings sheet's order, and where each step, stream and first
    finding of a step or stream stands (for links between sheets).

    Without ``wb`` the book only measures (:mod:`audit.report.workbook_cells`); with ``wb`` (an
    XlsxWriter workbook) and the ``layouts`` that measuring found, it writes. With a
    ``reconciliation`` (:class:`audit.reconcile.records.Reconciliation`) the book also has the
    sheet :data:`RECONCILIATION`."""

    def __init__(
        self,
        result: AuditResult,
        fail_on: str,
        wb: Any = None,
        layouts: dict[str, Layout] | None = None,
        reconciliation: Reconciliation | None = None,
    ) -> None:
        self.result = result
        self.reconciliation = reconciliation
        self.fail_on = fail_on
        self.wb = wb
        self.formats = Formats(wb) if wb is not None else None
        self.sheets: dict[str, Sheet] = {}
        for title in titles(reconciliation is not None):
            if wb is None:
                self.sheets[title] = Sheet(title)
            else:
                layout = (layouts or {}).get(title, Layout())
                sheet = Sheet(title, wb.add_worksheet(title), layout, self.formats)
                sheet.layout_columns()
                self.sheets[title] = sheet
        self.step_row = {s.id: row for row, s in enumerate(result.steps, start=2)}
        self.stream_row = {s.id: row for row, s in enumerate(result.streams, start=2)}
        self.findings = ordered(result.findings)
        self.exchanger_row = exchanger_blocks(result)
        self.first_finding_row: dict[tuple[str, str], int] = {}
        for row, f in enumerate(self.findings, start=2):
            if f.step:
                self.first_finding_row.setdefault(("step", f.step), row)
            if f.stream:
                self.first_finding_row.setdefault(("stream", f.stream), row)


def titles(reconciled: bool = False) -> tuple[str, ...]:
    """The sheets of the workbook, in order (with the Reconciliation sheet when ``reconciled``)."""
    return (*SHEETS[:-1], RECONCILIATION, SHEETS[-1]) if reconciled else SHEETS


def exchanger_blocks(result: AuditResult) -> dict[str, int]:
    """The first row of each heat exchanger's block on the Exchangers sheet: below the table of
    the exchangers (a header and one row each) and a blank row, one block after another."""
    exchangers = [s for s in result.steps if s.exchanger is not None]
    row = len(exchangers) + 3
    blocks = {}
    for s in exchangers:
        blocks[s.id] = row
        row += block_rows(s)
    return blocks


def block_rows(step: StepResult) -> int:
    """The rows of an exchanger's block: a title, the T–Q points under their header, the two points
    of the smallest approach under theirs, and a blank row; at least the chart's height."""
    if step.profile is None:
        return 3  # the title, a note, a blank row
    return max(len(step.profile.duty) + 6, CHART_ROWS + 2)


def rank(severity: str) -> int:
    return SEVERITY_RANK[severity]


def worst(findings: Iterable[Finding]) -> str | None:
    """The most severe severity among ``findings`` (None: no findings)."""
    ranked = sorted((f.severity for f in findings), key=rank, reverse=True)
    return ranked[0] if ranked else None


def marker(worst: str, count: int) -> str:
    """The findings cell of a step or stream: its worst severity and how many findings it has."""
    return f"{worst} ({count} finding{'s' if count > 1 else ''})"


def ordered(findings: Sequence[Finding]) -> list[Finding]:
    """Most severe first; the solver's order within a severity."""
    return sorted(findings, key=lambda f: -SEVERITY_RANK[f.severity])


def number_or_text(value: Any) -> Any:
    """A provenance value as a number when it is one (solve time, counts), else the text."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        return value
    return int(number) if number.is_integer() and "." not in str(value) else number


def cell_value(column: Column, row: Any, quantity: str | None = None) -> Any:
    """The workbook cell of a registry column (:mod:`audit.report.columns`) for one result
    object: a list joined as text, a structured value as its one cell, a quantity in its display
    unit (``quantity``: the column's own unless given; a row's own for :data:`OWN`), a value
    whose display unit is SI as it is, missing text as an empty string."""
    value = column.value(row)
    if column.joined is not None:
        return column.joined.join(value or ())
    if column.cell is not None:
        return column.cell(value)
    if column.quantity == OWN:
        return shown(value, quantity, difference=column.difference)
    quantity = quantity or column.quantity
    if quantity is not None and not in_si(quantity):
        return shown(value, quantity, difference=column.difference)
    if quantity is None and column.fmt is None and value is None:
        return ""
    return value


def cell_reader(
    column: Column, quantity: str | None = None, record: type | None = None
) -> Callable[[Any], Any]:
    """:func:`cell_value` of ``column`` (and ``quantity``) as a function of the row object (of
    class ``record`` when given), with what can be decided once per column decided once (the
    workbook's large sheets call it for every cell); a value the record delegates to one of its
    parts (:class:`audit.results.delegated.Delegated`) is read from the part directly."""
    if column.read is not None or column.joined is not None or column.cell is not None:
        return lambda row: cell_value(column, row, quantity)
    if column.quantity == OWN:
        return lambda row: cell_value(column, row, quantity)
    delegated = getattr(record, column.key, None) if record is not None else None
    if isinstance(delegated, Delegated):
        get = attrgetter(f"{delegated.part}.{delegated.name}")
    else:
        get = attrgetter(column.key)
    quantity = quantity or column.quantity
    if quantity is not None and not in_si(quantity):
        _, scale, offset = DISPLAY[quantity]
        if column.difference:
            offset = 0.0
        isfinite = math.isfinite

        def scaled(row: Any) -> Any:
            value = get(row)
            if value is None or not isfinite(value):
                return None
            return value * scale + offset

        return scaled
    if quantity is None and column.fmt is None:

        def text(row: Any) -> Any:
            value = get(row)
            return "" if value is None else value

        return text
    return get
