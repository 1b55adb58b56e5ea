"""Measurement uncertainty of the law findings, and verdicts that know it.

A measured balance declares the uncertainty of its readings (:mod:`audit.model.uncertainty`). For
every step with a law finding (first law, work bound, entropy generation, mass, isentropic
efficiency), the standard uncertainty of the finding's margin follows from the law of propagation
of uncertainty for uncorrelated inputs [1, §5.1.2]:

    u_c²(y) = Σ_i (c_i u(x_i))²,   c_i = ∂y/∂x_i,

each c_i u(x_i) estimated by a central difference through the real property calls [1, §5.1.3,
note 2]:

    c_i u(x_i) ≈ [y(x + u_i e_i) − y(x − u_i e_i)] / 2,

where y(·) re-flashes the perturbed stream with the property engine and re-runs the step kind's own
``evaluate`` (no physics is written twice). A side that cannot be evaluated (a perturbed state
inside the saturation band, say) is replaced by a one-sided difference, then by a step of u_i/10.
The expanded uncertainty is U = k u_c with k = 2 unless declared [1, §6.2–6.3]; the declared
spreads are read as combined standard uncertainties of each measurement (systematic and random
parts already combined, as in ASME PTC 19.1 [3]).

Optionally (``monte_carlo`` trials) the same margins are propagated by the Monte Carlo method of
GUM Supplement 1 [2, §7]: every uncertain input of the step drawn at once from a normal
distribution N(x_i, u_i²) with a fixed seed, the step re-evaluated per draw, and k times the sample
standard deviation reported beside U as a cross-check (its relative standard error is about
1/√(2(M − 1)) for M trials).

Verdict of a law finding with margin m (positive = size of the violation), tolerance t and
expanded uncertainty U, from where the interval [m − U, m + U] lies (after the guard-band
reading of JCGM 106:2012 [4, §8]):

* ``violated``: m − U > t, the violation stands beyond tolerance and uncertainty; severity kept;
* ``marginal``: t ≥ m − U > 0, beyond the tolerance but not by more than the uncertainty; the
  severity becomes warning, so the gate does not fail on it unless asked (``--fail-on-marginal``);
* ``consistent``: m − U ≤ 0, the uncertainty covers the whole margin; severity info.

Flows are read as mass-conserving: a change δ of an inlet's flow is taken with the outlets of its
group (its paired outlet, or the outlets of the same fluid) following by conservation of mass, so
the first-law residual moves by δ (h_in − h_out) and an outlet's own flow adds nothing to the
energy, entropy and work margins (the flows of one stream through a step are one measured
quantity: fully correlated, [1, §5.2]); mass-imbalance margins take every flow independently. On
the formation basis an independent flow change would otherwise carry δ times an absolute
enthalpy, an artefact of the reference state (:func:`reference_shift`). The streams of a fluid
that reacts (it only enters or only leaves the step) keep independent flows.

Inputs are uncorrelated otherwise. Cost: two re-evaluations of one step per uncertain input (about
three per stream plus one per claim), only for steps that have a law finding; each re-evaluation
flashes only the perturbed stream of that step.

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
from typing import Any

import numpy as np
from pydantic import BaseModel

from audit.errors import InputError, InputErrors, Problem
from audit.findings import (
    CONSISTENT,
    INFO,
    MARGINAL,
    SEVERITY_RANK,
    VIOLATED,
    WARNING,
    Contributor,
    Finding,
)
from audit.input.document import Document
from audit.model.streams import StreamSpec
from audit.model.uncertainty import (
    EXACT,
    STREAM_CATEGORY,
    BalanceUncertainty,
    Spread,
    StreamUncertainty,
    coverage_divisor,
    step_claims,
    step_spreads,
)
from audit.results import StepResult, StreamResult
from audit.solve import Solution, evaluate_step, evaluate_stream

DEFAULT_COVERAGE_FACTOR = 2.0
MONTE_CARLO_SEED = 1012008
"""Seed of the Monte Carlo draws (fixed: two runs give the same numbers)."""

TOP_CONTRIBUTORS = 5

ENERGY_FINDINGS = ("energy-imbalance", "valve-not-isenthalpic")
WORK_FINDINGS = ("work-above-bound", "input-below-minimum")
LAW_FINDINGS = (*ENERGY_FINDINGS, *WORK_FINDINGS, "negative-entropy-generation",
                "mass-imbalance", "efficiency-above-one")
"""Findings whose margin is propagated and which get a verdict."""

_INPUT_QUANTITY = {
    "T": "temperature_difference", "P": "pressure", "quality": "fraction",
    "h": "specific_energy", "s": "specific_entropy",
    "temperature": "temperature_difference", "pressure": "pressure", "power": "power",
    "energy": "energy", "mass": "mass", "specific_enthalpy": "specific_energy",
    "specific_entropy": "specific_entropy",
}
_FLOW_QUANTITY = {"mass": "mass_flow", "molar": "molar_flow", "normal_volume": "volume_flow",
                  "actual_volume": "volume_flow"}


# -- inputs --------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Input:
    """One uncertain input of a step: a stream property or a claim, its value and standard
    uncertainty [SI]."""

    label: str
    quantity: str | None
    owner: str  # "stream" or "step"
    ident: str  # stream id or step id
    path: tuple[str | int, ...]
    value: float
    u: float


class StepRunner:
    """Re-evaluates steps of a solved balance with some inputs changed: perturbed streams are
    re-flashed and the step re-evaluated through the solver's public functions
    (:func:`audit.solve.evaluate_stream`, :func:`audit.solve.evaluate_step`)."""

    def __init__(self, solution: Solution) -> None:
        balance = solution.balance
        self.balance = balance
        self.document = solution.document
        self.engine = solution.engine
        self.streams = solution.streams
        self.index = {step.id: i for i, step in enumerate(balance.steps)}
        self.users: dict[str, list[int]] = defaultdict(list)
        for i, step in enumerate(balance.steps):
            inlets, outlets = step.stream_ids()
            for stream_id in dict.fromkeys([*inlets, *outlets]):
                self.users[stream_id].append(i)
        self.runs = 0

    def stream(self, stream_id: str, changes: dict[str, float]) -> StreamResult:
        """The stream re-evaluated with some of its inputs (T, P, quality, h, s, flow) changed."""
        spec = self.balance.streams[stream_id]
        update: dict[str, Any] = {}
        for name, value in changes.items():
            update[name] = replace(spec.flow, value=value) if name == "flow" else value
        return evaluate_stream(stream_id, spec.model_copy(update=update), self.engine,
                               self.streams[stream_id].line)

    def run(self, index: int, step: Any = None,
            streams: dict[str, StreamResult] | None = None) -> tuple[StepResult, list[Finding]]:
        """Evaluate step ``index`` (or a changed copy ``step``) with some streams replaced."""
        self.runs += 1
        return evaluate_step(self.balance, self.document, self.engine,
                             {**self.streams, **(streams or {})}, index, step)


def with_value(model: BaseModel, path: Sequence[str | int], value: Any) -> BaseModel:
    """A copy of ``model`` with the field at ``path`` (names and list positions) set to ``value``
    (no re-validation: the value is already SI)."""
    name = str(path[0])
    if len(path) == 1:
        return model.model_copy(update={name: value})
    child = getattr(model, name)
    if isinstance(path[1], int):
        items = list(child)
        items[path[1]] = with_value(items[path[1]], path[2:], value) if path[2:] else value
        return model.model_copy(update={name: items})
    return model.model_copy(update={name: with_value(child, path[1:], value)})


def declares_uncertainty(balance: Any) -> bool:
    """True when the balance, a stream or a step declares any uncertainty."""
    return (balance.balance.uncertainty is not None
            or any(s.uncertainty is not None for s in balance.streams.values())
            or any(getattr(s, "uncertainty", None) is not None for s in balance.steps))


def _defaults(unc: BalanceUncertainty | None, category: str) -> Spread | None:
    return getattr(unc, category, None) if unc is not None else None


def stream_inputs(stream_id: str, spec: StreamSpec, unc: BalanceUncertainty | None,
                  document: Document) -> list[Input]:
    """The uncertain inputs of a stream (its two state properties and its flow)."""
    declared = spec.uncertainty
    if declared == "exact":
        return []
    where = f"stream {stream_id}"
    if declared == "measured" and unc is None:
        line, column = document.position(("streams", stream_id, "uncertainty"))
        raise InputError("says 'measured', but the balance declares no default uncertainties "
                         "under 'balance: uncertainty:'", file=document.file, line=line,
                         column=column, where=where)
    own = declared if isinstance(declared, StreamUncertainty) else None
    use_defaults = unc is not None and (unc.basis == "measured" or declared == "measured")
    base_divisor = coverage_divisor(unc.coverage) if unc is not None else 1.0
    own_divisor = coverage_divisor(own.coverage) if own is not None and own.coverage else (
        base_divisor)
    pair, a, b = spec.inputs()
    names = {"TP": ("T", "P"), "PQ": ("P", "quality"), "TQ": ("T", "quality"),
             "Ph": ("P", "h"), "Ps": ("P", "s")}[pair]
    found = []
    for name, value in ((names[0], a), (names[1], b), ("flow", spec.flow.value)):
        spread, divisor, path = None, base_divisor, ("balance", "uncertainty", name)
        if own is not None and getattr(own, name) is not None:
            spread, divisor = getattr(own, name), own_divisor
            path = ("streams", stream_id, "uncertainty", name)
        elif use_defaults and name in STREAM_CATEGORY:
            spread = _defaults(unc, STREAM_CATEGORY[name])
            path = ("balance", "uncertainty", STREAM_CATEGORY[name])
        if spread is None or spread == EXACT:
            continue
        if name == "flow" and not spread.relative and (
                spread.flow_basis != spec.flow.basis
                or spread.flow_reference != spec.flow.reference):
            line, column = document.position(path)
            raise InputError(
                f"the flow uncertainty '{spread.text}' is a {_basis_words(spread.flow_basis)}, "
                f"but the flow of stream {stream_id} is a {_basis_words(spec.flow.basis)}; "
                "give it in % or in the same kind of flow", file=document.file, line=line,
                column=column, where=where)
        u = spread.standard(value, divisor)
        if u > 0:
            quantity = _FLOW_QUANTITY[spec.flow.basis] if name == "flow" else _INPUT_QUANTITY[name]
            found.append(Input(f"stream {stream_id} {name}", quantity, "stream", stream_id,
                               (name,), value, u))
    return found


def _basis_words(basis: str | None) -> str:
    return {"mass": "mass flow", "molar": "molar flow", "normal_volume": "normal or standard "
            "volume flow", "actual_volume": "volume flow"}.get(basis or "", "flow")


def claim_inputs(index: int, step: Any, unc: BalanceUncertainty | None,
                 document: Document) -> list[Input]:
    """The uncertain claims of a step (powers, duties, boundary temperatures, vessel states...)."""
    try:
        _, own, own_divisor = step_spreads(step)
    except InputError as exc:  # pragma: no cover - refused when the file is validated
        line, _ = document.position(("steps", index))
        raise InputError(exc.problem.message, file=document.file, line=line,
                         where=f"step {step.id}") from None
    raw = getattr(step, "uncertainty", None)
    if raw == "exact":
        return []
    if raw == "measured" and unc is None:
        line, column = document.position(("steps", index, "uncertainty"))
        raise InputError("says 'measured', but the balance declares no default uncertainties "
                         "under 'balance: uncertainty:'", file=document.file, line=line,
                         column=column, where=f"step {step.id}")
    use_defaults = unc is not None and (unc.basis == "measured" or raw == "measured")
    base_divisor = coverage_divisor(unc.coverage) if unc is not None else 1.0
    found = []
    for claim in step_claims(step):
        if claim.key in own:
            spread, divisor = own[claim.key], own_divisor or base_divisor
        elif use_defaults:
            spread, divisor = _defaults(unc, claim.category), base_divisor
        else:
            spread = None
        if spread is None or spread == EXACT:
            continue
        u = spread.standard(claim.value, divisor)
        if u > 0:
            label = ".".join(str(p) if not isinstance(p, int) else f"[{p}]" for p in claim.path)
            found.append(Input(f"step {step.id} {label.replace('.[', '[')}",
                               _INPUT_QUANTITY.get(claim.kind), "step", step.id, claim.path,
                               claim.value, u))
    return found


def step_inputs(runner: StepRunner, index: int) -> list[Input]:
    """Every uncertain input of step ``index``: its streams' properties and flows, its claims."""
    balance = runner.balance
    unc = balance.balance.uncertainty
    step = balance.steps[index]
    inlets, outlets = step.stream_ids()
    found = []
    for stream_id in dict.fromkeys([*inlets, *outlets]):
        found.extend(stream_inputs(stream_id, balance.streams[stream_id], unc, runner.document))
    found.extend(claim_inputs(index, step, unc, runner.document))
    return found


