"""The adaptive T–Q profile of heat exchangers against a dense reference profile.

Generated exchangers (condensing steam, boiling water, CO₂ crossing its pseudo-critical line,
supercritical water): the adaptive method's minimum approach must lie within its stated accuracy
(0.05 K, :data:`audit.steps.profile.TOLERANCE`) of the minimum over 2001 equally spaced points,
with far fewer flashes. The reference is the same (P, h) flash at every point, so this checks the
search, not the property model.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import pytest

from audit.properties.engine import PropertyEngine
from audit.steps.kinds.heat_exchanger import _side_T, approach_profile
from audit.steps.profile import TOLERANCE, approach_minimum

DENSE = 2000


def _side(engine, fluid, T_in, T_out, P_in, P_out, Q_in=None, Q_out=None):
    """A side's inlet and outlet streams (a quality instead of T at saturation)."""

    def stream(T, P, Q):
        state = engine.state(fluid, "PQ", P, Q) if Q is not None else engine.state(fluid, "TP", T, P)
        return SimpleNamespace(fluid=fluid, T=state.T, P=P, h=state.h, mass_flow=1.0)

    return stream(T_in, P_in, Q_in), stream(T_out, P_out, Q_out)


def _exchanger(hot, cold):
    """The hot side's flow scaled so that it releases what the cold side (1 kg/s) receives."""
    (hi, ho), (ci, co) = hot, cold
    hot_flow = (co.h - ci.h) / (hi.h - ho.h)
    hi.mass_flow = ho.mass_flow = hot_flow
    return hi, ho, ci, co


CASES = {
    # steam condensing at 1.5 bar (sat. vapour to 80 °C liquid) heating water 20 → 100 °C at 5 bar
    "condensing": lambda e: _exchanger(
        _side(e, "Water", None, 353.15, 1.5e5, 1.45e5, Q_in=1.0),
        _side(e, "Water", 293.15, 373.15, 5e5, 4.8e5),
    ),
    # water boiling at 10 bar (150 °C liquid to 220 °C vapour) against nitrogen 450 → 200 °C
    "boiling": lambda e: _exchanger(
        _side(e, "Nitrogen", 723.15, 473.15, 2e5, 1.9e5),
        _side(e, "Water", 423.15, 493.15, 10e5, 9.7e5),
    ),
    # CO2 at 80 bar heated 20 → 60 °C through its pseudo-critical cp peak, by water 75 → 30 °C
    "near-critical CO2": lambda e: _exchanger(
        _side(e, "Water", 348.15, 303.15, 3e5, 2.9e5),
        _side(e, "CarbonDioxide", 293.15, 333.15, 80e5, 79.5e5),
    ),
    # water at 250 bar heated 330 → 450 °C through its pseudo-critical line, by CO2 520 → 360 °C
    "supercritical water": lambda e: _exchanger(
        _side(e, "CarbonDioxide", 793.15, 633.15, 200e5, 199e5),
        _side(e, "Water", 603.15, 723.15, 250e5, 249e5),
    ),
}


def _dense_minimum(ctx, hi, ho, ci, co, counter=True):
    best = math.inf
    for i in range(DENSE + 1):
        x = i / DENSE
        cold_T = _side_T(ctx, ci, co, x)
        hot_T = _side_T(ctx, hi, ho, 1.0 - x if counter else x)
        best = min(best, hot_T - cold_T)
    return best


@pytest.mark.parametrize("name", sorted(CASES))
def test_adaptive_minimum_approach_within_its_accuracy(name):
    engine = PropertyEngine(298.15, 101325.0)
    ctx = SimpleNamespace(engine=engine)
    hi, ho, ci, co = CASES[name](engine)
    before = engine.flash_count
    fractions, hot_T, cold_T = approach_profile(ctx, hi, ho, ci, co, counter=True)
    approach = [h - c for h, c in zip(hot_T, cold_T, strict=True)]
    flashes = engine.flash_count - before
    reference = _dense_minimum(SimpleNamespace(engine=PropertyEngine(298.15, 101325.0)), hi, ho, ci, co)
    found = min(approach)
    # every adaptive point is a point of the profile, so the true minimum is at most ``found``;
    # the dense grid may pass beside a bend that the adaptive method hits exactly
    assert found - reference <= TOLERANCE, (name, found, reference)
    assert flashes < 40, (name, flashes)  # the 20-step grid took 40 and more
    # the profile: exact ends, fractions of duty rising from 0 to 1
    assert fractions[0] == 0.0 and fractions[-1] == 1.0
    assert (hot_T[0], cold_T[0]) == (ho.T, ci.T) and (hot_T[-1], cold_T[-1]) == (hi.T, co.T)
    assert fractions == sorted(fractions)


def test_interior_minimum_of_a_smooth_approach_is_found():
    """A parabola dipping between its ends (no breakpoint there): found to the tolerance."""
    calls = []

    def approach(x):
        calls.append(x)
        return 10.0 - 40.0 * x * (1.0 - x) + 3.0 * x

    points = approach_minimum(approach, [0.0, 1.0])
    exact = min(10.0 - 40.0 * x * (1.0 - x) + 3.0 * x for x in (i / 100_000 for i in range(100_001)))
    assert min(approach(x) for x in points) - exact <= TOLERANCE
    assert len(set(calls)) < 30


def test_straight_approach_is_not_refined():
    """A straight approach: the first pieces (a quarter of the duty each) and their midpoints."""
    points = approach_minimum(lambda x: 5.0 + 2.0 * x, [0.0, 1.0])
    assert points == [k / 8 for k in range(9)]
