"""Over-determined streams (audit.printed): every printed property beyond the two that fix a state
is checked against that state with the rounding of its written digits.

Oracles are the published verification tables, asserted as printed:
IAPWS R6-95(2018) Table 8 (IAPWS-95 saturation at 450 K) and IAPWS R7-97(2012) Table 5 (IF97
region 1 at 300 K, 3 MPa). Their input temperatures and pressures are exact and are written with
as many digits as the table's outputs, so that their rounding does not widen the check.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import openpyxl
import pytest
import yaml

import audit
from audit.errors import InputError
from audit.model.digits import rounding_bound, written_resolution
from audit.report.columns import printed_cell
from audit.report.machine import to_dict, write_csv
from audit.report.workbook import write_workbook


def run(tmp_path: Path, streams: dict, steps: list | None = None, **info) -> audit.results.AuditResult:
    document = {"balance": {"name": "printed check", **info}, "streams": streams, "steps": steps or []}
    path = tmp_path / "balance.yaml"
    path.write_text(yaml.safe_dump(document, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return audit.run(path)


def names(result) -> list[tuple[str, str, str | None]]:
    return [(f.severity, f.name, f.stream or f.step) for f in result.findings]


# -- the written resolution (GUM JCGM 100:2008 §F.2.2.1: half a unit of the last digit) ------------
@pytest.mark.parametrize(
    ("text", "resolution"),
    [
        ("183.36 kJ/kg", 0.01),
        ("8.0 MPa", 0.1),
        ("1500 kW", 1.0),
        ("1.2e3 kW", 100.0),
        ("0.392294792 kJ/(kg K)", 1e-9),
        (".5 K", 0.1),
        (0.95, 0.01),
    ],
)
def test_written_resolution(text, resolution):
    assert written_resolution(text) == pytest.approx(resolution, rel=1e-12)
    assert rounding_bound(text) == pytest.approx(resolution / 2, rel=1e-12)


def test_written_resolution_of_no_number():
    assert written_resolution("hot") is None
    assert rounding_bound(None) is None


# -- IAPWS-95 (R6-95 Table 8, T = 450 K) -----------------------------------------------------------
# ps = 0.932203564 MPa, rho' = 890.341250 kg/m3, h' = 749.161585 kJ/kg, s' = 2.10865845 kJ/(kg K)
R6_95_LIQUID_450K = {
    "fluid": "Water",
    "T": "450.000000 K",
    "quality": 0.0,
    "P": "0.932203564 MPa",
    "h": "749.161585 kJ/kg",
    "s": "2.10865845 kJ/(kg K)",
    "rho": "890.341250 kg/m3",
    "flow": "1 kg/s",
    "state_from": ["T", "quality"],
}


def test_iapws95_saturated_liquid_printed_to_the_published_digits_raises_nothing(tmp_path):
    result = run(tmp_path, {"L": R6_95_LIQUID_450K})
    assert names(result) == []
    printed = result.streams[0].printed
    assert set(printed) == {"P", "h", "s", "rho"}
    assert all(claim.verdict == "agrees" for claim in printed.values())


def test_iapws95_one_digit_changed_in_s_is_named(tmp_path):
    # 2nd decimal 0 -> 1: beyond rounding and beyond the IAPWS-95/IF97 difference (2e-4 here)
    stream = {**R6_95_LIQUID_450K, "s": "2.11865845 kJ/(kg K)"}
    result = run(tmp_path, {"L": stream})
    assert names(result) == [("error", "printed-property-mismatch", "L")]
    finding = result.findings[0]
    assert finding.quantity == "specific_entropy"
    assert finding.claimed == pytest.approx(2118.65845, rel=1e-12)  # as printed
    assert finding.bound == pytest.approx(2108.65845, rel=1e-8)  # R6-95 Table 8 s'
    assert "prints s = 2.11865845 kJ/(kg K)" in finding.message
    assert "fixed by (T, quality)" in finding.message
    assert "+1e+06 units of the last printed digit" in finding.message
    assert "so s is the odd one out" in finding.message


# -- IAPWS-IF97 (R7-97 Table 5, region 1, 300 K and 3 MPa) -----------------------------------------
# v = 0.00100215168 m3/kg, h = 115.331273 kJ/kg, s = 0.392294792 kJ/(kg K)
R7_97_TABLE5 = {
    "fluid": "Water",
    "T": "300.000000 K",
    "P": "3.00000000 MPa",
    "h": "115.331273 kJ/kg",
    "s": "0.392294792 kJ/(kg K)",
    "v": "0.00100215168 m3/kg",
    "flow": "1 kg/s",
}


def test_if97_state_with_t_p_h_s_v_raises_nothing_when_declared(tmp_path):
    result = run(tmp_path, {"W": R7_97_TABLE5}, formulation="IF97")
    assert names(result) == []
    assert set(result.streams[0].printed) == {"T", "s", "v"}  # fixed by (P, h)


def test_if97_one_digit_changed_in_s_is_named(tmp_path):
    stream = {**R7_97_TABLE5, "s": "0.392284792 kJ/(kg K)"}  # 5th decimal: 9 -> 8
    result = run(tmp_path, {"W": stream}, formulation="IF97")
    assert names(result) == [("error", "printed-property-mismatch", "W")]
    message = result.findings[0].message
    assert (
        "prints s = 0.392284792 kJ/(kg K), but the state fixed by (P, h) has s = 0.39229479" in message
    )
    assert "-1e+04 units of the last printed digit" in message
    assert "T, P, h, v agree with each other, so s is the odd one out" in message


def test_if97_digits_on_iapws95_are_a_formulation_warning(tmp_path):
    # Not declared: the state is evaluated on IAPWS-95, which differs from IF97 by up to 9.6e-4 in
    # these properties (reference values row 1); never passed in silence, never an error.
    result = run(tmp_path, {"W": R7_97_TABLE5})
    found = names(result)
    assert found and all(f == ("warning", "formulation-difference", "W") for f in found)
    message = result.findings[0].message
    assert "within the known difference between formulations" in message
    assert "declare 'formulation: IF97' under 'balance:'" in message


def test_if97_declared_evaluates_states_on_if97(tmp_path):
    # R7-97 Table 5: h = 115.331273 kJ/kg at 300 K, 3 MPa (IF97 region 1), from (T, P)
    stream = {"fluid": "Water", "T": "300 K", "P": "3 MPa", "flow": "1 kg/s"}
    result = run(tmp_path, {"W": stream}, formulation="IF97")
    water = result.streams[0]
    # the stream's h is on the formation basis: compare the difference to the table basis
    on_95 = run(tmp_path, {"W": stream}).streams[0]
    assert water.h - on_95.h == pytest.approx(115_331.273 - 115_320.9, abs=2.0)  # HEOS h, row 1
    assert "IAPWS-IF97" in result.provenance["equations of state"]
    assert (
        "IAPWS-95" in on_95.basis
        or "IAPWS-95" in run(tmp_path, {"W": stream}).provenance["equations of state"]
    )


def test_if97_is_refused_for_another_fluid(tmp_path):
    stream = {"fluid": "R134a", "T": "20 degC", "P": "10 bar", "flow": "1 kg/s"}
    with pytest.raises(InputError, match="the formulation IF97 exists for Water only, not for R134a"):
        run(tmp_path, {"R": stream}, formulation={"R134a": "IF97"})


def test_one_formulation_word_applies_to_the_fluids_it_exists_for(tmp_path):
    stream = {"fluid": "R134a", "T": "20 degC", "P": "10 bar", "flow": "1 kg/s"}
    result = run(tmp_path, {"R": stream, "W": R7_97_TABLE5}, formulation="IF97")
    assert names(result) == []
    assert "R134a: Tillner-Roth & Baehr" in result.provenance["equations of state"]


# -- three printed properties, no fourth to tell ----------------------------------------------------
def test_two_claims_that_disagree_without_a_tiebreak(tmp_path):
    stream = {
        "fluid": "Water",
        "P": "8.0 MPa",
        "h": "183.36 kJ/kg",
        "s": "0.5957 kJ/(kg K)",
        "flow": "1 kg/s",
    }
    result = run(tmp_path, {"4": stream})
    assert names(result) == [("error", "printed-property-mismatch", "4")]
    message = result.findings[0].message
    # IAPWS-95 at 8 MPa and h = 183.36 kJ/kg: s = 0.5972 kJ/(kg K) (about 15 units of the last digit)
    assert "has s = 0.59717 kJ/(kg K)" in message
    assert "a further printed property would tell which one is wrong" in message


def test_state_from_names_the_pair(tmp_path):
    stream = {
        "fluid": "Water",
        "P": "8.0 MPa",
        "h": "183.36 kJ/kg",
        "s": "0.5957 kJ/(kg K)",
        "flow": "1 kg/s",
        "state_from": "P, s",
    }
    result = run(tmp_path, {"4": stream})
    assert result.findings[0].message.startswith(
        "stream 4 prints h = 183.36 kJ/kg, but the state fixed by (P, s)"
    )


def test_state_from_must_name_given_properties(tmp_path):
    stream = {
        "fluid": "Water",
        "P": "8.0 MPa",
        "h": "183.36 kJ/kg",
        "flow": "1 kg/s",
        "state_from": ["P", "s"],
    }
    with pytest.raises(InputError, match="state_from names s, which the stream does not give"):
        run(tmp_path, {"4": stream})


def test_a_gas_mixture_prints_t_and_p_only(tmp_path):
    stream = {"composition": "air", "T": "25 degC", "P": "1 bar", "h": "1 kJ/kg", "flow": "1 kg/s"}
    with pytest.raises(InputError, match="a gas mixture is written with T and P only"):
        run(tmp_path, {"A": stream})


# -- outputs: JSON, CSV and the workbook column -----------------------------------------------------
def test_outputs_show_printed_beside_computed(tmp_path):
    stream = {**R7_97_TABLE5, "s": "0.392284792 kJ/(kg K)"}
    result = run(
        tmp_path,
        {"W": stream, "X": {"fluid": "Water", "T": "20 degC", "P": "2 bar", "flow": "1 kg/s"}},
        formulation="IF97",
    )
    data = to_dict(result)
    row = data["streams"][0]["printed"]["s"]
    assert row["printed"] == pytest.approx(392.284792, rel=1e-12)
    assert row["verdict"] == "differs"
    assert row["digits"] == pytest.approx(-1e4, rel=1e-4)
    assert "printed" not in data["streams"][1]  # a stream printing two properties
    cell = printed_cell(result.streams[0].printed)
    assert "s: 0.392284792 kJ/(kg K) printed, 0.39229479" in cell
    assert "kJ/(kg K) computed, -1e+04 last digits ✗" in cell
    assert "T: 300.000000 K printed" in cell and "✓" in cell
    write_csv(result, tmp_path)
    with open(tmp_path / "streams.csv", newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert "✗" in rows[0]["printed"] and rows[1]["printed"] == ""


def test_stream_table_carries_printed_columns(tmp_path):
    rows = [
        [
            "id",
            "fluid",
            "T [K]",
            "P [MPa]",
            "h [kJ/kg]",
            "s [kJ/(kg K)]",
            "v [m3/kg]",
            "u [kJ/kg]",
            "flow [kg/s]",
        ],
        # R7-97 Table 5 at 300 K, 3 MPa: u = 112.324818 kJ/kg
        [
            "W",
            "Water",
            "300.000000",
            "3.00000000",
            "115.331273",
            "0.392294792",
            "0.00100215168",
            "112.324818",
            "1",
        ],
    ]
    with (tmp_path / "streams.csv").open("w", newline="", encoding="utf-8") as handle:
        csv.writer(handle).writerows(rows)
    path = tmp_path / "balance.yaml"
    path.write_text(
        "balance:\n  name: table\n  formulation: IF97\nstreams_from: streams.csv\n", encoding="utf-8"
    )
    result = audit.run(path)
    assert names(result) == []
    assert set(result.streams[0].printed) == {"T", "s", "v", "u"}
    rows[1][5] = "0.392284792"  # one digit changed in s: its text comes from the cell
    with (tmp_path / "streams.csv").open("w", newline="", encoding="utf-8") as handle:
        csv.writer(handle).writerows(rows)
    message = audit.run(path).findings[0].message
    assert "prints s = 0.392284792 kJ/(kg K)" in message
    assert "-1e+04 units of the last printed digit" in message


def test_the_method_sheet_names_the_equations_of_state(tmp_path):
    result = run(tmp_path, {"W": R7_97_TABLE5}, formulation="IF97")
    workbook = tmp_path / "out.xlsx"
    write_workbook(result, workbook)

    sheet = openpyxl.load_workbook(workbook)["Method"]
    texts = [cell.value for row in sheet.iter_rows() for cell in row if isinstance(cell.value, str)]
    assert "Equations of state of this balance" in texts
    assert any(t.startswith("IAPWS-IF97 (Wagner et al.") for t in texts)


def test_quality_printed_for_a_superheated_state(tmp_path):
    stream = {
        "fluid": "Water",
        "P": "1 bar",
        "h": "2800 kJ/kg",
        "quality": 1.0,
        "flow": "1 kg/s",
        "state_from": ["P", "h"],
    }
    result = run(tmp_path, {"S": stream})
    assert names(result) == [("error", "printed-property-mismatch", "S")]
    assert "prints quality = 1.0" in result.findings[0].message
    assert math.isfinite(result.findings[0].bound)
