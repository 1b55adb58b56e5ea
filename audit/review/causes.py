"""Probable causes: which usual slip, undone, would make a failing step close (design note 2.9).

A step fails when one of its law findings stands: verdict ``violated`` on a balance with declared
uncertainties, severity error on a design balance. Each such step is re-evaluated with one slip
undone at a time (:mod:`audit.review.slips`), through the solver's own stream builder and the
kind's own ``evaluate`` (:class:`audit.review.runner.StepRunner`). A step whose law findings are
only ``marginal`` makes no slips of its own (within its uncertainty, too many nudges would "close"
it), but it is named too when a slip of a failing neighbour's shared stream closes it.

A slip closes the step when, re-evaluated,

1. every law margin of the step lies within its tolerance plus the expanded uncertainty
   :mod:`audit.review.uncertainty` found for that finding (zero on a design balance);
2. the largest original margin (relative to that allowance) at least halves: a slip must be
   decisive, not a nudge that slides a near-miss under the line;
3. the step keeps no error at all: every failing check of the step closes, its own kind's checks
   too (a fuel cell above its reversible voltage is not explained by a heat temperature in °F),
   and it gains none (a turbine with its inlet and outlet swapped must not leave its pressure the
   wrong way). The law margins close within the reviewed tolerance (the rounding of the written
   values and the property allowance, :mod:`audit.review.rounding`), and a finding the rounding
   explains never asks for a cause.

A stream slip is evaluated once for the whole balance, on every step that uses the stream; it is
named only if it breaks none of them (no step gains a law finding or an error), and it is named on
every failing step it closes (a stream shared by a valve and an evaporator gets the cause on both).
Single slips only; when several close a step, the one that leaves the smallest margin comes first
(at most :data:`MAX_CAUSES`).

Bound: per failing step at most 7 slips per stream (1 pressure, 1 temperature, 1 relative humidity
and 4 flow slips when the file says how each is written, 9 when it does not), each re-evaluating
the stream's steps (at most two, by the plant topology), plus 3 per claimed power or energy (5 for
a chiller's or heat pump's duty), 1 per claimed temperature or pressure and 1 per inlet/outlet
pair: at most 18 re-evaluations per stream, 5 per claim and 1 per pair, and a slip shared by two
failing steps is evaluated once.

Each re-evaluation costs time in proportion to the step's streams, so the stream slips of a step
with more than :data:`MAX_SEARCHED_STREAMS` streams (a mixer with thousands of inlets) are not
tried: the search would grow with the square of the step's size. Its claims and its inlet/outlet
pairs are still tried (a fixed number of re-evaluations), and its law findings say, as their last
probable cause, that the streams were not searched and why.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace

from audit.errors import InputError
from audit.findings import ERROR, MARGINAL, VIOLATED, Finding
from audit.results import StepResult, StreamResult
from audit.review.margins import LAW_FINDINGS, Margin, margin_function
from audit.review.reference_slips import FluidSlip, fraction_basis_slips, reference_slips
from audit.review.runner import StepRunner, overlay
from audit.review.slips import Slip, step_slips, stream_slips

MAX_SEARCHED_STREAMS = 64
"""Most streams of a step whose slips the search tries (see the module docstring)."""

MAX_CAUSES = 3
SHRINK = 0.5
"""A slip must at least halve the largest original margin (relative to its allowance)."""


@dataclass
class _Failing:
    """A failing step: its law findings with their margin functions and allowances [SI]."""

    index: int
    laws: list[tuple[int, Finding, Margin, float]]
    errors: set[str]
    expanded_by_name: dict[str, float]
    violated: bool  # False: its law findings are only marginal (it takes causes, makes none)
    tolerance_by_name: dict[str, float] = field(default_factory=dict)


# -- judging a slip ---------------------------------------------------------------------------------
def _failing(
    runner: StepRunner,
    findings: Sequence[Finding],
    results: dict[str, StepResult],
    expanded: dict[int, float],
) -> dict[int, _Failing]:
    by_step: dict[int, list[tuple[int, Finding]]] = defaultdict(list)
    for position, finding in enumerate(findings):
        if finding.step in runner.index:
            by_step[runner.index[finding.step]].append((position, finding))
    failing = {}
    for index, items in by_step.items():
        standing = [
            (p, f)
            for p, f in items
            if f.name in LAW_FINDINGS
            and (f.verdict in (VIOLATED, MARGINAL) if f.verdict is not None else f.severity == ERROR)
        ]
        result = results.get(runner.balance.steps[index].id)
        if not standing or result is None:
            continue
        laws = []
        by_name: dict[str, float] = defaultdict(float)
        for position, finding in items:
            if finding.name not in LAW_FINDINGS:
                continue
            margin = margin_function(
                finding, result, runner.streams, runner.balance.balance.dead_state.T
            )
            U = expanded.get(position, 0.0)
            by_name[finding.name] = max(by_name[finding.name], U)
            if margin is not None:
                laws.append((position, finding, margin, (finding.tolerance or 0.0) + U))
        errors = {f.name for _, f in items if f.severity == ERROR and f.name not in LAW_FINDINGS}
        violated = any(f.verdict != MARGINAL for _, f in standing)
        tolerances = {f.name: f.tolerance or 0.0 for _, f in items if f.name in LAW_FINDINGS}
        failing[index] = _Failing(index, laws, errors, dict(by_name), violated, tolerances)
    return failing


def _closes(
    state: _Failing, result: StepResult, new: list[Finding], streams: Mapping[str, StreamResult]
) -> float | None:
    """The largest remaining law margin over its allowance when the slip closes the step, else
    None."""
    worst_remaining = 0.0
    for finding in new:
        if finding.name not in LAW_FINDINGS:
            continue
        # the re-run step's finding carries only the allowance: the reviewed tolerance (rounding
        # of the written values included) of the same check is the line to close within
        tolerance = max(finding.tolerance or 0.0, state.tolerance_by_name.get(finding.name, 0.0))
        allowance = tolerance + state.expanded_by_name.get(finding.name, 0.0)
        if (finding.margin or 0.0) > allowance:
            return None
        worst_remaining = max(
            worst_remaining, (finding.margin or 0.0) / allowance if allowance > 0 else 0.0
        )
    if not state.laws:
        return None
    _, worst, margin, allowance = max(
        state.laws, key=lambda item: (item[1].margin or 0.0) / item[3] if item[3] > 0 else math.inf
    )
    before = worst.margin or 0.0
    after = margin(result, streams)
    if not math.isfinite(after) or after > SHRINK * before:
        return None
    remaining = {f.name for f in new if f.severity == ERROR and f.name not in LAW_FINDINGS}
    if remaining:
        # a slip must close every failing check of the step (a fuel cell above its reversible
        # voltage is not explained by a heat temperature in °F), and break no other
        return None
    return worst_remaining


def _breaks(old: Sequence[Finding], new: Sequence[Finding]) -> bool:
    """True when a step that was not failing gains a law finding or an error it did not have."""
    had = {f.name for f in old if f.severity == ERROR or f.name in LAW_FINDINGS}
    return any(f.name not in had for f in new if f.severity == ERROR or f.name in LAW_FINDINGS)


def name_causes(
    runner: StepRunner,
    findings: list[Finding],
    expanded: dict[int, float],
    results: dict[str, StepResult] | None = None,
) -> tuple[list[Finding], int]:
    """Add probable causes to the law findings of every failing step. ``expanded`` holds the
    expanded uncertainty of findings by position. Returns the findings and the number of step
    re-evaluations spent."""
    started = runner.runs
    if results is None:
        results = {}
        for index, step in enumerate(runner.balance.steps):
            if any(f.step == step.id and f.name in LAW_FINDINGS for f in findings):
                results[step.id] = runner.run(index)[0]
    failing = _failing(runner, findings, results, expanded)
    if not failing:
        return findings, runner.runs - started
    by_step_findings: dict[int, list[Finding]] = defaultdict(list)
    for finding in findings:
        if finding.step in runner.index:
            by_step_findings[runner.index[finding.step]].append(finding)
    named: dict[int, list[tuple[float, int, str]]] = defaultdict(list)
    order = 0
    seen_streams: set[str] = set()
    skipped: dict[int, int] = {}
    for index in sorted(i for i, state in failing.items() if state.violated):
        step = runner.balance.steps[index]
        inlets, outlets = step.stream_ids()
        own = list(dict.fromkeys([*inlets, *outlets]))
        if len(own) > MAX_SEARCHED_STREAMS:
            skipped[index] = len(own)
            own = []
        for stream_id in own:
            if stream_id in seen_streams:
                continue
            seen_streams.add(stream_id)
            for slip in stream_slips(runner, stream_id):
                order += 1
                _judge_stream_slip(runner, slip, failing, by_step_findings, named, order)
        for slip in step_slips(runner, index):
            order += 1
            try:
                result, new = runner.run(index, slip.step)
            except InputError:
                continue
            score = _closes(failing[index], result, new, runner.streams)
            if score is not None:
                named[index].append((score, order, slip.sentence))
    if any(state.violated for state in failing.values()):
        # Of the reference slips that close, only those leaving the fewest errors are named (a
        # reference 18 kJ/kg off may still close a loose step but leave a wet suction behind).
        judged = []
        for fluid_slip in [*reference_slips(runner), *fraction_basis_slips(runner)]:
            order += 1
            outcome = _judge_fluid_slip(runner, fluid_slip, failing, by_step_findings)
            if outcome is not None:
                judged.append((outcome[1], order, fluid_slip.sentence, outcome[0]))
        fewest = min((j[0] for j in judged), default=0)
        for left, slip_order, sentence, closed in judged:
            for index, score in closed if left == fewest else ():
                # one that clears every error of the steps it touches comes before the others
                named[index].append((-1.0 if left == 0 else score, slip_order, sentence))
    findings = list(findings)
    for index in skipped:
        named.setdefault(index, [])
    for index, causes in named.items():
        sentences = tuple(s for _, _, s in sorted(causes)[:MAX_CAUSES])
        if index in skipped:
            sentences += (
                f"(the slips of its {skipped[index]:,} streams were not tried: the search stops at "
                f"{MAX_SEARCHED_STREAMS} streams per step, so that its time grows no faster than "
                "the step's size)",
            )
        step_id = runner.balance.steps[index].id
        for position, finding in enumerate(findings):
            if finding.step == step_id and finding.name in LAW_FINDINGS:
                findings[position] = replace(finding, probable_causes=sentences)
    return findings, runner.runs - started


def _judge_stream_slip(
    runner: StepRunner,
    slip: Slip,
    failing: dict[int, _Failing],
    by_step_findings: dict[int, list[Finding]],
    named: dict[int, list[tuple[float, int, str]]],
    order: int,
) -> None:
    try:
        stream = runner.stream(str(slip.stream), slip.changes)
    except InputError:
        return
    replaced = {str(slip.stream): stream}
    streams = overlay(runner.streams, replaced)
    closed: list[tuple[int, float]] = []
    for index in runner.users[str(slip.stream)]:
        try:
            result, new = runner.run(index, None, replaced)
        except InputError:
            return
        if index in failing:
            score = _closes(failing[index], result, new, streams)
            if score is not None:
                closed.append((index, score))
        elif _breaks(by_step_findings.get(index, []), new):
            return
    for index, score in closed:
        others = [runner.balance.steps[i].id for i, _ in closed if i != index]
        also = f" (it also closes {', '.join(others)})" if others else ""
        named[index].append((score, order, slip.sentence + also))


def _judge_fluid_slip(
    runner: StepRunner,
    slip: FluidSlip,
    failing: dict[int, _Failing],
    by_step_findings: dict[int, list[Finding]],
) -> tuple[list[tuple[int, float]], int] | None:
    """A reference slip closes when it closes every failing step its streams pass through and
    breaks no other step: the steps it closes with their scores, and the errors left on the steps
    it touches; None when it does not close."""
    try:
        replaced = {sid: runner.stream(sid, changes) for sid, changes in slip.changes.items()}
    except InputError:
        return None
    streams = overlay(runner.streams, replaced)
    users = sorted({i for sid in replaced for i in runner.users[sid]})
    closed: list[tuple[int, float]] = []
    left = 0
    for index in users:
        try:
            result, new = runner.run(index, None, replaced)
        except InputError:
            return None
        left += sum(1 for f in new if f.severity == ERROR)
        if index in failing:
            score = _closes(failing[index], result, new, streams)
            if score is None and failing[index].violated:
                return None
            if score is not None:
                closed.append((index, score))
        elif _breaks(by_step_findings.get(index, []), new):
            return None
    return (closed, left) if closed else None
