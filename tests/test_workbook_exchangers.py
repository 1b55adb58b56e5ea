"""The workbook's Exchangers sheet (duty, approaches, LMTD, smallest approach and where, a native
T–Q chart with the smallest approach marked), the findings that link to it, and the fired heaters'
efficiency on the Steps sheet."""

from __future__ import annotations

import math

import openpyxl
import pytest
from conftest import SAMPLE

import audit
from audit.report.sheets.context import EXCHANGERS, FINDINGS, STEPS
from audit.report.workbook import write_workbook

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SEEDED)


@pytest.fixture(scope="module")
def book(seeded, tmp_path_factory):
    path = tmp_path_factory.mktemp("exchangers") / "seeded.xlsx"
    write_workbook(seeded, path)
    return openpyxl.load_workbook(path)


def _row(ws, value, column=1):
    return next(r for r in range(1, ws.max_row + 1) if ws.cell(r, column).value == value)


def test_exchanger_row_shows_the_rating_values(book, seeded):
    ws = book[EXCHANGERS]
    headers = [c.value for c in ws[1]]
    row = _row(ws, "HX1")
    value = {h: ws.cell(row, col).value for col, h in enumerate(headers, start=1)}
    # The seeded sample's HX1 (sample_plant/quillon-bay-seeded.yaml, counter-current): hot side
    # 186.8 °C in, 140 °C out; cold side 15 °C in, 160 °C out. Terminal approaches by subtraction
    # of the written temperatures (analytic): 186.8 − 160 = 26.8 K and 140 − 15 = 125 K.
    assert value["arrangement"] == "counter-current"
    assert value["approach at the hot end (co-current: inlet end) [K]"] == pytest.approx(26.8, abs=1e-9)
    assert value["approach at the cold end (co-current: outlet end) [K]"] == pytest.approx(125.0)
    # LMTD of the terminals, (ΔT1 − ΔT2)/ln(ΔT1/ΔT2) (Incropera et al., Fundamentals of Heat and
    # Mass Transfer, 6th ed., eq. 11.15), from the two differences above.
    lmtd = (125.0 - 26.8) / math.log(125.0 / 26.8)
    assert value["LMTD of the terminals [K]"] == pytest.approx(lmtd, rel=1e-12)
    rating = next(s.exchanger for s in seeded.steps if s.id == "HX1")
    # what the sheet shows is the rating the audit computed, in kW and as a fraction
    assert value["duty [kW]"] == pytest.approx(rating.duty / 1e3)
    assert value["smallest approach [K]"] == pytest.approx(rating.min_approach)
    assert value["smallest approach [K]"] < 0  # the profiles cross inside (internal-pinch)
    assert value["where: fraction of the duty [%]"] == pytest.approx(rating.min_approach_fraction)
    assert ws.cell(row, headers.index("where: fraction of the duty [%]") + 1).number_format == "0.0%"
    chart_cell = ws.cell(row, headers.index("T–Q chart") + 1)
    assert (
        chart_cell.hyperlink.location
        == f"'{EXCHANGERS}'!A{_row(ws, 'HX1 (counter-current): temperature against duty')}"
    )


def test_chart_series_hold_the_profile_points_and_the_pinch(book, seeded):
    ws = book[EXCHANGERS]
    profile = next(s.profile for s in seeded.steps if s.id == "HX1")
    (chart,) = ws._charts
    hot, cold, pinch = chart.series

    def points(source):
        return [p.v for p in source.numRef.numCache.pt]

    duty_kW = [q / 1e3 for q in profile.duty]
    assert points(hot.xVal) == pytest.approx(duty_kW)
    assert points(hot.yVal) == pytest.approx([t - 273.15 for t in profile.hot_T])
    assert points(cold.yVal) == pytest.approx([t - 273.15 for t in profile.cold_T])
    i = profile.pinch_index
    assert points(pinch.xVal) == pytest.approx([duty_kW[i]] * 2)
    assert points(pinch.yVal) == pytest.approx([profile.hot_T[i] - 273.15, profile.cold_T[i] - 273.15])
    assert pinch.tx.v.startswith("smallest approach")
    # the series read the sheet's cells, so an edit of a point redraws the chart
    first = _row(ws, "duty from the cold inlet [kW]") + 1
    assert hot.xVal.numRef.f == f"'{EXCHANGERS}'!$A${first}:$A${first + len(duty_kW) - 1}"
    assert ws.cell(first + i, 5).value == "← smallest approach"