def check_declarations(balance: Any, document: Document) -> None:
    """Read every declared uncertainty once, so that a wrong one is an error even on a step
    without findings; raise :class:`InputErrors` naming each."""
    problems: list[Problem] = []
    unc = balance.balance.uncertainty
    for stream_id, spec in balance.streams.items():
        try:
            stream_inputs(stream_id, spec, unc, document)
        except InputError as exc:
            problems.append(exc.problem)
    for index, step in enumerate(balance.steps):
        try:
            claim_inputs(index, step, unc, document)
        except InputError as exc:
            problems.append(exc.problem)
    if problems:
        raise InputErrors(problems)


# -- the margins of the law findings --------------------------------------------------------------
Margin = Callable[[StepResult, dict[str, StreamResult]], float]


def flow_groups(result: StepResult, streams: dict[str, StreamResult]
                ) -> list[tuple[tuple[str, ...], tuple[str, ...]]]:
    """The parts of a step that conserve mass on their own, as (inlets, outlets): each
    inlet/outlet pair when the step pairs its streams one to one with the same fluid (one-stream
    steps, exchanger sides), else the inlets and outlets of each fluid."""
    ins, outs = result.inlets, result.outlets
    if len(ins) == len(outs) and all(streams[i].fluid == streams[o].fluid
                                     for i, o in zip(ins, outs, strict=True)):
        return [((i,), (o,)) for i, o in zip(ins, outs, strict=True)]
    by_fluid: dict[str, tuple[list[str], list[str]]] = defaultdict(lambda: ([], []))
    for i in ins:
        by_fluid[streams[i].fluid][0].append(i)
    for o in outs:
        by_fluid[streams[o].fluid][1].append(o)
    return [(tuple(a), tuple(b)) for a, b in by_fluid.values()]


