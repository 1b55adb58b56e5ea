"""Turbines with extractions: the whole machine's laws, each section's isentropic efficiency, the
order of the points' pressures and the wet-exhaust check per outlet. Check values: IAPWS-95 states
from the ``iapws`` package (a reference implementation of IAPWS R6-95); the section efficiencies
η = (h_a − h_b) / (h_a − h_s) are written out here (Moran & Shapiro, 8th ed., §6.12)."""

from __future__ import annotations

import pytest
from conftest import assert_close, audit_text, names
from iapws import IAPWS95

from audit.errors import InputErrors

INLET = IAPWS95(P=4.0, T=673.15)  # 40 bar, 400 °C


def _expand(start: IAPWS95, P: float, eta: float) -> IAPWS95:
    ideal = IAPWS95(P=P, s=start.s)
    return IAPWS95(P=P, h=start.h - eta * (start.h - ideal.h))


def _balance(eta_first: float, eta_second: float = 0.80, extraction_P: float = 0.5) -> str:
    bled = _expand(INLET, extraction_P, eta_first)
    exhaust = _expand(bled, 0.01, eta_second)
    W = 10.0 * INLET.h - 2.0 * bled.h - 8.0 * exhaust.h  # kW: the whole machine's first law
    return f"""
streams:
  s1: {{fluid: Water, T: 400 degC, P: 40 bar, flow: 10 kg/s}}
  x1: {{fluid: Water, P: {extraction_P * 10:g} bar, h: {bled.h:.4f} kJ/kg, flow: 2 kg/s}}
  s2: {{fluid: Water, P: 0.1 bar, h: {exhaust.h:.4f} kJ/kg, flow: 8 kg/s}}
steps:
  - {{id: T1, kind: turbine, inlet: s1, extractions: [x1], outlet: s2, shaft_power: {W:.3f} kW}}
"""


def test_a_consistent_extracting_turbine_passes(tmp_path):
    result = audit_text(tmp_path, _balance(0.80))
    errors = [f for f in result.findings if f.severity == "error"]
    assert errors == [], errors
    step = result.steps[0]
    assert step.outlets == ["x1", "s2"]
    assert step.isentropic_efficiency is None  # not defined for the whole extracting machine


def test_a_section_beyond_isentropic_is_named(tmp_path):
    # The first section written at η = 1.05: the whole machine's work can still be below its bound.
    result = audit_text(tmp_path, _balance(1.05))
    found = [f for f in result.findings if f.name == "section-efficiency-above-one"]
    assert len(found) == 1 and found[0].stream == "x1"
    assert_close(found[0].claimed, 1.05, rtol=2e-4)  # IAPWS-95 through iapws; h printed to 1e-4
    assert found[0].message.startswith(
        "the section from the inlet s1 to the extraction x1 has an isentropic efficiency of 1.050"
    )
    assert ("T1", "work-above-bound") not in names(result)


def test_extractions_out_of_order_are_named(tmp_path):
    lines = _balance(0.80).splitlines()
    lines = [
        "  x1: {fluid: Water, T: 450 degC, P: 50 bar, flow: 2 kg/s}"
        if line.startswith("  x1:")
        else line
        for line in lines
    ]
    result = audit_text(tmp_path, "\n".join(lines) + "\n")
    wrong = [f for f in result.findings if f.name == "pressure-wrong-way"]
    assert wrong and wrong[0].stream == "x1"
    assert "the extraction x1 (50 bar) is not below the inlet s1 (40 bar)" in wrong[0].message


def test_a_wet_extraction_gets_the_moisture_check(tmp_path):
    text = """
streams:
  s1: {fluid: Water, P: 10 bar, quality: 1, flow: 10 kg/s}
  x1: {fluid: Water, P: 2 bar, quality: 0.85, flow: 2 kg/s}
  s2: {fluid: Water, P: 0.1 bar, quality: 0.8, flow: 8 kg/s}
steps:
  - {id: T1, kind: turbine, inlet: s1, extractions: [x1], outlet: s2}
"""
    result = audit_text(tmp_path, text)
    wet = {f.stream: f.message for f in result.findings if f.name == "wet-exhaust"}
    assert wet["x1"].startswith("the extraction x1 carries 15.0% moisture")
    assert wet["s2"].startswith("the exhaust carries 20.0% moisture")


def test_a_whole_machine_efficiency_is_not_claimed_with_extractions(tmp_path):
    text = _balance(0.80).replace("shaft_power:", "isentropic_efficiency: 0.8, shaft_power:")
    with pytest.raises(InputErrors, match="a turbine with extractions has an isentropic efficiency"):
        audit_text(tmp_path, text)
