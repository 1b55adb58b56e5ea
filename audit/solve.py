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
from dataclasses import dataclass, field
from typing import Any, cast

from audit.clock import reproducible, run_time
from audit.errors import InputErrors, Problem, StateError
from audit.findings import ERROR, WARNING, Finding, relative
from audit.input.document import Document
from audit.model.balance import Balance
from audit.model.humid_air import HUMIDITIES, is_humid_air
from audit.model.references import FORMULATION_FLUIDS
from audit.model.streams import StreamSpec
from audit.model.tolerances import merged
from audit.plant import check_topology, plant_totals
from audit.printed import check_stream
from audit.properties.engine import BACKEND, GAS_CONSTANT, PropertyEngine, State, coolprop_version
from audit.results import AuditResult, StepResult, StreamResult
from audit.steps import REGISTRY, StepContext
from audit.units import Flow
from audit.version import __version__
from audit.wording import bar, celsius, to_celsius

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
    streams: dict[str, StreamResult],
    index: int,
    step: Any = None,
) -> tuple[StepResult, list[Finding]]:
    """Evaluate step ``index`` of ``balance`` (or ``step``, a changed copy of it) on ``streams``
    through its kind's ``evaluate``, with the balance's tolerances and the step's own overrides.
    Returns the step's result and its findings."""
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
                f"{fluid}: {text}" for fluid, text in engine.equations_of_state().items()
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
        if spec.composition is not None and result.composition is not None:
            findings.extend(
                _dew_point_findings(stream_id, engine.state(result.fluid, "TP", result.T, result.P))
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
    return PropertyEngine(
        engine.dead_T,
        engine.dead_P,
        engine.saturation_band,
        reference=engine.reference,
        formulation={fluid: "IF97" if this == "reference" else "reference"},
    )


def _dew_point_findings(stream_id: str, state: State) -> list[Finding]:
    """A gas mixture with a species above its saturation pressure would condense; the ideal-gas
    mixture model does not, so the stream's values assume a gas that cannot exist."""
    found = []
    for formula, partial, p_sat in state.condensing:
        found.append(
            Finding(
                ERROR,
                "below-dew-point",
                None,
                f"stream {stream_id} is below its dew point: the partial pressure of {formula} "
                f"({partial / 1e3:.4g} kPa) exceeds its saturation pressure at "
                f"{celsius(state.T)} ({p_sat / 1e3:.4g} kPa), so it would condense; the "
                "ideal-gas mixture model does not condense: give the condensate as a stream of its "
                "own and the gas at its dew point or above",
                claimed=partial,
                bound=p_sat,
                margin=partial - p_sat,
                margin_relative=relative(partial - p_sat, p_sat),
                quantity="pressure",
                stream=stream_id,
            )
        )
    return found


def evaluate_stream(
    stream_id: str, spec: StreamSpec, engine: PropertyEngine, line: int | None
) -> StreamResult:
    """A stream's state and flows from its written spec, through the property engine."""
    pair, a, b = spec.inputs()
    if is_humid_air(spec.fluid):
        state, mass_flow = _humid_air(spec, engine)
    elif isinstance(spec.composition, dict):  # a named composition is expanded on validation
        # A gas mixture (audit.properties.mixtures); a normal or standard volume of it is converted
        # with the ideal-gas molar volume at its reference conditions, as combustion practice does.
        state = engine.mixture_state(spec.composition, a, b, spec.composition_basis)
        if spec.flow.basis == "normal_volume":
            T_ref, P_ref = spec.flow.reference  # type: ignore[misc]
            mass_flow = spec.flow.value * P_ref * state.molar_mass / (GAS_CONSTANT * T_ref)
        else:
            mass_flow = _mass_flow(spec.flow, state.fluid, state.rho, state.molar_mass, engine)
    else:
        fluid = cast(str, spec.fluid)  # validated: a stream without a composition names its fluid
        state = engine.state(fluid, pair, a, engine.to_tool_basis(fluid, pair, b))
        mass_flow = _mass_flow(spec.flow, fluid, state.rho, state.molar_mass, engine)
    return StreamResult(
        id=stream_id,
        state=state,
        mass_flow=mass_flow,
        molar_flow=mass_flow / state.molar_mass,
        flow_as_written=spec.flow.basis,
        velocity=spec.velocity or 0.0,
        elevation=spec.elevation or 0.0,
        declared_phase=spec.phase,
        description=spec.description,
        line=line,
    )


def _humid_air(spec: StreamSpec, engine: PropertyEngine) -> tuple[State, float]:
    """A humid-air stream's state and mass flow of humid air [kg/s] (:mod:`audit.model.humid_air`):
    a dry-air mass flow is multiplied by 1 + W; a normal volume is converted with the ideal-gas
    molar volume at its reference conditions, as for gas mixtures."""
    how = next(name for name in HUMIDITIES if getattr(spec, name) is not None)
    T, P = cast(float, spec.T), cast(float, spec.P)
    state = engine.humid_air_state(T, P, how, float(getattr(spec, how)))
    flow = spec.flow
    if spec.flow_of == "dry air":
        return state, flow.value * (1.0 + engine.humidity_ratio_of_state(state))
    if flow.basis == "normal_volume":
        T_ref, P_ref = flow.reference  # type: ignore[misc]
        return state, flow.value * P_ref * state.molar_mass / (GAS_CONSTANT * T_ref)
    if flow.basis == "actual_volume":
        return state, flow.value * state.rho
    if flow.basis == "molar":
        return state, flow.value * state.molar_mass
    return state, flow.value


def _mass_flow(flow: Flow, fluid: str, rho: float, molar_mass: float, engine: PropertyEngine) -> float:
    """Mass flow [kg/s] from a flow as written (mass, molar, normal/standard or actual volume)."""
    if flow.basis == "mass":
        return flow.value
    if flow.basis == "molar":
        return flow.value * molar_mass
    if flow.basis == "actual_volume":
        return flow.value * rho
    T_ref, P_ref = flow.reference  # type: ignore[misc]
    try:
        reference = engine.state(fluid, "TP", T_ref, P_ref)
    except StateError as exc:  # e.g. water at 0 °C is below its equation's range
        raise StateError(
            f"a normal or standard volumetric flow needs a gas at its reference conditions "
            f"({to_celsius(T_ref):g} °C, {P_ref / 1e3:g} kPa), but {fluid} cannot be evaluated "
            f"there ({exc.problem.message}); give a mass or molar flow"
        ) from None
    if reference.phase not in ("vapour", "gas", "supercritical"):
        raise StateError(
            f"a normal or standard volumetric flow needs a gas at its reference conditions "
            f"({to_celsius(T_ref):g} °C, {P_ref / 1e3:g} kPa), but {reference.fluid} is "
            f"{reference.phase} there; give a mass or molar flow"
        )
    return flow.value * reference.rho
