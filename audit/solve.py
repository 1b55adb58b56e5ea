"""The solver: validated balance → stream states → step results → findings. It reads no files.

Order of work:

1. every stream's state and mass flow through the property engine (all state problems are
   gathered, each naming its stream and line);
2. the plant's topology: every stream a step names exists, no stream is produced or consumed by
   more than one step, no two steps share an id (input errors), unused streams (warning);
3. every step through its kind's ``evaluate``, with the balance's tolerances and the step's own
   overrides;
4. plant totals over the flow steps;
5. (after the solver, in :mod:`audit.review`) verdicts with measurement uncertainty and rounding,
   and the probable causes of failing steps; :func:`to_result` then assembles the result.
"""

from __future__ import annotations

import math
import platform
import time
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from audit.clock import reproducible, run_time
from audit.errors import InputErrors, Problem, StateError
from audit.findings import WARNING, Finding
from audit.input.document import Document
from audit.model.balance import Balance
from audit.model.references import FORMULATION_FLUIDS
from audit.model.streams import StreamSpec
from audit.model.tolerances import merged
from audit.plant import check_topology, dew_point_findings, freezing_finding, plant_totals
from audit.printed import check_stream
from audit.properties.engine import BACKEND, PropertyEngine, coolprop_version
from audit.results import AuditResult, StepResult, StreamResult
from audit.steps import REGISTRY, StepContext
from audit.stream_state import evaluate_stream
from audit.version import __version__
from audit.wording import bar, celsius

_PHASE_MATCH = {
    "liquid": {"liquid"},
    "vapour": {"vapour", "gas"},
    "two-phase": {"two-phase"},
    "supercritical": {"supercritical", "gas", "supercritical liquid"},
}


@dataclass
class Solution:
    """A solved balance before review: its states, step results and findings, and the engine and
    document that produced them (the review stage re-evaluates steps through
    :func:`evaluate_step` and :func:`evaluate_stream`)."""

    balance: Balance
    document: Document
    engine: PropertyEngine
    streams: dict[str, StreamResult]
    results: list[StepResult]
    findings: list[Finding]
    started: float = field(default_factory=time.perf_counter)
    step_seconds: dict[str, float] = field(default_factory=dict)  # evaluation time of each step


def solve(balance: Balance, document: Document) -> Solution:
    """Evaluate every stream and step of a validated balance; raise :class:`InputErrors` for
    states or topology that cannot be evaluated. ``document`` supplies the file name and the line
    of each stream and step. The findings are the steps' own (no uncertainty verdicts or causes:
    that is :mod:`audit.review`'s job)."""
    started = time.perf_counter()
    info = balance.balance
    engine = PropertyEngine(
        info.dead_state.T,
        info.dead_state.P,
        info.tolerances.saturation_band,
        reference=info.reference,
        formulation=info.formulation,
        dead_relative_humidity=info.dead_state.relative_humidity,
    )
    findings: list[Finding] = []
    streams, problems = _evaluate_streams(balance, document, engine, findings)
    problems += check_topology(balance, document, findings, streams)
    if problems:
        raise InputErrors(problems)

    results: list[StepResult] = []
    seconds: dict[str, float] = {}
    for index, step in enumerate(balance.steps):
        began = time.perf_counter()
        try:
            result, step_findings = evaluate_step(balance, document, engine, streams, index)
            seconds[step.id] = time.perf_counter() - began
        except StateError as exc:
            line, _ = document.position(("steps", index))
            problems.append(
                Problem(exc.problem.message, file=document.file, line=line, where=f"step {step.id}")
            )
            continue
        unbounded = not_finite(result)
        if unbounded is not None:
            line, _ = document.position(("steps", index))
            problems.append(
                Problem(
                    f"the step's {unbounded} is not a finite number: the values it is computed "
                    "from are too large to compute with; check the flows, velocities, elevations "
                    "and claims of this step",
                    file=document.file,
                    line=line,
                    where=f"step {step.id}",
                )
            )
            continue
        results.append(result)
        findings.extend(step_findings)
    if problems:
        raise InputErrors(problems)
    return Solution(balance, document, engine, streams, results, findings, started, seconds)


_CHECKED = (
    ("H_in", "inlet energy"),
    ("H_out", "outlet energy"),
    ("KE_PE_in", "inlet kinetic and potential energy"),
    ("KE_PE_out", "outlet kinetic and potential energy"),
    ("Q", "heat"),
    ("W", "work"),
    ("energy_residual", "first-law residual"),
    ("dS", "entropy change"),
    ("S_gen", "entropy generation"),
    ("W_rev", "reversible work"),
    ("exergy_destroyed", "exergy destroyed"),
    ("energy_scale", "energy turnover"),
)


def not_finite(result: StepResult) -> str | None:
    """The name (in words) of the first computed quantity of ``result`` that is not finite, or
    None: a residual or bound of infinity or NaN must never pass a check."""
    balance = result.balance
    total = (
        balance.H_in + balance.H_out + balance.KE_PE_in + balance.KE_PE_out + balance.Q + balance.W
        + balance.energy_residual + balance.dS + balance.S_gen + balance.W_rev
        + balance.exergy_destroyed + balance.energy_scale + sum(balance.mass_residual.values())
        + (result.classical_bound or 0.0) + (result.energy_tolerance or 0.0)
    )  # fmt: skip
    if math.isfinite(total):
        return None  # a sum is finite only when every term is: the usual case, in one test
    for name, words in _CHECKED:
        if not math.isfinite(getattr(balance, name)):
            return words
    if not all(math.isfinite(v) for v in balance.mass_residual.values()):
        return "mass residual"
    for value, words in (
        (result.classical_bound, "work bound"),
        (result.energy_tolerance, "energy tolerance"),
    ):
        if value is not None and not math.isfinite(value):
            return words
    return None


