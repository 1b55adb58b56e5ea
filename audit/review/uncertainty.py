"""Measurement uncertainty of the law findings of one step, and their verdicts.

A measured balance declares the uncertainty of its readings (:mod:`audit.model.uncertainty`). For
every step with a law finding (:data:`audit.review.margins.LAW_FINDINGS`), :func:`assess_step`
collects the step's uncertain inputs (:mod:`audit.review.inputs`), writes each finding's margin as
a function of them (:mod:`audit.review.margins`), whose every evaluation re-flashes the perturbed
streams with the property engine and re-runs the step kind's own ``evaluate``
(:mod:`audit.review.runner`: no physics is written twice), propagates the uncertainty by the law
of propagation of uncertainty for uncorrelated inputs [1, §5.1.2] and, optionally, by the Monte
Carlo method of GUM Supplement 1 [2, §7] (:mod:`audit.review.propagation`), and gives each
finding its verdict (:mod:`audit.review.verdicts`, after JCGM 106:2012 [4, §8]).

The expanded uncertainty is U = k u_c with k = 2 unless declared [1, §6.2–6.3]; the declared
spreads are read as combined standard uncertainties of each measurement (systematic and random
parts already combined, as in ASME PTC 19.1 [3]). The inputs that contribute most are named on the
finding.

Cost: two re-evaluations of one step per uncertain input (about three per stream plus one per
claim), only for steps that have a law finding; each re-evaluation flashes only the perturbed
stream of that step. Monte Carlo adds its number of draws per step.

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
   measurement* (GUM).
.. [2] JCGM 101:2008, *Evaluation of measurement data — Supplement 1 to the GUM — Propagation of
   distributions using a Monte Carlo method*.
.. [3] ASME PTC 19.1-2018, *Test Uncertainty*.
.. [4] JCGM 106:2012, *Evaluation of measurement data — The role of measurement uncertainty in
   conformity assessment*.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

from pydantic import BaseModel

from audit.findings import Contributor, Finding
from audit.results import StepResult
from audit.review.inputs import Input, step_inputs
from audit.review.margins import Margin, margin_function
from audit.review.propagation import MONTE_CARLO_SEED, monte_carlo, propagate
from audit.review.runner import StepRunner, overlay, with_value
from audit.review.verdicts import with_verdict

MAX_PROPAGATED_INPUTS = 300
"""Most uncertain inputs of one step whose uncertainty is propagated. Each input costs two
re-evaluations of the step, and each re-evaluation costs time in proportion to the step's streams:
past this (a mixer with a hundred inlets and more), the propagation would grow with the square of
the step's size, so it is not run and the findings say so (they stand without a verdict)."""

UNREAD_NOTE = (
    " (the uncertainty of the readings was not propagated: the finding's margin cannot be read "
    "again from a re-evaluated step; it stands without an uncertainty verdict)"
)
"""Appended to a law finding whose margin the review cannot follow through a re-evaluation."""

DEFAULT_COVERAGE_FACTOR = 2.0
TOP_CONTRIBUTORS = 5


def step_function(
    runner: StepRunner, index: int, inputs: Sequence[Input], margins: Sequence[Margin]
) -> Callable[[list[float]], list[float]]:
    """The margins of step ``index`` as a function of its uncertain inputs [SI]."""
    base = runner.balance.steps[index]

    def f(x: list[float]) -> list[float]:
        changes: dict[str, dict[str, float]] = defaultdict(dict)
        step: BaseModel = base
        for item, value in zip(inputs, x, strict=True):
            if value == item.value:
                continue
            if item.owner == "stream":
                changes[item.ident][str(item.path[0])] = value
            else:
                step = with_value(step, item.path, value)
        replaced = {sid: runner.stream(sid, change) for sid, change in changes.items()}
        # the margins read the step's balances and claim checks only: the kind may skip the rest
        result, _ = runner.run(index, step, replaced, residuals_only=True)
        streams = overlay(runner.streams, replaced)
        return [margin(result, streams) for margin in margins]

    return f


