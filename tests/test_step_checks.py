"""Each check fires on a step built to violate it and stays silent on the same step made
consistent. The consistent base is the sample site's clean revision (no findings at all); each
case changes one thing in it."""

from __future__ import annotations

import pytest
from conftest import SAMPLE, audit_text, names

import audit
from audit.errors import InputError

CLEAN = (SAMPLE / "quillon-bay-clean.yaml").read_text(encoding="utf-8")


def audit_variant(tmp_path, old: str, new: str):
    assert old in CLEAN, f"the clean sample no longer contains {old!r}"
    path = tmp_path / "variant.yaml"
    path.write_text(CLEAN.replace(old, new, 1), encoding="utf-8")
    return audit.run(path)


def test_clean_sample_is_silent():
    result = audit.run(SAMPLE / "quillon-bay-clean.yaml")
    assert result.findings == []


CASES = [
    # (check, text in the clean revision, replacement, expected (step, finding))
    (
        "efficiency above one",
        "S04: {fluid: Water, T: 186.8 degC",
        "S04: {fluid: Water, quality: 0.97",
        ("T1", "section-efficiency-above-one"),  # T1 has an extraction: checked per section
    ),
    (
        "liquid at compressor suction",
        "S21: {fluid: Ammonia, T: -5 degC, P: 1.893 barg",
        "S21: {fluid: Ammonia, quality: 0.9, P: 1.893 barg",
        ("C1", "liquid-at-suction"),
    ),
    (
        "pump inlet not liquid",
        "S01: {fluid: Water, T: 105 degC",
        "S01: {fluid: Water, T: 130 degC",
        ("P1", "pump-inlet-not-liquid"),
    ),
    (
        "pump inlet near saturation",
        "S01: {fluid: Water, T: 105 degC",
        "S01: {fluid: Water, T: 112.5 degC",
        ("P1", "pump-near-saturation"),
    ),
    (
        "valve raises pressure",
        "T: 179.9 degC, P: 1.0 barg",
        "T: 179.9 degC, P: 4.0 barg",
        ("V1", "pressure-wrong-way"),
    ),
    (
        "valve not isenthalpic",
        "T: 179.9 degC, P: 1.0 barg",
        "T: 165 degC, P: 1.0 barg",
        ("V1", "valve-not-isenthalpic"),
    ),
    (
        "heat source colder than the stream",
        "source_temperature: -2 degC",
        "source_temperature: -20 degC",
        ("R1", "source-too-cold"),
    ),
    (
        "heat sink hotter than the stream",
        "duty: 712.9 kW\n    sink_temperature: 25 degC",
        "duty: 712.9 kW\n    sink_temperature: 35 degC",
        ("CD1", "sink-too-hot"),
    ),
    ("claimed duty differs from the sides", "duty: 4.48 MW", "duty: 4.0 MW", ("HX1", "duty-mismatch")),
    (
        "approach below the stated minimum",
        "    arrangement: counter-current\n",
        "    arrangement: counter-current\n    tolerances: {min_approach: 80 K}\n",
        ("HX1", "approach-below-minimum"),
    ),
    (
        "splitter outlet differs",
        "S06: {fluid: Water, T: 186.8 degC",
        "S06: {fluid: Water, T: 190 degC",
        ("SP1", "splitter-state-differs"),
    ),
    (
        "declared phase differs",
        "flow: 10.8 t/h, phase: liquid",
        "flow: 10.8 t/h, phase: vapour",
        (None, "phase-mismatch"),
    ),
    (
        "stream not used",
        "  # --- ammonia refrigeration",
        "  S99: {fluid: Water, T: 20 degC, P: 2 bar, flow: 1 kg/s}\n  # --- ammonia refrigeration",
        (None, "stream-unused"),
    ),
    (
        "turbine claims more than its exergy drop",
        "shaft_power: 1.120 MW",
        "shaft_power: 1.45 MW",
        ("T1", "work-above-bound"),
    ),
    (
        "compressor below its reversible minimum",
        "shaft_power: 152.3 kW",
        "shaft_power: 95 kW",
        ("C1", "input-below-minimum"),
    ),
    ("energy does not close", "heat_loss: 45 kW", "heat_loss: 450 kW", ("B1", "energy-imbalance")),
    ("claimed boiler duty differs", "duty: 8.30 MW", "duty: 8.60 MW", ("B1", "duty-mismatch")),
    (
        "mass not conserved",
        "flow: 3.1 t/h, description: to letdown valve",
        "flow: 3.4 t/h, description: to letdown valve",
        ("SP1", "mass-imbalance"),
    ),
    ("vessel heat that cannot be", "added: 458.6 MJ", "added: 400 MJ", ("CIP1", "energy-imbalance")),
]


@pytest.mark.parametrize("old,new,expected", [c[1:] for c in CASES], ids=[c[0] for c in CASES])
def test_check_fires(tmp_path, old, new, expected):
    result = audit_variant(tmp_path, old, new)
    assert expected in names(result), result.findings


HEADER = """
balance:
  name: check cases
  site_pressure: 1.013 bar
"""


