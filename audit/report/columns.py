"""The column registry: the one list of the columns of the streams, steps and findings tables,
read by the JSON writer, the CSV writer and the workbook's Streams, Steps and Findings sheets.

A :class:`Column` names one field of a result object (:class:`audit.results.StreamResult`,
:class:`audit.results.StepResult`, :class:`audit.findings.Finding`):

* ``key``: the field's name in the JSON and the CSV header, and the attribute it is read from;
* ``header``: the workbook column's header text, with its display unit (None: not in the workbook);
* ``quantity``: the kind of quantity (:mod:`audit.report.display`): the workbook shows it in that
  engineering unit, the JSON and CSV in SI. :data:`OWN` means the row's own ``quantity`` (a
  finding's); on the Steps sheet a vessel's ``power`` is ``energy`` and its ``entropy_rate`` is
  ``entropy`` (totals, not rates);
* how a structured value becomes one cell: ``joined`` (a list as text), ``largest`` (the largest
  magnitude of a mapping), ``flatten`` (a mapping as one CSV column per key, ``key.name``);
* ``csv`` / ``json``: whether the machine outputs carry it.

:class:`Table` keeps the columns in the result object's field order (the JSON's and the CSV's
order) and the workbook's column order as a list of keys; the workbook's own columns (a row's
findings, links, the live formula) are :class:`Column` entries with ``machine=False``.

Adding a field to a result object: add its column here (a test fails until every field is listed).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

from audit.results import as_record

OWN = "own"
"""``Column.quantity`` for a value whose kind is the row's own ``quantity`` field (findings)."""


def largest(values: Mapping[str, float]) -> float:
    """The largest magnitude of a mapping's values (0 for none): a step's largest mass residual."""
    return max((abs(v) for v in values.values()), default=0.0)


@dataclass(frozen=True)
class Column:
    """One column of a table (see the module docstring)."""

    key: str
    header: str | None = None
    quantity: str | None = None
    difference: bool = False  # shown as a difference (a temperature margin in K, not °C)
    fmt: str | None = None  # the workbook's number format when not the quantity's own
    joined: str | None = None  # a list shown in one workbook cell, joined with this text
    csv: bool = True  # in the CSV table
    json: bool = True  # in the JSON
    cell: Callable[[Any], Any] | None = None  # one cell (CSV and workbook) of a structured value
    flatten: bool = False  # CSV: one column per key of the mapping, named key.name
    machine: bool = True  # False: a workbook-only column (computed by its sheet)
    wrap: bool = False  # the workbook cell wraps
    omit_none: bool = False  # the JSON and CSV leave the field out of a row where it is None
    read: Callable[[Any], Any] | None = None  # a workbook-only column's value, read from the row

    def value(self, row: Any) -> Any:
        """The field's value in ``row`` (the result object), as stored."""
        if self.read is not None:
            return self.read(row)
        return getattr(row, self.key)


@dataclass(frozen=True)
class Table:
    """A table's columns in field order, and the workbook sheet's order as keys."""

    name: str
    columns: tuple[Column, ...]
    sheet_order: tuple[str, ...]
    index: str | None = None  # the CSV's index column

    def column(self, key: str) -> Column:
        return self._by_key[key]

    @property
    def _by_key(self) -> dict[str, Column]:
        return {c.key: c for c in self.columns}

    @property
    def machine_columns(self) -> list[Column]:
        return [c for c in self.columns if c.machine]

    def sheet_columns(self) -> list[Column]:
        by_key = self._by_key
        return [by_key[key] for key in self.sheet_order]

    def headers(self) -> list[str]:
        """The workbook sheet's header row."""
        return [c.header or c.key for c in self.sheet_columns()]

    # -- the machine outputs --------------------------------------------------------------------
    def json_row(self, row: Any) -> dict[str, Any]:
        """One object of the JSON: every machine column, structured values as plain data."""
        return {
            c.key: plain(c.value(row))
            for c in self.machine_columns
            if c.json and not (c.omit_none and c.value(row) is None)
        }

    def csv_row(self, row: Any) -> dict[str, Any]:
        """One row of the CSV table (SI): structured values as one cell, mappings flattened."""
        out: dict[str, Any] = {}
        flattened: dict[str, Any] = {}
        for c in self.machine_columns:
            if not c.csv or (c.omit_none and c.value(row) is None):
                continue
            value = plain(c.value(row))
            if c.flatten:
                flattened.update({f"{c.key}.{k}": v for k, v in value.items()})
            else:
                out[c.key] = c.cell(value) if c.cell else value
        out.update(flattened)  # after the other columns
        return out


def heating_value_basis(step: Any) -> str | None:
    """A fired heater's or boiler's heating-value basis: the one its fuel claim states (``LHV``,
    ``HHV``), ``LHV (none stated)`` when it states neither; None for other steps."""
    if "efficiency_lhv" not in step.extra:
        return None
    if "fuel_hhv" in step.claimed:
        return "HHV"
    return "LHV" if "fuel_lhv" in step.claimed else "LHV (none stated)"


