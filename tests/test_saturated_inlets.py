"""Phase checks read the phase, not a number: a saturated vapour (quality 1) at a compressor
suction is dry vapour, and a saturated liquid (quality 0) at a pump inlet is a cavitation risk
(a warning), not a phase error."""

from __future__ import annotations

import audit

HEADER = """
balance:
  name: saturated inlets
"""

COMPRESSOR = (
    HEADER
    + """
streams:
  A1: {fluid: Ammonia, P: 2.9 bar, quality: 1, flow: 0.5 kg/s}
  A2: {fluid: Ammonia, T: 130 degC, P: 12 bar, flow: 0.5 kg/s}
steps:
  - {id: C1, kind: compressor, inlet: A1, outlet: A2}
"""
)

PUMP = (
    HEADER
    + """
streams:
  W1: {fluid: Water, P: 1.6 bar, quality: 0, flow: 3 kg/s}
  W2: {fluid: Water, T: 114 degC, P: 40 bar, flow: 3 kg/s}
steps:
  - {id: P1, kind: pump, inlet: W1, outlet: W2}
"""
)


def _run(tmp_path, text):
    path = tmp_path / "balance.yaml"
    path.write_text(text, encoding="utf-8")
    return audit.run(path)


def test_saturated_vapour_at_compressor_suction_is_dry(tmp_path):
    result = _run(tmp_path, COMPRESSOR)
    assert result.stream("A1").quality == 1.0
    assert [f.name for f in result.findings] == []


def test_wet_vapour_at_compressor_suction_is_still_an_error(tmp_path):
    result = _run(tmp_path, COMPRESSOR.replace("quality: 1,", "quality: 0.98,"))
    (finding,) = [f for f in result.findings if f.name == "liquid-at-suction"]
    assert finding.severity == "error"
    assert "quality 0.980" in finding.message


def test_saturated_liquid_at_pump_inlet_is_a_cavitation_warning_only(tmp_path):
    result = _run(tmp_path, PUMP)
    assert [(f.name, f.severity) for f in result.findings] == [("pump-near-saturation", "warning")]
    (finding,) = result.findings
    assert "only 0.00 K below its saturation temperature" in finding.message
