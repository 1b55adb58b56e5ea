"""Reactor or combustor: streams that react by written stoichiometry, on the formation basis.

Claims: ``reactions``, a list of equations (``"CH4 + 2 O2 -> CO2 + 2 H2O"``) or of
``{equation, extent}`` (extent in mol/s or kmol/h; omitted, it is fitted to the streams'
compositions); ``heat`` (``added``/``removed`` heat flows with their boundary temperatures) and
``work_delivered`` or ``work_absorbed``, inferred from the first law as in the general step when
left out; ``temperature`` and ``pressure`` at which the reaction properties are reported (default:
the outlets' mean; 25 °C and 1 bar, with a note, where a species cannot be evaluated at the
outlets' temperature).

Every stream must be a species with formation data or a gas mixture of them.

Checks: the element balance (``element-imbalance``, instead of the per-fluid mass balance); the
species change against the reactions and extents (``species-imbalance``: an error against claimed
extents, a warning for a change no written reaction explains); the first law, entropy generation
and reversible work on the formation basis. Reported in ``extra``: ΔH_rxn, ΔS_rxn, ΔG_rxn of each
reaction at the reported conditions, its extent, and the heat of reaction −Σ ξ ΔH_rxn [W].
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Field, field_validator, model_validator

from audit.constants import P_STANDARD, T_STANDARD
from audit.errors import StateError
from audit.model.quantities import Power
from audit.model.steps import ClaimField, PressureClaim, TemperatureClaim
from audit.results import StepResult
from audit.steps.base import HeatClaim, StepBase, StepContext, register
from audit.steps.reacting import (
    ReactionClaim,
    element_findings,
    extents_and_findings,
    finish_reacting_step,
    heat_and_work,
    properties_at,
    reaction_rows,
    step_conditions,
)


class Reactor(StepBase):
    kind: Literal["reactor"]
    inlets: list[str] = Field(min_length=1)
    outlets: list[str] = Field(min_length=1)
    reactions: list[ReactionClaim] = Field(
        min_length=1,
        description="equations, or {equation, extent}; extents omitted are fitted to the streams",
    )
    temperature: TemperatureClaim = Field(
        None, description="temperature at which ΔH_rxn, ΔS_rxn, ΔG_rxn are reported"
    )
    pressure: PressureClaim = Field(
        None, description="pressure at which ΔH_rxn, ΔS_rxn, ΔG_rxn are reported"
    )
    heat: list[HeatClaim] | None = None
    heat_temperature: TemperatureClaim = Field(None, description="boundary temperature of inferred heat")
    work_delivered: Annotated[Power | None, ClaimField("power", "work_absorbed")] = Field(None, ge=0)
    work_absorbed: Annotated[Power | None, ClaimField("power", "work_delivered")] = Field(None, ge=0)

    @field_validator("reactions", mode="before")
    @classmethod
    def _equations(cls, value: Any) -> Any:
        if isinstance(value, list):
            return [{"equation": v} if isinstance(v, str) else v for v in value]
        return value

    @model_validator(mode="after")
    def _work(self) -> Reactor:
        if self.work_delivered is not None and self.work_absorbed is not None:
            raise ValueError("give 'work_delivered' or 'work_absorbed', not both")
        return self

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return list(self.inlets), list(self.outlets)


def evaluate(step: Reactor, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) on the
    formation basis to a reactor, with the element balance in place of the per-fluid mass balance
    and the written reactions' extents checked against the streams (``element-imbalance``,
    ``species-imbalance``).

    Sign convention: Q is heat into the step, W is work delivered by the step; heat not claimed is
    inferred from the first law.
    """
    inlets = [ctx.stream(i) for i in step.inlets]
    outlets = [ctx.stream(o) for o in step.outlets]
    elements = element_findings(step.id, ctx, inlets, outlets)
    reactions = [claim.reaction for claim in step.reactions]
    claimed_extents = [claim.extent for claim in step.reactions]
    extents, species = extents_and_findings(step.id, ctx, reactions, claimed_extents, inlets, outlets)
    T, P = step_conditions(step.temperature, step.pressure, outlets)
    notes = []
    try:
        props = properties_at(ctx, reactions, T, P)
    except StateError as exc:
        if step.temperature is not None and step.pressure is not None:
            raise
        # A reactant may not be evaluable at the outlets' temperature (methane's ideal-gas part
        # is verified to 600 K only): report the standard reaction properties instead.
        notes.append(f"Reaction properties reported at 25 °C and 1 bar: {exc.problem.message}")
        T, P = T_STANDARD, P_STANDARD
        props = properties_at(ctx, reactions, T, P)
    W = (
        step.work_delivered
        if step.work_delivered is not None
        else (-step.work_absorbed if step.work_absorbed is not None else None)
    )
    heat, W, claimed, inferred = heat_and_work(ctx, inlets, outlets, step.heat, step.heat_temperature, W)
    claimed += [f"extent of '{c.equation}'" for c in step.reactions if c.extent is not None]
    inferred += [f"extent of '{c.equation}'" for c in step.reactions if c.extent is None]
    reaction_heat = -sum(x * p.dH for x, p in zip(extents, props, strict=True))
    result = finish_reacting_step(
        step,
        "reactor",
        ctx,
        inlets,
        outlets,
        heat,
        W,
        claimed,
        inferred,
        elements,
        energy_scale_floor=sum(abs(x * p.dH) for x, p in zip(extents, props, strict=True)),
        notes=notes,
    )
    if not elements[0]:
        for finding in species:
            ctx.add(finding)
    result.extra.update(
        {
            "reactions": reaction_rows(reactions, extents, claimed_extents, props),
            "reaction_T": T,
            "reaction_P": P,
            "heat_of_reaction": reaction_heat,
        }
    )
    if len(reactions) == 1:
        result.extra.update(
            {"extent": extents[0], "dH_rxn": props[0].dH, "dS_rxn": props[0].dS, "dG_rxn": props[0].dG}
        )
    return result


register(
    "reactor", Reactor, evaluate, "reactor or combustor: reactions by stoichiometry, element balance"
)
