"""Around the solver: the phase of each measured state before reconciling, the phase of each
reconciled state, and the audit of the reconciled balance (the second-law checks on the
reconciled state decide whether an original finding was a measurement error or an impossible
claim)."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from audit.findings import ERROR
from audit.reconcile.records import IMPOSSIBLE_CLAIM, MEASUREMENT_ERROR, FindingOrigin
from audit.reconcile.variables import Network
from audit.review.margins import LAW_FINDINGS
from audit.review.runner import with_value
from audit.solve import Solution
from audit.wording import bar, celsius

SECOND_LAW = (
    "work-above-bound",
    "input-below-minimum",
    "negative-entropy-generation",
    "efficiency-above-one",
)


def _family(phase: str) -> str:
    """Phases one smooth branch of states joins (vapour and gas differ only by T_c)."""
    return "vapour" if phase in ("vapour", "gas", "supercritical", "supercritical gas") else phase


def phase_before(solution: Solution) -> list[str]:
    """Measured states whose computed phase differs from the declared one (a slip across the
    saturation line makes the reconciliation non-smooth: say so before solving)."""
    notes = []
    for finding in solution.findings:
        if finding.name == "phase-mismatch":
            notes.append(f"before reconciling: {finding.message}")
    return notes


def phase_after(network: Network, x: Sequence[float]) -> list[str]:
    """Reconciled states whose phase differs from the phase computed from the readings."""
    notes = []
    reconciled = network.streams_at(x)
    for stream_id, before in network.solution.streams.items():
        after = reconciled[stream_id]
        if _family(after.phase) != _family(before.phase):
            notes.append(
                f"stream {stream_id} converged to a state of another phase: {before.phase} as "
                f"read ({celsius(before.T)}, {bar(before.P)}), {after.phase} reconciled "
                f"({celsius(after.T)}, {bar(after.P)})"
            )
    return notes


def origins(network: Network, x: Sequence[float]) -> list[FindingOrigin]:
    """Each original law finding (error severity) judged on the reconciled balance: a step that
    still violates a second-law bound there is an impossible claim; otherwise the readings
    explained it (a measurement error)."""
    streams = network.streams_at(x)
    after: dict[str, set[str]] = {}
    for index, step in enumerate(network.runner.balance.steps):
        changed: Any = step
        for i in network.by_step.get(step.id, []):
            changed = with_value(changed, network.variables[i].item.path, float(x[i]))
        _, found = network.runner.run(index, changed, streams)
        after[step.id] = {f.name for f in found if f.severity == ERROR}
    judged = []
    for finding in network.solution.findings:
        if finding.step is None or finding.name not in LAW_FINDINGS or finding.severity != ERROR:
            continue
        still = finding.name in SECOND_LAW and finding.name in after.get(finding.step, set())
        judged.append(
            FindingOrigin(
                finding.step,
                finding.name,
                IMPOSSIBLE_CLAIM if still else MEASUREMENT_ERROR,
                "still violated on the reconciled balance"
                if still
                else "gone on the reconciled balance",
            )
        )
    return judged
