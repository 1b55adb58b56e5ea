"""Gross-error identification by serial elimination [1, §8.2; 2, §8]: while the global test
fails, the reading with the largest normalised correction (with its equivalent set: any member
would do, so the set is named) is made unmeasured and the balance reconciled again, until the
global test passes, no redundant reading is left, or :data:`MAX_ELIMINATIONS` rounds.

References
----------
.. [1] S. Narasimhan, C. Jordache, *Data Reconciliation and Gross Error Detection*, Gulf, 2000.
.. [2] VDI 2048 Part 1:2017.
"""

from __future__ import annotations

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
    """(first round, last round, the eliminations made)."""
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
        names = [variables[current.measured[j]].key for j in members]
        measured_before = current.measured
        measured = [i for i in current.measured if i != removed]
        start = current.estimate.x.copy()
        current = solve_round(network, start, measured, confidence)
        close = [
            variables[m].key
            for j, m in enumerate(measured_before)
            if j not in members and abs(stats.correlation[worst, j]) >= CLOSE
        ]
        note = (
            "" if len(members) == 1 else (f"one of {len(members)} readings that no test can tell apart")
        )
        if close:
            note += ("; " if note else "") + (
                f"hard to tell apart from {', '.join(close)} (correlation of the normalised "
                f"corrections at least {CLOSE})"
            )
        note += gauge_note(network, removed, float(current.estimate.x[removed]))
        done.append(
            Elimination(
                variables[removed].key,
                names,
                float(stats.normalised[worst]),
                float(current.estimate.x[removed]),
                variables[removed].measured,
                global_test(current, confidence),
                note,
            )
        )
    return first, current, done


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
