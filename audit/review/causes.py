"""Probable causes: which usual slip, undone, would make a failing step close (design note 2.9).

A step fails when one of its law findings stands: verdict ``violated`` on a balance with declared
uncertainties, severity error on a design balance. Each such step is re-evaluated with one slip
undone at a time, through the solver's own stream builder and the kind's own ``evaluate``
(:class:`audit.review.uncertainty.StepRunner`). A step whose law findings are only ``marginal`` makes no
slips of its own (within its uncertainty, too many nudges would "close" it), but it is named too
when a slip of a failing neighbour's shared stream closes it:

* on a stream of the step: its pressure read as gauge instead of absolute (P + site pressure) or
  the reverse (P − site pressure), whichever the way it is written allows; its temperature read in
  °F instead of °C or the reverse; its flow ×3.6 or ÷3.6 (kg/s and t/h confused) or ×3600 or
  ÷3600 (kg/s and kg/h);
* on a claim of the step: a power or energy ×1000 or ÷1000 (kW and MW, kJ and MJ confused), or
  with the opposite sign (heat added for removed, work delivered for absorbed); a claimed
  temperature or pressure (a vessel state, a source temperature) read as above;
* the step's inlet and outlet swapped (each inlet/outlet pair, each side of an exchanger).

A slip closes the step when, re-evaluated,

1. every law margin of the step lies within its tolerance plus the expanded uncertainty
   :mod:`audit.review.uncertainty` found for that finding (zero on a design balance);
2. the largest original margin (relative to that allowance) at least halves: a slip must be
   decisive, not a nudge that slides a near-miss under the line;
3. the step gains no error of another kind (a turbine with its inlet and outlet swapped must not
   leave its pressure the wrong way).

A stream slip is evaluated once for the whole balance, on every step that uses the stream; it is
named only if it breaks none of them (no step gains a law finding or an error), and it is named on
every failing step it closes (a stream shared by a valve and an evaporator gets the cause on both).
Single slips only; when several close a step, the one that leaves the smallest margin comes first
(at most :data:`MAX_CAUSES`).

Bound: per failing step at most 6 slips per stream (1 pressure, 1 temperature and 4 flow slips when
the file says how each is written, 8 when it does not), each re-evaluating the stream's steps (at
most two, by the plant topology), plus 3 per claimed power or energy, 1 per claimed temperature or
pressure and 1 per inlet/outlet pair: at most 16 re-evaluations per stream, 3 per claim and 1 per
pair, and a slip shared by two failing steps is evaluated once.
"""

from __future__ import annotations

import math
import re
from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from pydantic import BaseModel

from audit.errors import InputError
from audit.findings import ERROR, MARGINAL, VIOLATED, Finding
from audit.model.uncertainty import step_claims
from audit.results import StepResult, StreamResult
from audit.review.uncertainty import (
    LAW_FINDINGS,
    Margin,
    StepRunner,
    format_value,
    margin_function,
    with_value,
)
from audit.units import STANDARD_ATMOSPHERE, split_number

MAX_CAUSES = 3
SHRINK = 0.5
"""A slip must at least halve the largest original margin (relative to its allowance)."""

_GAUGE_UNIT = re.compile(r"^\s*(mbar|bar|Pa|kPa|MPa|psi)\s*(g|\(g\))\s*$")
_CELSIUS = ("degC", "°C", "℃", "celsius", "degree_Celsius")
_FAHRENHEIT = ("degF", "°F", "℉", "fahrenheit", "degree_Fahrenheit")
_FLOW_SLIPS = (
    (3.6, "3.6 times larger", "kg/s written as t/h"),
    (1 / 3.6, "3.6 times smaller", "t/h written as kg/s"),
    (3600.0, "3600 times larger", "kg/s written as kg/h"),
    (1 / 3600.0, "3600 times smaller", "kg/h written as kg/s"),
)


@dataclass
class Slip:
    """One slip undone: on a stream (``changes`` to its inputs) or on one step (a changed copy
    ``step`` of it); ``sentence`` says it the way a reviewer would."""

    sentence: str
    stream: str | None = None
    changes: dict[str, float] = field(default_factory=dict)
    step_index: int | None = None
    step: Any = None