def _group_residual(group: tuple[tuple[str, ...], tuple[str, ...]],
                    streams: dict[str, StreamResult]) -> float:
    ins, outs = group
    return sum(streams[i].mass_flow for i in ins) - sum(streams[o].mass_flow for o in outs)


def reference_shift(result: StepResult, streams: dict[str, StreamResult],
                    nominal: dict[tuple, float]) -> tuple[float, float]:
    """(Σ h_ref Δṁ [W], Σ s_ref Δṁ [W/K]) over the step's mass-conserving groups, Δṁ being the
    change of a group's mass residual from its ``nominal`` value [kg/s] and h_ref, s_ref the
    group's mean outlet enthalpy and entropy [J/kg, J/(kg K)].

    Subtracting these terms reads an inlet flow perturbed by δ as the group's inlets and outlets
    perturbed together (its outlets follow by conservation of mass: the flows of a group are one
    quantity, fully correlated, GUM §5.2): the residual changes by δ (h_in − h_out), never by δ
    times an absolute enthalpy, which on the formation basis would be a reference artefact.

    A fluid that only enters or only leaves the step (a fuel, a flue gas: it reacts) keeps its
    flow as measured: its change carries its formation-basis enthalpy, elements are not
    rebalanced."""
    dH = dS = 0.0
    for group in flow_groups(result, streams):
        change = _group_residual(group, streams) - nominal.get(group, 0.0)
        if change == 0.0 or not group[0] or not group[1]:
            continue  # a fluid that only enters or only leaves (it reacts): taken as measured
        reference = group[1]
        mass = sum(streams[x].mass_flow for x in reference)
        if mass <= 0.0:
            continue
        dH += change * sum(streams[x].mass_flow * streams[x].h for x in reference) / mass
        dS += change * sum(streams[x].mass_flow * streams[x].s for x in reference) / mass
    return dH, dS


