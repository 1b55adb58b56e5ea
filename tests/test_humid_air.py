"""Humid air (:mod:`audit.properties.humid_air`): saturation, enthalpy and wet bulb against ASHRAE
RP-1485 as implemented in CoolProp's ``HAPropsSI`` (Herrmann, Kretzschmar and Gatley 2009; a named
reference library: the ASHRAE Handbook table could not be read from a stored source), equilibrium
with IAPWS-95 liquid water, and Wepfer's exergy.

Measured agreement with HAPropsSI at 101.325 kPa (CoolProp 8.0.0): saturation humidity ratio within
2.9e-4 relative from 0.5 to 60 °C; saturated enthalpy within 0.045 kJ/kg of dry air (on RP-1485's
reference: dry air at 0 °C, liquid water at the triple point); wet bulb within 0.011 K.
"""

from __future__ import annotations

import math

import CoolProp.CoolProp as CP
import pytest
from conftest import assert_close, audit_text, names

from audit.errors import InputErrors
from audit.properties.engine import PropertyEngine

P = 101325.0
R = 8.314462618  # J/(mol K), CODATA 2018


@pytest.fixture(scope="module")
def engine() -> PropertyEngine:
    return PropertyEngine(298.15, P, dead_relative_humidity=0.6)


@pytest.mark.parametrize("t", [0.5, 5.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0])
def test_saturation_against_rp1485(engine, t):
    T = t + 273.15
    W_s = engine.saturation_humidity_ratio(T, P)
    # ASHRAE RP-1485 through CoolProp HAPropsSI; 4e-4 covers the CIPM-2007 enhancement factor
    # against RP-1485's (measured 2.9e-4 at 0.5 °C, 1e-4 at 20 °C)
    assert_close(W_s, CP.HAPropsSI("W", "T", T, "P", P, "R", 1.0), rtol=4e-4)
    # enthalpy per kg of dry air on RP-1485's reference (dry air 0 °C, liquid water at the triple
    # point); 0.05 kJ/kg: the measured 0.045 kJ/kg at 50 °C (the air–water cross term)
    H = engine.enthalpy_per_dry_air(T, P, W_s)
    h_a0, _ = engine._parts(273.15, P)
    h_liquid_triple = engine.state("Water", "TQ", 273.16, 0.0).h
    H_ref = CP.HAPropsSI("H", "T", T, "P", P, "R", 1.0)
    assert_close(H - h_a0 - W_s * h_liquid_triple, H_ref, "kJ/kg", atol=50.0)


@pytest.mark.parametrize(("t", "rh"), [(20.0, 0.5), (30.0, 0.4), (35.0, 0.3), (45.0, 0.2)])
def test_wet_bulb_against_rp1485(engine, t, rh):
    T = t + 273.15
    W = engine.humidity_from("relative_humidity", T, P, rh)
    T_wb = engine.wet_bulb_temperature(T, P, W)
    # HAPropsSI's wet bulb (RP-1485); 0.015 K covers the measured 0.011 K
    assert_close(T_wb, CP.HAPropsSI("Twb", "T", T, "P", P, "W", W), "K", atol=0.015)
    # written the other way round, the wet bulb gives back the same air (the model's own inverse)
    assert_close(engine.humidity_from("wet_bulb", T, P, T_wb), W, rtol=1e-7)


def test_enhancement_factor_cipm_2007(engine):
    # Picard et al., Metrologia 45 (2008) 149, eq. A1.3: f = 1.00062 + 3.14e-8 p/Pa + 5.6e-7 (t/°C)²
    assert_close(
        engine.enhancement_factor(293.15, 101325.0),
        1.00062 + 3.14e-8 * 101325 + 5.6e-7 * 400,
        rtol=1e-15,
    )


@pytest.mark.parametrize("t", [5.0, 20.0, 35.0, 50.0])
def test_saturated_air_is_in_equilibrium_with_liquid_water(engine, t):
    """The chemical potential of water in saturated air, ∂G/∂m_w at constant T, P and dry air,
    equals the Gibbs energy of IAPWS-95 liquid water at the same T and P: evaporating or
    condensing water there generates no entropy. (CoolProp's humid-air functions miss it by
    1.0–1.4 kJ/kg at 20–40 °C.)"""
    T = t + 273.15
    W_s = engine.saturation_humidity_ratio(T, P)

    def G(W: float) -> float:  # Gibbs energy per kg of dry air
        state = engine.humid_air_state(T, P, "humidity_ratio", W)
        return (1.0 + W) * state.g

    dW = 1e-5 * W_s
    mu_w = (G(W_s + dW) - G(W_s - dW)) / (2 * dW)
    liquid = engine.state("Water", "TP", T, P)
    # 0.05 J/kg: the central difference's rounding (|G| ~ 2e6 J/kg, dW ~ 1e-7); the trap is 1000 J/kg
    assert_close(mu_w, liquid.g, "kJ/kg", atol=0.05)


