"""The flash_drum step kind: adiabatic unless heat is claimed, outlets together and saturated, and
the lever rule. Check values: IAPWS-95 saturation states from the ``iapws`` package (a reference
implementation of IAPWS R6-95), the lever rule x = (h − h′) / (h″ − h′) written out here."""

from __future__ import annotations

import pytest
from conftest import assert_close, audit_text, names
from iapws import IAPWS95

# IAPWS-95 (iapws package): feed saturated liquid at 1 MPa, drum at 0.15 MPa.
FEED = IAPWS95(P=1.0, x=0.0)
LIQUID = IAPWS95(P=0.15, x=0.0)
VAPOUR = IAPWS95(P=0.15, x=1.0)
X = (FEED.h - LIQUID.h) / (VAPOUR.h - LIQUID.h)  # kJ/kg cancel: the quality after the flash
FLOW = 10.0


def _drum(vapour_flow: float, vapour: str = "quality: 1", liquid: str = "quality: 0", heat: str = ""):
    return f"""
streams:
  c1: {{fluid: Water, P: 10 bar, quality: 0, flow: {FLOW} kg/s}}
  v1: {{fluid: Water, P: 1.5 bar, {vapour}, flow: {vapour_flow:.6f} kg/s}}
  l1: {{fluid: Water, P: 1.5 bar, {liquid}, flow: {FLOW - vapour_flow:.6f} kg/s}}
steps:
  - {{id: F1, kind: flash_drum, inlet: c1, vapour: v1, liquid: l1{heat}}}
"""


def _errors(result, step="F1"):
    return {f.name for f in result.findings if f.step == step and f.severity == "error"}


def test_the_lever_rule_split_passes(tmp_path):
    assert 0.13 < X < 0.135  # the flash of 10-bar condensate to 1.5 bar: about 13 % vapour
    result = audit_text(tmp_path, _drum(X * FLOW))
    assert _errors(result) == set(), result.findings
    step = result.steps[0]
    assert step.kind == "flash_drum" and "adiabatic" in step.claimed
    assert_close(step.Q, 0.0, "kW", atol=1e-9)


def test_a_split_off_the_lever_rule_is_named(tmp_path):
    result = audit_text(tmp_path, _drum(2.0))
    assert ("F1", "drum-split-off-lever-rule") in names(result)
    finding = next(f for f in result.findings if f.name == "drum-split-off-lever-rule")
    assert_close(finding.bound, X * FLOW, "kg/s", rtol=1e-5)  # IAPWS-95 through iapws
    assert finding.stream == "v1"
    assert "the vapour outlet v1 carries 2 kg/s, 20 % of the feed, but the feed c1 flashed at " in (
        finding.message
    )
    assert "constant enthalpy to 1.5 bar has the quality 0.1327: the lever rule puts 1.327 kg/s" in (
        finding.message
    )
    # the drum never infers the missing heat: the first law fails as well
    assert "energy-imbalance" in _errors(result)


def test_a_superheated_vapour_outlet_is_not_saturated(tmp_path):
    result = audit_text(tmp_path, _drum(X * FLOW, vapour="T: 130 degC"))
    errors = _errors(result)
    assert {"drum-outlet-not-saturated", "drum-outlets-differ"} <= errors
    finding = next(f for f in result.findings if f.name == "drum-outlet-not-saturated")
    # IAPWS-95: T_sat(0.15 MPa) = LIQUID.T
    assert_close(finding.bound, LIQUID.T, "K", atol=1e-6)
    assert finding.message.startswith("the vapour outlet v1 is 18.7 K superheated (130.00 °C against")


def test_a_wet_vapour_outlet_is_not_saturated(tmp_path):
    result = audit_text(tmp_path, _drum(X * FLOW, vapour="quality: 0.9"))
    finding = next(f for f in result.findings if f.name == "drum-outlet-not-saturated")
    assert finding.message.startswith(
        "the vapour outlet v1 is two-phase with quality 0.9: it carries 10 % liquid"
    )


def test_outlets_at_two_pressures_differ(tmp_path):
    text = _drum(X * FLOW).replace("l1: {fluid: Water, P: 1.5 bar", "l1: {fluid: Water, P: 2 bar")
    result = audit_text(tmp_path, text)
    differ = [f for f in result.findings if f.name == "drum-outlets-differ"]
    assert any("leaves at 1.5 bar and the liquid outlet l1 at 2 bar" in f.message for f in differ)


def test_claimed_heat_enters_the_lever_rule_and_is_never_inferred(tmp_path):
    # 100 kW added to the drum: the vapour share is (h_feed + Q/ṁ − h′) / (h″ − h′).
    Q = 100.0  # kW
    x = (FEED.h + Q / FLOW - LIQUID.h) / (VAPOUR.h - LIQUID.h)
    heated = audit_text(tmp_path, _drum(x * FLOW, heat=", heat: [{added: 100 kW}]"))
    assert _errors(heated) == set(), heated.findings
    assert_close(heated.steps[0].Q, Q * 1e3, "kW", rtol=1e-12)
    # the same streams with no heat written: the drum stays adiabatic and the first law fails
    unclaimed = audit_text(tmp_path, _drum(x * FLOW))
    assert "energy-imbalance" in _errors(unclaimed)
    assert unclaimed.steps[0].Q == pytest.approx(0.0) and unclaimed.steps[0].inferred == []
