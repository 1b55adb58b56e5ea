"""One reconciliation round on a network: finite-difference Jacobians (forward differences, the
last one kept for the next round) through the property engine,
the solver, and the per-reading statistics; :mod:`audit.reconcile.gross` repeats rounds."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from audit.errors import InputError
from audit.reconcile.correlations import covariance
from audit.reconcile.solver import Estimate, NotEvaluable, reconcile_values
from audit.reconcile.statistics import (
    ReadingStatistics,
    global_critical,
    reading_statistics,
    sidak_critical,
)
from audit.reconcile.variables import Network

RELATIVE_STEP = 1e-4
"""Finite-difference step of a measured variable, as a fraction of its standard uncertainty."""
UNMEASURED_STEP = 1e-7
"""Finite-difference step of an unmeasured variable, as a fraction of its size."""
ROUND_OFF_FLOOR = 1e-8
"""A constraint whose sensitivity to one standard uncertainty of every variable is below this
fraction of the size of its terms is taken as insensitive: the round-off of a forward difference
is about machine precision (2.2e-16) times that size divided by :data:`RELATIVE_STEP`, some
10^-12, four orders below; a real sensitivity is many orders above [-]."""


@dataclass
class Round:
    """A solved round: the estimate, its statistics and the set of measured variables used."""

    estimate: Estimate
    stats: ReadingStatistics
    measured: list[int]  # indices of the measured variables (order of the estimate)
    critical: float  # Šidák's critical value of the normalised corrections
    global_critical: float


def residual_function(network: Network):  # noqa: ANN201 - a closure
    def residual(x: np.ndarray) -> np.ndarray:
        try:
            return np.asarray(network.residuals(list(x)), dtype=float)
        except InputError as exc:
            raise NotEvaluable(str(exc)) from None

    return residual


def jacobian_function(network: Network):  # noqa: ANN201 - a closure
    """∂f/∂x by forward differences through the property engine (backward where the forward
    side cannot be evaluated, e.g. across the saturation line), each column evaluating only the
    steps its variable enters. The last Jacobian is kept: a round that starts where the previous
    one ended (:mod:`audit.reconcile.gross`) reuses it instead of evaluating it again."""
    keys = [c.step for c in network.constraints]
    rows_of = {step: [j for j, k in enumerate(keys) if k == step] for step in set(keys)}

    def jacobian(x: np.ndarray) -> np.ndarray:
        cached = network.last_jacobian
        if cached is not None and np.array_equal(cached[0], x):
            return cached[1].copy()
        base = np.asarray(network.residuals(list(x)), dtype=float)
        J = np.zeros((len(keys), x.size))
        for i, var in enumerate(network.variables):
            steps = network.steps_touched(i)
            rows = [j for s in steps for j in rows_of.get(s, [])]
            if not rows:
                continue
            u = var.u if var.u is not None and math.isfinite(var.u) else None
            h = RELATIVE_STEP * u if u else UNMEASURED_STEP * max(abs(x[i]), 1e-3)
            for sign in (1.0, -1.0):
                shifted = x.copy()
                shifted[i] += sign * h
                try:
                    side = np.asarray(network.residuals(list(shifted), steps))[rows]
                except InputError:
                    continue
                J[rows, i] = sign * (side - base[rows]) / h
                break
            else:
                raise NotEvaluable(f"{var.key} cannot be varied at {x[i]:g}")
        network.last_jacobian = (x.copy(), J.copy())
        return J

    return jacobian


def solve_round(
    network: Network, x_start: Sequence[float], measured: Sequence[int], confidence: float
) -> Round:
    """Reconcile with the variables ``measured`` (indices) as readings; the others estimated."""
    variables = network.variables
    readings = [variables[i].measured for i in measured]
    sigma = covariance(variables, measured, network.correlations)
    floor = ROUND_OFF_FLOOR * np.asarray(network.magnitudes(list(x_start)))
    estimate = reconcile_values(
        residual_function(network),
        jacobian_function(network),
        x_start,
        readings,
        sigma,
        measured,
        floor,
    )
    stats = reading_statistics(
        estimate.corrections,
        estimate.cov_corrections,
        estimate.chol,
        estimate.q,
        estimate.redundancy,
        confidence,
    )
    redundant = int(np.sum(stats.redundancy >= 1e-12))
    return Round(
        estimate,
        stats,
        list(measured),
        sidak_critical(redundant, confidence),
        global_critical(estimate.redundancy, confidence),
    )