def test_a_saturator_at_equilibrium_generates_no_entropy(tmp_path, engine):
    """Water at 30 °C evaporating into air at 30 °C and 99.9 % until it is saturated, with heat at
    30 °C: reversible to first order, so the step shows no finding and Ṡ_gen is second order."""
    T = 303.15
    W_1 = engine.humidity_from("relative_humidity", T, P, 0.999)
    W_2 = engine.saturation_humidity_ratio(T, P)
    water = 10.0 * (W_2 - W_1)
    result = audit_text(
        tmp_path,
        f"""
streams:
  A1: {{fluid: humid air, T: 30 degC, P: 1.01325 bar, relative_humidity: 0.999,
       flow: 10 kg/s, flow_of: dry air}}
  L1: {{fluid: Water, T: 30 degC, P: 101.325 kPa, flow: {water!r} kg/s}}
  A2: {{fluid: humid air, T: 30 degC, P: 1.01325 bar, relative_humidity: 1,
       flow: 10 kg/s, flow_of: dry air}}
steps:
  - id: SAT
    kind: general
    inlets: [A1, L1]
    outlets: [A2]
    heat_temperature: 30 degC
""",
    )
    assert names(result) == set()
    step = result.steps[0]
    # analytic, ideal mixing: Ṡ_gen = ṁ_a ∫ (g_liq − μ_w) dW / T = ṁ_a R_w ∫ ln(x_s/x) dW
    #   ≈ ṁ_a R_w ε x_s / (1 − x_s)² (1 − a + a ln a), a = 0.999 (second order in 1 − a):
    # 6.6e-5 W/K, against the first-order 1 kJ/kg · ṁ_w / T = 9e-4 W/K an inconsistent basis adds
    M_a, M_w = engine._molar_masses()
    x_s = engine.saturation_mole_fraction(T, P)
    a = 0.999
    expected = 10.0 * R / M_w * (M_w / M_a) * x_s / (1 - x_s) ** 2 * (1 - a + a * math.log(a))
    assert_close(step.balance.S_gen, expected, "W/K", rtol=0.02)
    assert abs(step.balance.S_gen - expected) < 0.1 * (1000.0 * water / T)
    assert step.balance.mass_residual == pytest.approx({"dry air": 0.0, "Water": 0.0}, abs=1e-12)


def test_wepfer_exergy_of_ideal_moist_air(engine):
    """Wepfer, Gaggioli and Obert (1979), per kg of dry air, for ideal gases:
    ψ = (c_pa + W c_pv) T0 (T/T0 − 1 − ln T/T0) + R_a T0 (1 + W̃) ln(P/P0)
        + R_a T0 [(1 + W̃) ln((1 + W̃0)/(1 + W̃)) + W̃ ln(W̃/W̃0)],  W̃ = (M_a/M_w) W.
    At T = T0, P = P0 only the chemical part remains, which the model must reproduce (its
    excess term does not depend on composition, and the ideal-gas mixing is exact)."""
    T0 = 298.15
    M_a, M_w = engine._molar_masses()
    W0 = engine.humidity_from("relative_humidity", T0, P, 0.6)
    for W in (0.002, 0.010, 0.018):
        state = engine.humid_air_state(T0, P, "humidity_ratio", W)
        Wt, Wt0 = M_a / M_w * W, M_a / M_w * W0
        chemical = R / M_a * T0 * ((1 + Wt) * math.log((1 + Wt0) / (1 + Wt)) + Wt * math.log(Wt / Wt0))
        assert_close(state.psi * (1 + W), chemical, "kJ/kg", rtol=1e-9, atol=1e-6)
    # the dead-state air itself has no exergy
    assert abs(engine.humid_air_state(T0, P, "relative_humidity", 0.6).psi) < 1e-6


def test_humidity_written_four_ways_gives_one_air(engine):
    T = 303.15
    W = engine.humidity_from("relative_humidity", T, P, 0.5)
    T_d = engine.humidity_from("dew_point", T, P, 0.0)  # dew point 0 °C → W_s(0.01 °C)
    assert T_d > 0
    dew = engine.humid_air_state(T, P, "dew_point", 291.15)
    ratio = engine.humid_air_state(T, P, "humidity_ratio", engine.saturation_humidity_ratio(291.15, P))
    assert dew.h == ratio.h and dew.s == ratio.s
    assert_close(engine.relative_humidity(T, P, W), 0.5, rtol=1e-12)


