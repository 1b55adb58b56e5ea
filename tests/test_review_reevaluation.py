"""The review re-evaluates steps for what its margins read only (``residuals_only``,
:class:`audit.steps.base.StepContext`): every kind must then give the same balances, isentropic
efficiency, ``extra`` duties and claim checks (``StepResult.checks``) as its full evaluation, so
that a rounding bound or an uncertainty never depends on which checks a kind skipped. The steps
are those of the four sample plants (fourteen kinds) and a fuel cell, on their own states and with
one stream re-flashed at a changed temperature (as the review's re-evaluations do).
"""

from __future__ import annotations

from dataclasses import asdict
from pathlib import Path

import pytest

from audit.reading import load_balance, parse_balance
from audit.review.runner import StepRunner, overlay
from audit.solve import solve

SAMPLES = sorted((Path(__file__).resolve().parent.parent / "sample_plant").glob("*.yaml"))
FUEL_CELL = """
balance: {name: cell}
streams:
  H: {fluid: Hydrogen, T: 25 degC, P: 1 bar, flow: 0.518 mol/s}
  O: {fluid: Oxygen, T: 25 degC, P: 1 bar, flow: 0.259 mol/s}
  W: {fluid: Water, T: 25 degC, P: 1 bar, flow: 0.518 mol/s, phase: liquid}
steps:
  - {id: FC, kind: fuel_cell, inlets: [H, O], outlets: [W], cells: 100, cell_voltage: 0.70 V,
     current: 1000 A, heat: [{removed: 78.2 kW, temperature: 25 degC}]}
"""


def _read(result):
    """What the review's margins read of a step result (:mod:`audit.review.margins`)."""
    duties = {k: v for k, v in result.extra.items() if k.endswith("_duty")}
    return asdict(result.balance), result.isentropic_efficiency, duties, dict(result.checks)


@pytest.mark.parametrize("path", [*SAMPLES, None], ids=[p.stem for p in SAMPLES] + ["fuel cell"])
def test_residuals_only_reads_what_the_full_evaluation_reads(path):
    balance, document = load_balance(path) if path else parse_balance(FUEL_CELL, "cell.yaml")
    runner = StepRunner(solve(balance, document))
    for index, step in enumerate(balance.steps):
        full, _ = runner.run(index)
        lean, _ = runner.run(index, residuals_only=True)
        assert _read(lean) == _read(full), step.id
        inlets, outlets = step.stream_ids()
        for inlet in [*inlets, *outlets][:1]:  # a vessel names none
            if balance.streams[inlet].T is None:
                continue
            moved = {inlet: runner.stream(inlet, {"T": balance.streams[inlet].T + 0.05})}
            full, _ = runner.run(index, None, moved)
            lean, _ = runner.run(index, None, moved, residuals_only=True)
            assert _read(lean) == _read(full), step.id


def test_an_overlay_reads_the_replaced_streams_first_and_copies_nothing():
    base = {"A": "a", "B": "b"}
    view = overlay(base, {"B": "b2", "C": "c"})
    assert (view["A"], view["B"], view["C"]) == ("a", "b2", "c")
    assert "C" in view and "D" not in view
    assert list(view) == ["A", "B", "C"] and len(view) == 3
    assert dict(view) == {"A": "a", "B": "b2", "C": "c"}
    assert overlay(base, {}) is base and overlay(base, None) is base
    with pytest.raises(KeyError):
        view["D"]


def test_a_perturbed_stream_is_flashed_once_per_review():
    balance, document = load_balance(SAMPLES[0])
    runner = StepRunner(solve(balance, document))
    stream_id = next(s for s, spec in balance.streams.items() if spec.T is not None)
    T = balance.streams[stream_id].T + 0.05
    first = runner.stream(stream_id, {"T": T})
    assert runner.stream(stream_id, {"T": T}) is first
    assert first.T == pytest.approx(T)