def margin_function(finding: Finding, result: StepResult, streams: dict[str, StreamResult],
                    T0: float) -> Margin | None:
    """The finding's margin as a function of a re-evaluated step (positive = violation), or None
    when the finding is not a law finding this module knows how to propagate. The function is
    checked to give the finding's own margin on the nominal step. Energy, entropy and work
    margins take flow changes as mass-conserving (:func:`reference_shift`); T0 [K]."""
    name = finding.name
    candidates: list[Margin] = []
    nominal = {group: _group_residual(group, streams) for group in flow_groups(result, streams)}
    if name in ENERGY_FINDINGS:
        sign = 1.0 if result.energy_residual >= 0 else -1.0
        candidates.append(lambda r, s: sign * (
            r.energy_residual - reference_shift(r, s, nominal)[0]))
    elif name in WORK_FINDINGS:
        def work(r: StepResult, s: dict[str, StreamResult]) -> float:
            dH, dS = reference_shift(r, s, nominal)
            return r.W - r.W_rev + dH - T0 * dS

        candidates.append(work)
    elif name == "negative-entropy-generation":
        candidates.append(lambda r, s: -(r.S_gen + reference_shift(r, s, nominal)[1]))
    elif name == "efficiency-above-one":
        candidates.append(lambda r, s: (r.isentropic_efficiency
                                        if r.isentropic_efficiency is not None else math.nan) - 1.0)
    elif name == "mass-imbalance" and not result.batch and finding.claimed is not None:
        sign = 1.0 if finding.claimed >= 0 else -1.0
        for fluid in result.mass_residual:
            candidates.append(lambda r, s, fluid=fluid: sign * r.mass_residual.get(fluid, 0.0))
        for i in range(min(len(result.inlets), len(result.outlets))):
            candidates.append(lambda r, s, i=i: sign * (s[r.inlets[i]].mass_flow
                                                        - s[r.outlets[i]].mass_flow))
    if finding.margin is None:
        return None
    for candidate in candidates:
        value = candidate(result, streams)
        if math.isfinite(value) and math.isclose(value, finding.margin, rel_tol=1e-9,
                                                 abs_tol=1e-9 * max(1.0, abs(finding.margin))):
            return candidate
    return None


