"""The default verdict of a law finding: can the rounding of the written values, plus the known
spread between reference property formulations, explain its margin?

The step stage raises a law finding whose margin exceeds the property-method allowance
(:mod:`audit.steps.allowances`; ``tolerance_rule == "rounding"``). Here each such finding's margin
is written as a function of every written number of its step — the two state properties and the
flow of each stream, and the step's claims (:func:`rounding_inputs`) — and the half-unit in the
last written digit of each (:mod:`audit.review.resolution`) is propagated through the sensitivities
of the margin as a worst-case bound [1, §F.2.2.1; 2, §5.1.2 with |c_i| δx_i added linearly]:

    bound = Σ_i |∂m/∂x_i| δx_i,

each c_i δx_i estimated by a central difference of step δx_i through the same re-evaluation as the
measured balances (:mod:`audit.review.runner`, :mod:`audit.review.margins`,
:func:`audit.review.propagation.propagate`). The finding stands when its margin exceeds the bound
plus the allowance; its tolerance becomes that sum, and its ``tolerance_basis`` names the inputs
whose rounding contributes most and the allowance. A finding within it is dropped: the balance is
consistent to the digits written.

Cost: two re-evaluations of the step per written number, only for steps with a law finding beyond
the allowance.

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
   measurement* (GUM), §F.2.2.1 (resolution of a digital indication).
.. [2] idem, §5.1.2 (law of propagation of uncertainty).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from audit.findings import Finding
from audit.model.steps import step_claims
from audit.model.streams import PAIR_FIELDS
from audit.results import StepResult
from audit.review.inputs import Input
from audit.review.margins import SHIFTED_FINDINGS, Margin, exchanges_water, margin_function
from audit.review.propagation import propagate
from audit.review.resolution import resolution, shown_half_unit, written_text
from audit.review.runner import StepRunner
from audit.review.uncertainty import step_function
from audit.review.verdicts import format_value
from audit.steps.allowances import ROUNDING
from audit.steps.laws import entropy_tolerance_words, tolerance_words

NAMED = 3
"""How many inputs the make-up of a tolerance names."""

_STREAM_KIND = {
    "T": "temperature",
    "P": "pressure",
    "quality": "quality",
    "h": "specific_enthalpy",
    "s": "specific_entropy",
    "flow": "flow",
}
_SHOWN_UNIT = {"temperature": "temperature_difference", "flow": None, "quality": None}


def rounding_inputs(runner: StepRunner, index: int) -> list[tuple[Input, str]]:
    """Every written number of step ``index`` with its rounding as the spread: (input with
    u = half a unit in its last written digit [SI], the text as written). Numbers with a declared
    uncertainty are included too: the rounding of the file's digits is part of the tolerance, the
    declared measurement uncertainty is judged on top of it (:mod:`audit.review.verdicts`)."""
    balance = runner.balance
    document = runner.document
    site = balance.balance.site_pressure
    step = balance.steps[index]
    inlets, outlets = step.stream_ids()
    found: list[tuple[Input, str]] = []
    for stream_id in dict.fromkeys([*inlets, *outlets]):
        spec = balance.streams[stream_id]
        pair, a, b = spec.inputs()
        names = PAIR_FIELDS[pair]
        for name, value in ((names[0], a), (names[1], b), ("flow", spec.flow.value)):
            text = written_text(document, ("streams", stream_id, name))
            delta = resolution(text, _STREAM_KIND[name], site)
            if delta > 0:
                found.append(
                    (
                        Input(
                            f"stream {stream_id} {name}",
                            _SHOWN_UNIT.get(_STREAM_KIND[name], _STREAM_KIND[name]),
                            "stream",
                            stream_id,
                            (name,),
                            value,
                            delta,
                        ),
                        str(text),
                    )
                )
    for claim in step_claims(step):
        text = written_text(document, ("steps", index, *claim.path))
        delta = resolution(text, claim.kind, site)
        label = ".".join(str(p) if not isinstance(p, int) else f"[{p}]" for p in claim.path)
        if delta > 0:
            found.append(
                (
                    Input(
                        f"step {step.id} {label.replace('.[', '[')}",
                        _SHOWN_UNIT.get(claim.kind, claim.kind),
                        "step",
                        step.id,
                        claim.path,
                        claim.value,
                        delta,
                    ),
                    str(text),
                )
            )
    return found


def _makeup(
    finding: Finding,
    ranked: Sequence[tuple[float, Input, str]],
    bound: float,
    allowance: str,
    missing: int = 0,
) -> str:
    named = [
        f"{item.label} '{text}' ±{shown_half_unit(text)}: {format_value(abs(c), finding.quantity)}"
        for c, item, text in ranked[:NAMED]
        if c != 0.0
    ]
    more = f" and {len(ranked) - NAMED} more" if len(ranked) > NAMED else ""
    left = (
        f"; {missing} written value{'s' if missing > 1 else ''} could not be re-evaluated and "
        f"{'are' if missing > 1 else 'is'} left out"
        if missing
        else ""
    )
    return (
        f"rounding of the written values {format_value(bound, finding.quantity)} (worst case; "
        f"{'; '.join(named) or 'no written number moves it'}{more}{left}) + {allowance}"
    )


def _reworded(finding: Finding, tolerance: float, bound: float, T0: float) -> str:
    batch = finding.quantity in ("energy", "entropy")
    if finding.quantity in ("entropy_rate", "entropy"):
        old = entropy_tolerance_words(finding.tolerance or 0.0, batch, T0)
        new = entropy_tolerance_words(tolerance, batch, T0)
    elif finding.quantity in ("power", "energy"):
        old = tolerance_words(finding.tolerance or 0.0, batch)
        new = tolerance_words(tolerance, batch)
    elif finding.quantity == "voltage":
        old = f"tolerance {(finding.tolerance or 0.0) * 1e3:.2g} mV"
        new = f"tolerance {format_value(tolerance, 'voltage')}"
    elif finding.quantity == "temperature":
        old, new = "", f"tolerance {format_value(tolerance, 'temperature')}"
    else:
        old, new = "", f"tolerance {tolerance:.2g}"
    new += f", of which {format_value(bound, finding.quantity)} from the rounding of the written values"
    if old and old in finding.message:
        return finding.message.replace(old, new, 1)
    stop = "" if finding.message.rstrip().endswith(".") else "."
    return f"{finding.message}{stop} ({new}.)"


def rounding_bounds(
    runner: StepRunner, index: int, margins: Sequence[Margin]
) -> tuple[list[float], list[list[float] | None], list[tuple[Input, str]]]:
    """The worst-case rounding bound Σ_i |∂m/∂x_i| δx_i of each of ``margins`` of step ``index``
    [their units], with each written number's contribution (by input, per margin; None when it
    could not be evaluated) and the written numbers (:func:`rounding_inputs`)."""
    written = rounding_inputs(runner, index)
    inputs = [item for item, _ in written]
    bounds = [0.0] * len(margins)
    contributions: list[list[float] | None] = []
    if inputs:
        f = step_function(runner, index, inputs, margins)
        propagation = propagate(f, [i.value for i in inputs], [i.u for i in inputs])
        contributions = propagation.contributions
        for c in contributions:
            if c is not None:
                bounds = [b + abs(v) for b, v in zip(bounds, c, strict=True)]
    return bounds, contributions, written


def assess_rounding(
    runner: StepRunner, index: int, items: Sequence[tuple[int, Finding]], result: StepResult
) -> dict[int, Finding | None]:
    """The rounding verdict of the law findings ``items`` (position, finding) of step ``index``
    whose tolerance rule is ``"rounding"``: by position, the finding with its tolerance widened by
    the rounding bound and its make-up, or None when the rounding explains it. A finding whose
    margin cannot be read again from a re-evaluated step keeps the allowance alone and says so
    (:func:`not_propagated`); written values that cannot be re-evaluated are counted in the
    make-up."""
    T0 = runner.balance.balance.dead_state.T
    laws: list[tuple[int, Finding, Margin]] = []
    out: dict[int, Finding | None] = {}
    for position, finding in items:
        if finding.tolerance_rule != ROUNDING:
            continue
        margin = margin_function(finding, result, runner.streams, T0)
        if margin is not None:
            laws.append((position, finding, margin))
        elif finding.name in SHIFTED_FINDINGS and exchanges_water(result, runner.streams):
            out[position] = not_propagated(finding, WATER)
        else:
            out[position] = not_propagated(finding, UNREAD)
    if not laws:
        return out
    bounds, contributions, written = rounding_bounds(runner, index, [m for _, _, m in laws])
    missing = sum(c is None for c in contributions)
    for j, (position, finding, _) in enumerate(laws):
        allowance = finding.tolerance or 0.0
        tolerance = allowance + bounds[j]
        if (finding.margin or 0.0) <= tolerance:
            out[position] = None
            continue
        ranked = sorted(
            (
                (c[j], item, text)
                for c, (item, text) in zip(contributions, written, strict=True)
                if c is not None
            ),
            key=lambda x: -abs(x[0]),
        )
        out[position] = replace(
            finding,
            message=_reworded(finding, tolerance, bounds[j], T0),
            tolerance=tolerance,
            rounding_bound=bounds[j],
            tolerance_basis=_makeup(finding, ranked, bounds[j], finding.tolerance_basis or "", missing),
        )
    return out


UNREAD = "its margin could not be read again from a re-evaluated step"
"""Why a finding's rounding was not propagated: no margin function gives its own margin."""
WATER = (
    "humid air exchanges water with the step's water streams, and a change of one written flow "
    "cannot yet be followed through it"
)
"""Why a finding's rounding was not propagated: :func:`audit.review.margins.exchanges_water`."""
UNEVALUATED = "its step could not be evaluated again"
"""Why a finding's rounding was not propagated: the step has no result to re-evaluate."""


def not_propagated(finding: Finding, reason: str) -> Finding:
    """A law finding under the rounding rule whose rounding bound could not be propagated
    (``reason``): it stands on the property-method allowance alone, and says so in its message
    and its tolerance make-up, so that the missing bound is never taken for a zero one."""
    words = f"the rounding of the written values was not propagated: {reason}"
    stop = "" if finding.message.rstrip().endswith(".") else "."
    return replace(
        finding,
        message=f"{finding.message}{stop} ({words}; judged on the allowance alone.)",
        tolerance_basis=f"{words} + {finding.tolerance_basis or ''}",
    )
