"""The review pass over a solved balance: verdicts with uncertainty, then probable causes.

:func:`review` runs after :func:`audit.solve.solve` and before :func:`audit.solve.to_result`.
When the balance declares any uncertainty, each step's law findings get their expanded uncertainty
and verdict (:mod:`audit.review.uncertainty`); then the failing steps get their probable causes
(:mod:`audit.review.causes`). Both re-evaluate steps only through :mod:`audit.review.runner`.
"""

from __future__ import annotations

from collections import defaultdict

from audit.findings import Finding
from audit.results import StepResult
from audit.review.causes import name_causes
from audit.review.formulation_steps import assess_formulations
from audit.review.inputs import check_declarations, declares_uncertainty
from audit.review.margins import LAW_FINDINGS
from audit.review.propagation import MONTE_CARLO_SEED
from audit.review.rounding import UNEVALUATED, assess_rounding, not_propagated
from audit.review.runner import StepRunner
from audit.review.uncertainty import DEFAULT_COVERAGE_FACTOR, assess_step
from audit.solve import Solution
from audit.steps.allowances import ROUNDING


def review(solution: Solution, monte_carlo_trials: int = 0) -> tuple[list[Finding], dict[str, str]]:
    """Verdicts with uncertainty (when the balance declares any) and probable causes for the
    findings of a solved balance. Returns the findings (same order) and provenance lines."""
    balance, results = solution.balance, solution.results
    declared = declares_uncertainty(balance)
    if declared:  # nothing declared, nothing to read (and nothing that could be wrong)
        check_declarations(balance, solution.document)
    runner = StepRunner(solution)
    by_result = {r.id: r for r in results}
    by_step: dict[int, list[tuple[int, Finding]]] = defaultdict(list)
    findings, spent_on_rounding = _rounding(runner, solution.findings, by_result)
    provenance: dict[str, str] = {
        "rounding": f"worst-case bound of the written digits' rounding through the steps' "
        f"sensitivities (GUM, JCGM 100:2008, §F.2.2.1); {spent_on_rounding} step re-evaluations"
    }
    findings, spent_on_formulations = assess_formulations(runner, findings, by_result)
    if spent_on_formulations:
        provenance["formulations"] = (
            f"step laws read on both formulations of water (IAPWS-95 and IAPWS-IF97) where the "
            f"balance declares none; {spent_on_formulations} step re-evaluations"
        )
    for position, finding in enumerate(findings):
        if finding.step in runner.index and finding.name in LAW_FINDINGS:
            by_step[runner.index[finding.step]].append((position, finding))
    findings = list(findings)
    expanded: dict[int, float] = {}
    if declared:
        unc = balance.balance.uncertainty
        k = unc.coverage_factor if unc is not None else DEFAULT_COVERAGE_FACTOR
        spent, failed = 0, 0
        for index, items in sorted(by_step.items()):
            step_id = balance.steps[index].id
            if step_id not in by_result:
                continue
            updated, info = assess_step(runner, index, items, by_result[step_id], k, monte_carlo_trials)
            for position, finding in updated.items():
                findings[position] = finding
            expanded.update(info.expanded)
            spent += info.evaluations
            failed += info.monte_carlo_failed
        provenance["uncertainty"] = (
            f"linear propagation, central differences through the property calls (GUM, JCGM "
            f"100:2008, §5.1); expanded with k = {k:g}; {spent} step re-evaluations"
        )
        if monte_carlo_trials > 0:
            provenance["uncertainty, Monte Carlo"] = (
                f"{monte_carlo_trials} draws per step, seed {MONTE_CARLO_SEED} (JCGM 101:2008)"
                + (f"; {failed} draws could not be evaluated and were left out" if failed else "")
            )
    findings, spent_on_causes = name_causes(runner, findings, expanded, by_result)
    provenance["probable causes"] = f"{spent_on_causes} step re-evaluations (audit.review.causes)"
    return findings, provenance


def _rounding(
    runner: StepRunner, findings: list[Finding], by_result: dict[str, StepResult]
) -> tuple[list[Finding], int]:
    """The default verdict (:mod:`audit.review.rounding`) of every law finding whose tolerance
    rule is rounding: widened by the rounding bound, or dropped when the rounding explains it.
    Returns the findings (same order, those explained left out) and the re-evaluations spent."""
    started = runner.runs
    by_step: dict[int, list[tuple[int, Finding]]] = defaultdict(list)
    for position, finding in enumerate(findings):
        if finding.step in runner.index and finding.tolerance_rule == ROUNDING:
            by_step[runner.index[finding.step]].append((position, finding))
    changed: dict[int, Finding | None] = {}
    for index, items in sorted(by_step.items()):
        result = by_result.get(runner.balance.steps[index].id)
        if result is not None:
            changed.update(assess_rounding(runner, index, items, result))
        else:
            changed.update((p, not_propagated(f, UNEVALUATED)) for p, f in items)
    kept = []
    for position, finding in enumerate(findings):
        new = changed.get(position, finding)
        if new is not None:
            kept.append(new)
    return kept, runner.runs - started
