"""Chillers and heat pumps given by their liquid sides: the COP against the reversible one from the
entropy balance over the four streams (:mod:`audit.steps.kinds.chiller`).

The case of the checks: chilled water 12 → 7 °C against condenser water 30 → 35 °C. For liquid
water of nearly constant specific heat each side's entropic mean temperature is the log mean of its
terminals (analytic), 282.64 K and 305.64 K, so COP_rev = 282.64 / 23.00 = 12.29: a COP of 15 is
impossible although the Carnot figure between the inlet temperatures (285.15 / 18 = 15.8) would
pass it, and a COP of 12 is possible although the one between the extreme temperatures
(280.15 / 28 = 10.0) would fail it.
"""

from __future__ import annotations

import math

import CoolProp.CoolProp as CP
import pytest
from conftest import assert_close, audit_text, names

from audit.physics.refrigeration import (
    entropic_mean_temperature,
    reversible_cop_cooling,
    reversible_cop_heating,
)

P = 3e5


def _h(T_c: float) -> float:
    # IAPWS-95 through CoolProp, only to build a consistent case (the checks are analytic)
    return CP.PropsSI("H", "T", T_c + 273.15, "P", P, "Water")


def _log_mean(a: float, b: float) -> float:
    return (b - a) / math.log(b / a)


def test_entropic_mean_temperature_of_a_constant_specific_heat_is_the_log_mean():
    # analytic: dh = c ΔT, ds = c ln(T2/T1) for a liquid of constant c
    c, T1, T2 = 4186.0, 285.15, 280.15
    T_bar = entropic_mean_temperature(c * (T2 - T1), c * math.log(T2 / T1), T1, T2)
    assert_close(T_bar, _log_mean(T1, T2), "K", rtol=1e-12)
    assert entropic_mean_temperature(0.0, 0.0, 300.0, 300.0) == 300.0


def test_reversible_cop_is_carnot_between_the_entropic_mean_temperatures():
    # Carnot COP T_L / (T_H − T_L) and T_H / (T_H − T_L) (Moran & Shapiro, 8th ed., eq. 5.10, 5.11)
    assert_close(reversible_cop_cooling(270.0, 300.0), 9.0, rtol=1e-14)
    assert_close(reversible_cop_heating(270.0, 300.0), 10.0, rtol=1e-14)
    assert reversible_cop_cooling(300.0, 300.0) == math.inf
    T_e, T_c = _log_mean(285.15, 280.15), _log_mean(303.15, 308.15)
    assert_close(reversible_cop_cooling(T_e, T_c), 12.29, rtol=1e-3)  # analytic, see the docstring
    assert 285.15 / (303.15 - 285.15) > 15 > reversible_cop_cooling(T_e, T_c) > 12
    assert 280.15 / (308.15 - 280.15) < 12


def _chiller(
    cop: float, written_cop: bool = False, kind: str = "chiller", duty: float | None = None
) -> str:
    m_e = 10.0 if duty is None else round(duty / (_h(12.0) - _h(7.0)), 6)
    Q_e = m_e * (_h(12.0) - _h(7.0))
    power = Q_e / cop
    m_c = (Q_e + power) / (_h(35.0) - _h(30.0))
    claim = f"cop: {cop}" if written_cop else f"power: {power / 1e3:.6f} kW"
    return f"""
streams:
  CHW1: {{fluid: Water, T: 12 degC, P: 3 bar, flow: {m_e} kg/s}}
  CHW2: {{fluid: Water, T: 7 degC, P: 3 bar, flow: {m_e} kg/s}}
  CW1: {{fluid: Water, T: 30 degC, P: 3 bar, flow: {m_c:.6f} kg/s}}
  CW2: {{fluid: Water, T: 35 degC, P: 3 bar, flow: {m_c:.6f} kg/s}}
steps:
  - id: CH1
    kind: {kind}
    evaporator: {{inlet: CHW1, outlet: CHW2}}
    condenser: {{inlet: CW1, outlet: CW2}}
    {claim}
"""


def test_cop_12_is_possible(tmp_path):
    result = audit_text(tmp_path, _chiller(12.0))
    assert names(result) == set()


def test_cop_15_is_above_the_reversible_limit(tmp_path):
    result = audit_text(tmp_path, _chiller(15.0))
    found = {f.name: f for f in result.findings}
    assert "cop-above-reversible" in found
    finding = found["cop-above-reversible"]
    assert_close(finding.claimed, 15.0, rtol=1e-6)
    assert_close(finding.bound, 12.29, rtol=1e-3)  # analytic log-mean limit, see the docstring
    assert "the cooling COP 15 is above the reversible 12.3" in finding.message
    # the work bound over the four streams says the same (less power than the reversible minimum)
    assert "input-below-minimum" in found


