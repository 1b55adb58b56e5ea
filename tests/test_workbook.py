"""The findings workbook (``audit.report.workbook``), written from the sample plant's seeded revision.

What is checked against outside sources: stream values in the workbook's engineering units against
the independent IAPWS-95 implementation of the ``iapws`` package and against the values written in
the balance file; the first-law residual formula against the solver's residual, both by evaluating
the formula's arithmetic from the cells it references and (when LibreOffice is installed) by letting
LibreOffice recalculate it; exergy destroyed against the Gouy–Stodola identity Ẋ_d = T0·Ṡ_gen.
"""

from __future__ import annotations

import csv
import hashlib
import os
import platform
import re
import shutil
import subprocess
import zipfile
from datetime import datetime
from pathlib import Path

import CoolProp
import openpyxl
import pandas as pd
import pytest
from conftest import SAMPLE

import audit
from audit.errors import ReportError
from audit.findings import ERROR, SEVERITY_RANK, WARNING
from audit.formation import SPECIES
from audit.model.tolerances import Tolerances
from audit.report import workbook_file
from audit.report.machine import write_csv
from audit.report.workbook import (
    EXERGY,
    FINDINGS,
    HEAT,
    METHOD,
    OVERVIEW,
    SHEETS,
    STEPS,
    STREAMS,
    TOLERANCE_QUANTITY,
    write_workbook,
)
from audit.report.workbook_cells import FILLS, FORMATS
from audit.report.workbook_method import CAUTION, SOURCES

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"
RESIDUAL_FORMULA = "first-law residual, formula [kW | kJ]"
RESIDUAL_SOLVER = "first-law residual, solver [kW | kJ]"

# Text a spreadsheet program would evaluate, each written into the balance as a name, description
# or id (OWASP's formula-injection cases: = + - @ tab CR), and a control character openpyxl refuses.
INJECTED = {
    "name": "=cmd|' /C calc'!A0",
    "S02": '=HYPERLINK("http://example.invalid","open")',
    "S03": "+1",
    "S04": "-x",
    "S05": "@SUM(A1:A2)",
    "S06": "\tcmd",
    "S07": "\r=1+2",
    "S10": "=1+1",
    "P1": "=2+3",
}
UNUSED_ID = "@S99"


def _yaml_quoted(text: str) -> str:
    return (
        '"'
        + text.replace("\\", "\\\\")
        .replace('"', '\\"')
        .replace("\t", "\\t")
        .replace("\r", "\\r")
        .replace("\x07", "\\a")
        + '"'
    )


def _injected_balance(folder: Path) -> Path:
    """The seeded revision with injection text in its name, descriptions and one stream id, a
    control character in a description and an unused stream (a warning with a stream link)."""
    text = SEEDED.read_text(encoding="utf-8")
    replacements = {
        "name: Quillon Bay site utility balance": f"name: {_yaml_quoted(INJECTED['name'])}",
        "description: boiler feed}": f"description: {_yaml_quoted(INJECTED['S02'])}}}",
        "description: high-pressure steam}": f"description: {_yaml_quoted(INJECTED['S03'])}}}",
        "description: turbine exhaust}": f"description: {_yaml_quoted(INJECTED['S04'])}}}",
        "description: to process heater}": f"description: {_yaml_quoted(INJECTED['S05'])}}}",
        "description: to letdown valve}": f"description: {_yaml_quoted(INJECTED['S06'])}}}",
        "description: condensate return (boundary)}": f"description: {_yaml_quoted(INJECTED['S07'])}}}",
        "description: process water in}": f"description: {_yaml_quoted(INJECTED['S10'])}}}",
        "description: process water out}": f"description: {_yaml_quoted('bell' + chr(7))}}}",
        "description: boiler feed pump": f"description: {_yaml_quoted(INJECTED['P1'])}",
        "\nsteps:": f"\n  {_yaml_quoted(UNUSED_ID)}: {{fluid: Water, T: 20 degC, P: 1.013 bar, "
        f"flow: 1 kg/s, description: {_yaml_quoted('-unused')}}}\n\nsteps:",
    }
    for old, new in replacements.items():
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    path = folder / "injected.yaml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SEEDED)


