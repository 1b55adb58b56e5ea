"""The laws against analytic cases (R exact since the 2019 SI) and the classical bounds.

Argon at 0.1-1 kPa is an ideal gas to about 1e-5 (second virial coefficient about −16 cm³/mol at
298 K, so B·P/(R T) ≈ 6e-6 at 1 kPa), so the analytic values hold to rtol 2e-5.
"""

from __future__ import annotations

import math

import pytest
from conftest import assert_close, audit_text

from audit.properties.engine import GAS_CONSTANT
from audit.steps.balances import heat_exergy_factor

R = 8.314_462_618_153_24  # J/(mol K), N_A·k exact (CODATA 2018)
T0 = 298.15
M_AR = 0.039948  # kg/mol (CoolProp's molar mass of argon)

HEADER = """
balance:
  name: analytic cases
  dead_state: {T: 298.15 K, P: 101.325 kPa}
  tolerances: {energy_absolute: 0.001 W, energy_absolute_batch: 0.001 J, energy_relative: 1.0e-4}
"""


def test_gas_constant_is_exact():
    assert GAS_CONSTANT == R


def test_isothermal_expansion_closed_reversible_work_is_minus_delta_A(tmp_path):
    # 1 mol of ideal gas, isothermal at T0, 1 kPa → 100 Pa: W_rev = −ΔA = n R T ln(V2/V1)
    # = R T0 ln 10 = 5708.0095 J (reference-values row 28).
    body = f"""
streams:
  X: {{fluid: Argon, T: 298.15 K, P: 1 kPa, flow: 1 mol/s}}
steps:
  - id: EXP
    kind: vessel
    fluid: Argon
    mass: {M_AR} kg
    initial: {{T: 298.15 K, P: 1 kPa}}
    final: {{T: 298.15 K, P: 100 Pa}}
    heat: [{{added: 5708.0095 J, temperature: 298.15 K}}]
    work_delivered: 5708.0095 J
"""
    result = audit_text(tmp_path, body, HEADER)
    step = result.step("EXP")
    expected = R * T0 * math.log(10.0)
    assert_close(expected, 5708.0095, "J", atol=1e-4)
    assert step.bound_basis == "-ΔA (isothermal closed)"
    assert_close(step.classical_bound, expected, "J", rtol=2e-5, what="−ΔA")
    assert_close(step.W_rev, expected, "J", rtol=2e-5, what="W_rev")
    assert_close(step.S_gen, 0.0, "J/K", atol=19.14476 * 2e-5, what="S_gen, reversible expansion")
    assert not [f for f in result.findings if f.severity == "error"]


def test_free_expansion_generates_R_ln_10(tmp_path):
    # Unresisted expansion of 1 mol, 1 kPa → 100 Pa, no heat, no work: S_gen = R ln 10 =
    # 19.14476 J/K and the exergy destroyed T0 S_gen = 5708.01 J (Gouy–Stodola; row 28).
    body = f"""
streams:
  X: {{fluid: Argon, T: 298.15 K, P: 1 kPa, flow: 1 mol/s}}
steps:
  - id: FREE
    kind: vessel
    fluid: Argon
    mass: {M_AR} kg
    initial: {{T: 298.15 K, P: 1 kPa}}
    final: {{T: 298.15 K, P: 100 Pa}}
    heat: []
    work_delivered: 0 J
"""
    result = audit_text(tmp_path, body, HEADER)
    step = result.step("FREE")
    assert_close(step.S_gen, 19.14476, "J/K", rtol=2e-5)
    assert_close(step.exergy_destroyed, 5708.01, "J", rtol=2e-5)


def test_isothermal_flow_expansion_bound_is_minus_delta_G(tmp_path):
    # Steady flow of 1 mol/s of ideal gas at T0, 1 kPa → 100 Pa, heat from the surroundings at T0:
    # W_rev = −ΔG = ṅ R T0 ln 10 = 5708.0095 W.
    body = """
streams:
  IN: {fluid: Argon, T: 298.15 K, P: 1 kPa, flow: 1 mol/s}
  OUT: {fluid: Argon, T: 298.15 K, P: 100 Pa, flow: 1 mol/s}
steps:
  - id: ISO
    kind: general
    inlets: [IN]
    outlets: [OUT]
    heat_temperature: 298.15 K
"""
    result = audit_text(tmp_path, body, HEADER)
    step = result.step("ISO")
    expected = R * T0 * math.log(10.0)
    assert step.bound_basis == "-ΔG (isothermal flow)"
    assert_close(step.classical_bound, expected, "W", rtol=2e-5)
    assert_close(step.W_rev, expected, "W", rtol=2e-5)
    assert step.inferred == ["heat"]