def _air(extra: str) -> str:
    return f"""
streams:
  A1: {{fluid: humid air, T: 30 degC, P: 101.325 kPa, {extra}, flow: 10 kg/s}}
  A2: {{fluid: humid air, T: 40 degC, P: 101.325 kPa, {extra}, flow: 10 kg/s}}
steps:
  - id: H1
    kind: heater
    inlet: A1
    outlet: A2
"""


def test_air_above_saturation_is_refused(tmp_path):
    with pytest.raises(
        InputErrors,
        match=r"is above saturation \(0\.027331 kg/kg; relative humidity 126\.6%\): air holds no",
    ):
        audit_text(tmp_path, _air("humidity_ratio: 0.035").replace("40 degC", "30 degC"))
    with pytest.raises(InputErrors, match="a dew point of 35 °C above the air's 30 °C is not possible"):
        audit_text(tmp_path, _air("dew_point: 35 degC"))


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        ("relative_humidity: 60", "a relative humidity of 60 is outside 0 to 1: write a fraction"),
        ("relative_humidity: 60 percent", "cannot read the relative humidity '60 percent'"),
        (
            "relative_humidity: 0.5, dew_point: 10 degC",
            "humid air needs exactly one of relative_humidity, humidity_ratio, wet_bulb or dew_point",
        ),
        ("humidity_ratio: 12 g", "cannot read the humidity ratio '12 g'"),
    ],
)
def test_humidity_written_wrong(tmp_path, extra, message):
    with pytest.raises(InputErrors, match=message):
        audit_text(tmp_path, _air(extra))


def test_humidity_on_a_pure_fluid_is_refused(tmp_path):
    text = """
streams:
  W1: {fluid: Water, T: 30 degC, P: 2 bar, relative_humidity: 0.5, flow: 1 kg/s}
steps: []
"""
    with pytest.raises(
        InputErrors, match="'relative_humidity' is for humid air: write 'fluid: humid air'"
    ):
        audit_text(tmp_path, text)


def test_flows_of_humid_air(tmp_path, engine):
    W = engine.humidity_from("relative_humidity", 303.15, P, 0.6)
    result = audit_text(
        tmp_path,
        _air("relative_humidity: '60 %'").replace("flow: 10 kg/s", "flow: 10 kg/s, flow_of: dry air", 1),
    )
    flows = {s.id: s.mass_flow for s in result.streams}
    assert_close(flows["A1"], 10.0 * (1 + W), "kg/s", rtol=1e-12)
    assert flows["A2"] == 10.0


def test_liquid_water_carries_its_chemical_exergy_against_a_dry_dead_state(engine):
    """With φ0 = 0.6, liquid water at (T0, P0) has the exergy −R_w T0 ln φ0 (Wepfer, Gaggioli and
    Obert 1979; analytic: R_w = R/M_w, M_w = 18.015268 g/mol): 0.4615 kJ/(kg K) × 298.15 K × 0.511
    = 70.3 kJ/kg; with the default saturated dead state it has none."""
    expected = -R / 18.015268e-3 * 298.15 * math.log(0.6)
    assert_close(engine.state("Water", "TP", 298.15, P).psi, expected, "kJ/kg", rtol=1e-9)
    assert_close(expected, 70.3e3, "kJ/kg", atol=0.05e3)
    saturated = PropertyEngine(298.15, P)
    assert saturated.state("Water", "TP", 298.15, P).psi == 0.0
    # and it is what evaporating it into the dead-state air gives back: ψ of that air is zero,
    # so liquid water's ψ equals (g_liq − μ_w,0) computed from the humid-air model itself
    T0 = 298.15
    W0 = engine.humidity_from("relative_humidity", T0, P, 0.6)

    def G(W: float) -> float:
        return (1.0 + W) * engine.humid_air_state(T0, P, "humidity_ratio", W).g

    dW = 1e-5 * W0
    mu_w0 = (G(W0 + dW) - G(W0 - dW)) / (2 * dW)
    liquid = engine.state("Water", "TP", T0, P)
    assert_close(liquid.g - mu_w0, expected, "kJ/kg", atol=0.05)


def test_a_fan_and_a_coil_on_humid_air_say_what_is_not_computed(tmp_path):
    text = """
streams:
  F1: {fluid: humid air, T: 20 degC, P: 1.013 bar, relative_humidity: 50 %, flow: 2 kg/s}
  F2: {fluid: humid air, T: 21 degC, P: 1.023 bar, relative_humidity: 47 %, flow: 2 kg/s}
steps:
  - id: FAN
    kind: compressor
    inlet: F1
    outlet: F2
"""
    result = audit_text(tmp_path, text)
    (finding,) = [f for f in result.findings if f.name == "step-not-evaluated"]
    assert finding.message.endswith(
        "humid air is evaluated from T, P and its humidity only; its states along a temperature "
        "profile or at an isentropic outlet are not computed"
    )