@pytest.mark.parametrize("quality,fires", [(0.86, True), (0.92, False)])
def test_wet_exhaust(tmp_path, quality, fires):
    # Moisture above 12 % (common practice: 10-12 % is the usual design limit) is warned of.
    body = f"""
streams:
  IN: {{fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s}}
  OUT: {{fluid: Water, P: 0.1 bar, quality: {quality}, flow: 1 kg/s}}
steps:
  - {{id: T9, kind: turbine, inlet: IN, outlet: OUT}}
"""
    result = audit_text(tmp_path, body, HEADER)
    assert (("T9", "wet-exhaust") in names(result)) is fires


WATER_HX = """
streams:
  HI: {{fluid: Water, T: 90 degC, P: 3 bar, flow: 1 kg/s}}
  HO: {{fluid: Water, T: {hot_out} degC, P: 3 bar, flow: 1 kg/s}}
  CI: {{fluid: {cold_fluid}, T: 20 degC, P: 3 bar, flow: 1 kg/s}}
  CO: {{fluid: Water, T: {cold_out} degC, P: 3 bar, flow: 1 kg/s}}
steps:
  - id: HX9
    kind: heat_exchanger
    hot: {{inlet: HI, outlet: HO}}
    cold: {{inlet: CI, outlet: CO}}
    arrangement: {arrangement}
"""


@pytest.mark.parametrize(
    "arrangement,hot_out,cold_out,expected",
    [
        ("counter-current", 40, 70, set()),
        ("counter-current", 30, 80, set()),
        ("co-current", 40, 70, {("HX9", "temperature-cross")}),  # hot leaves colder than cold leaves
        ("co-current", 56, 54, set()),
    ],
)
def test_temperature_cross(tmp_path, arrangement, hot_out, cold_out, expected):
    # Equal flows of water: the duties match when hot_in − hot_out = cold_out − cold_in (within
    # the small variation of cp).
    body = WATER_HX.format(
        hot_out=hot_out, cold_out=cold_out, arrangement=arrangement, cold_fluid="Water"
    )
    result = audit_text(tmp_path, body, HEADER)
    assert names(result) == expected, result.findings


def test_side_changes_fluid(tmp_path):
    body = WATER_HX.format(hot_out=40, cold_out=70, arrangement="counter-current", cold_fluid="Ethanol")
    result = audit_text(tmp_path, body, HEADER)
    assert ("HX9", "side-changes-fluid") in names(result)


@pytest.mark.parametrize("outlet_pressure,fires", [("2 bar", False), ("5 bar", True)])
def test_mixer_outlet_pressure(tmp_path, outlet_pressure, fires):
    # Two equal water flows at 20 and 80 °C mix to 50 °C (cp nearly constant: within tolerance).
    body = f"""
streams:
  A: {{fluid: Water, T: 20 degC, P: 3 bar, flow: 1 kg/s}}
  B: {{fluid: Water, T: 80 degC, P: 3 bar, flow: 1 kg/s}}
  M: {{fluid: Water, T: 50 degC, P: {outlet_pressure}, flow: 2 kg/s}}
steps:
  - {{id: MX, kind: mixer, inlets: [A, B], outlet: M}}
"""
    result = audit_text(tmp_path, body, HEADER)
    assert (("MX", "mixer-outlet-pressure") in names(result)) is fires
    assert ("MX", "energy-imbalance") not in names(result)


def test_turbine_pressure_rising_is_flagged(tmp_path):
    body = """
streams:
  IN: {fluid: Water, T: 300 degC, P: 2 bar, flow: 1 kg/s}
  OUT: {fluid: Water, T: 400 degC, P: 10 bar, flow: 1 kg/s}
steps:
  - {id: T9, kind: turbine, inlet: OUT, outlet: IN}
  - {id: C9, kind: compressor, inlet: OUT, outlet: IN, tolerances: {energy_relative: 0.5}}
"""
    with pytest.raises(InputError, match="consumed by more than one step"):
        audit_text(tmp_path, body, HEADER)


def test_efficiency_above_one_says_where_the_efficiency_comes_from(tmp_path):
    # Water pumped from 1 to 10 bar with no temperature rise: the outlet enthalpy lies below the
    # isentropic one (v ΔP about 0.90 kJ/kg against about 0.85 kJ/kg at constant T), so the
    # efficiency from the streams is above 1. The message names that basis, and the tolerance's
    # make-up is kept apart from it.
    result = audit_text(
        tmp_path,
        """
        streams:
          W1: {fluid: Water, flow: 10 kg/s, T: 20.0000 °C, P: 1.0000 bar}
          W2: {fluid: Water, flow: 10 kg/s, T: 20.0000 °C, P: 10.0000 bar}
        steps:
          - {id: P9, kind: pump, inlet: W1, outlet: W2}
        """,
    )
    (found,) = [f for f in result.findings if f.name == "efficiency-above-one"]
    assert "the isentropic efficiency from the streams is" in found.message
    assert "allowance" not in found.message.split(" is ")[0]
    # enthalpies as changes from the inlet (water's absolute h sits on the formation basis)
    assert "isentropic enthalpy change 0.90" in found.message
