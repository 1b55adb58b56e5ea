"""Correlated readings declared in the balance file (``balance: uncertainty: correlations:``).

Independent reference: the closed form of linear reconciliation with a full covariance
x̂ = x − Σ Aᵀ (A Σ Aᵀ)⁻¹ A x, Cov(x̂) = Σ − Σ Aᵀ (A Σ Aᵀ)⁻¹ A Σ (Kuehn and Davidson, 1961;
Narasimhan and Jordache, 2000, ch. 3), with Σ_ij = r_ij u_i u_j (GUM, JCGM 100:2008, §5.2.2),
computed here with plain numpy on a splitter whose streams share one state (its first law then
adds nothing to its mass balance)."""

from __future__ import annotations

import numpy as np
import pytest
from conftest import write_balance

from audit.errors import InputError
from audit.reconcile import reconcile_file

FLOWS = np.array([10.3, 6.1, 3.9])  # S1 → S2 + S3 [kg/s]
U = 0.02 * FLOWS  # 2 % standard uncertainties [kg/s]


def _balance(tmp_path, correlations: str) -> object:
    # each declared line as an item of the list, at the indentation of the template below
    correlations = "\n".join(f"              - {line}" for line in correlations.split("\n")).lstrip()
    return write_balance(
        tmp_path,
        f"""
        balance:
          name: correlated split
          site_pressure: 1.01325 bar
          uncertainty:
            flow: 2 %
            correlations:
              {correlations}
        streams:
          S1: {{fluid: Water, T: 20 degC, P: 3 bar, flow: 10.3 kg/s}}
          S2: {{fluid: Water, T: 20 degC, P: 3 bar, flow: 6.1 kg/s}}
          S3: {{fluid: Water, T: 20 degC, P: 3 bar, flow: 3.9 kg/s}}
        steps:
          - {{id: SP1, kind: splitter, inlet: S1, outlets: [S2, S3]}}
        """,
    )


@pytest.mark.parametrize("r", [0.6, -0.4, 0.0])
def test_correlated_flows_match_the_closed_form(tmp_path, r):
    path = _balance(tmp_path, f"{{readings: [S2.flow, S3.flow], coefficient: {r}}}")
    result = reconcile_file(path)
    sigma = np.diag(U**2)
    sigma[1, 2] = sigma[2, 1] = r * U[1] * U[2]
    A = np.array([[1.0, -1.0, -1.0]])
    gain = sigma @ A.T @ np.linalg.inv(A @ sigma @ A.T)
    expected = FLOWS - gain @ A @ FLOWS
    cov = sigma - gain @ A @ sigma
    by_key = {reading.key: reading for reading in result.readings}
    for k, key in enumerate(("S1.flow", "S2.flow", "S3.flow")):
        assert by_key[key].reconciled == pytest.approx(expected[k], rel=1e-7)
        assert by_key[key].u_after == pytest.approx(np.sqrt(cov[k, k]), rel=1e-6)
    assert result.first.dof == 1
    v = expected - FLOWS
    assert result.first.statistic == pytest.approx(v @ np.linalg.solve(sigma, v), rel=1e-6)


@pytest.mark.parametrize(
    ("declared", "message"),
    [
        (
            "{readings: [S2.flow, S9.flow], coefficient: 0.5}",
            "the correlation names 'S9.flow', which is no reading with an uncertainty",
        ),
        (
            "{readings: [S2.T, S3.T], coefficient: 0.5}",  # T is exact here
            "the correlation names 'S2.T', which is no reading with an uncertainty",
        ),
        (
            "{readings: [S2.flow, S2.flow], coefficient: 0.5}",
            "the correlation pairs 'S2.flow' with itself",
        ),
        (
            "{readings: [S2.flow, S3.flow], coefficient: 0.5}\n"
            "{readings: [S3.flow, S2.flow], coefficient: 0.2}",
            "the correlation of 'S3.flow' and 'S2.flow' is declared twice",
        ),
        (
            "{readings: [S1.flow, S2.flow], coefficient: 0.9}\n"
            "{readings: [S1.flow, S3.flow], coefficient: 0.9}\n"
            "{readings: [S2.flow, S3.flow], coefficient: -0.9}",
            r"the declared correlations of S1.flow, S2.flow, S3.flow cannot hold together",
        ),
        (
            "{readings: [S2.flow, S3.flow], coefficient: 1.5}",
            r"correlations\[0\].coefficient': Input should be less than or equal to 1",
        ),
        (
            "{readings: [S2.flow], coefficient: 0.5}",
            r"correlations\[0\].readings",
        ),
    ],
)
def test_declared_correlations_are_validated(tmp_path, declared, message):
    with pytest.raises(InputError, match=message):
        reconcile_file(_balance(tmp_path, declared))


def test_a_refused_correlation_names_its_line(tmp_path):
    path = _balance(tmp_path, "{readings: [S2.flow, S9.flow], coefficient: 0.5}")
    with pytest.raises(InputError) as caught:
        reconcile_file(path)
    assert caught.value.problem.line == 7  # the list item under correlations:
