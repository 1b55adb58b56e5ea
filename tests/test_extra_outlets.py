"""Extra outlets on existing kinds: a boiler's blowdown (fired_heater) and a deaerator's vent
(mixer). Check values: IAPWS-95 states from the ``iapws`` package (a reference implementation of
IAPWS R6-95); the balances are written out here."""

from __future__ import annotations

from conftest import assert_close, audit_text, names
from iapws import IAPWS95

# -- deaerator with a vent ---------------------------------------------------------------------
FEED = IAPWS95(P=0.13, T=333.15)  # feedwater at 60 °C, 1.3 bar
SAT_L = IAPWS95(P=0.13, x=0.0)
SAT_V = IAPWS95(P=0.13, x=1.0)
VENT = 0.02  # kg/s of steam let out with the gases
# Steam that closes the first law: 9 h_fw + m h″ = (9 + m − v) h′ + v h″
STEAM = (9.0 * (SAT_L.h - FEED.h) + VENT * (SAT_V.h - SAT_L.h)) / (SAT_V.h - SAT_L.h)


def _deaerator(vent: str) -> str:
    return f"""
streams:
  fw: {{fluid: Water, T: 60 degC, P: 1.3 bar, flow: 9 kg/s}}
  st: {{fluid: Water, P: 1.3 bar, quality: 1, flow: {STEAM:.6f} kg/s}}
  dw: {{fluid: Water, P: 1.3 bar, quality: 0, flow: {9.0 + STEAM - VENT:.6f} kg/s}}
  vt: {{fluid: Water, P: 1.3 bar, quality: 1, flow: {VENT} kg/s}}
steps:
  - {{id: D1, kind: mixer, inlets: [fw, st], outlet: dw{vent}}}
"""


def test_a_deaerator_with_its_vent_balances(tmp_path):
    result = audit_text(tmp_path, _deaerator(", vent: vt"))
    assert [f for f in result.findings if f.severity == "error"] == [], result.findings
    assert result.steps[0].outlets == ["dw", "vt"]


def test_a_deaerator_without_its_vent_loses_mass(tmp_path):
    result = audit_text(tmp_path, _deaerator(""))
    assert ("D1", "mass-imbalance") in names(result)
    assert (None, "stream-unused") in names(result)


def test_a_vent_above_the_inlet_pressure_is_named(tmp_path):
    text = _deaerator(", vent: vt").replace(
        "vt: {fluid: Water, P: 1.3 bar", "vt: {fluid: Water, P: 2 bar"
    )
    result = audit_text(tmp_path, text)
    (finding,) = [f for f in result.findings if f.name == "mixer-outlet-pressure"]
    assert finding.stream == "vt"
    assert finding.message.startswith("the vent pressure (2 bar) is above the lowest inlet pressure")


# -- boiler with blowdown -----------------------------------------------------------------------
def _boiler(tmp_path, blowdown: str, feed: str = "11.0 t/h"):
    # The sample site's boiler B1 (sample_plant/quillon-bay-clean.yaml), with 0.2 t/h blowdown.
    return audit_text(
        tmp_path,
        f"""
        streams:
          S02: {{fluid: Water, T: 105.73 degC, P: 42.513 bar, flow: {feed}}}
          S03: {{fluid: Water, T: 400 degC, P: 41.013 bar, flow: 10.8 t/h}}
          S09: {{fluid: Water, P: 41.013 bar, quality: 0, flow: 0.2 t/h}}
          S40: {{composition: {{CH4: 0.97, N2: 0.02, CO2: 0.01}}, T: 15 degC, P: 1.3 bar,
                 flow: 918.6 Nm3/h}}
          S41: {{composition: air, T: 25 degC, P: 1.013 bar, flow: 9787 Nm3/h}}
          S42: {{composition: {{CO2: 0.0845, H2O: 0.1665, N2: 0.7156, O2: 0.0249, Ar: 0.0085}},
                 T: 150 degC, P: 1.013 bar, flow: 10706 Nm3/h}}
        steps:
          - id: B1
            kind: fired_heater
            fuel: S40
            air: S41
            flue_gas: S42
            heated: {{inlet: S02, outlet: S03{blowdown}}}
            heat_loss: 45 kW
        """,
    )


def test_a_boiler_blowdown_is_an_outlet_of_the_heated_side(tmp_path):
    result = _boiler(tmp_path, ", blowdown: S09")
    assert ("B1", "mass-imbalance") not in names(result)
    step = result.step("B1")
    assert "S09" in step.outlets
    # IAPWS-95 (iapws): duty into steam and blowdown, Σ ṁ_out h_out − ṁ_in h_in [kW]
    feed = IAPWS95(P=4.2513, T=105.73 + 273.15)
    steam = IAPWS95(P=4.1013, T=673.15)
    drum = IAPWS95(P=4.1013, x=0.0)
    duty = (10.8 * steam.h + 0.2 * drum.h - 11.0 * feed.h) / 3.6
    assert_close(step.extra["heated_duty"], duty * 1e3, "kW", rtol=1e-6)


def test_a_boiler_without_its_blowdown_loses_water(tmp_path):
    result = _boiler(tmp_path, "")
    (finding,) = [f for f in result.findings if f.name == "mass-imbalance" and f.step == "B1"]
    assert "enters with 3.056 kg/s (S02) and leaves with 3 kg/s (S03)" in finding.message
