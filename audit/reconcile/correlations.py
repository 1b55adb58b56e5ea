"""Correlated readings: the ``correlations`` a balance declares under ``balance: uncertainty:``
(:class:`audit.model.uncertainty.Correlation`), checked against the reconciliation's variables,
and the covariance matrix of the measured readings they give.

The covariance of two readings with standard uncertainties u_i, u_j and correlation coefficient
r_ij is r_ij u_i u_j (GUM, JCGM 100:2008, §5.2.2); the matrix of all of them must be positive
definite (a set such as r₁₂ = r₁₃ = 0.9, r₂₃ = −0.9 is not: no three errors can be correlated so),
else the weighted least squares has no unique solution [1, §3.1].

References
----------
.. [1] S. Narasimhan, C. Jordache, *Data Reconciliation and Gross Error Detection*, Gulf, 2000.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from audit.errors import InputError
from audit.reconcile.variables import Variable
from audit.solve import Solution

_WHERE = ("balance", "uncertainty", "correlations")


def declared_correlations(
    solution: Solution, variables: Sequence[Variable]
) -> dict[tuple[int, int], float]:
    """The declared correlations as {(i, j): r} over the indices of ``variables`` (i < j).
    Raises :class:`InputError` (with the line) for a reading that is not one of them or carries
    no uncertainty, a reading paired with itself, or a pair declared twice."""
    unc = solution.balance.balance.uncertainty
    document = solution.document
    index = {var.key: i for i, var in enumerate(variables)}
    found: dict[tuple[int, int], float] = {}
    for k, declared in enumerate(unc.correlations if unc is not None else []):
        line, column = document.position((*_WHERE, k))

        def refuse(message: str) -> InputError:
            return InputError(message, file=document.file, line=line, column=column)  # noqa: B023

        first, second = declared.readings
        for key in (first, second):
            if key not in index:
                raise refuse(
                    f"the correlation names '{key}', which is no reading with an uncertainty in "
                    "this balance; write STREAM.PROPERTY (S05.flow) or STEP.CLAIM (C1.shaft_power) "
                    "of a value that has one"
                )
        if first == second:
            raise refuse(f"the correlation pairs '{first}' with itself; name two different readings")
        pair = tuple(sorted((index[first], index[second])))
        if pair in found:
            raise refuse(f"the correlation of '{first}' and '{second}' is declared twice")
        found[(pair[0], pair[1])] = declared.coefficient
    return found


def covariance(
    variables: Sequence[Variable], measured: Sequence[int], pairs: dict[tuple[int, int], float]
) -> np.ndarray:
    """Σ of the ``measured`` variables (indices, in that order) [SI²]: u_i² on the diagonal,
    r_ij u_i u_j where a correlation is declared."""
    u = np.array([float(variables[i].u or 0.0) for i in measured])
    sigma = np.diag(u**2)
    position = {index: k for k, index in enumerate(measured)}
    for (i, j), r in pairs.items():
        if i in position and j in position:
            a, b = position[i], position[j]
            sigma[a, b] = sigma[b, a] = r * u[a] * u[b]
    return sigma


def check_positive_definite(
    solution: Solution,
    variables: Sequence[Variable],
    measured: Sequence[int],
    pairs: dict[tuple[int, int], float],
) -> None:
    """Raise :class:`InputError` when the declared correlations cannot hold together (their
    matrix is not positive definite), naming the readings they join."""
    if not pairs:
        return
    try:
        np.linalg.cholesky(covariance(variables, measured, pairs))
    except np.linalg.LinAlgError:
        keys = sorted({variables[i].key for pair in pairs for i in pair})
        line, column = solution.document.position(_WHERE)
        raise InputError(
            f"the declared correlations of {', '.join(keys)} cannot hold together (their matrix "
            "is not positive definite: a coefficient of ±1, or three or more that contradict "
            "each other); lower the coefficients",
            file=solution.document.file,
            line=line,
            column=column,
        ) from None
