"""Probable causes: each usual slip is named on a step that has exactly that slip, on every step a
slipped stream breaks, and no cause is named on a clean step or for a near miss.

The scenarios are steps of the Quillon Bay clean revision (whose values close within tolerance)
with one slip seeded each; where a step had to be built afresh, the claim is computed with the
``iapws`` library (IAPWS-95), independently of the CoolProp engine under test.
"""

from __future__ import annotations

import pytest
from conftest import SAMPLE, audit_text

import audit
from audit.review.causes import MAX_CAUSES

iapws = pytest.importorskip("iapws")

HEADER = """
balance:
  name: test balance
  site_pressure: 1.013 bar
"""
SITE = 1.013  # bar


def _audit(tmp_path, body: str):
    return audit_text(tmp_path, body, header=HEADER)


def _causes(result, step: str) -> tuple[str, ...]:
    """The probable causes named on the step's law findings (the same on each)."""
    named = {f.probable_causes for f in result.findings if f.step == step and f.probable_causes}
    assert len(named) == 1, [(f.name, f.probable_causes) for f in result.findings]
    return named.pop()


def _h(T_C: float, P_bar: float) -> float:
    """IAPWS-95 specific enthalpy [kJ/kg] (iapws), T [°C], P [bar absolute]."""
    return iapws.IAPWS95(T=T_C + 273.15, P=P_bar / 10.0).h


AMMONIA_LOOP = """
streams:
  S20: {{fluid: Ammonia, P: {S20}, quality: 0.1447, flow: 0.500 kg/s}}
  S21: {{fluid: Ammonia, T: -5 degC, P: 1.893 barg, flow: 0.500 kg/s}}
  S23: {{fluid: Ammonia, T: 30 degC, P: 12.29 barg, flow: 0.500 kg/s}}
steps:
  - {{id: R1, kind: heater, inlet: S20, outlet: S21, duty: 560.6 kW, source_temperature: -2 degC}}
  - {{id: EV1, kind: valve, inlet: S23, outlet: S20}}
"""


def test_gauge_written_as_absolute_is_named_on_both_steps_of_the_shared_stream(tmp_path):
    # S20 leaves the valve EV1 and enters the evaporator R1: the slip breaks both.
    result = _audit(tmp_path, AMMONIA_LOOP.format(S20="1.893 bar"))
    assert {(f.step, f.name) for f in result.findings} >= {
        ("EV1", "valve-not-isenthalpic"),
        ("R1", "energy-imbalance"),
    }
    for step, other in (("EV1", "R1"), ("R1", "EV1")):
        assert _causes(result, step)[0] == (
            "closes if stream S20's pressure '1.893 bar' is gauge (1.893 barg, 2.906 bar "
            f"absolute), not absolute (it also closes {other})"
        )


def test_absolute_written_as_gauge(tmp_path):
    # 1.893 barg = 2.906 bar absolute written as '2.906 barg' (3.919 bar absolute)
    result = _audit(tmp_path, AMMONIA_LOOP.format(S20="2.906 barg"))
    assert _causes(result, "EV1")[0].startswith(
        "closes if stream S20's pressure '2.906 barg' is absolute (2.906 bar), not gauge"
    )


def test_kw_written_for_mw(tmp_path):
    result = _audit(
        tmp_path,
        """
        streams:
          S02: {fluid: Water, T: 105.73 degC, P: 41.5 barg, flow: 10.8 t/h}
          S03: {fluid: Water, T: 400 degC, P: 40 barg, flow: 10.8 t/h}
        steps:
          - {id: B1, kind: heater, inlet: S02, outlet: S03, duty: 8.30 kW,
             source_temperature: 1200 degC}
        """,
    )
    assert _causes(result, "B1")[0] == (
        "closes if step B1's duty '8.30 kW' is 1000 times larger (8.3 MW: kW written for MW)"
    )


def test_mw_written_for_kw(tmp_path):
    result = _audit(
        tmp_path,
        """
        streams:
          S01: {fluid: Water, T: 105 degC, P: 1.6 bar, flow: 10.8 t/h}
          S02: {fluid: Water, T: 105.73 degC, P: 41.5 barg, flow: 10.8 t/h}
        steps:
          - {id: P1, kind: pump, inlet: S01, outlet: S02, shaft_power: 18.3 MW}
        """,
    )
    assert _causes(result, "P1")[0] == (
        "closes if step P1's shaft_power '18.3 MW' is 1000 times smaller (18.3 kW: MW written for kW)"
    )


SPLITTER = """
streams:
  S04: {{fluid: Water, T: 186.8 degC, P: 3.5 barg, flow: {inlet}}}
  S05: {{fluid: Water, T: 186.8 degC, P: 3.5 barg, flow: {first}}}
  S06: {{fluid: Water, T: 186.8 degC, P: 3.5 barg, flow: {second}}}
steps:
  - {{id: SP1, kind: splitter, inlet: S04, outlets: [S05, S06]}}
"""


