"""The benchmarks' synthetic balances (benchmarks/generate.py) are clean and exactly the size asked.

The generator computes every claim with CoolProp (HEOS) directly from the states as written; the
audit evaluates the same file through its own property engine. A generated balance must therefore
pass with no finding at all, and its first law must close far inside the 1 % tolerance: the claims
are written to six or seven significant digits, so each step's residual is at most a few parts in
10⁶ of its energy scale (the bound asserted below leaves room for that rounding only; a slip of a
unit or a wrong enthalpy would be orders of magnitude larger).
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

import audit

ROOT = Path(__file__).resolve().parents[1]


def _generator():
    spec = importlib.util.spec_from_file_location("bench_generate", ROOT / "benchmarks" / "generate.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # its dataclasses look their module up
    spec.loader.exec_module(module)  # type: ignore[union-attr]
    return module


generate = _generator()


def test_generated_balance_of_100_streams_audits_clean(tmp_path):
    path = tmp_path / "balance-100.yaml"
    kinds = generate.write(path, 100, seed=1)
    result = audit.run(path)
    assert len(result.streams) == 100
    assert [f"{f.step} {f.name}: {f.message}" for f in result.findings] == []
    assert {s.kind for s in result.steps} >= {
        "pump",
        "heater",
        "turbine",
        "cooler",
        "compressor",
        "valve",
        "heat_exchanger",
    }
    assert any("steam cycle" in kind for kind in kinds)
    for step in result.steps:
        # claims rounded to 6-7 significant digits: ≤ 1e-5 of the step's energy scale; and a
        # throttled state written with its quality to 5 decimals: ≤ 5e-6 × h_fg (< 1.5 MJ/kg)
        # × ṁ (< 5 kg/s) ≈ 40 W on an expansion valve, whose scale is that residual itself
        assert abs(step.energy_residual) <= 1e-5 * step.energy_scale + 40.0, step.id
        assert step.S_gen > 0.0, step.id  # every generated step is irreversible


@pytest.mark.parametrize("streams", [2, 3, 7, 25])
def test_generated_balance_has_exactly_the_streams_asked(streams):
    text = generate.generate(streams, seed=2)
    body = text.split("\nstreams:\n", 1)[1].split("\nsteps:\n", 1)[0]
    assert len(body.splitlines()) == streams


def test_generation_is_reproducible():
    assert generate.generate(30, seed=5) == generate.generate(30, seed=5)
    assert generate.generate(30, seed=5) != generate.generate(30, seed=6)


def test_too_small_a_balance_is_refused():
    with pytest.raises(ValueError, match="at least 2 streams"):
        generate.generate(1)