@dataclass
class StepUncertainty:
    """What the propagation found for one step: per finding position, its expanded uncertainty
    [its unit]; the re-evaluations spent; Monte Carlo draws left out."""

    expanded: dict[int, float]
    evaluations: int
    monte_carlo_failed: int = 0


def assess_step(
    runner: StepRunner,
    index: int,
    items: Sequence[tuple[int, Finding]],
    result: StepResult,
    k: float,
    trials: int = 0,
) -> tuple[dict[int, Finding], StepUncertainty]:
    """Propagate the uncertainty of the law findings ``items`` (position, finding) of step
    ``index`` and give each its verdict. Returns the new findings by position."""
    laws = []
    unread: dict[int, Finding] = {}
    for position, finding in items:
        margin = margin_function(finding, result, runner.streams, runner.balance.balance.dead_state.T)
        if margin is not None:
            laws.append((position, finding, margin))
        else:  # never a silent skip: the finding says it has no uncertainty verdict, and why
            unread[position] = replace(finding, message=finding.message + UNREAD_NOTE)
    if not laws:
        return unread, StepUncertainty({}, 0)
    inputs = step_inputs(runner, index)
    if len(inputs) > MAX_PROPAGATED_INPUTS:
        note = (
            f" (the uncertainty of the step's {len(inputs):,} inputs was not propagated: more than "
            f"{MAX_PROPAGATED_INPUTS}, so the review's time grows no faster than the step's size; "
            "the finding stands without an uncertainty verdict)"
        )
        return (
            unread
            | {
                position: replace(finding, message=finding.message + note)
                for position, finding, _ in laws
            },
            StepUncertainty({}, 0),
        )
    if not inputs:
        return (
            unread | {position: with_verdict(finding, 0.0, k) for position, finding, _ in laws},
            StepUncertainty({position: 0.0 for position, _, _ in laws}, 0),
        )
    f = step_function(runner, index, inputs, [margin for _, _, margin in laws])
    x0 = [item.value for item in inputs]
    u = [item.u for item in inputs]
    propagation = propagate(f, x0, u)
    mc_std: list[float] | None = None
    failed = 0
    if trials > 0:
        mc_std, failed = monte_carlo(f, x0, u, trials, seed=(MONTE_CARLO_SEED, index))
    updated: dict[int, Finding] = dict(unread)
    expanded: dict[int, float] = {}
    for j, (position, finding, _) in enumerate(laws):
        u_c = propagation.u_c[j]
        ranked = []
        for item, contribution in zip(inputs, propagation.contributions, strict=True):
            if contribution is None:
                ranked.append(
                    Contributor(
                        item.label + " (not evaluated)",
                        item.quantity,
                        item.u,
                        math.nan,
                        math.nan,
                        math.nan,
                    )
                )
                continue
            c_u = contribution[j]
            ranked.append(
                Contributor(
                    item.label,
                    item.quantity,
                    item.u,
                    c_u / item.u,
                    c_u,
                    (c_u / u_c) ** 2 if u_c > 0 else 0.0,
                )
            )
        ranked.sort(key=lambda c: -abs(c.contribution) if math.isfinite(c.contribution) else -math.inf)
        # contributions below 1e-6 of u_c (a share of 1e-12) are rounding, not inputs
        top = tuple(
            c for c in ranked[:TOP_CONTRIBUTORS] if not math.isfinite(c.share) or c.share > 1e-12
        )
        mc = k * mc_std[j] if mc_std is not None and math.isfinite(mc_std[j]) else None
        updated[position] = with_verdict(finding, k * u_c, k, top, mc)
        expanded[position] = k * u_c
    return updated, StepUncertainty(
        expanded, propagation.evaluations + (trials if trials else 0), failed
    )