@dataclass
class _Failing:
    """A failing step: its law findings with their margin functions and allowances [SI]."""

    index: int
    laws: list[tuple[int, Finding, Margin, float]]
    errors: set[str]
    expanded_by_name: dict[str, float]
    violated: bool  # False: its law findings are only marginal (it takes causes, makes none)


# -- the slips ----------------------------------------------------------------------------------
def _written(document: Any, path: Sequence[Any]) -> Any:
    node = document.data
    for part in path:
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            node = node[part]
        else:
            return None
    return node


def _unit_of(text: Any, kind: str) -> str | None:
    try:
        return split_number(text, kind)[1]
    except InputError:
        return None


def _pressure_slips(value: float, text: Any, site: float | None, what: str
                    ) -> list[tuple[float, str]]:
    """(P' [Pa], sentence) for a pressure [Pa] written as ``text``: gauge read as absolute and
    the reverse, as the writing allows."""
    unit = _unit_of(text, "pressure") if text is not None else None
    gauge = bool(unit and (_GAUGE_UNIT.match(unit) or unit.strip() == "psig"))
    atmosphere = site if site is not None else STANDARD_ATMOSPHERE
    note = "" if site is not None else (
        " (taking the standard atmosphere: the balance declares no site_pressure)")
    shown = f"'{text}'" if text is not None else f"{value / 1e5:.4g} bar"
    slips = []
    if unit is None or not gauge:
        P = value + atmosphere
        slips.append((P, f"closes if {what} {shown} is gauge ({value / 1e5:.4g} barg, "
                         f"{P / 1e5:.4g} bar absolute), not absolute{note}"))
    if (unit is None or gauge) and value - atmosphere > 0:
        P = value - atmosphere
        slips.append((P, f"closes if {what} {shown} is absolute ({P / 1e5:.4g} bar), not "
                         f"gauge{note}"))
    return slips


def _temperature_slips(value: float, text: Any, what: str) -> list[tuple[float, str]]:
    """(T' [K], sentence) for a temperature [K] written as ``text`` in °C or °F."""
    unit = _unit_of(text, "temperature") if text is not None else None
    shown = f"'{text}'" if text is not None else f"{value - 273.15:.4g} °C"
    slips = []
    written_c = value - 273.15
    if unit is None or unit.strip() in _CELSIUS:
        T = (written_c - 32.0) * 5.0 / 9.0 + 273.15
        slips.append((T, f"closes if {what} {shown} is in °F ({T - 273.15:.4g} °C), not °C"))
    if unit is None or unit.strip() in _FAHRENHEIT:
        T = (written_c * 9.0 / 5.0 + 32.0) + 273.15
        slips.append((T, f"closes if {what} {shown} is in °C ({T - 273.15:.4g} °C), not °F"))
    return [(T, s) for T, s in slips if T > 0]


def stream_slips(runner: StepRunner, stream_id: str) -> list[Slip]:
    """The slips of one stream (see the module docstring)."""
    spec = runner.balance.streams[stream_id]
    document = runner.document
    site = runner.balance.balance.site_pressure
    pair, _, _ = spec.inputs()
    slips = []
    if "P" in pair:
        text = _written(document, ("streams", stream_id, "P"))
        for P, sentence in _pressure_slips(spec.P, text, site, f"stream {stream_id}'s pressure"):
            slips.append(Slip(sentence, stream=stream_id, changes={"P": P}))
    if "T" in pair:
        text = _written(document, ("streams", stream_id, "T"))
        for T, sentence in _temperature_slips(spec.T, text,
                                              f"stream {stream_id}'s temperature"):
            slips.append(Slip(sentence, stream=stream_id, changes={"T": T}))
    text = _written(document, ("streams", stream_id, "flow"))
    shown = f"'{text}'" if text is not None else "as written"
    for factor, size, words in _FLOW_SLIPS:
        value = spec.flow.value * factor
        unit = " kg/s" if spec.flow.basis == "mass" else ""
        slips.append(Slip(
            f"closes if stream {stream_id}'s flow {shown} is {size} ({value:.4g}{unit}: {words})",
            stream=stream_id, changes={"flow": value}))
    return slips