# -- propagation -------------------------------------------------------------------------------
@dataclass
class Propagation:
    """Result of :func:`propagate`: nominal outputs y0, the contributions c_i u_i per input and
    output (None for an input that could not be evaluated) and the combined standard
    uncertainties u_c of the outputs."""

    y0: list[float]
    contributions: list[list[float] | None]
    u_c: list[float]
    evaluations: int


def propagate(f: Callable[[list[float]], list[float]], x0: Sequence[float],
              u: Sequence[float]) -> Propagation:
    """Law of propagation of uncertainty for uncorrelated inputs, GUM (JCGM 100:2008) eq. (10),
    with sensitivity coefficients from central differences of step u_i [1, §5.1.3, note 2].

    Parameters
    ----------
    f : the outputs as a function of the inputs [SI]; may raise :class:`InputError` (a state the
        property engine refuses) or return non-finite values where it cannot be evaluated
    x0 : the nominal inputs [SI]
    u : their standard uncertainties [SI]

    Returns
    -------
    :class:`Propagation`; u_c [SI of each output] = sqrt(Σ_i (c_i u_i)²), exact for a linear f.
    """
    x0 = [float(v) for v in x0]
    y0 = list(f(x0))
    evaluations = 1
    contributions: list[list[float] | None] = []
    for i, ui in enumerate(u):
        if ui <= 0:
            contributions.append([0.0] * len(y0))
            continue
        found = None
        for step in (ui, ui / 10.0):
            plus, minus = _shifted(f, x0, i, step), _shifted(f, x0, i, -step)
            evaluations += 2
            if plus is not None and minus is not None:
                found = [(p - m) / (2.0 * step) * ui for p, m in zip(plus, minus, strict=True)]
            elif plus is not None:
                found = [(p - y) / step * ui for p, y in zip(plus, y0, strict=True)]
            elif minus is not None:
                found = [(y - m) / step * ui for m, y in zip(minus, y0, strict=True)]
            if found is not None:
                break
        contributions.append(found)
    u_c = [math.sqrt(sum(c[j] ** 2 for c in contributions if c is not None))
           for j in range(len(y0))]
    return Propagation(y0, contributions, u_c, evaluations)