def test_exergy_of_heat_and_carnot_factor():
    # Q = 1000 kJ at 600 K with T0 = 298.15 K: Ex_Q = 503.0833 kJ; Carnot 800/300 K: 0.625
    # (reference-values row 30, analytic).
    assert_close(1000e3 * heat_exergy_factor(600.0, 298.15), 503.0833e3, "kJ", atol=0.05)
    assert heat_exergy_factor(800.0, 300.0) == pytest.approx(0.625, abs=1e-15)
    assert heat_exergy_factor(math.inf, 300.0) == 1.0


CARNOT_HEADER = """
balance:
  name: carnot
  dead_state: {T: 300 K, P: 101.325 kPa}
"""


@pytest.mark.parametrize(
    "work,expected",
    [
        ("625 kW", set()),
        ("650 kW", {("ENGINE", "work-above-bound"), ("ENGINE", "negative-entropy-generation")}),
    ],
)
def test_carnot_limit(tmp_path, work, expected):
    # A heat engine between 800 K and 300 K (= T0) can deliver at most 62.5 % of the heat it
    # receives: 625 kW of 1 MW. The stream passes through unchanged; the rejected heat closes the
    # first law, so a claim above the limit shows as both work above the bound and negative S_gen.
    # Values are written with the digits they hold ("1000 kW", "2.000 bar"): "1 MW" would be
    # ±0.5 MW and "2 bar" ±0.5 bar by the half-digit rule of the default verdict.
    rejected = {"625 kW": "375 kW", "650 kW": "350 kW"}[work]
    body = f"""
streams:
  A: {{fluid: Nitrogen, T: 350.0 K, P: 2.000 bar, flow: 1.000 kg/s}}
  B: {{fluid: Nitrogen, T: 350.0 K, P: 2.000 bar, flow: 1.000 kg/s}}
steps:
  - id: ENGINE
    kind: general
    inlets: [A]
    outlets: [B]
    heat:
      - {{added: 1000 kW, temperature: 800 K}}
      - {{removed: {rejected}, temperature: 300 K}}
    work_delivered: {work}
"""
    result = audit_text(tmp_path, body, CARNOT_HEADER)
    step = result.step("ENGINE")
    assert_close(step.W_rev, 625e3, "kW", rtol=1e-9, what="W_rev of the Carnot engine")
    assert {(f.step, f.name) for f in result.findings} == expected


def test_entropy_generated_by_heat_transfer(tmp_path):
    # 1000 kW passing from 600 K to 300 K: S_gen = 1000/300 − 1000/600 = 1.666667 kW/K (row 30).
    body = """
streams:
  A: {fluid: Nitrogen, T: 350 K, P: 2 bar, flow: 1 kg/s}
  B: {fluid: Nitrogen, T: 350 K, P: 2 bar, flow: 1 kg/s}
steps:
  - id: WALL
    kind: general
    inlets: [A]
    outlets: [B]
    heat:
      - {added: 1000 kW, temperature: 600 K}
      - {removed: 1000 kW, temperature: 300 K}
"""
    result = audit_text(tmp_path, body, CARNOT_HEADER)
    step = result.step("WALL")
    assert_close(step.S_gen, 1666.667, "W/K", atol=1e-3)
    assert_close(step.exergy_destroyed, 300.0 * 1666.6667, "kW", rtol=1e-6)
    assert_close(
        step.W_rev - step.W,
        step.exergy_destroyed + step.energy_residual,
        "W",
        rtol=1e-9,
        what="Gouy–Stodola: W_rev − W = T0 S_gen + residual",
    )


def test_boiling_at_saturation_gibbs_bound_is_zero(tmp_path):
    # Liquid water boiling at its saturation point at constant T and P: ΔG = 0, so no work other
    # than expansion work; h_fg at 100 °C = 2256.404 kJ/kg (IAPWS-95, reference-values row 9).
    body = """
streams:
  L: {fluid: Water, T: 100 degC, quality: 0, flow: 1 kg/s}
  V: {fluid: Water, T: 100 degC, quality: 1, flow: 1 kg/s}
steps:
  - id: BOIL
    kind: heater
    inlet: L
    outlet: V
    source_temperature: 100 degC
"""
    result = audit_text(tmp_path, body, HEADER)
    step = result.step("BOIL")
    assert step.bound_basis == "-ΔG (isothermal flow)"
    assert abs(step.classical_bound) < 1e-6 * step.Q  # ΔG = 0 to the flash's precision
    assert_close(step.Q, 2256.404e3, "kJ/kg", atol=2.0, what="inferred duty = h_fg")
    assert_close(step.S_gen, 0.0, "W/K", atol=1e-6 * step.Q / 373.15)
    assert "duty" in step.inferred
