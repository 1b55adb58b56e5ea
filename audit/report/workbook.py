"""The findings workbook: what a reviewer or an auditor opens (``plant-audit check FILE -o X.xlsx``).

Sheets, in this order:

* **Overview**: the balance, its file and SHA-256, the dead state, the site pressure, the verdict at
  the chosen threshold, counts by severity, plant totals, tolerances, versions, run time and the
  safety caution;
* **Findings**: one row per finding, most severe first, linked to its step's (or stream's) row;
* **Steps**: every step's balances; the first-law residual is a live formula over the cells of the
  same row that hold Q, W and the enthalpy flows in and out, beside the solver's own residual;
* **Streams**: every stream's state and flow;
* **Heat flows**: every heat flow across a step's boundary, with its boundary temperature;
* **Exergy losses**: exergy destroyed per flow step, largest first, and a bar chart of it;
* **Method**: sign convention, equations, tolerances and the published sources.

What the workbook keeps to (cell writing in :mod:`audit.report.workbook_cells`, the file in
:mod:`audit.report.workbook_file`, the words in :mod:`audit.report.workbook_method`):

* it renders :mod:`audit.results` objects and computes no physics: values are converted to the
  engineering units of :mod:`audit.report.display` (named in every header) and formatted;
* numbers are stored as numbers with number formats, never as text; vessels (batch steps) are totals
  [J], shown in kJ (kJ/K) in the same columns as the rates, with a ``basis`` column and the unit in
  the number format of every energy cell of the Steps and Heat flows sheets, so rates and totals
  never mix silently; the Exergy losses chart holds rates only;
* no user text is ever evaluated as a formula (formula or CSV injection): every text cell is written
  as an explicit string, and text that starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage
  return also carries the quote prefix, so that editing the cell keeps it text;
* the file is built in memory, written to a temporary file in the target's folder and moved into
  place with :func:`os.replace`: a crash leaves the previous file untouched and no temporary file;
* the same result gives the same bytes: the document's created/modified times and every zip entry's
  time are the run time from ``result.provenance``;
* openpyxl writes a formula without a cached value; the file module adds it (the solver's residual,
  equal to the formula's arithmetic to rounding), so readers that do not calculate (pandas, openpyxl
  with ``data_only=True``, file previews) and LibreOffice, which by default shows an .xlsx file's
  cached values, show the number; Excel recalculates on load (the file asks for it), and
  LibreOffice does on Data ▸ Calculate ▸ Recalculate Hard or when set to recalculate on load.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.chart import BarChart, Reference
from openpyxl.chart.data_source import AxDataSource, StrRef
from openpyxl.formatting.rule import FormulaRule
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

from audit.errors import InputError
from audit.findings import ERROR, NAMES, SEVERITY_RANK, Finding
from audit.model.tolerances import Tolerances
from audit.report.display import shown, unit
from audit.report.workbook_cells import (
    BOLD,
    FILLS,
    FORMATS,
    GENERAL,
    HEADER_FILL,
    HEADER_FONT,
    INTEGER,
    PERCENT,
    PLAIN,
    SECTION_FONT,
    TITLE_FONT,
    Formula,
    Sheet,
    location,
    safe_text,
    with_unit,
)
from audit.report.workbook_file import atomic_write, package, run_time
from audit.report.workbook_method import CAUTION, METHOD_TEXT, SOURCES
from audit.results import AuditResult, StepResult, finite_or_none

OVERVIEW, FINDINGS, STEPS, STREAMS, HEAT, EXERGY, METHOD = (
    "Overview", "Findings", "Steps", "Streams", "Heat flows", "Exergy losses", "Method")
SHEETS = (OVERVIEW, FINDINGS, STEPS, STREAMS, HEAT, EXERGY, METHOD)

RATE_BASIS = "rate (kW)"
TOTAL_BASIS = "total (kJ)"

# The unit of each tolerance of :class:`audit.model.tolerances.Tolerances` (tests keep this complete).
TOLERANCE_QUANTITY = {
    "energy_relative": "fraction", "energy_absolute": "power", "energy_absolute_batch": "energy",
    "mass_relative": "fraction", "mass_absolute": "mass_flow", "efficiency": "fraction",
    "saturation_band": "temperature_difference",
    "state_match_temperature": "temperature_difference",
    "state_match_pressure_relative": "fraction", "min_approach": "temperature_difference",
    "exhaust_moisture_max": "fraction", "pump_subcooling_min": "temperature_difference",
    "isothermal_band": "temperature_difference", "isobaric_relative": "fraction",
}


def _worst(findings: Iterable[Finding]) -> str | None:
    ranked = sorted((f.severity for f in findings), key=SEVERITY_RANK.get, reverse=True)
    return ranked[0] if ranked else None


def _marker(worst: str, count: int) -> str:
    """The findings cell of a step or stream: its worst severity and how many findings it has."""
    return f"{worst} ({count} finding{'s' if count > 1 else ''})"


def _ordered(findings: Sequence[Finding]) -> list[Finding]:
    """Most severe first; the solver's order within a severity."""
    return sorted(findings, key=lambda f: -SEVERITY_RANK[f.severity])


