"""Reconciliation on linear flow networks: the closed form, equivalent sets, and the statistics by
simulation.

Independent references: the closed form of linear reconciliation x̂ = x − Σ Aᵀ (A Σ Aᵀ)⁻¹ A x and
Cov(x̂) = Σ − Σ Aᵀ (A Σ Aᵀ)⁻¹ A Σ (Kuehn and Davidson, 1961; Narasimhan and Jordache, 2000,
ch. 3), computed here with plain numpy; the χ² and non-central χ² distributions (scipy.stats);
binomial intervals of a simulated rate (Clopper–Pearson, via scipy.stats.binomtest).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from audit.reconcile.solver import reconcile_values
from audit.reconcile.statistics import (
    global_critical,
    global_power,
    reading_statistics,
    sidak_critical,
)

# Five streams around two nodes: 1 → node a → 2, 3; 2 → node b → 4, 5 ... plus a recycle-free
# network of two balances and a third on the totals.
A = np.array(
    [
        [1.0, -1.0, -1.0, 0.0, 0.0, 0.0],
        [0.0, 1.0, 0.0, -1.0, -1.0, 0.0],
        [0.0, 0.0, 1.0, 1.0, 0.0, -1.0],
    ]
)
U = np.array([1.0, 0.6, 0.5, 0.4, 0.3, 0.8])
TRUE = np.array([100.0, 60.0, 40.0, 35.0, 25.0, 75.0])


def _solve(x, A=A, u=U, measured=None):
    measured = list(range(x.size)) if measured is None else measured
    sigma = np.diag(u[measured] ** 2)
    return reconcile_values(lambda z: A @ z, lambda z: A, x, x[measured], sigma, measured)


def test_linear_network_matches_closed_form():
    x = TRUE + np.array([0.9, -0.4, 0.3, 0.2, -0.35, 0.5])
    est = _solve(x)
    sigma = np.diag(U**2)
    gain = sigma @ A.T @ np.linalg.inv(A @ sigma @ A.T)
    expected = x - gain @ A @ x
    np.testing.assert_allclose(est.x, expected, rtol=0, atol=1e-9)  # exact up to round-off
    np.testing.assert_allclose(est.cov_estimate, sigma - gain @ A @ sigma, atol=1e-12)
    assert est.redundancy == 3
    assert est.converged
    v = expected - x
    assert est.objective == pytest.approx(v @ np.linalg.inv(sigma) @ v, rel=1e-9)


def test_unmeasured_flow_is_estimated_and_an_isolated_one_is_unobservable():
    # stream 4 unmeasured: observable (node b gives it); add a stream 6 that only enters one
    # node together with unmeasured stream 7: neither is observable.
    A2 = np.hstack([A, np.zeros((3, 2))])
    A2 = np.vstack([A2, [0, 0, 0, 0, 0, 1.0, -1.0, -1.0]])
    x = np.append(TRUE, [30.0, 45.0])
    u = np.append(U, [1.0, 1.0])
    est = _solve(x, A2, u, measured=[0, 1, 2, 4, 5])
    assert est.observable.tolist() == [True, False, False]
    assert est.x[3] == pytest.approx(35.0, abs=1e-9)


def test_make_up_and_drain_form_one_equivalent_set():
    # tank: feed + make-up = out + drain; out also enters a second balance with a product meter
    At = np.array([[1.0, 1.0, -1.0, -1.0, 0.0], [0.0, 0.0, 1.0, 0.0, -1.0]])
    u = np.array([1.0, 0.2, 1.0, 0.2, 1.0])
    true = np.array([50.0, 5.0, 50.0, 5.0, 50.0])
    for biased in (1, 3):  # the make-up, then the drain, reads 8 σ high
        x = true.copy()
        x[biased] += 8 * u[biased]
        est = _solve(x, At, u)
        st = reading_statistics(
            est.corrections, est.cov_corrections, est.chol, est.q, est.redundancy, 0.95
        )
        worst = int(np.nanargmax(st.normalised))
        assert sorted(st.sets[st.set_of[worst]]) in ([0, 1, 3], [1, 3])
        assert st.normalised[1] == pytest.approx(st.normalised[3], rel=1e-9)


def test_sidak_value_for_ten_readings():
    # α' = 1 − 0.95^(1/10) = 0.005116; z = Φ⁻¹(1 − α'/2) = 2.80 (computed from the definition)
    assert sidak_critical(10, 0.95) == pytest.approx(stats.norm.isf((1 - 0.95**0.1) / 2))
    assert 2.79 < sidak_critical(10, 0.95) < 2.81


def test_global_test_rejects_at_its_nominal_rate():
    rng = np.random.default_rng(20_240_611)
    trials, rejected = 400, 0
    for _ in range(trials):
        x = TRUE + rng.standard_normal(U.size) * U
        est = _solve(x)
        rejected += est.objective > global_critical(est.redundancy, 0.95)
    interval = stats.binomtest(rejected, trials, 0.05).proportion_ci(0.99)
    assert interval.low <= 0.05 <= interval.high


@pytest.mark.parametrize("meter", [0, 3, 5])
def test_bias_of_five_sigma_detected_at_the_theoretical_power(meter):
    rng = np.random.default_rng(1961 + meter)
    est0 = _solve(TRUE.copy())
    st0 = reading_statistics(est0.corrections, est0.cov_corrections, est0.chol, est0.q, 3, 0.95)
    power = global_power(3, 0.95, 25.0 * st0.redundancy[meter])
    trials, detected, named = 300, 0, 0
    for _ in range(trials):
        x = TRUE + rng.standard_normal(U.size) * U
        x[meter] += 5 * U[meter]
        est = _solve(x)
        if est.objective > global_critical(3, 0.95):
            detected += 1
        st = reading_statistics(est.corrections, est.cov_corrections, est.chol, est.q, 3, 0.95)
        worst = int(np.nanargmax(st.normalised))
        named += meter in st.sets[st.set_of[worst]]
    interval = stats.binomtest(detected, trials).proportion_ci(0.99)
    assert interval.low <= power <= interval.high
    if st0.redundancy[meter] > 0.5:  # a well-redundant meter: named (or its set) ≥ 90 %
        assert named / trials >= 0.9