def _pair_swaps(model: BaseModel, path: tuple[str, ...] = ()) -> list[tuple[tuple[str, ...],
                                                                             str, str]]:
    found = []
    fields = type(model).model_fields
    inlet, outlet = getattr(model, "inlet", None), getattr(model, "outlet", None)
    if "inlet" in fields and "outlet" in fields and isinstance(inlet, str) \
            and isinstance(outlet, str):
        found.append((path, inlet, outlet))
    for name in fields:
        value = getattr(model, name)
        if isinstance(value, BaseModel):
            found.extend(_pair_swaps(value, (*path, name)))
    return found


def step_slips(runner: StepRunner, index: int) -> list[Slip]:
    """The slips of one step's claims and of its inlet/outlet pairs."""
    step = runner.balance.steps[index]
    document = runner.document
    site = runner.balance.balance.site_pressure
    slips = []
    for claim in step_claims(step):
        text = _written(document, ("steps", index, *claim.path))
        what = f"step {step.id}'s {claim.key}"
        shown = f"'{text}'" if text is not None else format_value(claim.value, claim.kind)
        if claim.kind in ("power", "energy"):
            small, large = ("kW", "MW") if claim.kind == "power" else ("kJ", "MJ")
            for factor, words in ((1000.0, f"{small} written for {large}"),
                                  (1e-3, f"{large} written for {small}")):
                value = claim.value * factor
                size = "1000 times larger" if factor > 1 else "1000 times smaller"
                slips.append(Slip(
                    f"closes if {what} {shown} is {size} ({format_value(value, claim.kind)}: "
                    f"{words})", step_index=index, step=with_value(step, claim.path, value)))
            slips.append(_sign_slip(step, index, claim.path, claim.value, what, shown))
        elif claim.kind == "temperature":
            for T, sentence in _temperature_slips(claim.value, text, what):
                slips.append(Slip(sentence, step_index=index,
                                  step=with_value(step, claim.path, T)))
        elif claim.kind == "pressure":
            for P, sentence in _pressure_slips(claim.value, text, site, what):
                slips.append(Slip(sentence, step_index=index,
                                  step=with_value(step, claim.path, P)))
    for path, inlet, outlet in _pair_swaps(step):
        side = f"the {path[-1]} side's " if path else ""
        target = step
        if path:
            swapped = getattr(step, path[0]).model_copy(update={"inlet": outlet,
                                                                "outlet": inlet})
            target = with_value(step, path, swapped)
        else:
            target = step.model_copy(update={"inlet": outlet, "outlet": inlet})
        slips.append(Slip(f"closes if {side}inlet {inlet} and outlet {outlet} are swapped",
                          step_index=index, step=target))
    return slips


_OPPOSITES = {"added": "removed", "removed": "added", "work_delivered": "work_absorbed",
              "work_absorbed": "work_delivered"}


def _sign_slip(step: Any, index: int, path: tuple[str | int, ...], value: float, what: str,
               shown: str) -> Slip:
    leaf = str(path[-1])
    if leaf in _OPPOSITES:
        other = _OPPOSITES[leaf]
        parent_path = path[:-1]
        if parent_path:
            parent = step
            for part in parent_path:
                parent = parent[part] if isinstance(part, int) else getattr(parent, part)
            changed = with_value(step, parent_path, parent.model_copy(
                update={leaf: None, other: value}))
        else:
            changed = step.model_copy(update={leaf: None, other: value})
        words = other.replace("_", " ")
        return Slip(f"closes if {what} {shown} is {words}, not {leaf.replace('_', ' ')} (the "
                    "sign is wrong)", step_index=index, step=changed)
    return Slip(f"closes if {what} {shown} has the opposite sign", step_index=index,
                step=with_value(step, path, -value))