# -- the sheets --------------------------------------------------------------------------------------
class _Book:
    def __init__(self, result: AuditResult, fail_on: str) -> None:
        self.result = result
        self.fail_on = fail_on
        self.wb = Workbook()
        self.sheets: dict[str, Sheet] = {}
        for index, title in enumerate(SHEETS):
            ws = self.wb.active if index == 0 else self.wb.create_sheet()
            ws.title = title
            self.sheets[title] = Sheet(ws)
        self.step_row = {s.id: row for row, s in enumerate(result.steps, start=2)}
        self.stream_row = {s.id: row for row, s in enumerate(result.streams, start=2)}
        self.findings = _ordered(result.findings)
        self.first_finding_row: dict[tuple[str, str], int] = {}
        for row, f in enumerate(self.findings, start=2):
            if f.step:
                self.first_finding_row.setdefault(("step", f.step), row)
            if f.stream:
                self.first_finding_row.setdefault(("stream", f.stream), row)

    def build(self) -> Workbook:
        self.overview()
        self.findings_sheet()
        self.steps_sheet()
        self.streams_sheet()
        self.heat_sheet()
        self.exergy_sheet()
        self.method_sheet()
        for title, sheet in self.sheets.items():
            # Printed landscape; the narrow sheets one page wide, the wide tables (Findings,
            # Steps, Streams) across pages with the header row and the id columns on every page.
            ws = sheet.ws
            ws.page_setup.orientation = "landscape"
            ws.page_setup.paperSize = ws.PAPERSIZE_A4
            if sheet.header_titles:
                ws.print_title_rows = f"{sheet.header_row}:{sheet.header_row}"
            if title in (FINDINGS, STEPS, STREAMS):
                ws.print_title_cols = "A:C" if title == FINDINGS else "A:A"
                ws.page_setup.scale = 60
            else:
                ws.page_setup.fitToWidth = 1
                ws.page_setup.fitToHeight = 0
                ws.sheet_properties.pageSetUpPr.fitToPage = True
        return self.wb

    # -- overview ----------------------------------------------------------------------------------
    def overview(self) -> None:
        r, sh = self.result, self.sheets[OVERVIEW]
        counts = r.counts()
        failed = r.fails(self.fail_on)
        sh.put(1, 1, "plant-audit findings workbook", font=TITLE_FONT, width=False)
        sh.put(2, 1, "Caution", font=HEADER_FONT, wrap=True)
        sh.put(2, 2, CAUTION, wrap=True, font=BOLD)
        sh.ws.merge_cells("B2:D2")
        row = 4

        def section(title: str) -> None:
            nonlocal row
            row += 1 if row > 4 else 0
            sh.put(row, 1, title, font=SECTION_FONT, width=False)
            row += 1

        def item(label: str, value: Any, unit_label: str = "", fmt: str | None = None,
                 fill: PatternFill | None = None, link: str | None = None,
                 font: Font | None = None) -> None:
            nonlocal row
            sh.put(row, 1, label)
            cell = sh.put(row, 2, value, fmt=fmt, fill=fill, link=link, font=font)
            cell.alignment = Alignment(horizontal="left", vertical="top")
            if unit_label:
                sh.put(row, 3, unit_label)
            row += 1

        section("Verdict")
        verdict = "FAIL" if failed else "PASS"
        item("verdict", verdict, fill=FILLS[ERROR] if failed else FILLS["pass"],
             font=SECTION_FONT)
        item("fails on findings at or above", self.fail_on)
        for severity in sorted(SEVERITY_RANK, key=SEVERITY_RANK.get, reverse=True):
            item(f"findings: {severity}", counts[severity], fmt=INTEGER,
                 fill=FILLS[severity] if counts[severity] else None)
        accepted = sum(1 for f in r.findings if getattr(f, "accepted", None))
        item("of which accepted by a reviewer (they do not fail the verdict)", accepted,
             fmt=INTEGER)
        with_errors = sorted({f.step for f in r.findings if f.step and f.severity == ERROR},
                             key=lambda s: self.step_row.get(s, 0))
        item("steps with errors", ", ".join(with_errors) if with_errors else "none")
        item("streams", len(r.streams), fmt=INTEGER)
        item("steps", len(r.steps), fmt=INTEGER)
        item("where exergy is lost", "see the chart on the Exergy losses sheet",
             link=location(EXERGY, 1))

        section("Balance")
        item("name", r.name)
        item("revision", r.revision or "")
        item("file", r.file)
        item("SHA-256 of the file", r.sha256)
        item("dead state temperature T0", shown(r.dead_T, "temperature"), unit("temperature"),
             FORMATS["temperature"])
        item("dead state pressure P0", shown(r.dead_P, "pressure"), unit("pressure"),
             FORMATS["pressure"])
        if r.site_pressure is not None:
            item("site (atmospheric) pressure", shown(r.site_pressure, "pressure"),
                 unit("pressure"), FORMATS["pressure"])
        else:
            item("site (atmospheric) pressure", "not declared")
        item("sign convention", "Q is heat INTO the step; W is work DELIVERED BY the step")

        p = r.plant
        section("Plant totals (flow steps; vessels are batch totals and are not included)")
        for label, value in (("heat in", p.heat_in), ("heat out", p.heat_out),
                             ("work delivered", p.work_out), ("work absorbed", p.work_in),
                             ("exergy destroyed", p.exergy_destroyed),
                             ("first-law residual at the plant boundary",
                              p.boundary_energy_residual),
                             ("sum of the steps' first-law residuals", p.sum_of_step_residuals)):
            item(label, shown(value, "power"), unit("power"), FORMATS["power"])
        item("boundary inlets", ", ".join(p.boundary_inlets))
        item("boundary outlets", ", ".join(p.boundary_outlets))

        section("Tolerances (see the Method sheet for what each one allows)")
        for name, value in r.tolerances.items():
            quantity = TOLERANCE_QUANTITY.get(name)
            label = unit(quantity, difference=True) if quantity else "SI"
            item(name, shown(value, quantity, difference=True),
                 label, FORMATS.get(quantity or "", GENERAL))

        section("Run")
        for key, value in r.provenance.items():
            item(key, _number_or_text(value))

        section("Sheets")
        for title, what in (
                (FINDINGS, "one row per finding, most severe first; the step links to its row"),
                (STEPS, "every step's balances; the first-law residual is a live formula"),
                (STREAMS, "every stream's state and flow"),
                (HEAT, "every heat flow across a step's boundary and its temperature"),
                (EXERGY, "exergy destroyed per step, largest first, with a chart"),
                (METHOD, "sign convention, equations, tolerances and published sources")):
            sh.put(row, 1, title, link=location(title, 1))
            sh.put(row, 2, what)
            row += 1
        sh.fix(2, min(max(sh.widths.get(2, 0) + 2, 45), 70))
        sh.fit(cap=70)

    # -- findings ----------------------------------------------------------------------------------
    def findings_sheet(self) -> None:
        sh = self.sheets[FINDINGS]
        sh.header(["severity", "finding", "step", "stream", "claimed", "bound or expected",
                   "unit", "margin", "margin unit", "margin [%]", "tolerance [margin unit]", "message",
                   "probable causes", "accepted by a reviewer", "verdict with uncertainty",
                   "expanded uncertainty U of the margin", "coverage factor k",
                   "largest uncertainty contributors", "what the finding means"])
        for row, f in enumerate(self.findings, start=2):
            diff_unit = unit(f.quantity, difference=True)
            value_fmt = FORMATS.get(f.quantity or "", GENERAL)
            sh.put(row, 1, f.severity, fill=FILLS[f.severity],
                   font=BOLD if f.severity == ERROR else PLAIN)
            sh.put(row, 2, f.name)
            if f.step:
                sh.put(row, 3, f.step, link=location(STEPS, self.step_row.get(f.step, 1)))
            if f.stream:
                sh.put(row, 4, f.stream,
                       link=location(STREAMS, self.stream_row.get(f.stream, 1)))
            sh.put(row, 5, shown(f.claimed, f.quantity), fmt=value_fmt)
            sh.put(row, 6, shown(f.bound, f.quantity), fmt=value_fmt)
            sh.put(row, 7, unit(f.quantity) if f.quantity else "")
            sh.put(row, 8, shown(f.margin, f.quantity, difference=True), fmt=value_fmt)
            sh.put(row, 9, diff_unit)
            sh.put(row, 10, finite_or_none(f.margin_relative), fmt=PERCENT)
            sh.put(row, 11, shown(f.tolerance, f.quantity, difference=True), fmt=value_fmt)
            sh.put(row, 12, f.message, wrap=True)
            # Fields of the review (acceptance, uncertainty, probable causes) when present.
            sh.put(row, 13, "; ".join(getattr(f, "probable_causes", ()) or ()), wrap=True)
            sh.put(row, 14, getattr(f, "accepted", None) or "", wrap=True)
            sh.put(row, 15, getattr(f, "verdict", None) or "")
            sh.put(row, 16, shown(getattr(f, "uncertainty", None), f.quantity, difference=True),
                   fmt=value_fmt)
            sh.put(row, 17, getattr(f, "coverage_factor", None), fmt="0.00")
            sh.put(row, 18, ", ".join(c.input for c in getattr(f, "contributors", ()) or ()),
                   wrap=True)
            sh.put(row, 19, NAMES[f.name], wrap=True)
        if not self.findings:
            sh.put(2, 1, "no findings")
        for col, width in ((12, 70), (13, 50), (14, 30), (18, 30), (19, 40)):
            sh.fix(col, width)
        sh.table(len(self.findings) + 1, freeze="C2")

    # -- steps -------------------------------------------------------------------------------------
    STEP_COLUMNS = (
        "step", "kind", "description", "findings", "basis", "inlets", "outlets",
        "Q heat in [kW | vessel kJ]", "W work out [kW | vessel kJ]",
        "enthalpy flow in Σṁh [kW | vessel m·u1 kJ]",
        "enthalpy flow out Σṁh [kW | vessel m·u2 kJ]",
        "kinetic+potential in [kW]", "kinetic+potential out [kW]",
        "first-law residual, formula [kW | kJ]", "first-law residual, solver [kW | kJ]",
        "energy tolerance [kW | kJ]", "largest mass residual [kg/s]",
        "ΔH [kW | kJ]", "ΔU [kW | kJ]", "ΔS [kW/K | kJ/K]", "ΔG [kW | kJ]", "ΔA [kW | kJ]",
        "Ṡ_gen [kW/K | kJ/K]", "Ẇ_rev [kW | kJ]", "exergy destroyed T0·Ṡ_gen [kW | kJ]",
        "second-law efficiency [%]", "isentropic efficiency [%]", "bound basis",
        "classical bound [kW | kJ]", "claimed", "inferred", "notes", "line in file",
    )

    def steps_sheet(self) -> None:
        sh = self.sheets[STEPS]
        columns = self.STEP_COLUMNS
        sh.header(columns)
        col = {name: index for index, name in enumerate(columns, start=1)}
        letter = {name: get_column_letter(index) for name, index in col.items()}
        for row, s in enumerate(self.result.steps, start=2):
            energy_q = "energy" if s.batch else "power"
            entropy_q = "entropy" if s.batch else "entropy_rate"
            e_fmt = with_unit(FORMATS[energy_q], unit(energy_q))
            s_fmt = with_unit(FORMATS[entropy_q], unit(entropy_q))
            worst = _worst(self.result.findings_for(s.id))
            fill = FILLS[worst] if worst else None
            values: dict[str, tuple[Any, str | None]] = {
                "kind": (s.kind, None), "description": (s.description or "", None),
                "basis": (TOTAL_BASIS if s.batch else RATE_BASIS, None),
                "inlets": (", ".join(s.inlets), None), "outlets": (", ".join(s.outlets), None),
                "Q heat in [kW | vessel kJ]": (shown(s.Q, energy_q), e_fmt),
                "W work out [kW | vessel kJ]": (shown(s.W, energy_q), e_fmt),
                "enthalpy flow in Σṁh [kW | vessel m·u1 kJ]": (shown(s.H_in, energy_q), e_fmt),
                "enthalpy flow out Σṁh [kW | vessel m·u2 kJ]": (shown(s.H_out, energy_q), e_fmt),
                "first-law residual, solver [kW | kJ]": (shown(s.energy_residual, energy_q), e_fmt),
                "energy tolerance [kW | kJ]": (shown(s.energy_tolerance, energy_q), e_fmt),
                "ΔH [kW | kJ]": (shown(s.dH, energy_q), e_fmt),
                "ΔU [kW | kJ]": (shown(s.dU, energy_q), e_fmt),
                "ΔS [kW/K | kJ/K]": (shown(s.dS, entropy_q), s_fmt),
                "ΔG [kW | kJ]": (shown(s.dG, energy_q), e_fmt),
                "ΔA [kW | kJ]": (shown(s.dA, energy_q), e_fmt),
                "Ṡ_gen [kW/K | kJ/K]": (shown(s.S_gen, entropy_q), s_fmt),
                "Ẇ_rev [kW | kJ]": (shown(s.W_rev, energy_q), e_fmt),
                "exergy destroyed T0·Ṡ_gen [kW | kJ]": (shown(s.exergy_destroyed, energy_q), e_fmt),
                "second-law efficiency [%]": (finite_or_none(s.second_law_efficiency), PERCENT),
                "isentropic efficiency [%]": (finite_or_none(s.isentropic_efficiency), PERCENT),
                "bound basis": (s.bound_basis, None),
                "classical bound [kW | kJ]": (shown(s.classical_bound, energy_q), e_fmt),
                "claimed": (", ".join(s.claimed), None),
                "inferred": (", ".join(s.inferred), None),
                "notes": ("; ".join(s.notes), None),
                "line in file": (s.line, INTEGER),
            }
            if not s.batch:
                values["kinetic+potential in [kW]"] = (shown(s.KE_PE_in, "power"), e_fmt)
                values["kinetic+potential out [kW]"] = (shown(s.KE_PE_out, "power"), e_fmt)
                values["largest mass residual [kg/s]"] = (
                    max((abs(v) for v in s.mass_residual.values()), default=0.0),
                    FORMATS["mass_flow"])
            values["first-law residual, formula [kW | kJ]"] = (
                self._residual_formula(s, row, letter), e_fmt)
            sh.put(row, col["step"], s.id, fill=fill, font=BOLD if worst == ERROR else PLAIN)
            count = len(self.result.findings_for(s.id))
            if worst:
                sh.put(row, col["findings"], _marker(worst, count), fill=fill,
                       link=location(FINDINGS, self.first_finding_row[("step", s.id)]))
            else:
                sh.put(row, col["findings"], "none")
            for name, (value, fmt) in values.items():
                sh.put(row, col[name], value, fmt=fmt, wrap=name in ("description", "notes"))
        sh.fix(col["description"], 32)
        sh.fix(col["notes"], 40)
        sh.table(len(self.result.steps) + 1)
        if self.result.steps:
            # The formula's cell turns red while |residual| exceeds the step's energy tolerance,
            # also after an auditor edits Q, W or an enthalpy flow.
            residual = letter["first-law residual, formula [kW | kJ]"]
            tolerance = letter["energy tolerance [kW | kJ]"]
            last = len(self.result.steps) + 1
            sh.ws.conditional_formatting.add(
                f"{residual}2:{residual}{last}",
                FormulaRule(formula=[f"AND(ISNUMBER({residual}2),ABS({residual}2)>{tolerance}2)"],
                            fill=FILLS[ERROR], font=BOLD))

    @staticmethod
    def _residual_formula(s: StepResult, row: int, letter: dict[str, str]) -> Formula | None:
        """Q − W − (H_out − H_in) − (KE_PE_out − KE_PE_in) over this row's cells (vessels:
        Q − W − (H_out − H_in), where H holds m·u); its cached value is the solver's residual."""
        inputs = [s.Q, s.W, s.H_in, s.H_out] + ([] if s.batch else [s.KE_PE_in, s.KE_PE_out])
        if not all(math.isfinite(v) for v in inputs):
            return None
        q = letter["Q heat in [kW | vessel kJ]"]
        w = letter["W work out [kW | vessel kJ]"]
        h_in = letter["enthalpy flow in Σṁh [kW | vessel m·u1 kJ]"]
        h_out = letter["enthalpy flow out Σṁh [kW | vessel m·u2 kJ]"]
        text = f"={q}{row}-{w}{row}-({h_out}{row}-{h_in}{row})"
        if not s.batch:
            k_in, k_out = letter["kinetic+potential in [kW]"], letter["kinetic+potential out [kW]"]
            text += f"-({k_out}{row}-{k_in}{row})"
        return Formula(text, shown(s.energy_residual, "energy" if s.batch else "power"))

    # -- streams -----------------------------------------------------------------------------------
    def streams_sheet(self) -> None:
        sh = self.sheets[STREAMS]
        sh.header(["stream", "fluid", "description", "findings", "from step", "to step",
                   "T [°C]", "P [bar abs]", "phase", "declared phase", "quality [-]",
                   "mass flow [kg/s]", "molar flow [mol/s]", "flow as written", "ρ [kg/m³]",
                   "h [kJ/kg]", "s [kJ/(kg·K)]", "u [kJ/kg]", "g = h − T·s [kJ/kg]",
                   "a = u − T·s [kJ/kg]", "ψ flow exergy [kJ/kg]", "basis", "velocity [m/s]",
                   "elevation [m]", "line in file"])
        producer = {o: s.id for s in self.result.steps for o in s.outlets}
        consumer = {i: s.id for s in self.result.steps for i in s.inlets}
        stream_findings: dict[str, list[Finding]] = {}
        for f in self.result.findings:
            if f.stream:
                stream_findings.setdefault(f.stream, []).append(f)
        se, ss = FORMATS["specific_energy"], FORMATS["specific_entropy"]
        for row, s in enumerate(self.result.streams, start=2):
            worst = _worst(stream_findings.get(s.id, []))
            fill = FILLS[worst] if worst else None
            sh.put(row, 1, s.id, fill=fill)
            sh.put(row, 2, s.fluid)
            sh.put(row, 3, s.description or "", wrap=True)
            if worst:
                sh.put(row, 4, _marker(worst, len(stream_findings[s.id])), fill=fill,
                       link=location(FINDINGS, self.first_finding_row[("stream", s.id)]))
            else:
                sh.put(row, 4, "none")
            for col, step_id in ((5, producer.get(s.id)), (6, consumer.get(s.id))):
                if step_id:
                    sh.put(row, col, step_id, link=location(STEPS, self.step_row[step_id]))
            cells = [
                (shown(s.T, "temperature"), FORMATS["temperature"]),
                (shown(s.P, "pressure"), FORMATS["pressure"]), (s.phase, None),
                (s.declared_phase or "", None), (finite_or_none(s.quality), FORMATS["fraction"]),
                (s.mass_flow, FORMATS["mass_flow"]), (s.molar_flow, FORMATS["molar_flow"]),
                (s.flow_as_written, None), (s.rho, FORMATS["density"]),
                (shown(s.h, "specific_energy"), se), (shown(s.s, "specific_entropy"), ss),
                (shown(s.u, "specific_energy"), se), (shown(s.g, "specific_energy"), se),
                (shown(s.a, "specific_energy"), se), (shown(s.psi, "specific_energy"), se),
                (s.basis, None), (s.velocity, FORMATS["velocity"]),
                (s.elevation, FORMATS["elevation"]), (s.line, INTEGER),
            ]
            for col, (value, fmt) in enumerate(cells, start=7):
                sh.put(row, col, value, fmt=fmt)
        sh.fix(3, 32)
        sh.table(len(self.result.streams) + 1)

    # -- heat flows --------------------------------------------------------------------------------
    def heat_sheet(self) -> None:
        sh = self.sheets[HEAT]
        sh.header(["step", "basis", "Q heat in [kW | vessel kJ]", "boundary temperature [°C]",
                   "boundary", "claimed or inferred", "note"])
        row = 2
        for s in self.result.steps:
            energy_q = "energy" if s.batch else "power"
            for q in s.heat_flows:
                sh.put(row, 1, s.id, link=location(STEPS, self.step_row[s.id]))
                sh.put(row, 2, TOTAL_BASIS if s.batch else RATE_BASIS)
                sh.put(row, 3, shown(q.Q, energy_q),
                       fmt=with_unit(FORMATS[energy_q], unit(energy_q)))
                if math.isinf(q.temperature):
                    sh.put(row, 5, "an infinitely hot source (no temperature declared)")
                else:
                    sh.put(row, 4, shown(q.temperature, "temperature"),
                           fmt=FORMATS["temperature"])
                    sh.put(row, 5, "declared" if "conservative" not in q.note
                           else "conservative choice (none declared)")
                sh.put(row, 6, "claimed" if q.claimed else "inferred from the first law")
                sh.put(row, 7, q.note)
                row += 1
        if row == 2:
            sh.put(2, 1, "no heat flows")
        sh.table(row - 1)

    # -- exergy losses and the chart -----------------------------------------------------------------
    def exergy_sheet(self) -> None:
        sh = self.sheets[EXERGY]
        sh.header(["rank", "step", "kind", "exergy destroyed [kW]", "Ṡ_gen [kW/K]", "findings",
                   "description"])
        flow = sorted((s for s in self.result.steps if not s.batch),
                      key=lambda s: -s.exergy_destroyed)
        row = 2
        for rank, s in enumerate(flow, start=1):
            worst = _worst(self.result.findings_for(s.id))
            sh.put(row, 1, rank, fmt=INTEGER)
            sh.put(row, 2, s.id, link=location(STEPS, self.step_row[s.id]))
            sh.put(row, 3, s.kind)
            sh.put(row, 4, shown(s.exergy_destroyed, "power"), fmt=FORMATS["power"])
            sh.put(row, 5, shown(s.S_gen, "entropy_rate"), fmt=FORMATS["entropy_rate"])
            sh.put(row, 6, worst or "none", fill=FILLS[worst] if worst else None)
            sh.put(row, 7, s.description or "", wrap=True)
            row += 1
        last_flow_row = row - 1
        vessels = [s for s in self.result.steps if s.batch]
        if vessels:
            row += 1
            sh.put(row, 1, "Vessels: batch totals in kJ, not rates, so they are not charted",
                   font=SECTION_FONT, width=False)
            row += 1
            for title_col, title in enumerate(
                    ["", "step", "kind", "exergy destroyed [kJ]", "S_gen [kJ/K]", "findings",
                     "description"], start=1):
                if title:
                    sh.put(row, title_col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
            row += 1
            for s in vessels:
                worst = _worst(self.result.findings_for(s.id))
                sh.put(row, 2, s.id, link=location(STEPS, self.step_row[s.id]))
                sh.put(row, 3, s.kind)
                sh.put(row, 4, shown(s.exergy_destroyed, "energy"), fmt=FORMATS["energy"])
                sh.put(row, 5, shown(s.S_gen, "entropy"), fmt=FORMATS["entropy"])
                sh.put(row, 6, worst or "none", fill=FILLS[worst] if worst else None)
                sh.put(row, 7, s.description or "", wrap=True)
                row += 1
        sh.ws.freeze_panes = "A2"
        sh.fix(7, 40)
        sh.fit()
        if flow:
            sh.ws.add_chart(self._chart(sh.ws, last_flow_row), "I2")
        else:
            sh.put(2, 9, "no flow steps: nothing to chart")

    @staticmethod
    def _chart(ws: Worksheet, last_row: int) -> BarChart:
        chart = BarChart()
        chart.type = "col"
        chart.style = 10
        chart.title = "Exergy destroyed per step, largest first [kW]"
        chart.y_axis.title = "exergy destroyed [kW]"
        chart.x_axis.title = "step"
        chart.y_axis.numFmt = "#,##0"
        chart.x_axis.delete = False
        chart.y_axis.delete = False
        chart.legend = None
        chart.gapWidth = 60
        data = Reference(ws, min_col=4, min_row=1, max_row=last_row)
        categories = Reference(ws, min_col=2, min_row=2, max_row=last_row)
        chart.add_data(data, titles_from_data=True)
        # The step ids are text: a string reference (set_categories would write a numeric one).
        chart.series[0].cat = AxDataSource(strRef=StrRef(f=str(categories)))
        chart.x_axis.tickLblPos = "low"  # step names below the plot even for negative bars
        chart.width = 22
        chart.height = 12
        return chart

    # -- method ------------------------------------------------------------------------------------
    def method_sheet(self) -> None:
        sh = self.sheets[METHOD]
        sh.put(1, 1, "How the numbers are made", font=TITLE_FONT, width=False)
        row = 3
        for topic, text in METHOD_TEXT:
            sh.put(row, 1, topic, font=HEADER_FONT, wrap=True)
            sh.put(row, 2, text, wrap=True)
            row += 1
        row += 1
        sh.put(row, 1, "Tolerances of this balance", font=SECTION_FONT, width=False)
        row += 1
        for col, title in enumerate(["tolerance", "what it allows", "value", "unit"], start=1):
            sh.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
        row += 1
        fields = Tolerances.model_fields
        for name, value in self.result.tolerances.items():
            quantity = TOLERANCE_QUANTITY.get(name)
            description = fields[name].description if name in fields else ""
            sh.put(row, 1, name)
            sh.put(row, 2, description or "", wrap=True)
            sh.put(row, 3, shown(value, quantity, difference=True),
                   fmt=FORMATS.get(quantity or "", GENERAL))
            sh.put(row, 4, unit(quantity, difference=True) if quantity else "SI")
            row += 1
        sh.put(row, 2, "The defaults are common practice for design balances (no published "
               "source); a balance overrides them under balance: tolerances:, a step under its "
               "own tolerances:.", wrap=True)
        row += 2
        sh.put(row, 1, "Published sources", font=SECTION_FONT, width=False)
        row += 1
        for col, title in enumerate(["used for", "source"], start=1):
            sh.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
        row += 1
        for used_for, source in SOURCES:
            sh.put(row, 1, used_for, wrap=True)
            sh.put(row, 2, source, wrap=True)
            row += 1
        sh.fix(1, 34)
        sh.fix(2, 100)
        sh.fix(3, 12)
        sh.fit()


def _number_or_text(value: str) -> Any:
    """A provenance value as a number when it is one (solve time, counts), else the text."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        return value
    return int(number) if number.is_integer() and "." not in value else number


# -- writing -----------------------------------------------------------------------------------------
def write_workbook(result: AuditResult, path: str | Path, fail_on: str = "error") -> None:
    """Write the findings workbook of ``result`` to ``path`` (an .xlsx file), atomically.

    ``fail_on`` ("error" or "warning") sets the verdict shown on the overview. Raises
    :class:`audit.errors.InputError` when the file cannot be written there.
    """
    if fail_on not in SEVERITY_RANK:
        raise ValueError(f"fail_on must be one of {sorted(SEVERITY_RANK)}, not {fail_on!r}")
    path = Path(path)
    book = _Book(result, fail_on)
    wb = book.build()
    when = run_time(result)
    wb.properties.creator = "plant-audit"
    wb.properties.title = safe_text(f"plant-audit findings: {result.name}")
    wb.properties.created = when
    wb.properties.modified = when
    formulas = {title: book.sheets[title].formulas for title in SHEETS}
    try:
        atomic_write(path, lambda stream: package(wb, formulas, when, stream))
    except OSError as exc:
        raise InputError(f"cannot write the workbook: {exc.strerror or exc}",
                         file=str(path)) from exc