def fired_efficiency(step: Any) -> float | None:
    """A fired heater's or boiler's efficiency on its stated heating-value basis [-] (the step
    computes it: ``extra["efficiency_lhv"]``, ``extra["efficiency_hhv"]``); None for other steps."""
    basis = heating_value_basis(step)
    if basis is None:
        return None
    return step.extra.get("efficiency_hhv" if basis == "HHV" else "efficiency_lhv")


def printed_cell(claims: Mapping[str, Any] | None) -> str:
    """A stream's printed properties beside the computed ones, in one cell: ``s: 0.5957 printed,
    0.59722 computed, -15 last digits ✗``; ✗ marks a property that differs beyond its allowance,
    ≈ one within the difference between formulations (:mod:`audit.printed`)."""
    if not claims:
        return ""
    marks = {"agrees": "✓", "formulation": "≈", "differs": "✗"}
    parts = []
    for name, claim in claims.items():
        get = claim.get if isinstance(claim, Mapping) else lambda key, c=claim: getattr(c, key)
        digits = get("digits")
        moved = f", {digits:+.3g} last digits" if digits is not None else ""
        parts.append(
            f"{name}: {get('text')} printed, {get('computed_text')} computed{moved} "
            f"{marks.get(str(get('verdict')), '')}"
        )
    return "; ".join(parts)


def plain(value: Any) -> Any:
    """``value`` as plain data: result records as dicts of their published fields, recursively
    (:func:`audit.results.as_record`)."""
    return as_record(value)


PERCENT = "0.0%"
INTEGER = "0"

STREAMS = Table(
    name="streams",
    index="id",
    columns=(
        Column("id", "stream"),
        Column("fluid", "fluid"),
        Column("T", "T [°C]", "temperature"),
        Column("P", "P [bar abs]", "pressure"),
        Column("rho", "ρ [kg/m³]", "density"),
        Column("h", "h [kJ/kg]", "specific_energy"),
        Column("s", "s [kJ/(kg·K)]", "specific_entropy"),
        Column("u", "u [kJ/kg]", "specific_energy"),
        Column("g", "g = h − T·s [kJ/kg]", "specific_energy"),
        Column("a", "a = u − T·s [kJ/kg]", "specific_energy"),
        Column("psi", "ψ flow exergy [kJ/kg]", "specific_energy"),
        Column("phase", "phase"),
        Column("quality", "quality [-]", "fraction"),
        Column("basis", "basis"),
        Column("mass_flow", "mass flow [kg/s]", "mass_flow"),
        Column("molar_flow", "molar flow [mol/s]", "molar_flow"),
        Column("flow_as_written", "flow as written"),
        Column("velocity", "velocity [m/s]", "velocity"),
        Column("elevation", "elevation [m]", "elevation"),
        Column("declared_phase", "declared phase"),
        Column("description", "description", wrap=True),
        Column("line", "line in file", fmt=INTEGER),
        Column("composition"),  # mole fractions by species: JSON and CSV only
        Column("printed", "printed vs computed", cell=printed_cell, omit_none=True, wrap=True),
        # the workbook's own columns
        Column("findings", "findings", machine=False),
        Column("from_step", "from step", machine=False),
        Column("to_step", "to step", machine=False),
    ),
    sheet_order=(
        "id",
        "fluid",
        "description",
        "findings",
        "from_step",
        "to_step",
        "T",
        "P",
        "phase",
        "declared_phase",
        "quality",
        "mass_flow",
        "molar_flow",
        "flow_as_written",
        "rho",
        "h",
        "s",
        "u",
        "g",
        "a",
        "psi",
        "basis",
        "printed",
        "velocity",
        "elevation",
        "line",
    ),
)