def _shifted(f: Callable[[list[float]], list[float]], x0: list[float], i: int,
             step: float) -> list[float] | None:
    x = list(x0)
    x[i] += step
    try:
        y = list(f(x))
    except InputError:
        return None
    return y if all(math.isfinite(v) for v in y) else None


def monte_carlo(f: Callable[[list[float]], list[float]], x0: Sequence[float],
                u: Sequence[float], trials: int, seed: int | Sequence[int] = MONTE_CARLO_SEED,
                ) -> tuple[list[float], int]:
    """Monte Carlo propagation, GUM Supplement 1 (JCGM 101:2008) §7: ``trials`` draws of all
    inputs at once from N(x0_i, u_i²) [SI], with a fixed ``seed``.

    Returns the sample standard deviation of each output [SI] and the number of draws that could
    not be evaluated (left out).
    """
    rng = np.random.default_rng(seed)
    draws = np.asarray(x0, dtype=float) + rng.standard_normal((trials, len(x0))) * np.asarray(
        u, dtype=float)
    outputs = []
    failed = 0
    for x in draws:
        try:
            y = list(f([float(v) for v in x]))
        except InputError:
            failed += 1
            continue
        if all(math.isfinite(v) for v in y):
            outputs.append(y)
        else:
            failed += 1
    if len(outputs) < 2:
        return [math.nan] * len(list(f(list(x0)))), failed
    return [float(v) for v in np.std(np.asarray(outputs), axis=0, ddof=1)], failed


def step_function(runner: StepRunner, index: int, inputs: Sequence[Input],
                  margins: Sequence[Margin]) -> Callable[[list[float]], list[float]]:
    """The margins of step ``index`` as a function of its uncertain inputs [SI]."""
    base = runner.balance.steps[index]

    def f(x: list[float]) -> list[float]:
        changes: dict[str, dict[str, float]] = defaultdict(dict)
        step = base
        for item, value in zip(inputs, x, strict=True):
            if value == item.value:
                continue
            if item.owner == "stream":
                changes[item.ident][str(item.path[0])] = value
            else:
                step = with_value(step, item.path, value)
        replaced = {sid: runner.stream(sid, change) for sid, change in changes.items()}
        result, _ = runner.run(index, step, replaced)
        streams = {**runner.streams, **replaced}
        return [margin(result, streams) for margin in margins]

    return f