def evaluate_step(
    balance: Balance,
    document: Document,
    engine: PropertyEngine,
    streams: Mapping[str, StreamResult],
    index: int,
    step: Any = None,
    residuals_only: bool = False,
) -> tuple[StepResult, list[Finding]]:
    """Evaluate step ``index`` of ``balance`` (or ``step``, a changed copy of it) on ``streams``
    through its kind's ``evaluate``, with the balance's tolerances and the step's own overrides.
    Returns the step's result and its findings (with ``residuals_only``, those a kind finds
    without the checks its balances do not need: see :class:`audit.steps.base.StepContext`)."""
    step = balance.steps[index] if step is None else step
    info = balance.balance
    line, _ = document.position(("steps", index))
    ctx = StepContext(
        streams=streams,
        engine=engine,
        T0=info.dead_state.T,
        P0=info.dead_state.P,
        tolerances=merged(info.tolerances, step.tolerances),
        line=line,
        residuals_only=residuals_only,
    )
    result = REGISTRY[step.kind].evaluate(step, ctx)
    return result, ctx.findings


def to_result(
    solution: Solution, findings: list[Finding], notes: dict[str, str], sha256: str = ""
) -> AuditResult:
    """The audit's result: the solution with its reviewed ``findings`` and provenance ``notes``."""
    balance, engine, streams = solution.balance, solution.engine, solution.streams
    info = balance.balance
    elapsed = time.perf_counter() - solution.started
    return AuditResult(
        name=info.name,
        balance_id=info.id,
        revision=info.revision,
        file=solution.document.file,
        sha256=sha256,
        dead_T=info.dead_state.T,
        dead_P=info.dead_state.P,
        site_pressure=info.site_pressure,
        tolerances=info.tolerances.model_dump(),
        streams=list(streams.values()),
        steps=solution.results,
        findings=findings,
        plant=plant_totals(balance, streams, solution.results),
        step_seconds=solution.step_seconds,
        provenance={
            "plant-audit": __version__,
            "CoolProp": coolprop_version(),
            "property back end": f"{BACKEND} (IAPWS-95 for water)",
            "equations of state": "; ".join(
                f"{fluid}: {text}"
                for fluid, text in {
                    **engine.equations_of_state(),
                    **engine.liquid_correlations(),
                }.items()
            ),
            "Python": platform.python_version(),
            "run at (UTC)": run_time().strftime("%Y-%m-%d %H:%M:%S"),
            **({} if reproducible() else {"solve time [s]": f"{elapsed:.3f}"}),
            "property evaluations": str(engine.flash_count),
            **notes,
        },
    )


# -- streams ---------------------------------------------------------------------------------------
def _evaluate_streams(
    balance: Balance, document: Document, engine: PropertyEngine, findings: list[Finding]
) -> tuple[dict[str, StreamResult], list[Problem]]:
    streams: dict[str, StreamResult] = {}
    problems: list[Problem] = []
    for stream_id, spec in balance.streams.items():
        place = document.place(("streams", stream_id))  # a line, or a table cell
        try:
            streams[stream_id] = evaluate_stream(stream_id, spec, engine, place["line"])
        except StateError as exc:
            problems.append(Problem(exc.problem.message, **place, where=f"stream {stream_id}"))
            continue
        result = streams[stream_id]
        if spec.claims() and spec.fluid is not None:
            findings.extend(_printed_findings(balance, document, engine, stream_id, spec, result))
        if spec.phase is not None and result.phase not in _PHASE_MATCH[spec.phase]:
            findings.append(
                Finding(
                    WARNING,
                    "phase-mismatch",
                    None,
                    f"stream {stream_id} is declared {spec.phase} but its state "
                    f"({celsius(result.T)}, {bar(result.P)}) is {result.phase}",
                    stream=stream_id,
                )
            )
        if result.state.below_freezing is not None:
            findings.append(freezing_finding(stream_id, result.state))
        if spec.composition is not None and result.composition is not None:
            findings.extend(
                dew_point_findings(stream_id, engine.state(result.fluid, "TP", result.T, result.P))
            )
    return streams, problems


def _printed_findings(
    balance: Balance,
    document: Document,
    engine: PropertyEngine,
    stream_id: str,
    spec: StreamSpec,
    result: StreamResult,
) -> list[Finding]:
    """A stream's printed properties checked against its state (:mod:`audit.printed`); the
    comparison is kept on the stream's result."""
    pair, a, b = spec.inputs()
    state = engine.state(result.fluid, pair, a, engine.to_tool_basis(result.fluid, pair, b))
    written = (
        document.data.get("streams", {}).get(stream_id, {}) if isinstance(document.data, dict) else {}
    )
    claims, found = check_stream(
        stream_id,
        spec,
        state,
        engine,
        written if isinstance(written, dict) else {},
        balance.balance.site_pressure,
        _other_formulation(engine, result.fluid),
    )
    result.printed = claims or None
    return found


def _other_formulation(engine: PropertyEngine, fluid: str) -> PropertyEngine | None:
    """An engine on the fluid's other formulation (water: IF97 beside IAPWS-95), or None."""
    if fluid not in FORMULATION_FLUIDS["IF97"]:
        return None
    this = engine.formulation_of(fluid)
    return engine.variant(
        reference=engine.reference, formulation={fluid: "IF97" if this == "reference" else "reference"}
    )
