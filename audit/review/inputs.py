"""The uncertain inputs of a step: which written values carry a declared uncertainty.

A step's inputs are the two state properties and the flow of each of its streams
(:func:`stream_inputs`) and its claims (:func:`claim_inputs`; the claims are the fields its model
declares as claims, :func:`audit.model.steps.step_claims`), each with its standard uncertainty
from the stream's or step's own declaration, else the balance's defaults
(:mod:`audit.model.uncertainty`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from audit.errors import InputError, InputErrors, Problem
from audit.input.document import Document
from audit.model.steps import step_claims, step_spreads
from audit.model.streams import PAIR_FIELDS, StreamSpec
from audit.model.uncertainty import (
    EXACT,
    STREAM_CATEGORY,
    BalanceUncertainty,
    Spread,
    StreamUncertainty,
    coverage_divisor,
)
from audit.review.runner import StepRunner

_INPUT_QUANTITY = {
    "T": "temperature_difference",
    "P": "pressure",
    "quality": "fraction",
    "h": "specific_energy",
    "s": "specific_entropy",
    "temperature": "temperature_difference",
    "pressure": "pressure",
    "power": "power",
    "energy": "energy",
    "mass": "mass",
    "specific_enthalpy": "specific_energy",
    "specific_entropy": "specific_entropy",
}
_FLOW_QUANTITY = {
    "mass": "mass_flow",
    "molar": "molar_flow",
    "normal_volume": "volume_flow",
    "actual_volume": "volume_flow",
}


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


def declares_uncertainty(balance: Any) -> bool:
    """True when the balance, a stream or a step declares any uncertainty."""
    return (
        balance.balance.uncertainty is not None
        or any(s.uncertainty is not None for s in balance.streams.values())
        or any(getattr(s, "uncertainty", None) is not None for s in balance.steps)
    )


def _defaults(unc: BalanceUncertainty | None, category: str) -> Spread | None:
    return getattr(unc, category, None) if unc is not None else None


def stream_inputs(
    stream_id: str, spec: StreamSpec, unc: BalanceUncertainty | None, document: Document
) -> list[Input]:
    """The uncertain inputs of a stream (its two state properties and its flow)."""
    declared = spec.uncertainty
    if declared == "exact":
        return []
    where = f"stream {stream_id}"
    if declared == "measured" and unc is None:
        line, column = document.position(("streams", stream_id, "uncertainty"))
        raise InputError(
            "says 'measured', but the balance declares no default uncertainties "
            "under 'balance: uncertainty:'",
            file=document.file,
            line=line,
            column=column,
            where=where,
        )
    own = declared if isinstance(declared, StreamUncertainty) else None
    use_defaults = unc is not None and (unc.basis == "measured" or declared == "measured")
    base_divisor = coverage_divisor(unc.coverage) if unc is not None else 1.0
    own_divisor = coverage_divisor(own.coverage) if own is not None and own.coverage else (base_divisor)
    pair, a, b = spec.inputs()
    names = PAIR_FIELDS[pair]
    found = []
    for name, value in ((names[0], a), (names[1], b), ("flow", spec.flow.value)):
        spread: Spread | None = None
        divisor = base_divisor
        path: tuple[str, ...] = ("balance", "uncertainty", name)
        if own is not None and getattr(own, name) is not None:
            spread, divisor = getattr(own, name), own_divisor
            path = ("streams", stream_id, "uncertainty", name)
        elif use_defaults and name in STREAM_CATEGORY:
            spread = _defaults(unc, STREAM_CATEGORY[name])
            path = ("balance", "uncertainty", STREAM_CATEGORY[name])
        if spread is None or spread == EXACT:
            continue
        if (
            name == "flow"
            and not spread.relative
            and (spread.flow_basis != spec.flow.basis or spread.flow_reference != spec.flow.reference)
        ):
            line, column = document.position(path)
            raise InputError(
                f"the flow uncertainty '{spread.text}' is a {_basis_words(spread.flow_basis)}, "
                f"but the flow of stream {stream_id} is a {_basis_words(spec.flow.basis)}; "
                "give it in % or in the same kind of flow",
                file=document.file,
                line=line,
                column=column,
                where=where,
            )
        u = spread.standard(value, divisor)
        if u > 0:
            quantity = _FLOW_QUANTITY[spec.flow.basis] if name == "flow" else _INPUT_QUANTITY[name]
            found.append(
                Input(f"stream {stream_id} {name}", quantity, "stream", stream_id, (name,), value, u)
            )
    return found


def _basis_words(basis: str | None) -> str:
    return {
        "mass": "mass flow",
        "molar": "molar flow",
        "normal_volume": "normal or standard volume flow",
        "actual_volume": "volume flow",
    }.get(basis or "", "flow")


def claim_inputs(
    index: int, step: Any, unc: BalanceUncertainty | None, document: Document
) -> list[Input]:
    """The uncertain claims of a step (powers, duties, boundary temperatures, vessel states...)."""
    try:
        _, own, own_divisor = step_spreads(step)
    except InputError as exc:  # pragma: no cover - refused when the file is validated
        line, _ = document.position(("steps", index))
        raise InputError(
            exc.problem.message, file=document.file, line=line, where=f"step {step.id}"
        ) from None
    raw = getattr(step, "uncertainty", None)
    if raw == "exact":
        return []
    if raw == "measured" and unc is None:
        line, column = document.position(("steps", index, "uncertainty"))
        raise InputError(
            "says 'measured', but the balance declares no default uncertainties "
            "under 'balance: uncertainty:'",
            file=document.file,
            line=line,
            column=column,
            where=f"step {step.id}",
        )
    use_defaults = unc is not None and (unc.basis == "measured" or raw == "measured")
    base_divisor = coverage_divisor(unc.coverage) if unc is not None else 1.0
    found = []
    for claim in step_claims(step):
        spread: Spread | None = None
        divisor = base_divisor
        if claim.key in own:
            spread, divisor = own[claim.key], own_divisor or base_divisor
        elif use_defaults:
            spread = _defaults(unc, claim.category)
        if spread is None or spread == EXACT:
            continue
        u = spread.standard(claim.value, divisor)
        if u > 0:
            label = ".".join(str(p) if not isinstance(p, int) else f"[{p}]" for p in claim.path)
            found.append(
                Input(
                    f"step {step.id} {label.replace('.[', '[')}",
                    _INPUT_QUANTITY.get(claim.kind),
                    "step",
                    step.id,
                    claim.path,
                    claim.value,
                    u,
                )
            )
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
