"""Step residuals that the difference between two formulations of a fluid explains.

Water and steam have two formulations: IAPWS-95, the reference equation the audit uses unless the
balance declares another [1], and IAPWS-IF97, the industrial formulation most design balances are
computed with [2]. They differ by up to about 1e-4 in h and 1e-3 in the other properties away from
the critical point [2, 3], so a balance computed on IF97 leaves first-law and bound residuals on
IAPWS-95 that no slip caused. The step stage allows for them (the property-method allowance,
:mod:`audit.steps.allowances`); this pass makes sure they are never passed in silence.

For each flow step with a stream of such a fluid, in a balance that declares no formulation for it
and writes no tolerance of its own, the law margins (first-law residual, work bound, entropy
generation; :mod:`audit.review.margins`) are read on both formulations: the solved step, and the
same step with every stream re-flashed on the other formulation (:meth:`StepRunner.on_engine`).
Where the other formulation at least halves a margin, the rounding bound R of the written values
(:func:`audit.review.rounding.rounding_bounds`) decides:

* margin ≤ R + a: the written digits explain it; nothing is said;
* margin > R + a and the other formulation's margin ≤ R + a: a ``formulation-difference`` warning
  on the step names the explanation (and replaces the law error, if the margin was beyond the
  property-method allowance too: an error would hide the explanation);
* otherwise the step stays as the law checks left it.

Here a is the property-method allowance of the step's other fluids (zero for a step of water only)
plus 1e-9 of the step's energy scale and enthalpy flows, for the numerical agreement of the two
evaluations.

Cost: a step whose only margin is a first-law residual within a lower bound of its rounding
(its claims' half-units and its flows' half-units times the enthalpy change, read without
re-evaluating) is left at that; any other, one re-evaluation on the other formulation (its
streams re-flashed), and the rounding bound (two re-evaluations per written number) only where
the other formulation at least halves a margin. Measured on a generated 1000-stream balance
(benchmarks/generate.py, a third of its steps on water): 3 re-evaluations, the audit's CPU time
up by about 10 %.

References
----------
.. [1] W. Wagner, A. Pruß, J. Phys. Chem. Ref. Data 31 (2002) 387–535 (IAPWS R6-95).
.. [2] W. Wagner et al., J. Eng. Gas Turbines Power 122 (2000) 150–182 (IAPWS R7-97).
.. [3] IAPWS R7-97(2012), §9 (consistency of IAPWS-IF97 with IAPWS-95).
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from audit.errors import StateError
from audit.findings import WARNING, Finding, relative
from audit.model.references import FORMULATION_FLUIDS
from audit.model.steps import step_claims
from audit.model.tolerances import merged
from audit.properties.engine import PropertyEngine
from audit.results import StepResult, StreamResult
from audit.review.margins import ENERGY_FINDINGS, WORK_FINDINGS, Margin, reference_shift
from audit.review.resolution import resolution, written_text
from audit.review.rounding import rounding_bounds
from audit.review.runner import StepRunner
from audit.steps.allowances import ROUNDING, allowances, declared_rule
from audit.steps.laws import format_power

NAMES = {"reference": "IAPWS-95", "IF97": "IAPWS-IF97"}
"""The formulations of water by their names in a balance."""

NUMERICAL = 1e-9
"""Share of the step's energy scale and enthalpy flows kept for the numerical agreement of two
evaluations [-]."""

_LAW_NAMES = {
    "energy": ENERGY_FINDINGS,
    "work": WORK_FINDINGS,
    "entropy": ("negative-entropy-generation",),
}


@dataclass(frozen=True)
class _Law:
    key: str
    margin: Margin
    strict: float  # allowance without the formulation spread [W or W/K]
    here: float  # the margin of the solved step (``margin`` of it, read once)


def open_fluids(runner: StepRunner) -> set[str]:
    """The balance's pure fluids that have another formulation and whose formulation the balance
    does not declare."""
    engine = runner.engine
    found = set()
    asked: set[str] = set()  # each fluid name once (a balance names a few fluids many times)
    for spec in runner.balance.streams.values():
        if spec.fluid is None or spec.composition is not None or spec.fluid in asked:
            continue
        asked.add(spec.fluid)
        try:
            name = engine.canonical_name(spec.fluid)
        except StateError:  # pragma: no cover - every stream was evaluated
            continue
        others = [f for f, fluids in FORMULATION_FLUIDS.items() if name in fluids]
        if others and engine.formulation_of(name) == "reference":
            found.add(name)
    return found


def _other_engine(engine: PropertyEngine, fluids: set[str]) -> PropertyEngine:
    return engine.variant(reference=engine.reference, formulation=dict.fromkeys(sorted(fluids), "IF97"))


def _laws(runner: StepRunner, result: StepResult, fluids: set[str]) -> list[_Law]:
    """The step's law margins as functions of a re-evaluated step, each with its allowance
    without the formulation spread."""
    T0 = runner.balance.balance.dead_state.T
    streams = runner.streams
    ids = [*result.inlets, *result.outlets]
    rest = [(streams[i], streams[i].mass_flow) for i in ids if streams[i].fluid not in fluids]
    part = allowances(rest, [], 0.0, 0.0, T0, runner.engine) if rest else None
    # the sums of absolute (formation-basis) enthalpy flows carry float rounding of their own size
    numerical = NUMERICAL * (result.energy_scale + abs(result.H_in) + abs(result.H_out))
    energy = (part.energy if part else 0.0) + numerical
    exergy = (part.exergy if part else 0.0) + numerical
    nominal: dict[tuple, float] = {}
    shift_H, shift_S = reference_shift(result, streams, nominal)  # the solved step's, read once
    sign = 1.0 if result.energy_residual - shift_H >= 0 else -1.0

    def first_law(r: StepResult, s: Mapping[str, StreamResult]) -> float:
        return sign * (r.energy_residual - reference_shift(r, s, nominal)[0])

    def work(r: StepResult, s: Mapping[str, StreamResult]) -> float:
        dH, dS = reference_shift(r, s, nominal)
        return r.W - r.W_rev + dH - T0 * dS

    def entropy(r: StepResult, s: Mapping[str, StreamResult]) -> float:
        return -(r.S_gen + reference_shift(r, s, nominal)[1])

    return [
        _Law("energy", first_law, energy, sign * (result.energy_residual - shift_H)),
        _Law("work", work, exergy, result.W - result.W_rev + shift_H - T0 * shift_S),
        _Law("entropy", entropy, exergy / T0, -(result.S_gen + shift_S)),
    ]


def assess_formulations(
    runner: StepRunner, findings: list[Finding], by_result: dict[str, StepResult]
) -> tuple[list[Finding], int]:
    """The findings with a ``formulation-difference`` warning for every step law that closes on
    the other formulation of its fluid but not within rounding on this one (replacing the law's
    error, if any); the re-evaluations spent. See the module docstring."""
    fluids = open_fluids(runner)
    if not fluids:
        return findings, 0
    started = runner.runs
    other = _other_engine(runner.engine, fluids)
    info = runner.balance.balance
    out = list(findings)
    for index, step in enumerate(runner.balance.steps):
        result = by_result.get(step.id)
        if (
            result is None
            or result.batch
            or declared_rule(merged(info.tolerances, step.tolerances), False)
        ):
            continue
        if not {runner.streams[i].fluid for i in (*result.inlets, *result.outlets)} & fluids:
            continue
        out = _assess_step(runner, index, result, fluids, other, out)
    return out, runner.runs - started


def _assess_step(
    runner: StepRunner,
    index: int,
    result: StepResult,
    fluids: set[str],
    other: PropertyEngine,
    findings: list[Finding],
) -> list[Finding]:
    laws = [law for law in _laws(runner, result, fluids) if _size(law, law.here) > law.strict]
    if [law.key for law in laws] == ["energy"]:  # the common case: screened without re-evaluating
        beyond = _size(laws[0], laws[0].here) - laws[0].strict
        if any(beyond <= 0.9 * floor for floor in _rounding_floors(runner, index, result)):
            laws = []
    if not laws:
        return findings  # within rounding on this formulation, or no violation at all
    try:
        moved, streams = runner.on_engine(index, other)
    except StateError:
        return findings  # a state outside the other formulation's range: nothing to compare
    here = [law.here for law in laws]
    there = [_size(law, law.margin(moved, streams)) for law in laws]
    halved = [j for j in range(len(laws)) if there[j] <= 0.5 * here[j]]
    if not halved:
        return findings
    bounds, _, _ = rounding_bounds(runner, index, [laws[j].margin for j in halved])
    step_id = result.id
    for j, bound in zip(halved, bounds, strict=True):
        law, tolerance = laws[j], bound + laws[j].strict
        if here[j] <= tolerance or there[j] > tolerance:
            continue
        replaced = [
            f
            for f in findings
            if f.step == step_id and f.name in _LAW_NAMES[law.key] and f.severity != WARNING
        ]
        findings = [f for f in findings if f not in replaced]
        findings.append(_warning(step_id, law.key, here[j], there[j], bound, tolerance, other, fluids))
    return findings


def _rounding_floors(runner: StepRunner, index: int, result: StepResult) -> Iterator[float]:
    """Rising lower bounds [W] of the rounding bound of the step's first-law residual, found
    without re-evaluating the step: the half-units of its power and duty claims (each moves the
    residual one for one), then with, for each inlet paired with an outlet of its fluid, the inlet
    flow's half-unit times the pair's enthalpy change (flows read as mass-conserving). Terms of
    the worst-case sum Σ |c_i| δx_i, so never more than it; yielded one by one so that the
    screen stops at the first that covers the residual."""
    document, site = runner.document, runner.balance.balance.site_pressure
    floor = 0.0
    for claim in step_claims(runner.balance.steps[index]):
        if claim.kind == "power":
            text = written_text(document, ("steps", index, *claim.path))
            floor += _resolution(text, "power", site)
    yield floor
    if len(result.inlets) == len(result.outlets):
        for i, o in zip(result.inlets, result.outlets, strict=True):
            inlet, outlet = runner.streams[i], runner.streams[o]
            if inlet.fluid == outlet.fluid:
                text = written_text(document, ("streams", i, "flow"))
                floor += _resolution(text, "flow", site) * abs(inlet.h - outlet.h)
                yield floor


_remembered_resolution = lru_cache(maxsize=4096, typed=True)(resolution)


def _resolution(text: Any, kind: str, site: float | None) -> float:
    """:func:`resolution`, of each written number once (a balance writes one flow on several
    streams)."""
    if text is None or isinstance(text, (str, int, float)):
        return _remembered_resolution(text, kind, site)
    return resolution(text, kind, site)


def _size(law: _Law, margin: float) -> float:
    """A margin as a violation: the first-law residual either way, a bound only beyond it."""
    return abs(margin) if law.key == "energy" else margin


def _warning(
    step_id: str,
    key: str,
    here: float,
    there: float,
    bound: float,
    tolerance: float,
    other: PropertyEngine,
    fluids: set[str],
) -> Finding:
    fluid = sorted(fluids)[0]
    this, that = NAMES["reference"], NAMES[other.formulation_of(fluid)]
    words = _WORDS[key]
    shown: Callable[[float], str] = _entropy if key == "entropy" else format_power
    left = max(there, 0.0)
    return Finding(
        WARNING,
        "formulation-difference",
        step_id,
        f"{words[0]} on {this} by {shown(here)}, beyond the rounding of the written values "
        f"({shown(bound)}), but {words[1]} on {that} ({shown(left)} left): within the known "
        f"difference between formulations of {', '.join(sorted(fluids))}, so the balance was "
        f"probably computed with {that}; declare 'formulation: IF97' under 'balance:' if so",
        margin=here,
        margin_relative=relative(here - there, here),
        quantity="entropy_rate" if key == "entropy" else "power",
        tolerance=tolerance,
        tolerance_rule=ROUNDING,
        tolerance_basis=f"rounding of the written values {shown(bound)} + the allowance of the "
        f"step's other fluids; on {that} the margin is {shown(there)}",
        rounding_bound=bound,
    )


_WORDS = {
    "energy": ("the first law does not close", "closes within it"),
    "work": ("the claimed work is beyond its reversible bound", "is within it"),
    "entropy": ("the entropy generation is below zero", "is not"),
}


def _entropy(value: float) -> str:
    return f"{value / 1e3:.4g} kW/K"