def test_internal_pinch_finding_links_to_its_chart(book):
    findings, exchangers = book[FINDINGS], book[EXCHANGERS]
    row = _row(findings, "internal-pinch", column=2)
    block = _row(exchangers, "HX1 (counter-current): temperature against duty")
    assert findings.cell(row, 2).hyperlink.location == f"'{EXCHANGERS}'!A{block}"
    other = _row(findings, "energy-imbalance", column=2)
    assert findings.cell(other, 2).hyperlink is None


def test_fired_heater_efficiency_on_the_stated_basis(book, seeded):
    ws = book[STEPS]
    headers = [c.value for c in ws[1]]
    col = headers.index("fired efficiency, stated heating-value basis [%]") + 1
    b1 = next(s for s in seeded.steps if s.id == "B1")
    row = _row(ws, "B1")
    # B1 states its fuel's lower heating value (fuel_lhv): the LHV-basis efficiency is shown
    assert ws.cell(row, col + 1).value == "LHV"
    assert ws.cell(row, col).value == pytest.approx(b1.extra["efficiency_lhv"])
    assert ws.cell(row, col).number_format == "0.0%"
    assert ws.cell(_row(ws, "HX1"), col).value is None


CO_CURRENT = """
streams:
  HI: {{fluid: Water, T: 90 degC, P: 3 bar, flow: 1 kg/s}}
  HO: {{fluid: Water, T: {hot_out} degC, P: 3 bar, flow: 1 kg/s}}
  CI: {{fluid: Water, T: 20 degC, P: 3 bar, flow: 1 kg/s}}
  CO: {{fluid: Water, T: {cold_out} degC, P: 3 bar, flow: 1 kg/s}}
steps:
  - id: HX9
    kind: heat_exchanger
    hot: {{inlet: HI, outlet: HO}}
    cold: {{inlet: CI, outlet: CO}}
    arrangement: co-current
"""


def _exchangers_sheet(tmp_path, hot_out, cold_out):
    from conftest import audit_text

    result = audit_text(tmp_path, CO_CURRENT.format(hot_out=hot_out, cold_out=cold_out))
    path = tmp_path / "co.xlsx"
    write_workbook(result, path)
    return result, openpyxl.load_workbook(path)


def test_co_current_exchanger_names_its_inlet_and_outlet_ends(tmp_path):
    result, book = _exchangers_sheet(tmp_path, 56, 54)
    ws = book[EXCHANGERS]
    headers = [c.value for c in ws[1]]
    row = _row(ws, "HX9")
    assert ws.cell(row, headers.index("arrangement") + 1).value == "co-current"
    # terminal differences of the written temperatures (analytic): inlet end 90 − 20 = 70 K,
    # outlet end 56 − 54 = 2 K
    approaches = [ws.cell(row, col).value for col in (5, 6)]
    assert approaches == [pytest.approx(70.0), pytest.approx(2.0)]
    assert len(ws._charts) == 1
    assert ws.cell(row, headers.index("findings") + 1).value == "none"


def test_temperature_cross_links_to_its_exchanger(tmp_path):
    # co-current, the hot side leaving (40 °C) colder than the cold side leaves (70 °C)
    result, book = _exchangers_sheet(tmp_path, 40, 70)
    assert {f.name for f in result.findings} >= {"temperature-cross"}
    findings, ws = book[FINDINGS], book[EXCHANGERS]
    row = _row(findings, "temperature-cross", column=2)
    block = _row(ws, "HX9 (co-current): temperature against duty")
    assert findings.cell(row, 2).hyperlink.location == f"'{EXCHANGERS}'!A{block}"
    # terminals that cross leave no profile to draw: the block says so, the values stay
    assert ws.cell(block + 1, 1).value.startswith("no temperature profile")
    assert not ws._charts
    row = _row(ws, "HX9")
    assert [ws.cell(row, col).value for col in (5, 6)] == [pytest.approx(70.0), pytest.approx(-30.0)]
    assert ws.cell(row, 7).value is None  # no LMTD across a terminal that is not positive


def test_a_plant_without_exchangers_says_so(tmp_path):
    from conftest import audit_text

    result = audit_text(
        tmp_path,
        """
streams:
  A: {fluid: Water, T: 20 degC, P: 3 bar, flow: 1 kg/s}
  B: {fluid: Water, T: 20 degC, P: 2 bar, flow: 1 kg/s}
steps:
  - {id: V9, kind: valve, inlet: A, outlet: B}
""",
    )
    path = tmp_path / "valve.xlsx"
    write_workbook(result, path)
    ws = openpyxl.load_workbook(path)[EXCHANGERS]
    assert ws.cell(2, 1).value == "no heat exchangers" and not ws._charts
