"""The linearisation of the reconciliation on the measured sample site: the forward-difference
Jacobian against derivatives taken from the property library itself (CoolProp, as a named
reference), and the steps evaluated for their balances only (``residuals_only``) against a full
evaluation."""

from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import SAMPLE

from audit.reading import load_balance
from audit.reconcile.rounds import jacobian_function
from audit.reconcile.variables import Network, build_variables
from audit.solve import evaluate_step, solve

CoolProp = pytest.importorskip("CoolProp.CoolProp")


@pytest.fixture(scope="module")
def network():
    balance, document = load_balance(SAMPLE / "quillon-bay-measured.yaml")
    solution = solve(balance, document)
    return Network(solution, build_variables(solution))


@pytest.fixture(scope="module")
def jacobian(network):
    J = jacobian_function(network)(np.array(network.x0))
    rows = [c.key for c in network.constraints]
    keys = [v.key for v in network.variables]
    return lambda row, key: J[rows.index(row), keys.index(key)]


def test_compressor_first_law_against_the_discharge_heat_capacity(jacobian):
    # ∂(C1 first-law residual)/∂T(S22) = −ṁ c_p at S22 (137.3 °C, 12.49 barg = 13.503 bar)
    cp = CoolProp.PropsSI("CPMASS", "T", 410.45, "P", 13.503e5, "Ammonia")
    assert jacobian("C1 energy", "S22.T") == pytest.approx(-0.5 * cp, rel=1e-6)
    assert jacobian("C1 energy", "C1.shaft_power") == pytest.approx(1.0, rel=1e-6)


def test_evaporator_first_law_against_the_two_phase_enthalpy(jacobian):
    # S20 is written with P and quality 0.1447: ∂h/∂P at constant quality, by central
    # differences of CoolProp's own saturation states (±1 Pa)
    def h(P):
        return CoolProp.PropsSI("H", "P", P, "Q", 0.1447, "Ammonia")

    dh_dP = (h(1.893e5 + 1.0) - h(1.893e5 - 1.0)) / 2.0
    assert jacobian("R1 energy", "S20.P") == pytest.approx(0.5 * dh_dP, rel=1e-5)
    assert jacobian("EV1 energy", "S20.P") == pytest.approx(-0.5 * dh_dP, rel=1e-5)


def test_balances_only_equal_the_full_evaluation(network):
    solution = network.solution
    balance, document, engine = solution.balance, solution.document, solution.engine
    for index, step in enumerate(balance.steps):
        full, _ = evaluate_step(balance, document, engine, solution.streams, index)
        quick, _ = evaluate_step(balance, document, engine, solution.streams, index, None, True)
        assert quick.energy_residual == full.energy_residual, step.id
        assert quick.mass_residual == full.mass_residual, step.id
        assert quick.extra.get("cold_duty") == full.extra.get("cold_duty"), step.id
        if step.kind == "heat_exchanger":
            assert full.profile is not None and quick.profile is None
    assert not any(math.isnan(r) for r in network.residuals(network.x0))