STEPS = Table(
    name="steps",
    index="id",
    columns=(
        Column("id", "step"),
        Column("kind", "kind"),
        Column("batch"),
        Column("inlets", "inlets", joined=", "),
        Column("outlets", "outlets", joined=", "),
        Column("Q", "Q heat in [kW | vessel kJ]", "power"),
        Column("W", "W work out [kW | vessel kJ]", "power"),
        Column("heat_flows", csv=False),  # the Heat flows sheet lists them
        Column("H_in", "enthalpy flow in Σṁh [kW | vessel m·u1 kJ]", "power"),
        Column("H_out", "enthalpy flow out Σṁh [kW | vessel m·u2 kJ]", "power"),
        Column("KE_PE_in", "kinetic+potential in [kW]", "power"),
        Column("KE_PE_out", "kinetic+potential out [kW]", "power"),
        Column("dH", "ΔH [kW | kJ]", "power"),
        Column("dU", "ΔU [kW | kJ]", "power"),
        Column("dS", "ΔS [kW/K | kJ/K]", "entropy_rate"),
        Column("dG", "ΔG [kW | kJ]", "power"),
        Column("dA", "ΔA [kW | kJ]", "power"),
        Column("energy_residual", "first-law residual, solver [kW | kJ]", "power"),
        Column("mass_residual", "largest mass residual [kg/s]", "mass_flow", cell=largest),
        Column("S_gen", "Ṡ_gen [kW/K | kJ/K]", "entropy_rate"),
        Column("W_rev", "Ẇ_rev [kW | kJ]", "power"),
        Column("exergy_destroyed", "exergy destroyed T0·Ṡ_gen [kW | kJ]", "power"),
        Column("energy_scale"),
        Column("energy_tolerance", "energy tolerance [kW | kJ]", "power"),
        Column("bound_basis", "bound basis"),
        Column("classical_bound", "classical bound [kW | kJ]", "power"),
        Column("W_rev_exergy", "exergy drop Ẇ_rev [kW | kJ]", "power"),
        Column("T_isothermal", "isothermal at [°C]", "temperature"),
        Column("minus_dG_isothermal", "−ΔG at that temperature [kW | kJ]", "power"),
        Column("minus_dA_isothermal", "−ΔA at that temperature [kJ]", "power"),
        Column("useful_work_bound", "useful-work bound Ẇ_rev − P0·ΔV [kJ]", "power"),
        Column("second_law_efficiency", "second-law efficiency [%]", "fraction", fmt=PERCENT),
        Column("isentropic_efficiency", "isentropic efficiency [%]", "fraction", fmt=PERCENT),
        Column("claimed", "claimed", joined=", "),
        Column("inferred", "inferred", joined=", "),
        Column("notes", "notes", joined="; ", wrap=True),
        Column("extra", flatten=True),  # kind-specific values: JSON object, CSV extra.* columns
        Column("description", "description", wrap=True),
        Column("line", "line in file", fmt=INTEGER),
        Column("profile", csv=False, json=False),  # heat exchangers' T–Q points: the pictures
        Column("exchanger", csv=False, json=False),  # heat exchangers' rating values
        # the workbook's own columns
        Column("findings", "findings", machine=False),
        Column("basis", "basis", machine=False),
        Column("residual_formula", "first-law residual, formula [kW | kJ]", "power", machine=False),
        Column(
            "fired_efficiency",
            "fired efficiency, stated heating-value basis [%]",
            "fraction",
            fmt=PERCENT,
            machine=False,
            read=lambda step: fired_efficiency(step),
        ),
        Column(
            "heating_value_basis",
            "heating-value basis",
            machine=False,
            read=lambda step: heating_value_basis(step),
        ),
    ),
    sheet_order=(
        "id",
        "kind",
        "description",
        "findings",
        "basis",
        "inlets",
        "outlets",
        "Q",
        "W",
        "H_in",
        "H_out",
        "KE_PE_in",
        "KE_PE_out",
        "residual_formula",
        "energy_residual",
        "energy_tolerance",
        "mass_residual",
        "dH",
        "dU",
        "dS",
        "dG",
        "dA",
        "S_gen",
        "W_rev",
        "exergy_destroyed",
        "second_law_efficiency",
        "isentropic_efficiency",
        "fired_efficiency",
        "heating_value_basis",
        "bound_basis",
        "classical_bound",
        "W_rev_exergy",
        "T_isothermal",
        "minus_dG_isothermal",
        "minus_dA_isothermal",
        "useful_work_bound",
        "claimed",
        "inferred",
        "notes",
        "line",
    ),
)

FINDINGS = Table(
    name="findings",
    columns=(
        Column("severity", "severity"),
        Column("name", "finding"),
        Column("step", "step"),
        Column("message", "message", wrap=True),
        Column("claimed", "claimed", OWN),
        Column("bound", "bound or expected", OWN),
        Column("margin", "margin", OWN, difference=True),
        Column("margin_relative", "margin [%]", "fraction", fmt=PERCENT),
        Column("quantity"),
        Column("tolerance", "tolerance [margin unit]", OWN, difference=True),
        Column("stream", "stream"),
        Column("accepted", "accepted by a reviewer", wrap=True),
        Column("uncertainty", "expanded uncertainty U of the margin", OWN, difference=True),
        Column("coverage_factor", "coverage factor k", fmt="0.00"),
        Column("verdict", "verdict with uncertainty"),
        Column("contributors", "largest uncertainty contributors", wrap=True),
        Column("monte_carlo_uncertainty"),
        Column("probable_causes", "probable causes", joined="; ", wrap=True),
        Column("tolerance_rule", "tolerance rule"),
        Column("tolerance_basis", "tolerance make-up", wrap=True),
        Column("rounding_bound", "of which rounding of the written values", OWN, difference=True),
        # the workbook's own columns
        Column("unit", "unit", machine=False),
        Column("margin_unit", "margin unit", machine=False),
        Column("meaning", "what the finding means", machine=False, wrap=True),
    ),
    sheet_order=(
        "severity",
        "name",
        "step",
        "stream",
        "claimed",
        "bound",
        "unit",
        "margin",
        "margin_unit",
        "margin_relative",
        "tolerance",
        "tolerance_basis",
        "message",
        "probable_causes",
        "accepted",
        "verdict",
        "uncertainty",
        "coverage_factor",
        "contributors",
        "meaning",
    ),
)

TABLES = (STREAMS, STEPS, FINDINGS)

VESSEL_QUANTITY = {"power": "energy", "entropy_rate": "entropy"}
"""On the Steps sheet, a vessel's (batch step's) quantity in place of a flow step's."""
