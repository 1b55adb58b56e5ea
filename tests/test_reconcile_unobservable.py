"""Unobservable unmeasured flows: the readings are reconciled, every balance closes, the solver
converges, and the unobservable flows are marked so (analytic case).

A supply F1 splits into F2 and F3, which pass on as F4 and F5 and join into the return F6. With only
F1 and F6 measured, the inner flows are not fixed by the balances (any split fits), and the one
redundant balance is F1 = F6: the weighted least-squares estimate of two readings of one quantity
is their inverse-variance mean (Gauss; any text on least squares), with variance 1/(1/σ1² + 1/σ6²).
"""

from __future__ import annotations

import numpy as np
import pytest

from audit.reconcile.solver import reconcile_values

A = np.array(
    [
        [1.0, -1.0, -1.0, 0.0, 0.0, 0.0],
        [0.0, 1.0, 0.0, -1.0, 0.0, 0.0],
        [0.0, 0.0, 1.0, 0.0, -1.0, 0.0],
        [0.0, 0.0, 0.0, 1.0, 1.0, -1.0],
    ]
)
START = np.array([50.0, 20.0, 20.0, 25.0, 15.0, 47.0])  # start values that close no balance
SIGMA_1, SIGMA_6 = 0.8, 1.2  # standard uncertainties of the two readings


def test_unobservable_inner_flows_do_not_stop_convergence():
    est = reconcile_values(
        lambda x: A @ x,
        lambda x: A,
        START.copy(),
        START[[0, 5]],
        np.diag([SIGMA_1**2, SIGMA_6**2]),
        [0, 5],
    )
    w1, w6 = 1 / SIGMA_1**2, 1 / SIGMA_6**2
    mean = (w1 * START[0] + w6 * START[5]) / (w1 + w6)
    assert est.converged, est.message
    assert est.redundancy == 1
    assert est.observable.tolist() == [False, False, False, False]
    assert est.x[0] == pytest.approx(mean, abs=1e-9)
    assert est.x[5] == pytest.approx(mean, abs=1e-9)
    assert est.cov_estimate[0, 0] == pytest.approx(1 / (w1 + w6), rel=1e-9)
    np.testing.assert_allclose(A @ est.x, 0.0, atol=1e-9)
    assert np.isnan(est.cov_unmeasured).all()
