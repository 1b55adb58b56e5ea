"""Gross-error identification by serial elimination [1, §8.2; 2, §8]: while the global test
fails, the reading with the largest normalised correction (with its equivalent set: any member
would do, so the set is named) is made unmeasured and the balance reconciled again, until the
global test passes, no redundant reading is left, or :data:`MAX_ELIMINATIONS` rounds. A reading
whose normalised corrections are hard to tell apart from the one removed is named with it ("one
of these"), and tried in its place at the end: several gross errors can mask each other, and the
removal set that leaves the smaller global test statistic is kept (:func:`_best_alternative`).

References
----------
.. [1] S. Narasimhan, C. Jordache, *Data Reconciliation and Gross Error Detection*, Gulf, 2000.
.. [2] VDI 2048 Part 1:2017.
"""

from __future__ import annotations

import math

import numpy as np

from audit.reconcile.records import Elimination, GlobalTest
from audit.reconcile.rounds import Round, solve_round
from audit.reconcile.statistics import CLOSE
from audit.reconcile.variables import Network
from audit.wording import bar

MAX_ELIMINATIONS = 5


def global_test(round_: Round, confidence: float) -> GlobalTest:
    return GlobalTest(
        round_.estimate.objective, round_.estimate.redundancy, confidence, round_.global_critical
    )


def eliminate(network: Network, confidence: float) -> tuple[Round, Round, list[Elimination]]:
    """(first round, last round, the eliminations made); see the module docstring."""
    variables = network.variables
    measured = [i for i, v in enumerate(variables) if v.is_measured]
    first = solve_round(network, network.x0, measured, confidence)
    current, done = first, list[Elimination]()
    while (
        not global_test(current, confidence).passed
        and current.estimate.converged
        and len(done) < MAX_ELIMINATIONS
    ):
        stats = current.stats
        if not np.any(np.isfinite(stats.normalised)):
            break
        worst = int(np.nanargmax(stats.normalised))
        members = stats.sets[stats.set_of[worst]] if stats.set_of[worst] >= 0 else [worst]
        removed = current.measured[worst]
        close = [
            variables[m].key
            for j, m in enumerate(current.measured)
            if j not in members and abs(stats.correlation[worst, j]) >= CLOSE
        ]
        names = [variables[current.measured[j]].key for j in members]
        measured = [i for i in current.measured if i != removed]
        current = solve_round(network, current.estimate.x.copy(), measured, confidence)
        done.append(
            Elimination(
                variables[removed].key,
                names,
                float(stats.normalised[worst]),
                math.nan,
                variables[removed].measured,
                global_test(current, confidence),
                close=close,
            )
        )
    current = _best_alternative(network, confidence, current, done)
    if any(elim.swapped for elim in done):
        _retest_rounds(network, confidence, current, done)
    for elim in done:
        index = network.index[elim.removed]
        elim.estimate = float(current.estimate.x[index])
        elim.note = _note(network, elim)
    return first, current, done


def _best_alternative(
    network: Network, confidence: float, current: Round, done: list[Elimination]
) -> Round:
    """Serial elimination takes, at each round, the reading with the largest normalised
    correction; a reading whose normalised correction is hard to tell apart from it (``close``)
    explains that round almost as well, and several gross errors can mask each other. Each close
    reading is therefore tried in the place of the one removed, with the other removals kept:
    the removal set whose reconciliation leaves the smaller global test statistic γ (the one that
    explains the readings best, at the same redundancy) is kept, and the note says so [1, §8.2]."""
    for k, elim in enumerate(done):
        for alternative in elim.close:
            removed = [e.removed for e in done]
            if alternative in removed:
                continue
            removed[k] = alternative
            measured = [
                i for i, v in enumerate(network.variables) if v.is_measured and v.key not in removed
            ]
            trial = solve_round(network, current.estimate.x.copy(), measured, confidence)
            if (
                trial.estimate.converged
                and trial.estimate.redundancy == current.estimate.redundancy
                and trial.estimate.objective < current.estimate.objective - 1e-6
            ):
                elim.swapped = (
                    f"serial elimination took {elim.removed} first, but with {alternative} "
                    "removed instead the readings fit better at the end (γ = "
                    f"{trial.estimate.objective:.4g} instead of {current.estimate.objective:.4g})"
                )
                elim.removed = alternative
                elim.measured = network.variables[network.index[alternative]].measured
                current = trial
    return current


def _retest_rounds(network: Network, confidence: float, last: Round, done: list[Elimination]) -> None:
    """After a swap, each round's global test is taken again with the removals kept up to that
    round (the one printed after it must be that of the readings named, not of the first choice
    the swap replaced); the last round is ``last`` itself."""
    for k, elim in enumerate(done):
        if k == len(done) - 1:
            elim.after = global_test(last, confidence)
            continue
        removed = {e.removed for e in done[: k + 1]}
        measured = [i for i, v in enumerate(network.variables) if v.is_measured and v.key not in removed]
        elim.after = global_test(
            solve_round(network, last.estimate.x.copy(), measured, confidence), confidence
        )


def _note(network: Network, elim: Elimination) -> str:
    parts = []
    if len(elim.equivalent_set) > 1:
        parts.append(
            f"{' and '.join(elim.equivalent_set)} enter the balances only together: no test can "
            "tell them apart"
        )
    if elim.close:
        parts.append(
            f"{', '.join(elim.close)} hard to tell apart from {elim.equivalent_set[0]} "
            f"(correlation of the normalised corrections at least {CLOSE})"
        )
    if elim.swapped:
        parts.append(elim.swapped)
    note = "; ".join(parts)
    return note + gauge_note(network, network.index[elim.removed], elim.estimate)


def gauge_note(network: Network, index: int, estimate: float) -> str:
    """A pressure whose estimate is its reading plus the site pressure (within 5 %): the usual
    gauge/absolute slip (common practice, design notes §2.2)."""
    var = network.variables[index]
    site = network.solution.balance.balance.site_pressure
    if var.item.path != ("P",) or not site:
        return ""
    difference = estimate - var.measured
    if abs(difference - site) <= 0.05 * site:
        return (
            f"; the estimate {bar(estimate)} is the reading plus the site pressure "
            f"{bar(site)}: a gauge reading written as absolute?"
        )
    if abs(difference + site) <= 0.05 * site:
        return (
            f"; the estimate {bar(estimate)} is the reading minus the site pressure "
            f"{bar(site)}: an absolute reading written as gauge?"
        )
    return ""
