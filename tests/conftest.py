"""Shared test helpers: a unit-aware assert_close and balance builders."""

from __future__ import annotations

import functools
import json
import math
import textwrap
from pathlib import Path

import pytest

import audit

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_plant"

_UNITS = {
    "K": (1.0, 0.0),
    "degC": (1.0, -273.15),
    "bar": (1e-5, 0.0),
    "Pa": (1.0, 0.0),
    "kJ/kg": (1e-3, 0.0),
    "kJ/(kg K)": (1e-3, 0.0),
    "kW": (1e-3, 0.0),
    "W": (1.0, 0.0),
    "kJ/mol": (1e-3, 0.0),
    "J/(mol K)": (1.0, 0.0),
    "J": (1.0, 0.0),
    "kJ": (1e-3, 0.0),
    "J/K": (1.0, 0.0),
    "kg/s": (1.0, 0.0),
    "kg/m3": (1.0, 0.0),
    "m3/kg": (1.0, 0.0),
    "V": (1.0, 0.0),
    "-": (1.0, 0.0),
    "m/s": (1.0, 0.0),
    "W/K": (1.0, 0.0),
    "MPa": (1e-6, 0.0),
}


def assert_close(
    actual: float, expected: float, unit: str = "-", rtol: float = 0.0, atol: float = 0.0, what: str = ""
) -> None:
    """Assert |actual − expected| ≤ atol + rtol·|expected|, both given in SI; on failure show
    both values in ``unit`` (e.g. kJ/kg)."""
    if math.isclose(actual, expected, rel_tol=rtol, abs_tol=atol):
        return
    scale, offset = _UNITS[unit]
    shown_a, shown_e = actual * scale + offset, expected * scale + offset
    diff = (actual - expected) / expected if expected else float("nan")
    raise AssertionError(
        f"{what or 'value'}: got {shown_a:.10g} {unit}, expected {shown_e:.10g} {unit} "
        f"(relative difference {diff:.3e}; rtol {rtol:g}, atol {atol:g} SI)"
    )


def write_balance(tmp_path: Path, body: str, name: str = "balance.yaml") -> Path:
    """Write a balance file (dedented) and return its path."""
    path = tmp_path / name
    path.write_text(textwrap.dedent(body).lstrip("\n"), encoding="utf-8")
    return path


HEADER = """
balance:
  name: test balance
  site_pressure: 1.01325 bar
"""


def audit_text(tmp_path: Path, streams_and_steps: str, header: str = HEADER):
    """Audit a balance made of the standard header and the given streams and steps."""
    text = textwrap.dedent(header).lstrip("\n") + textwrap.dedent(streams_and_steps)
    path = tmp_path / "balance.yaml"
    path.write_text(text, encoding="utf-8")
    return audit.run(path)


def names(result) -> set[tuple[str | None, str]]:
    """The (step, finding name) pairs of a result."""
    return {(f.step, f.name) for f in result.findings}


@pytest.fixture
def sample_dir() -> Path:
    return SAMPLE


@functools.lru_cache(maxsize=1)
def _results_validator():  # noqa: ANN202 - a jsonschema validator, or None without jsonschema
    try:
        import jsonschema
    except ImportError:  # the test extra installs it
        return None
    schema = json.loads((ROOT / "schemas" / "plant-audit-results.schema.json").read_text("utf-8"))
    return jsonschema.Draft202012Validator(schema)


@pytest.fixture(autouse=True)
def _json_results_follow_the_published_schema(monkeypatch: pytest.MonkeyPatch) -> None:
    """Every JSON results structure a test builds or writes is checked against
    schemas/plant-audit-results.schema.json."""
    validator = _results_validator()
    if validator is None:
        return
    from audit.report import machine

    original = machine.to_dict

    def checked(*args, **kwargs):  # noqa: ANN002, ANN003, ANN202
        data = original(*args, **kwargs)
        errors = [f"{list(e.path)}: {e.message}" for e in validator.iter_errors(data)]
        assert not errors, f"JSON results not valid against the published schema: {errors[:5]}"
        return data

    monkeypatch.setattr(machine, "to_dict", checked)