# -- judging a slip ---------------------------------------------------------------------------------
def _failing(runner: StepRunner, findings: Sequence[Finding], results: dict[str, StepResult],
             expanded: dict[int, float]) -> dict[int, _Failing]:
    by_step: dict[int, list[tuple[int, Finding]]] = defaultdict(list)
    for position, finding in enumerate(findings):
        if finding.step in runner.index:
            by_step[runner.index[finding.step]].append((position, finding))
    failing = {}
    for index, items in by_step.items():
        standing = [(p, f) for p, f in items if f.name in LAW_FINDINGS and (
            f.verdict in (VIOLATED, MARGINAL) if f.verdict is not None else f.severity == ERROR)]
        result = results.get(runner.balance.steps[index].id)
        if not standing or result is None:
            continue
        laws = []
        by_name: dict[str, float] = defaultdict(float)
        for position, finding in items:
            if finding.name not in LAW_FINDINGS:
                continue
            margin = margin_function(finding, result, runner.streams,
                                     runner.balance.balance.dead_state.T)
            U = expanded.get(position, 0.0)
            by_name[finding.name] = max(by_name[finding.name], U)
            if margin is not None:
                laws.append((position, finding, margin, (finding.tolerance or 0.0) + U))
        errors = {f.name for _, f in items if f.severity == ERROR and f.name not in LAW_FINDINGS}
        violated = any(f.verdict != MARGINAL for _, f in standing)
        failing[index] = _Failing(index, laws, errors, dict(by_name), violated)
    return failing


def _closes(state: _Failing, result: StepResult, new: list[Finding],
            streams: dict[str, StreamResult]) -> float | None:
    """The largest remaining law margin over its allowance when the slip closes the step, else
    None."""
    worst_remaining = 0.0
    for finding in new:
        if finding.name not in LAW_FINDINGS:
            continue
        allowance = (finding.tolerance or 0.0) + state.expanded_by_name.get(finding.name, 0.0)
        if (finding.margin or 0.0) > allowance:
            return None
        worst_remaining = max(worst_remaining, (finding.margin or 0.0) / allowance
                              if allowance > 0 else 0.0)
    if not state.laws:
        return None
    _, worst, margin, allowance = max(
        state.laws, key=lambda item: (item[1].margin or 0.0) / item[3] if item[3] > 0 else math.inf)
    before = worst.margin or 0.0
    after = margin(result, streams)
    if not math.isfinite(after) or after > SHRINK * before:
        return None
    if {f.name for f in new if f.severity == ERROR and f.name not in LAW_FINDINGS} - state.errors:
        return None
    return worst_remaining


def _breaks(old: Sequence[Finding], new: Sequence[Finding]) -> bool:
    """True when a step that was not failing gains a law finding or an error it did not have."""
    had = {f.name for f in old if f.severity == ERROR or f.name in LAW_FINDINGS}
    return any(f.name not in had for f in new if f.severity == ERROR or f.name in LAW_FINDINGS)


def name_causes(runner: StepRunner, findings: list[Finding], expanded: dict[int, float],
                results: dict[str, StepResult] | None = None) -> tuple[list[Finding], int]:
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
    for index in sorted(i for i, state in failing.items() if state.violated):
        step = runner.balance.steps[index]
        inlets, outlets = step.stream_ids()
        for stream_id in dict.fromkeys([*inlets, *outlets]):
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
    findings = list(findings)
    for index, causes in named.items():
        sentences = tuple(s for _, _, s in sorted(causes)[:MAX_CAUSES])
        step_id = runner.balance.steps[index].id
        for position, finding in enumerate(findings):
            if finding.step == step_id and finding.name in LAW_FINDINGS:
                findings[position] = replace(finding, probable_causes=sentences)
    return findings, runner.runs - started


def _judge_stream_slip(runner: StepRunner, slip: Slip, failing: dict[int, _Failing],
                       by_step_findings: dict[int, list[Finding]],
                       named: dict[int, list[tuple[float, int, str]]], order: int) -> None:
    try:
        stream = runner.stream(str(slip.stream), slip.changes)
    except InputError:
        return
    replaced = {str(slip.stream): stream}
    streams = {**runner.streams, **replaced}
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
