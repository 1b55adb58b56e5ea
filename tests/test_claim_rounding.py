"""Claim checks on the rounding-bound verdict: a claimed duty, a stack's electrical power, the heat
an electrolyser below its thermoneutral voltage needs, and the cell voltage against the reversible
one are judged against the rounding of the written values (half a unit in the last written digit,
GUM JCGM 100:2008 §F.2.2.1, carried worst-case through the step) plus the property-method
allowance, not against a written 1 % rule. A slip just beyond that bound fires; the same value
written with fewer digits, whose rounding covers it, does not.

Oracles: the arithmetic of each check (V × I × N, n F ξ (E_tn − V), a side's ṁ Δh written to the
watt); E_rev = 1.22889 V and E_tn = 1.48121 V at 25 °C, 1 bar with liquid water (CODATA Key Values
1989, reference-values rows 21, 22).
"""

from __future__ import annotations

import CoolProp.CoolProp as CP
import pytest
from conftest import SAMPLE, audit_text

import audit

E_REV, E_TN = 1.22889, 1.48121  # V, reference-values rows 21, 22
F = 96_485.332_12  # C/mol, CODATA 2018 (exact: N_A e)


def _found(result, name: str):
    return [f for f in result.findings if f.name == name]


# -- a heat exchanger's claimed duty ---------------------------------------------------------------
def _exchanger(tmp_path, duty: str):
    """Water to water, 1 kg/s each side, states written with (P, h) to 1 J/kg: the hot side
    releases and the cold side receives exactly 100.300 kW (ṁ Δh)."""
    return audit_text(
        tmp_path,
        f"""
        streams:
          HI: {{fluid: Water, P: 3 bar, h: 335.000 kJ/kg, flow: 1.00000 kg/s}}
          HO: {{fluid: Water, P: 3 bar, h: 234.700 kJ/kg, flow: 1.00000 kg/s}}
          CI: {{fluid: Water, P: 3 bar, h: 84.000 kJ/kg, flow: 1.00000 kg/s}}
          CO: {{fluid: Water, P: 3 bar, h: 184.300 kJ/kg, flow: 1.00000 kg/s}}
        steps:
          - id: HX
            kind: heat_exchanger
            hot: {{inlet: HI, outlet: HO}}
            cold: {{inlet: CI, outlet: CO}}
            arrangement: counter-current
            duty: {duty}
        """,
    )


def test_a_duty_slip_beyond_its_written_rounding_fires(tmp_path):
    # "100.0 kW" stands for 100.0 ± 0.05 kW: 0.3 kW short of the sides' 100.3 kW is beyond it and
    # beyond the property-method allowance (4e-4 of the side's duty, 0.04 kW); the old 1 % rule
    # (1 kW here) let it pass.
    (finding,) = _found(_exchanger(tmp_path, "100.0 kW"), "duty-mismatch")
    assert finding.margin == pytest.approx(300.0, abs=1e-3)
    assert finding.tolerance_rule == "rounding"
    assert finding.rounding_bound == pytest.approx(50.0, abs=3.0)  # the duty; flows and h add 1.5 W
    assert finding.tolerance < finding.margin
    assert "of which 0.05" in finding.message and "from the rounding of the written values" in (
        finding.message
    )


def test_a_duty_within_its_written_rounding_is_silent(tmp_path):
    # "100 kW", a round figure, stands for 100 ± 0.5 kW (its third significant digit): the sides'
    # 100.3 kW lies within it.
    assert _found(_exchanger(tmp_path, "100 kW"), "duty-mismatch") == []


# -- an electrolyser's claims ----------------------------------------------------------------------
def _electrolyser(tmp_path, claims: str, cells: int = 10, current: float = 1000.0):
    xi = cells * current / (2 * F)  # mol/s of water split, ξ = I N / 2F
    return audit_text(
        tmp_path,
        f"""
        streams:
          W: {{fluid: Water, T: 25 degC, P: 1 bar, flow: {xi:.9f} mol/s}}
          H: {{fluid: Hydrogen, T: 25 degC, P: 1 bar, flow: {xi:.9f} mol/s}}
          O: {{fluid: Oxygen, T: 25 degC, P: 1 bar, flow: {xi / 2:.9f} mol/s}}
        steps:
          - id: EL
            kind: electrolyser
            inlets: [W]
            outlets: [H, O]
            cells: {cells}
            temperature: 25 degC
            pressure: 1 bar
            {claims}
        """,
    )


def _power_claims(power: str) -> str:
    return f"cell_voltage: 1.800 V\n            current: 1000.0 A\n            power: {power}"


def test_a_power_slip_beyond_the_rounding_of_v_i_and_power_fires(tmp_path):
    # V I N = 1.800 V × 1000.0 A × 10 = 18.000 kW. Rounding, worst case: 0.0005 V × 10 kA = 5 W,
    # 0.05 A × 18 V = 0.9 W, and the power's own 0.5 W: 6.4 W. 10 W over is beyond it.
    (finding,) = _found(_electrolyser(tmp_path, _power_claims("18.010 kW")), "power-mismatch")
    assert finding.margin == pytest.approx(10.0, abs=1e-6)
    assert finding.rounding_bound == pytest.approx(6.4, rel=1e-6)
    assert "tolerance 0.0064 kW, of which 0.0064 kW from the rounding of the written values" in (
        finding.message
    )