def test_t_per_h_and_kg_per_s_confused(tmp_path):
    result = _audit(tmp_path, SPLITTER.format(inlet="10.8 t/h", first="7.2 t/h", second="3.6 kg/s"))
    assert _causes(result, "SP1") == (
        "closes if stream S06's flow '3.6 kg/s' is 3.6 times smaller (1 kg/s: t/h written as kg/s)",
    )


def test_kg_per_h_and_kg_per_s_confused(tmp_path):
    result = _audit(tmp_path, SPLITTER.format(inlet="3 kg/s", first="2 kg/s", second="1 kg/h"))
    assert _causes(result, "SP1") == (
        "closes if stream S06's flow '1 kg/h' is 3600 times larger (1 kg/s: kg/s written as kg/h)",
    )


HEATER = """
streams:
  A: {{fluid: Water, T: 105 degC, P: 41.5 barg, flow: 3 kg/s}}
  B: {{fluid: Water, T: {outlet}, P: 40 barg, flow: 3 kg/s}}
steps:
  - {{id: H1, kind: heater, inlet: A, outlet: B, duty: {duty:.1f} kW}}
"""


def test_fahrenheit_written_as_celsius(tmp_path):
    # The outlet was read as 400 °F (204.44 °C, compressed liquid at 41 bar); the duty is
    # computed for that outlet with IAPWS-95, but the file writes '400 degC'.
    T = (400.0 - 32.0) * 5.0 / 9.0
    duty = 3.0 * (_h(T, 40.0 + SITE) - _h(105.0, 41.5 + SITE))
    result = _audit(tmp_path, HEATER.format(outlet="400 degC", duty=duty))
    assert _causes(result, "H1")[0] == (
        "closes if stream B's temperature '400 degC' is in °F (204.4 °C), not °C"
    )


def test_celsius_written_as_fahrenheit(tmp_path):
    duty = 3.0 * (_h(400.0, 40.0 + SITE) - _h(105.0, 41.5 + SITE))
    result = _audit(tmp_path, HEATER.format(outlet="400 degF", duty=duty))
    assert _causes(result, "H1")[0] == (
        "closes if stream B's temperature '400 degF' is in °C (400 °C), not °F"
    )


def test_inlet_and_outlet_swapped(tmp_path):
    result = _audit(
        tmp_path,
        """
        streams:
          S03: {fluid: Water, T: 400 degC, P: 40 barg, flow: 10.8 t/h}
          S04: {fluid: Water, T: 186.8 degC, P: 3.5 barg, flow: 10.8 t/h}
        steps:
          - {id: T1, kind: turbine, inlet: S04, outlet: S03, shaft_power: 1.148 MW}
        """,
    )
    assert _causes(result, "T1") == ("closes if inlet S04 and outlet S03 are swapped",)


def test_heat_with_the_wrong_sign(tmp_path):
    # the condenser's heat written as added instead of removed
    result = _audit(
        tmp_path,
        """
        streams:
          S22: {fluid: Ammonia, T: 137.6 degC, P: 12.49 barg, flow: 0.5 kg/s}
          S23: {fluid: Ammonia, T: 30 degC, P: 12.29 barg, flow: 0.5 kg/s}
        steps:
          - id: CD1
            kind: general
            inlets: [S22]
            outlets: [S23]
            heat: [{added: 712.9 kW, temperature: 25 degC}]
        """,
    )
    assert _causes(result, "CD1") == (
        "closes if step CD1's heat.added '712.9 kW' is removed, not added (the sign is wrong)",
    )


def test_seeded_sample_names_causes_only_where_a_slip_was_seeded():
    result = audit.run(SAMPLE / "quillon-bay-seeded.yaml")
    named = {f.step for f in result.findings if f.probable_causes}
    assert named == {"EV1", "R1"}
    for step in named:
        assert all(len(f.probable_causes) <= MAX_CAUSES for f in result.findings_for(step))
        assert "S20's pressure '1.893 bar' is gauge" in _causes(result, step)[0]


def test_no_cause_on_a_clean_balance():
    result = audit.run(SAMPLE / "quillon-bay-clean.yaml")
    assert not any(f.probable_causes for f in result.findings)
    assert result.provenance["probable causes"] == "0 step re-evaluations (audit.review.causes)"


def test_no_cause_for_a_near_miss(tmp_path):
    # The pump's power is 10 % low: no usual slip explains it, though reading S01 as gauge
    # (a liquid: h rises by v ΔP, about 0.1 kJ/kg) nudges the residual toward the tolerance.
    # Temperatures to 0.01 K: "105 degC" (±0.5 K, ±6 kW of liquid enthalpy) would cover the gap.
    result = _audit(
        tmp_path,
        """
        streams:
          S01: {fluid: Water, T: 105.00 degC, P: 1.600 bar, flow: 10.800 t/h}
          S02: {fluid: Water, T: 105.73 degC, P: 41.50 barg, flow: 10.800 t/h}
        steps:
          - {id: P1, kind: pump, inlet: S01, outlet: S02, shaft_power: 16.5 kW}
        """,
    )
    assert any(f.name == "energy-imbalance" for f in result.findings)
    assert not any(f.probable_causes for f in result.findings)