@pytest.fixture(scope="module")
def book_path(seeded, tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("workbook") / "findings.xlsx"
    write_workbook(seeded, path)
    return path


@pytest.fixture(scope="module")
def book(book_path):
    return openpyxl.load_workbook(book_path)


@pytest.fixture(scope="module")
def cached(book_path):
    """The workbook as a reader that does not calculate sees it (cached values)."""
    return openpyxl.load_workbook(book_path, data_only=True)


@pytest.fixture(scope="module")
def injected(tmp_path_factory):
    folder = tmp_path_factory.mktemp("injected")
    result = audit.run(_injected_balance(folder))
    path = folder / "injected.xlsx"
    write_workbook(result, path)
    return result, path, openpyxl.load_workbook(path)


def _headers(ws) -> list[str]:
    return [c.value for c in ws[1]]


def _column(ws, header: str) -> int:
    return _headers(ws).index(header) + 1


def _row_of(ws, value: str, col: int = 1) -> int:
    for row in range(2, ws.max_row + 1):
        if ws.cell(row=row, column=col).value == value:
            return row
    raise KeyError(value)


def _overview_value(ws, label: str):
    for row in range(1, ws.max_row + 1):
        if ws.cell(row=row, column=1).value == label:
            return ws.cell(row=row, column=2)
    raise KeyError(label)


# -- structure -------------------------------------------------------------------------------------
def test_sheets_have_plain_names_in_order(book):
    assert book.sheetnames == list(SHEETS)
    assert book.sheetnames == [
        "Overview",
        "Findings",
        "Steps",
        "Streams",
        "Heat flows",
        "Exchangers",
        "Exergy losses",
        "Method",
    ]


def test_headers_name_engineering_units(book):
    streams = _headers(book[STREAMS])
    for header in (
        "T [°C]",
        "P [bar abs]",
        "quality [-]",
        "mass flow [kg/s]",
        "h [kJ/kg]",
        "s [kJ/(kg·K)]",
        "u [kJ/kg]",
        "g = h − T·s [kJ/kg]",
        "a = u − T·s [kJ/kg]",
        "ψ flow exergy [kJ/kg]",
        "phase",
        "basis",
    ):
        assert header in streams
    steps = _headers(book[STEPS])
    for header in (
        "Q heat in [kW | vessel kJ]",
        "W work out [kW | vessel kJ]",
        "ΔH [kW | kJ]",
        "ΔU [kW | kJ]",
        "ΔS [kW/K | kJ/K]",
        "ΔG [kW | kJ]",
        "ΔA [kW | kJ]",
        "Ṡ_gen [kW/K | kJ/K]",
        "Ẇ_rev [kW | kJ]",
        "exergy destroyed T0·Ṡ_gen [kW | kJ]",
        "second-law efficiency [%]",
        "isentropic efficiency [%]",
        "bound basis",
        "claimed",
        "inferred",
        "basis",
        RESIDUAL_FORMULA,
        RESIDUAL_SOLVER,
    ):
        assert header in steps
    assert _headers(book[FINDINGS])[:11] == [
        "severity",
        "finding",
        "step",
        "stream",
        "claimed",
        "bound or expected",
        "unit",
        "margin",
        "margin unit",
        "margin [%]",
        "tolerance [margin unit]",
    ]


def test_header_rows_frozen_and_filtered(book, seeded):
    expected_rows = {
        FINDINGS: len(seeded.findings) + 1,
        STEPS: len(seeded.steps) + 1,
        STREAMS: len(seeded.streams) + 1,
        HEAT: sum(len(s.heat_flows) for s in seeded.steps) + 1,
    }
    for title, last_row in expected_rows.items():
        ws = book[title]
        assert ws.freeze_panes in ("B2", "C2"), title
        last_col = openpyxl.utils.get_column_letter(len(_headers(ws)))
        assert ws.auto_filter.ref == f"A1:{last_col}{last_row}", title
    assert book[EXERGY].freeze_panes == "A2"


def test_column_widths_fit_their_content(book):
    ws = book[STREAMS]
    for col, header in enumerate(_headers(ws), start=1):
        width = ws.column_dimensions[openpyxl.utils.get_column_letter(col)].width
        assert 6 <= width <= 62, header
    # the SHA-256 (64 hex digits) is readable in full on the overview
    assert book[OVERVIEW].column_dimensions["B"].width >= 64


# -- numbers and units -----------------------------------------------------------------------------
def test_numbers_are_stored_as_numbers_with_formats(book):
    ws = book[STREAMS]
    text_columns = {
        "stream",
        "fluid",
        "description",
        "findings",
        "from step",
        "to step",
        "phase",
        "declared phase",
        "flow as written",
        "basis",
        "printed vs computed",
    }
    for col, header in enumerate(_headers(ws), start=1):
        if header in text_columns:
            continue
        for row in range(2, ws.max_row + 1):
            cell = ws.cell(row=row, column=col)
            if cell.value is None:  # quality outside the two-phase region
                assert header == "quality [-]"
                continue
            assert cell.data_type == "n" and isinstance(cell.value, (int, float)), (header, row)
            assert cell.number_format != "General", header
    row = _row_of(ws, "S03")
    assert ws.cell(row=row, column=_column(ws, "T [°C]")).number_format == FORMATS["temperature"]
    assert ws.cell(row=row, column=_column(ws, "h [kJ/kg]")).number_format == "#,##0.00"
    findings = book[FINDINGS]
    assert all(
        findings.cell(row=r, column=10).number_format == "0.0%" for r in range(2, findings.max_row + 1)
    )


def test_pandas_reads_numbers_as_numbers(book_path, seeded):
    sheets = pd.read_excel(book_path, sheet_name=None)
    assert list(sheets) == list(SHEETS)
    streams = sheets[STREAMS]
    for header in (
        "T [°C]",
        "P [bar abs]",
        "mass flow [kg/s]",
        "h [kJ/kg]",
        "s [kJ/(kg·K)]",
        "ψ flow exergy [kJ/kg]",
    ):
        assert pd.api.types.is_float_dtype(streams[header]), header
    steps = sheets[STEPS].set_index("step")
    # the formula column carries its cached value, so a reader that does not calculate sees it
    assert pd.api.types.is_float_dtype(steps[RESIDUAL_FORMULA])
    for step in seeded.steps:
        assert steps.loc[step.id, RESIDUAL_FORMULA] == pytest.approx(
            step.energy_residual / 1e3, rel=1e-15, abs=1e-15
        )
    findings = sheets[FINDINGS]
    expected = sorted((f.severity for f in seeded.findings), key=lambda s: -SEVERITY_RANK[s])
    assert findings["severity"].tolist() == expected


def test_stream_values_against_iapws95(book):
    """S03 (the balance file: 400 °C at 40 barg with a 1.013 bar site) and S01 (105 °C, 1.6 bar),
    and the dead state (25 °C, 101.325 kPa): Δh, Δs and ψ against the iapws package's IAPWS-95
    (Wagner & Pruß 2002). Both implement IAPWS-95, so they agree far inside the cells' printed
    resolution (0.01 kJ/kg, 0.00001 kJ/(kg·K)), which is the tolerance; a unit slip (J for kJ,
    gauge for absolute) would be off by orders of magnitude more."""
    from iapws import IAPWS95

    ws = book[STREAMS]

    def cell(stream: str, header: str) -> float:
        return ws.cell(row=_row_of(ws, stream), column=_column(ws, header)).value

    assert cell("S03", "T [°C]") == pytest.approx(400.0, abs=1e-9)  # as written in the file
    assert cell("S03", "P [bar abs]") == pytest.approx(40 + 1.013, abs=1e-9)  # 40 barg + site
    assert cell("S01", "P [bar abs]") == pytest.approx(1.6, abs=1e-9)
    hot = IAPWS95(T=673.15, P=4.1013)  # MPa
    feed = IAPWS95(T=378.15, P=0.16)
    dead = IAPWS95(T=298.15, P=0.101325)
    assert cell("S03", "h [kJ/kg]") - cell("S01", "h [kJ/kg]") == pytest.approx(hot.h - feed.h, abs=0.01)
    assert cell("S03", "s [kJ/(kg·K)]") - cell("S01", "s [kJ/(kg·K)]") == pytest.approx(
        hot.s - feed.s, abs=1e-5
    )
    psi = (hot.h - dead.h) - 298.15 * (hot.s - dead.s)
    assert cell("S03", "ψ flow exergy [kJ/kg]") == pytest.approx(psi, abs=0.01)
    assert cell("S03", "basis") == "formation"
    assert SPECIES["Water"].fluid == cell("S03", "fluid")


def test_rates_in_kw_and_vessel_totals_in_kj(book):
    """T1 claims 1.45 MW delivered and CIP1 receives 458.6 MJ with 1.5 MJ of stirring (the
    balance file): the workbook shows 1 450 kW (a rate) and 458 600 kJ, −1 500 kJ (totals), each
    with its unit in the basis column and in the cell's number format."""
    ws = book[STEPS]
    q, w, basis = (
        _column(ws, h) for h in ("Q heat in [kW | vessel kJ]", "W work out [kW | vessel kJ]", "basis")
    )
    turbine, vessel = _row_of(ws, "T1"), _row_of(ws, "CIP1")
    assert ws.cell(row=turbine, column=w).value == pytest.approx(1450.0, abs=1e-9)
    assert ws.cell(row=turbine, column=basis).value == "rate (kW)"
    assert ws.cell(row=turbine, column=w).number_format.endswith('" kW"')
    assert ws.cell(row=vessel, column=q).value == pytest.approx(458_600.0, abs=1e-6)
    assert ws.cell(row=vessel, column=w).value == pytest.approx(-1_500.0, abs=1e-9)
    assert ws.cell(row=vessel, column=basis).value == "total (kJ)"
    for col in (q, w, _column(ws, RESIDUAL_FORMULA), _column(ws, "ΔU [kW | kJ]")):
        assert ws.cell(row=vessel, column=col).number_format.endswith('" kJ"')
    assert ws.cell(row=vessel, column=_column(ws, "ΔS [kW/K | kJ/K]")).number_format.endswith('" kJ/K"')
    heat = book[HEAT]
    row = _row_of(heat, "CIP1")
    assert heat.cell(row=row, column=2).value == "total (kJ)"
    assert heat.cell(row=row, column=3).value == pytest.approx(458_600.0, abs=1e-6)
    assert heat.cell(row=row, column=4).value == pytest.approx(148.0, abs=1e-9)  # the coil, °C


def test_exergy_destroyed_is_t0_times_entropy_generation(book, seeded):
    """Gouy–Stodola: Ẋ_d = T0·Ṡ_gen with T0 = 298.15 K (25 °C in the balance file)."""
    ws = book[EXERGY]
    for row in range(2, len([s for s in seeded.steps if not s.batch]) + 2):
        x_d, s_gen = ws.cell(row=row, column=4).value, ws.cell(row=row, column=5).value
        assert x_d == pytest.approx(298.15 * s_gen, rel=1e-12, abs=1e-12)


# -- the first-law residual formula ----------------------------------------------------------------
_FORMULA = re.compile(
    r"^=([A-Z]+)(\d+)-([A-Z]+)\2-\(([A-Z]+)\2-([A-Z]+)\2\)"
    r"(?:-\(([A-Z]+)\2-([A-Z]+)\2\))?$"
)


def test_residual_formula_reproduces_the_solver_from_its_cells(book, cached, seeded):
    """Evaluate each row's formula from the cells it names: Q − W − (H_out − H_in) −
    (KE_PE_out − KE_PE_in) (vessels without the last term). The cells hold 16 significant digits,
    so the arithmetic agrees with the solver to 1e-13 of the terms' magnitude."""
    ws, values = book[STEPS], cached[STEPS]
    col = _column(ws, RESIDUAL_FORMULA)
    names = {
        "Q heat in [kW | vessel kJ]": "Q",
        "W work out [kW | vessel kJ]": "W",
        "enthalpy flow out Σṁh [kW | vessel m·u2 kJ]": "H_out",
        "enthalpy flow in Σṁh [kW | vessel m·u1 kJ]": "H_in",
        "kinetic+potential out [kW]": "KE_out",
        "kinetic+potential in [kW]": "KE_in",
    }
    for step in seeded.steps:
        row = _row_of(ws, step.id)
        formula = ws.cell(row=row, column=col).value
        match = _FORMULA.match(formula)
        assert match, formula
        assert int(match.group(2)) == row
        letters = [g for i, g in enumerate(match.groups()) if i != 1 and g]
        roles = [names[ws[f"{letter}1"].value] for letter in letters]
        expected_roles = ["Q", "W", "H_out", "H_in"] + ([] if step.batch else ["KE_out", "KE_in"])
        assert roles == expected_roles
        v = {role: ws[f"{letter}{row}"].value for role, letter in zip(roles, letters, strict=True)}
        residual = v["Q"] - v["W"] - (v["H_out"] - v["H_in"])
        if not step.batch:
            residual -= v["KE_out"] - v["KE_in"]
        magnitude = sum(abs(x) for x in v.values())
        assert residual == pytest.approx(step.energy_residual / 1e3, abs=1e-13 * magnitude)
        # the cached value is the solver's residual itself
        assert values.cell(row=row, column=col).value == pytest.approx(
            step.energy_residual / 1e3, rel=1e-15, abs=1e-15
        )
        assert values.cell(row=row, column=_column(ws, RESIDUAL_SOLVER)).value == pytest.approx(
            step.energy_residual / 1e3, rel=1e-15, abs=1e-15
        )


def test_only_the_residual_column_holds_formulas(book):
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if cell.data_type == "f":
                    assert ws.title == STEPS and ws.cell(row=1, column=cell.column).value == (
                        RESIDUAL_FORMULA
                    ), (ws.title, cell.coordinate)


def test_residual_turns_red_beyond_tolerance(book):
    rules = book[STEPS].conditional_formatting
    formulas = [rule.formula[0] for entry in rules for rule in entry.rules]
    residual = openpyxl.utils.get_column_letter(_column(book[STEPS], RESIDUAL_FORMULA))
    tolerance = openpyxl.utils.get_column_letter(_column(book[STEPS], "energy tolerance [kW | kJ]"))
    assert formulas == [f"AND(ISNUMBER({residual}2),ABS({residual}2)>{tolerance}2)"]


def _soffice() -> str | None:
    return shutil.which("soffice") or shutil.which("libreoffice")


def test_libreoffice_recalculates_the_residual(injected, tmp_path):
    """LibreOffice recalculates the formulas (set to recalculate on load, with the cached values
    replaced by 0 so that a shown value can only come from the calculation) and gets the solver's
    residual; the injected texts stay text (=1+1 is not shown as 2). LibreOffice writes 15
    significant digits, so the tolerance is 1e-12 of the terms' magnitude."""
    soffice = _soffice()
    if soffice is None:
        pytest.skip(
            "LibreOffice (soffice) is not installed: the recalculation check needs it "
            "(apt-get install libreoffice-calc)"
        )
    result, path, _ = injected
    zeroed = tmp_path / "zeroed.xlsx"
    with zipfile.ZipFile(path) as source, zipfile.ZipFile(zeroed, "w") as target:
        replaced = 0
        for info in source.infolist():
            content = source.read(info.filename)
            if info.filename.startswith("xl/worksheets/"):
                content, n = re.subn(rb"(</f>)<v>[^<]*</v>", rb"\1<v>0</v>", content)
                replaced += n
            target.writestr(info, content)
    assert replaced == len(result.steps)
    profile = tmp_path / "profile"
    (profile / "user").mkdir(parents=True)
    (profile / "user" / "registrymodifications.xcu").write_text(
        '<?xml version="1.0" encoding="UTF-8"?>\n<oor:items '
        'xmlns:oor="http://openoffice.org/2001/registry" '
        'xmlns:xs="http://www.w3.org/2001/XMLSchema" '
        'xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">\n'
        '<item oor:path="/org.openoffice.Office.Calc/Formula/Load">'
        '<prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>\n'
        "</oor:items>\n",
        encoding="utf-8",
    )
    out = tmp_path / "out"
    completed = subprocess.run(
        [
            soffice,
            "--headless",
            "--norestore",
            f"-env:UserInstallation={profile.as_uri()}",
            "--convert-to",
            "xlsx",
            "--outdir",
            str(out),
            str(zeroed),
        ],
        capture_output=True,
        text=True,
        timeout=240,
        check=False,
    )
    converted = out / "zeroed.xlsx"
    assert converted.exists(), completed.stdout + completed.stderr
    recalculated = openpyxl.load_workbook(converted, data_only=True)
    ws = recalculated[STEPS]
    col = _column(ws, RESIDUAL_FORMULA)
    for step in result.steps:
        row = _row_of(ws, step.id)
        magnitude = (abs(step.Q) + abs(step.W) + abs(step.H_in) + abs(step.H_out)) / 1e3
        assert ws.cell(row=row, column=col).value == pytest.approx(
            step.energy_residual / 1e3, abs=1e-12 * magnitude
        ), step.id
    streams = recalculated[STREAMS]
    assert streams.cell(row=_row_of(streams, "S10"), column=3).value == "=1+1"
    assert streams.cell(row=_row_of(streams, "S02"), column=3).value == INJECTED["S02"]


# -- findings, steps and links ---------------------------------------------------------------------
def test_every_finding_links_to_its_step_row(book, seeded):
    findings, steps = book[FINDINGS], book[STEPS]
    assert findings.max_row == len(seeded.findings) + 1
    for row in range(2, findings.max_row + 1):
        cell = findings.cell(row=row, column=3)
        if cell.value is None:  # a finding on a stream's state alone (a glycol below freezing)
            assert findings.cell(row=row, column=4).hyperlink.location.startswith("'Streams'!A")
            continue
        target = re.fullmatch(r"'Steps'!A(\d+)", cell.hyperlink.location)
        assert target, cell.hyperlink.location
        assert steps.cell(row=int(target.group(1)), column=1).value == cell.value


def test_findings_carry_their_numbers_in_display_units(book, seeded):
    """T1's work-above-bound: claimed 1.45 MW (the balance file) against a bound of about
    1.38 MW (sample_plant/README.md), in kW, with the margin in kW and %."""
    ws = book[FINDINGS]
    row = next(
        r for r in range(2, ws.max_row + 1) if ws.cell(row=r, column=2).value == "work-above-bound"
    )
    values = [ws.cell(row=row, column=c).value for c in range(1, 12)]
    severity, name, step, _, claimed, bound, unit, margin, margin_unit, relative, _ = values
    assert (severity, name, step, unit, margin_unit) == ("error", "work-above-bound", "T1", "kW", "kW")
    assert claimed == pytest.approx(1450.0, abs=1e-9)
    assert bound == pytest.approx(1380.0, abs=5.0)  # README: "bound ≈ 1.38 MW"
    assert margin == pytest.approx(claimed - bound, rel=1e-12)
    assert relative == pytest.approx(margin / bound, rel=1e-12)
    pinch = next(
        r for r in range(2, ws.max_row + 1) if ws.cell(row=r, column=2).value == "internal-pinch"
    )
    assert ws.cell(row=pinch, column=9).value == "K"  # a temperature difference
    assert ws.cell(row=pinch, column=8).value == pytest.approx(6.6, abs=0.05)  # README: ≈ 6.6 K


def test_severity_shown_by_fill_and_word(book, injected):
    _, _, other = injected
    for ws in (book[FINDINGS], other[FINDINGS]):
        for row in range(2, ws.max_row + 1):
            cell = ws.cell(row=row, column=1)
            assert cell.value in SEVERITY_RANK
            assert cell.fill.fgColor.rgb.endswith(FILLS[cell.value].color)
    assert {
        other[FINDINGS].cell(row=r, column=1).value for r in range(2, other[FINDINGS].max_row + 1)
    } == {ERROR, WARNING}

    def grey(rgb: str) -> float:  # Rec. 601 luma, as a greyscale print renders a fill
        r, g, b = (int(rgb[-6:][i : i + 2], 16) for i in (0, 2, 4))
        return 0.299 * r + 0.587 * g + 0.114 * b

    assert grey(FILLS[WARNING].color) - grey(FILLS[ERROR].color) > 30


def test_steps_with_errors_are_marked_and_lead_to_their_findings(book, seeded):
    """Every step with an error is marked; among them the seeded errors of the sample plant's
    README: T1, C1, HX1, EV1, R1, SP1."""
    steps, findings = book[STEPS], book[FINDINGS]
    col = _column(steps, "findings")
    marked = set()
    for row in range(2, steps.max_row + 1):
        cell = steps.cell(row=row, column=col)
        step_id = steps.cell(row=row, column=1).value
        if cell.value == "none":
            assert cell.hyperlink is None
            continue
        assert re.fullmatch(r"error \(\d findings?\)", cell.value)
        assert steps.cell(row=row, column=1).fill.fgColor.rgb.endswith(FILLS[ERROR].color)
        target = int(re.fullmatch(r"'Findings'!A(\d+)", cell.hyperlink.location).group(1))
        assert findings.cell(row=target, column=3).value == step_id
        marked.add(step_id)
    assert marked == {f.step for f in seeded.findings if f.severity == ERROR and f.step is not None}
    assert marked >= {"T1", "C1", "HX1", "EV1", "R1", "SP1"}


def test_stream_findings_link_to_the_stream_row(injected):
    _, _, wb = injected
    findings, streams = wb[FINDINGS], wb[STREAMS]
    row = next(
        r
        for r in range(2, findings.max_row + 1)
        if findings.cell(row=r, column=2).value == "stream-unused"
    )
    cell = findings.cell(row=row, column=4)
    assert cell.value == UNUSED_ID
    target = int(re.fullmatch(r"'Streams'!A(\d+)", cell.hyperlink.location).group(1))
    assert streams.cell(row=target, column=1).value == UNUSED_ID
    assert streams.cell(row=target, column=4).value == "warning (1 finding)"


# -- the chart -------------------------------------------------------------------------------------
def test_chart_of_exergy_destroyed_largest_first(book, seeded):
    ws = book[EXERGY]
    charts = ws._charts
    assert len(charts) == 2  # a linear and a logarithmic scale
    chart = charts[0]
    assert type(chart).__name__ == "BarChart" and chart.type == "col"
    flow = [s for s in seeded.steps if not s.batch]
    last = len(flow) + 1
    series = chart.series[0]
    assert series.val.numRef.f == f"'Exergy losses'!$D$2:$D${last}"
    assert series.cat.strRef.f == f"'Exergy losses'!$B$2:$B${last}"
    assert series.tx.strRef.f == "'Exergy losses'!D1"
    assert ws["D1"].value == "exergy destroyed [kW]"
    values = [ws.cell(row=r, column=4).value for r in range(2, last + 1)]
    ids = [ws.cell(row=r, column=2).value for r in range(2, last + 1)]
    assert values == sorted(values, reverse=True)
    by_id = {s.id: s.exergy_destroyed / 1e3 for s in flow}
    assert set(ids) == set(by_id)  # every flow step, and no vessel (a total, not a rate)
    for step_id, value in zip(ids, values, strict=True):
        assert value == pytest.approx(by_id[step_id], rel=1e-15)
    assert "CIP1" not in ids


def test_exergy_charts_mark_failing_steps_and_keep_small_steps_readable(book, seeded):
    ws = book[EXERGY]
    linear, logarithmic = ws._charts
    assert linear.y_axis.scaling.logBase is None
    assert logarithmic.y_axis.scaling.logBase == 10
    flow = sorted((s for s in seeded.steps if not s.batch), key=lambda s: -s.exergy_destroyed)
    for chart in (linear, logarithmic):
        colours = {p.idx: p.graphicalProperties.solidFill.srgbClr for p in chart.series[0].dPt}
        for index, step in enumerate(flow):
            severities = {f.severity for f in seeded.findings_for(step.id)}
            expected = (
                "C00000" if "error" in severities else "FFC000" if "warning" in severities else None
            )
            assert colours.get(index) == expected, step.id


# -- overview and method ---------------------------------------------------------------------------
def test_overview_states_the_balance_verdict_and_caution(book, seeded):
    ws = book[OVERVIEW]
    assert _overview_value(ws, "verdict").value == "FAIL"
    assert _overview_value(ws, "fails on findings at or above").value == "error"
    for severity, count in seeded.counts().items():
        assert _overview_value(ws, f"findings: {severity}").value == count
    assert _overview_value(ws, "findings: error").value >= 9  # sample_plant/README.md: 9 seeded
    assert _overview_value(ws, "name").value == "Quillon Bay site utility balance"
    assert _overview_value(ws, "revision").value == "C-seeded"
    assert (
        _overview_value(ws, "SHA-256 of the file").value
        == hashlib.sha256(SEEDED.read_bytes()).hexdigest()
    )
    assert _overview_value(ws, "dead state temperature T0").value == pytest.approx(25.0, abs=1e-9)
    assert _overview_value(ws, "dead state pressure P0").value == pytest.approx(1.01325, abs=1e-12)
    assert _overview_value(ws, "site (atmospheric) pressure").value == pytest.approx(1.013, abs=1e-12)
    assert _overview_value(ws, "CoolProp").value == CoolProp.__version__
    assert _overview_value(ws, "Python").value == platform.python_version()
    assert _overview_value(ws, "plant-audit").value == audit.__version__
    assert _overview_value(ws, "run at (UTC)").value == seeded.provenance["run at (UTC)"]
    assert _overview_value(ws, "energy_absolute").value == pytest.approx(1.0)  # 1 kW default
    assert ws.cell(row=_overview_value(ws, "energy_absolute").row, column=3).value == "kW"
    caution = _overview_value(ws, "Caution").value
    assert caution == CAUTION
    for words in (
        "thermodynamic consistency",
        "not a safety review",
        "design code",
        "local codes",
        "licensed engineers",
    ):
        assert words in caution


def test_verdict_follows_the_threshold(tmp_path):
    clean = audit.run(SAMPLE / "quillon-bay-clean.yaml")
    path = tmp_path / "clean.xlsx"
    write_workbook(clean, path)
    ws = openpyxl.load_workbook(path)[OVERVIEW]
    assert _overview_value(ws, "verdict").value == "PASS"
    assert _overview_value(ws, "verdict").fill.fgColor.rgb.endswith(FILLS["pass"].color)


def test_warning_threshold_fails_on_a_warning(injected, tmp_path):
    result, _, _ = injected
    path = tmp_path / "strict.xlsx"
    write_workbook(result, path, fail_on="warning")
    ws = openpyxl.load_workbook(path)[OVERVIEW]
    assert _overview_value(ws, "verdict").value == "FAIL"
    assert _overview_value(ws, "fails on findings at or above").value == "warning"
    with pytest.raises(ValueError, match="fail_on must be one of"):
        write_workbook(result, path, fail_on="fatal")


def test_tolerance_units_cover_every_tolerance():
    assert set(TOLERANCE_QUANTITY) == set(Tolerances.model_fields)


def _docstring_references() -> list[tuple[str, str, str]]:
    """(module, title, year) of every '.. [n]' reference in the docstrings the method cites."""
    import importlib
    import pkgutil

    import audit.steps.kinds

    modules = [
        "audit.steps.balances",
        "audit.formation",
        "audit.properties.engine",
        "audit.properties.mixtures",
        "audit.steps.reactions",
        "audit.review.uncertainty",
        "audit.review.propagation",
        "audit.review.verdicts",
        "audit.review.margins",
    ] + [f"audit.steps.kinds.{m.name}" for m in pkgutil.iter_modules(audit.steps.kinds.__path__)]
    found = []
    for name in modules:
        try:
            doc = importlib.import_module(name).__doc__ or ""
        except ModuleNotFoundError:  # a module this version does not have
            continue
        for ref in re.split(r"\n\.\. \[\d+\]", doc)[1:]:
            ref = " ".join(ref.split())
            title = re.search(r"\*([^*]+)\*|\"([^\"]+)\"", ref)
            year = re.findall(r"\b(1[89]\d\d|20\d\d)\b", ref)
            assert title and year, (name, ref)
            found.append((name, title.group(1) or title.group(2), year[-1]))
    return found


def test_method_sheet_cites_every_source_of_the_docstrings(book):
    ws = book[METHOD]
    text = [" ".join(str(c.value).split()) for row in ws.iter_rows() for c in row if c.value]
    references = _docstring_references()
    assert len(references) >= 7
    for module, title, year in references:
        assert any(title in t and year in t for t in text), (module, title, year)
    assert len(SOURCES) >= len({title for _, title, _ in references})
    assert any("Q is heat INTO the step; W is work DELIVERED BY the step" in t for t in text)
    assert any(t == "Tolerances of this balance" for t in text)


# -- file safety -----------------------------------------------------------------------------------
def test_injected_text_is_stored_as_text(injected):
    result, path, wb = injected
    streams = wb[STREAMS]
    for stream_id in ("S02", "S03", "S04", "S05", "S06", "S07", "S10"):
        cell = streams.cell(row=_row_of(streams, stream_id), column=3)
        # a carriage return is stored as a line feed (XML readers normalise it so)
        assert cell.value == INJECTED[stream_id].replace("\r", "\n")
        assert cell.data_type == "s"
        assert cell.quotePrefix
    plain = streams.cell(row=_row_of(streams, "S01"), column=3)
    assert plain.value == "feedwater from the deaerator (boundary)" and not plain.quotePrefix
    unused = streams.cell(row=_row_of(streams, UNUSED_ID), column=1)
    assert unused.data_type == "s" and unused.quotePrefix
    steps = wb[STEPS]
    description = steps.cell(row=_row_of(steps, "P1"), column=_column(steps, "description"))
    assert description.value == INJECTED["P1"] and description.data_type == "s"
    assert _overview_value(wb[OVERVIEW], "name").value == INJECTED["name"]
    assert _overview_value(wb[OVERVIEW], "name").data_type == "s"
    # the control character (BEL) that a workbook cannot hold is replaced, not a crash
    assert streams.cell(row=_row_of(streams, "S11"), column=3).value == "bell\ufffd"
    with zipfile.ZipFile(path) as archive:
        xml = b"".join(archive.read(n) for n in archive.namelist() if n.startswith("xl/"))
    assert b"<f>HYPERLINK" not in xml and b"<f>1+1" not in xml and b"<f>cmd" not in xml
    frame = pd.read_excel(path, sheet_name=STREAMS).set_index("stream")
    assert frame.loc["S10", "description"] == "=1+1"
    assert frame.loc["S05", "description"] == "@SUM(A1:A2)"


def test_csv_text_fields_are_guarded(injected, tmp_path):
    result, _, _ = injected
    write_csv(result, tmp_path / "csv")
    with open(tmp_path / "csv" / "streams.csv", newline="", encoding="utf-8") as handle:
        rows = {row["id"]: row for row in csv.DictReader(handle)}
    for stream_id in ("S02", "S03", "S04", "S05", "S06", "S07", "S10"):
        # the carriage return becomes a line feed, so the field is quoted and the row stays whole
        assert rows[stream_id]["description"] == "'" + INJECTED[stream_id].replace("\r", "\n")
    assert rows["S01"]["description"] == "feedwater from the deaerator (boundary)"
    assert "'" + UNUSED_ID in rows and rows["'" + UNUSED_ID]["description"] == "'-unused"
    assert float(rows["S20"]["T [K]"]) == pytest.approx(result.stream("S20").T)  # numbers unchanged
    with open(tmp_path / "csv" / "findings.csv", newline="", encoding="utf-8") as handle:
        findings = list(csv.DictReader(handle))
    unused = next(f for f in findings if f["name"] == "stream-unused")
    assert unused["stream"] == "'" + UNUSED_ID
    turbine = next(f for f in findings if f["name"] == "energy-imbalance" and f["step"] == "T1")
    assert float(turbine["claimed"]) == pytest.approx(-1.45e6)  # a negative number, not text
    with open(tmp_path / "csv" / "steps.csv", newline="", encoding="utf-8") as handle:
        steps = {row["id"]: row for row in csv.DictReader(handle)}
    assert steps["P1"]["description"] == "'" + INJECTED["P1"]


@pytest.mark.parametrize("failure", [OSError("disk full"), KeyboardInterrupt()])
def test_interrupted_write_keeps_the_old_file(seeded, tmp_path, monkeypatch, failure):
    path = tmp_path / "findings.xlsx"
    path.write_bytes(b"the previous report")
    seen = []

    def crash(wb) -> None:
        # the sheets written, the zip about to be put together: a temporary file beside the
        # target is already open
        seen.extend(p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp"))
        raise failure

    monkeypatch.setattr(workbook_file, "close", crash)
    with pytest.raises((ReportError, KeyboardInterrupt)):
        write_workbook(seeded, path)
    assert seen and seen[0].startswith(".findings.xlsx.")
    assert path.read_bytes() == b"the previous report"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["findings.xlsx"]


def test_unwritable_target_is_a_report_error(seeded, tmp_path):
    target = tmp_path / "taken.xlsx"
    target.mkdir()
    with pytest.raises(ReportError, match="taken.xlsx: cannot write the workbook: Is a directory"):
        write_workbook(seeded, target)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["taken.xlsx"]


def test_file_mode_follows_the_umask(seeded, tmp_path):
    path = tmp_path / "findings.xlsx"
    old = os.umask(0o027)
    try:
        write_workbook(seeded, path)
    finally:
        os.umask(old)
    assert path.stat().st_mode & 0o777 == 0o640


def test_same_result_gives_the_same_bytes_and_document_times(seeded, tmp_path, book):
    first, second = tmp_path / "a.xlsx", tmp_path / "b.xlsx"
    write_workbook(seeded, first)
    write_workbook(seeded, second)
    assert first.read_bytes() == second.read_bytes()
    when = datetime.strptime(seeded.provenance["run at (UTC)"], "%Y-%m-%d %H:%M:%S")
    assert book.properties.created == when and book.properties.modified == when
    with zipfile.ZipFile(first) as archive:  # one fixed entry time, not the time of writing
        assert len({info.date_time for info in archive.infolist()}) == 1
        assert archive.infolist()[0].date_time[0] == 1980


def _cells(path: Path) -> dict[tuple[str, str], object]:
    wb = openpyxl.load_workbook(path)
    return {
        (ws.title, c.coordinate): (c.value, c.number_format, c.data_type)
        for ws in wb.worksheets
        for row in ws.iter_rows()
        for c in row
    }


def test_two_runs_give_the_same_cells(seeded, book_path, tmp_path):
    """A second audit of the same file: every cell of every sheet is the same, except the run's
    own provenance (its time and how long it took)."""
    again = audit.run(SEEDED)
    path = tmp_path / "again.xlsx"
    write_workbook(again, path)
    first, second = _cells(book_path), _cells(path)
    assert first.keys() == second.keys()
    overview = openpyxl.load_workbook(path)[OVERVIEW]
    varying = {
        _overview_value(overview, label).coordinate for label in ("run at (UTC)", "solve time [s]")
    }
    differing = {key for key in first if first[key] != second[key]}
    assert {coordinate for sheet, coordinate in differing if sheet == OVERVIEW} <= varying
    assert all(sheet == OVERVIEW for sheet, _ in differing)


def test_a_balance_without_steps_still_gives_a_workbook(tmp_path):
    from conftest import audit_text

    result = audit_text(
        tmp_path,
        """
    streams:
      S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s}
    """,
    )
    path = tmp_path / "empty.xlsx"
    write_workbook(result, path)
    wb = openpyxl.load_workbook(path)
    assert wb[FINDINGS]["A2"].value == "no findings"
    assert wb[EXERGY]._charts == []
    assert wb[EXERGY]["I2"].value == "no flow steps: nothing to chart"
    assert _overview_value(wb[OVERVIEW], "verdict").value == "PASS"
    assert wb[STREAMS]["G2"].value == pytest.approx(300.0, abs=1e-9)
