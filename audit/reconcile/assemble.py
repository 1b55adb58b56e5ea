"""From a solved balance to a :class:`~audit.reconcile.records.Reconciliation` record."""

from __future__ import annotations

import math
from collections.abc import Sequence

from audit.errors import InputError
from audit.reconcile.after import origins, phase_after, phase_before
from audit.reconcile.correlations import check_positive_definite, declared_correlations
from audit.reconcile.gross import eliminate, global_test
from audit.reconcile.records import Reading, Reconciliation, finite
from audit.reconcile.rounds import Round
from audit.reconcile.solver import TOLERANCE
from audit.reconcile.statistics import CHECKABLE
from audit.reconcile.variables import Network, build_variables
from audit.review.inputs import check_declarations, declares_uncertainty
from audit.solve import Solution


def reconcile(
    solution: Solution, confidence: float = 0.95, unmeasured: Sequence[str] = ()
) -> Reconciliation:
    """Reconcile a solved balance with declared uncertainties at ``confidence`` (0 < c < 1);
    ``unmeasured`` names quantities to estimate (``S20.quality``, ``C1.shaft_power``). Raises
    :class:`InputError` when the balance declares no uncertainty."""
    balance, document = solution.balance, solution.document
    if not 0.5 <= confidence < 1.0:
        raise InputError(
            f"the confidence is a fraction between 0.5 and 1, such as 0.95; got {confidence:g}"
        )
    if not declares_uncertainty(balance):
        raise InputError(
            "reconciliation needs the uncertainty of the readings: declare it under "
            "'balance: uncertainty:' (or per stream and step)",
            file=document.file,
        )
    check_declarations(balance, document)
    network = Network(solution, build_variables(solution, unmeasured))
    network.correlations = declared_correlations(solution, network.variables)
    measured = [i for i, var in enumerate(network.variables) if var.is_measured]
    check_positive_definite(solution, network.variables, measured, network.correlations)
    notes = phase_before(solution)
    first, last, eliminations = eliminate(network, confidence)
    estimate = last.estimate
    x = list(estimate.x)
    notes += phase_after(network, x)
    residuals = network.residuals(x)
    return Reconciliation(
        name=balance.balance.name,
        file=document.file,
        confidence=confidence,
        converged=estimate.converged and first.estimate.converged,
        message=estimate.message or first.estimate.message,
        iterations=estimate.iterations,
        tolerance=TOLERANCE,
        first=global_test(first, confidence),
        final=global_test(last, confidence),
        critical_value=last.critical,
        critical_method=f"Šidák, {confidence:.0%} for all redundant readings together",
        readings=_readings(network, last, [e.removed for e in eliminations]),
        eliminations=eliminations,
        constraints=[(c.key, r, c.unit) for c, r in zip(network.constraints, residuals, strict=True)],
        phase_notes=notes,
        origins=origins(network, x),
        redundancy=estimate.redundancy,
        evaluations=network.evaluations,
    )


def _readings(network: Network, round_: Round, removed: list[str]) -> list[Reading]:
    estimate, stats = round_.estimate, round_.stats
    variables = network.variables
    found: list[Reading] = []
    position = {index: k for k, index in enumerate(round_.measured)}
    unmeasured_position = {int(index): k for k, index in enumerate(estimate.unmeasured)}
    for i, var in enumerate(variables):
        item = var.item
        reading = Reading(
            var.key,
            item.label,
            item.quantity,
            var.measured if var.u else None,
            float(estimate.x[i]),
            var.u,
            None,
        )
        if i in position:
            k = position[i]
            reading.u_after = math.sqrt(max(float(estimate.cov_estimate[k, k]), 0.0))
            reading.redundancy = float(stats.redundancy[k])
            reading.normalised = finite(float(stats.normalised[k]))
            reading.detectable_bias = finite(float(stats.detectable_bias[k]))
            if stats.set_of[k] >= 0 and len(stats.sets[stats.set_of[k]]) > 1:
                reading.equivalent_set = [
                    variables[round_.measured[j]].key for j in stats.sets[stats.set_of[k]]
                ]
            if reading.redundancy < 1e-12:
                reading.flag = "just determined"
            elif reading.redundancy < CHECKABLE:
                reading.flag = "not checkable"
            elif reading.normalised is not None and reading.normalised > round_.critical:
                reading.flag = "suspect"
        else:
            k = unmeasured_position[i]
            if not bool(estimate.observable[k]):
                reading.reconciled, reading.flag = None, "unobservable"
            else:
                reading.u_after = finite(math.sqrt(max(float(estimate.cov_unmeasured[k, k]), 0.0)))
                reading.flag = "gross error" if var.key in removed else "estimated"
            if var.key in removed:
                reading.measured = var.measured
                reading.u_before = var.u
        found.append(reading)
    return found


__all__ = ["reconcile"]
