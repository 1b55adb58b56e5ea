"""A balance of closed vessels only holds no streams: it validates and is audited."""

import json

import pytest

import audit
from audit.commands.main import main

VESSELS_ONLY = """\
balance:
  name: vessels only
steps:
  - id: V1
    kind: vessel
    fluid: Water
    mass: 100 kg
    initial: {T: 20 degC, P: 1 bar}
    final: {T: 80 degC, P: 1 bar}
    heat:
      - added: 25120 kJ
"""


@pytest.mark.parametrize("streams", ["", "streams: {}\n"])
def test_vessel_only_balance_validates_and_audits(tmp_path, streams):
    path = tmp_path / "vessels.yaml"
    path.write_text(VESSELS_ONLY.replace("steps:", streams + "steps:"), encoding="utf-8")
    result = audit.run(path)
    assert result.streams == []
    (step,) = result.steps
    # Heating 100 kg of water from 20 to 80 °C at 1 bar: Δu ≈ 4.18 kJ/(kg K) × 60 K × 100 kg
    # ≈ 25.1 MJ (IAPWS-95 gives u(80 °C) − u(20 °C) = 334.9 − 83.9 = 251.0 kJ/kg, steam tables
    # Moran & Shapiro, 8th ed., Table A-2, values from memory), so the written 25 120 kJ closes.
    assert step.dU == pytest.approx(25_100e3, rel=2e-3)
    assert [f.name for f in result.findings] == []


def test_vessel_only_balance_on_the_command_line(tmp_path, capsys):
    path = tmp_path / "vessels.yaml"
    path.write_text(VESSELS_ONLY, encoding="utf-8")
    out = tmp_path / "out.json"
    assert main(["check", str(path), "--json", str(out), "-q"]) == 0
    assert [s["id"] for s in json.loads(out.read_text(encoding="utf-8"))["steps"]] == ["V1"]
