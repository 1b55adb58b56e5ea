"""The machine tables (CSV files and DataFrames): SI units named in every header, plain cells.

Each column of the registry (:mod:`audit.report.columns`) becomes ``key [unit]`` with its SI unit
(``T [K]``, ``Q [W]``, ``psi [J/kg]``; ``[-]`` for a fraction; no unit for text). A step's energy
columns come twice: ``Q [W]`` holds the flow steps' rates and ``Q [J]`` the vessels' (batch steps')
totals, so one column never mixes the two; a step fills one of the pair and leaves the other
empty. A finding's values (claimed, bound, margin, tolerance, uncertainty) are in the SI unit of
its own quantity, written in its ``unit`` column.

Cells are plain values: lists are joined with ``"; "`` (``S01; S02``), mappings written as
``name=value`` pairs joined with ``"; "``, records (uncertainty contributors, reactions) likewise.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from audit.report.columns import FINDINGS, OWN, STEPS, STREAMS, Column, Table

if TYPE_CHECKING:  # pandas loads only when a table is built
    import pandas as pd  # type: ignore[import-untyped]

SI_UNITS: dict[str, str] = {
    "temperature": "K",
    "temperature_difference": "K",
    "pressure": "Pa",
    "density": "kg/m3",
    "specific_energy": "J/kg",
    "specific_entropy": "J/(kg K)",
    "mass_flow": "kg/s",
    "molar_flow": "mol/s",
    "velocity": "m/s",
    "elevation": "m",
    "fraction": "-",
    "power": "W",
    "energy": "J",
    "entropy_rate": "W/K",
    "entropy": "J/K",
    "voltage": "V",
    "current": "A",
    "mass": "kg",
}
"""The SI unit of each kind of quantity (:mod:`audit.report.display` has the display units)."""

VESSEL_UNITS = {"W": "J", "W/K": "J/K"}
"""A flow step's rate unit → the vessel's total unit."""

EXTRA_UNITS: dict[str, str | None] = {
    "h_out_isentropic": "J/kg",
    "inlet_subcooling": "K",
    "hot_duty": "W",
    "cold_duty": "W",
    "heated_duty": "W",
    "min_approach": "K",
    "min_approach_at_duty_fraction": "-",
    "V_initial": "m3",
    "V_final": "m3",
    "useful_work_bound": "J",
    "fuel_lhv": "J/kg",
    "fuel_hhv": "J/kg",
    "heat_input_lhv": "W",
    "heat_input_hhv": "W",
    "efficiency_lhv": "-",
    "efficiency_hhv": "-",
    "air_ratio": "-",
    "reaction": None,
    "reactions": None,
    "electrons": "-",
    "extent": "mol/s",
    "reaction_T": "K",
    "reaction_P": "Pa",
    "dH_rxn": "J/mol",
    "dS_rxn": "J/(mol K)",
    "dG_rxn": "J/mol",
    "heat_of_reaction": "W",
    "E_rev": "V",
    "E_tn": "V",
    "E_rev_checked": "V",
    "E_rev_standard": "V",
    "species_pressures": "Pa",
    "fugacity_coefficients": "-",
    "E_tn_checked": "V",
    "gibbs_work": "W",
    "electrical_power": "W",
    "stack_power": "W",
    "charge_rate": "A",
    "faradaic_efficiency": "-",
}
"""The SI unit of each kind-specific step value (``extra``); None for text. A test checks that
every value the step kinds report is listed."""

OWN_COLUMNS = ("claimed", "bound", "margin", "tolerance", "uncertainty", "monte_carlo_uncertainty")

# Registry columns without a display quantity whose unit is still known
_UNQUANTIFIED = {"energy_scale": "power", "monte_carlo_uncertainty": OWN, "line": None}


def header(key: str, unit: str | None) -> str:
    """``key [unit]``, or ``key`` for text."""
    return f"{key} [{unit}]" if unit else key


def plain_cell(value: Any) -> Any:
    """A cell's plain value: numbers, text and booleans as they are; lists, tuples and mappings
    as text (see the module docstring); None stays None."""
    if isinstance(value, dict):
        return "; ".join(f"{k}={_inner(v)}" for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return "; ".join(str(_inner(v)) for v in value)
    return value


def _inner(value: Any) -> Any:
    if isinstance(value, dict):
        return ", ".join(f"{k}={_inner(v)}" for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return " ".join(str(_inner(v)) for v in value)
    if isinstance(value, float):
        return f"{value:.6g}"
    return value


def column_unit(column: Column) -> str | None:
    """The SI unit of a registry column (None: text, or a finding's own quantity)."""
    quantity = column.quantity or _UNQUANTIFIED.get(column.key)
    if quantity is None or quantity == OWN:
        return None
    return SI_UNITS[quantity]


def plain_rows(table: Table, rows: list[Any]) -> list[dict[str, Any]]:
    """The rows of a machine table with unit headers and plain cells (see the module docstring)."""
    out = []
    for row in rows:
        values = table.csv_row(row)
        batch = bool(values.get("batch", False))
        cells: dict[str, Any] = {}
        for column in table.machine_columns:
            if not column.csv or column.flatten:
                continue
            if column.key not in values:  # left out where it is None (omit_none)
                continue
            unit = column_unit(column)
            value = plain_cell(values[column.key])
            if unit in VESSEL_UNITS and table.name == "steps":
                cells[header(column.key, unit)] = None if batch else value
                cells[header(column.key, VESSEL_UNITS[unit])] = value if batch else None
            else:
                cells[header(column.key, unit)] = value
            if table.name == "findings" and column.key == "quantity":
                cells["unit"] = finding_unit(values.get("quantity"))
        for key, value in values.items():
            if "." in key:  # a flattened mapping: extra.<name>
                name = key.split(".", 1)[1]
                cells[header(key, EXTRA_UNITS.get(name))] = plain_cell(value)
        out.append(cells)
    return out


def finding_unit(quantity: str | None) -> str | None:
    """The SI unit a finding's values are in (its ``quantity``)."""
    return SI_UNITS.get(quantity or "")


def plain_headers(table: Table) -> list[str]:
    """The headers of a machine table without its flattened columns (an empty table's)."""
    headers = []
    for column in table.machine_columns:
        if not column.csv or column.flatten or column.omit_none:
            continue
        unit = column_unit(column)
        headers.append(header(column.key, unit))
        if unit in VESSEL_UNITS and table.name == "steps":
            headers.append(header(column.key, VESSEL_UNITS[unit]))
        if table.name == "findings" and column.key == "quantity":
            headers.append("unit")
    return headers


def plain_frame(table: Table, rows: list[Any]) -> pd.DataFrame:
    """A machine table as a DataFrame: unit headers, plain cells, indexed by the table's index
    column when it has one (``id``)."""
    import pandas as pd

    records = plain_rows(table, rows)
    frame = pd.DataFrame(records) if records else pd.DataFrame([], columns=plain_headers(table))
    return frame.set_index(table.index) if table.index else frame


def json_units() -> dict[str, dict[str, Any]]:
    """The SI unit of each numeric field of the JSON's streams, steps (a vessel's in J where a flow
    step's is in W), the steps' ``extra`` values and the findings (their own quantity's)."""
    units: dict[str, dict[str, Any]] = {}
    for table in (STREAMS, STEPS, FINDINGS):
        own: dict[str, Any] = {}
        for column in table.machine_columns:
            if not column.json:
                continue
            unit = column_unit(column)
            if unit in VESSEL_UNITS and table is STEPS:
                own[column.key] = {"flow step": unit, "vessel": VESSEL_UNITS[unit]}
            elif unit is not None:
                own[column.key] = unit
            elif table is FINDINGS and column.key in OWN_COLUMNS:
                own[column.key] = "the SI unit of the finding's quantity"
        units[table.name] = own
    units["steps"]["extra"] = {k: v for k, v in EXTRA_UNITS.items() if v is not None}
    return units


def result_frames(result: Any) -> dict[str, pd.DataFrame]:
    """The streams, steps and findings of an :class:`audit.results.AuditResult` as DataFrames
    with SI units in the headers and plain cells (the CSV tables' content)."""
    return {
        STREAMS.name: plain_frame(STREAMS, result.streams),
        STEPS.name: plain_frame(STEPS, result.steps),
        FINDINGS.name: plain_frame(FINDINGS, result.findings),
    }