def test_a_written_cop_is_checked_too(tmp_path):
    result = audit_text(tmp_path, _chiller(15.0, written_cop=True))
    assert ("CH1", "cop-above-reversible") in names(result)
    result = audit_text(tmp_path, _chiller(12.0, written_cop=True))
    assert names(result) == set()


def test_heat_pump_heating_cop(tmp_path):
    # the same machine as a heat pump: heating COP = 1 + cooling COP; limit 13.29
    result = audit_text(tmp_path, _chiller(12.0, kind="heat_pump"))
    assert names(result) == set()
    text = _chiller(12.0, kind="heat_pump").replace("power:", "cop: 14.5\n    #")
    result = audit_text(tmp_path, text)
    found = {f.name: f for f in result.findings}
    assert "the heating COP 14.5 is above the reversible 13.3" in found["cop-above-reversible"].message


def test_sides_swapped(tmp_path):
    text = _chiller(12.0).replace("inlet: CHW1, outlet: CHW2", "inlet: CHW2, outlet: CHW1")
    result = audit_text(tmp_path, text)
    messages = [f.message for f in result.findings if f.name == "machine-side-wrong-way"]
    assert messages == [
        "the evaporator side is not cooled: it enters at 7.00 °C (CHW2) and leaves at 12.00 °C "
        "(CHW1) (inlet and outlet, or the two sides, swapped?)"
    ]


def test_cooling_duty_claim_and_side_mass(tmp_path):
    text = _chiller(12.0) + "    cooling_duty: 300 kW\n"
    result = audit_text(tmp_path, text)
    found = {f.name: f for f in result.findings}
    assert found["duty-mismatch"].message.startswith("the claimed cooling duty (300 kW) differs from")
    text = _chiller(12.0).replace(
        "CHW2: {fluid: Water, T: 7 degC, P: 3 bar, flow: 10.0",
        "CHW2: {fluid: Water, T: 7 degC, P: 3 bar, flow: 10.5",
    )
    result = audit_text(tmp_path, text)
    assert any(
        f.name == "mass-imbalance" and f.message.startswith("the evaporator side enters with 10 kg/s")
        for f in result.findings
    )


@pytest.mark.parametrize("kind", ["chiller", "heat_pump"])
def test_inferred_power(tmp_path, kind):
    text = _chiller(12.0, kind=kind).replace("    power:", "    # power:")
    result = audit_text(tmp_path, text)
    assert names(result) == set()
    step = result.steps[0]
    assert "power" in step.inferred


def test_probable_cause_refrigeration_tons_written_as_kw(tmp_path):
    """A datasheet's 60 TR (211.0 kW, the duty of the streams) written as '60 kW' with its COP:
    the power the audit takes, duty / COP, misses the first law; the cause names the tons.
    1 TR = 12 000 Btu/h = 3516.85 W (international-table Btu, 1055.05585262 J)."""
    text = _chiller(12.0, written_cop=True, duty=60 * 3516.852842) + "    cooling_duty: 60 kW\n"
    result = audit_text(tmp_path, text)
    energy = next(f for f in result.findings if f.name == "energy-imbalance")
    assert energy.probable_causes[0].startswith(
        "closes if step CH1's cooling_duty '60 kW' is 211 kW (refrigeration tons written as kW)"
    )


def test_a_written_cop_is_judged_on_its_own_digits(tmp_path):
    """Limit 12.29 (analytic, above). `cop: 12.4` exceeds it by 0.11, within the property allowance
    (4e-4 of the limit carried through T_c/(T_c − T_e), about 0.065) plus half a unit of its last
    digit (0.05): no finding. `cop: 12.8` is beyond both, and the finding says how much of its
    tolerance the rounding makes."""
    assert names(audit_text(tmp_path, _chiller(12.4, written_cop=True))) == set()
    result = audit_text(tmp_path, _chiller(12.8, written_cop=True))
    (finding,) = [f for f in result.findings if f.name == "cop-above-reversible"]
    assert finding.tolerance_rule == "rounding"
    assert 0.05 <= finding.rounding_bound < 0.07  # the COP's own half unit plus the temperatures'
    assert "of which 0.05815 from the rounding of the written values" in finding.message


def test_a_flow_rounding_is_not_priced_at_water_formation_enthalpy(tmp_path):
    """Each side's heat is its inlet flow times its enthalpy change: writing one chilled-water flow
    0.05 kg/s apart (within the rounding of `10.0 kg/s`) moves the COP by half a percent, not by
    the 0.05 kg/s × 15.9 MJ/kg a side read as ṁ_out h_out − ṁ_in h_in would add."""
    text = _chiller(15.0).replace("T: 7 degC, P: 3 bar, flow: 10.0", "T: 7 degC, P: 3 bar, flow: 10.05")
    result = audit_text(tmp_path, text)
    excess = result.steps[0].checks["cop-above-reversible"]
    assert 2.5 < excess < 2.9  # 15 − 12.29 = 2.71, give or take the duty's 0.5 %