# -- verdicts --------------------------------------------------------------------------------------
def verdict(margin: float, expanded: float, tolerance: float) -> str:
    """``violated`` when margin − U > tolerance, ``marginal`` when it is above zero only,
    ``consistent`` otherwise (all in the margin's unit); see the module docstring."""
    if margin - expanded > tolerance:
        return VIOLATED
    if margin - expanded > 0.0:
        return MARGINAL
    return CONSISTENT


_PHRASES = {
    VIOLATED: "a violation beyond the uncertainty",
    MARGINAL: "marginal: beyond the tolerance, but not by more than the uncertainty",
    CONSISTENT: "consistent: the uncertainty covers the whole margin",
}


def format_value(value: float, quantity: str | None) -> str:
    """A margin or uncertainty [SI] in the unit of messages (kW, kJ, kW/K, kg/s ...)."""
    if quantity in ("power", "energy"):
        unit_small, unit_large = ("kW", "MW") if quantity == "power" else ("kJ", "MJ")
        if abs(value) < 1e6:
            return f"{value / 1e3:,.4g} {unit_small}"
        return f"{value / 1e6:,.4g} {unit_large}"
    if quantity in ("entropy_rate", "entropy"):
        return f"{value / 1e3:.4g} {'kW/K' if quantity == 'entropy_rate' else 'kJ/K'}"
    if quantity == "mass_flow":
        return f"{value:.4g} kg/s"
    return f"{value:.4g}"


def with_verdict(finding: Finding, expanded: float, k: float,
                 contributors: tuple[Contributor, ...] = (),
                 monte_carlo_expanded: float | None = None) -> Finding:
    """The finding with its expanded uncertainty U [its unit], coverage factor, verdict,
    contributors and severity (marginal: at most warning; consistent: info)."""
    margin = finding.margin or 0.0
    tolerance = finding.tolerance or 0.0
    result = verdict(margin, expanded, tolerance)
    severity = finding.severity
    if result == MARGINAL and SEVERITY_RANK[severity] > SEVERITY_RANK[WARNING]:
        severity = WARNING
    elif result == CONSISTENT:
        severity = INFO
    stop = "" if finding.message.rstrip().endswith(".") else "."
    message = (f"{finding.message}{stop} With the declared uncertainties the margin is "
               f"{format_value(margin, finding.quantity)} ± "
               f"{format_value(expanded, finding.quantity)} (k = {k:g}): {_PHRASES[result]}.")
    return replace(finding, severity=severity, message=message, uncertainty=expanded,
                   coverage_factor=k, verdict=result, contributors=contributors,
                   monte_carlo_uncertainty=monte_carlo_expanded)


@dataclass
class StepUncertainty:
    """What the propagation found for one step: per finding position, its expanded uncertainty
    [its unit]; the re-evaluations spent; Monte Carlo draws left out."""

    expanded: dict[int, float]
    evaluations: int
    monte_carlo_failed: int = 0