def test_a_power_within_the_rounding_of_v_i_and_power_is_silent(tmp_path):
    # 5 W over, within the 6.4 W the written digits leave open.
    assert _found(_electrolyser(tmp_path, _power_claims("18.005 kW")), "power-mismatch") == []


def _below_thermoneutral(tmp_path, voltage: str, heat_in: str):
    claims = (
        f"cell_voltage: {voltage}\n            current: 1000.0 A\n"
        f"            heat: [{{added: {heat_in}, temperature: 25 degC}}]"
    )
    return _electrolyser(tmp_path, claims, cells=100)


def test_heat_short_of_the_thermoneutral_need_beyond_rounding_fires(tmp_path):
    # 100 cells at 1.40 V, 1000 A must take in n F ξ (E_tn − V) = 100 kA × 0.08121 V = 8.121 kW.
    # Showing 7.00 kW is 1.12 kW short; the rounding of "1.40 V" (±5 mV × 100 kA = 0.5 kW), of the
    # heat (±5 W) and the allowance of E_tn (0.5 mV × 100 kA = 50 W) leave about 0.56 kW open.
    (finding,) = _found(
        _below_thermoneutral(tmp_path, "1.40 V", "7.00 kW"), "heat-needed-below-thermoneutral"
    )
    assert finding.margin == pytest.approx(100_000 * (E_TN - 1.40) - 7_000.0, abs=30.0)
    assert finding.tolerance_rule == "rounding"
    assert finding.rounding_bound == pytest.approx(505.0, abs=10.0)


def test_heat_short_of_the_thermoneutral_need_within_rounding_is_silent(tmp_path):
    # 7.80 kW shown is 0.32 kW short of 8.121 kW: within the 0.5 kW that "1.40 V" leaves open.
    found = _below_thermoneutral(tmp_path, "1.40 V", "7.80 kW")
    assert _found(found, "heat-needed-below-thermoneutral") == []


def test_a_voltage_below_reversible_beyond_its_rounding_fires(tmp_path):
    # "1.20 V" is 1.20 ± 0.005 V: 28.9 mV below E_rev is beyond 0.5 mV plus its rounding.
    result = _electrolyser(tmp_path, "cell_voltage: 1.20 V\n            current: 1000.0 A")
    (finding,) = _found(result, "voltage-beyond-reversible")
    assert finding.margin == pytest.approx(E_REV - 1.20, abs=3e-4)
    # 5 mV from the voltage, about 0.1 mV from the temperatures carried into E_rev
    assert finding.rounding_bound == pytest.approx(0.005, abs=2e-4)
    assert "cannot split at less (tolerance 5.6" in finding.message
    assert "mV from the rounding of the written values" in finding.message


def test_a_voltage_within_its_written_rounding_is_silent(tmp_path):
    # "1.2 V" is 1.2 ± 0.05 V, which reaches above E_rev: the same voltage, fewer digits.
    result = _electrolyser(tmp_path, "cell_voltage: 1.2 V\n            current: 1000.0 A")
    assert _found(result, "voltage-beyond-reversible") == []


# -- a fired heater's claimed duty (the sample site's boiler) --------------------------------------
def _boiler(tmp_path, duty: str):
    clean = (SAMPLE / "quillon-bay-clean.yaml").read_text(encoding="utf-8")
    assert "duty: 8.30 MW" in clean
    path = tmp_path / "boiler.yaml"
    path.write_text(clean.replace("duty: 8.30 MW", f"duty: {duty}", 1), encoding="utf-8")
    return audit.run(path)


def _heated_side() -> float:
    """The boiler's heated side, 10.8 t/h of water from 105.73 °C, 41.5 barg to 400 °C, 40 barg
    (site pressure 1.013 bar): ṁ (h_out − h_in) on IAPWS-95 (CoolProp, the reference library) [W]."""
    m = 10.8e3 / 3600.0
    h_in = CP.PropsSI("H", "T", 378.88, "P", 42.513e5, "Water")
    h_out = CP.PropsSI("H", "T", 673.15, "P", 41.013e5, "Water")
    return m * (h_out - h_in)


def test_a_boiler_duty_beyond_the_rounding_of_its_side_fires(tmp_path):
    # 8.36 MW claimed, about 61 kW above the heated side. Rounding, worst case: the duty's ±5 kW and
    # the flow's ±0.05 t/h × Δh (about 38 kW), with the states' few kW: under 50 kW. The old 1 %
    # rule (about 89 kW here) let it pass.
    (finding,) = _found(_boiler(tmp_path, "8.36 MW"), "duty-mismatch")
    assert finding.margin == pytest.approx(8.36e6 - _heated_side(), abs=100.0)
    assert finding.tolerance_rule == "rounding"
    assert 43e3 < finding.rounding_bound < 50e3
    assert finding.tolerance < finding.margin


def test_a_boiler_duty_within_the_rounding_of_its_side_is_silent(tmp_path):
    # 8.34 MW, about 41 kW above the heated side: within what "10.8 t/h" and "8.34 MW" leave open.
    assert 8.34e6 - _heated_side() < 43e3
    assert _found(_boiler(tmp_path, "8.34 MW"), "duty-mismatch") == []