def assess_step(runner: StepRunner, index: int, items: Sequence[tuple[int, Finding]],
                result: StepResult, k: float, trials: int = 0
                ) -> tuple[dict[int, Finding], StepUncertainty]:
    """Propagate the uncertainty of the law findings ``items`` (position, finding) of step
    ``index`` and give each its verdict. Returns the new findings by position."""
    laws = []
    for position, finding in items:
        margin = margin_function(finding, result, runner.streams,
                                 runner.balance.balance.dead_state.T)
        if margin is not None:
            laws.append((position, finding, margin))
    if not laws:
        return {}, StepUncertainty({}, 0)
    inputs = step_inputs(runner, index)
    if not inputs:
        return ({position: with_verdict(finding, 0.0, k) for position, finding, _ in laws},
                StepUncertainty({position: 0.0 for position, _, _ in laws}, 0))
    f = step_function(runner, index, inputs, [margin for _, _, margin in laws])
    x0 = [item.value for item in inputs]
    u = [item.u for item in inputs]
    propagation = propagate(f, x0, u)
    mc_std: list[float] | None = None
    failed = 0
    if trials > 0:
        mc_std, failed = monte_carlo(f, x0, u, trials, seed=(MONTE_CARLO_SEED, index))
    updated: dict[int, Finding] = {}
    expanded: dict[int, float] = {}
    for j, (position, finding, _) in enumerate(laws):
        u_c = propagation.u_c[j]
        ranked = []
        for item, contribution in zip(inputs, propagation.contributions, strict=True):
            if contribution is None:
                ranked.append(Contributor(item.label + " (not evaluated)", item.quantity, item.u,
                                          math.nan, math.nan, math.nan))
                continue
            c_u = contribution[j]
            ranked.append(Contributor(item.label, item.quantity, item.u, c_u / item.u, c_u,
                                      (c_u / u_c) ** 2 if u_c > 0 else 0.0))
        ranked.sort(key=lambda c: -abs(c.contribution) if math.isfinite(c.contribution)
                    else -math.inf)
        # contributions below 1e-6 of u_c (a share of 1e-12) are rounding, not inputs
        top = tuple(c for c in ranked[:TOP_CONTRIBUTORS]
                    if not math.isfinite(c.share) or c.share > 1e-12)
        mc = k * mc_std[j] if mc_std is not None and math.isfinite(mc_std[j]) else None
        updated[position] = with_verdict(finding, k * u_c, k, top, mc)
        expanded[position] = k * u_c
    return updated, StepUncertainty(expanded, propagation.evaluations + (trials if trials else 0),
                                    failed)


# -- the pass over a solved balance --------------------------------------------------------------
def review(solution: Solution, monte_carlo_trials: int = 0
           ) -> tuple[list[Finding], dict[str, str]]:
    """Verdicts with uncertainty (when the balance declares any) and probable causes for the
    findings of a solved balance. Returns the findings (same order) and provenance lines."""
    from audit.review.causes import name_causes

    balance, results = solution.balance, solution.results
    declared = declares_uncertainty(balance)
    if declared:  # nothing declared, nothing to read (and nothing that could be wrong)
        check_declarations(balance, solution.document)
    runner = StepRunner(solution)
    by_result = {r.id: r for r in results}
    by_step: dict[int, list[tuple[int, Finding]]] = defaultdict(list)
    findings = solution.findings
    for position, finding in enumerate(findings):
        if finding.step in runner.index and finding.name in LAW_FINDINGS:
            by_step[runner.index[finding.step]].append((position, finding))
    findings = list(findings)
    provenance: dict[str, str] = {}
    expanded: dict[int, float] = {}
    if declared:
        unc = balance.balance.uncertainty
        k = unc.coverage_factor if unc is not None else DEFAULT_COVERAGE_FACTOR
        spent, failed = 0, 0
        for index, items in sorted(by_step.items()):
            step_id = balance.steps[index].id
            if step_id not in by_result:
                continue
            updated, info = assess_step(runner, index, items, by_result[step_id], k,
                                        monte_carlo_trials)
            for position, finding in updated.items():
                findings[position] = finding
            expanded.update(info.expanded)
            spent += info.evaluations
            failed += info.monte_carlo_failed
        provenance["uncertainty"] = (
            f"linear propagation, central differences through the property calls (GUM, JCGM "
            f"100:2008, §5.1); expanded with k = {k:g}; {spent} step re-evaluations")
        if monte_carlo_trials > 0:
            provenance["uncertainty, Monte Carlo"] = (
                f"{monte_carlo_trials} draws per step, seed {MONTE_CARLO_SEED} (JCGM 101:2008)"
                + (f"; {failed} draws could not be evaluated and were left out" if failed else ""))
    findings, spent_on_causes = name_causes(runner, findings, expanded, by_result)
    provenance["probable causes"] = f"{spent_on_causes} step re-evaluations (audit.review.causes)"
    return findings, provenance
