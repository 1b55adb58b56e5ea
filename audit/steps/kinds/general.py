"""General step: any inlets and outlets, any heat flows, and work, for equipment no kind fits.

Claims: ``heat`` is a list of ``added``/``removed`` heat flows, each with the ``temperature`` at
which it crosses the boundary if known; ``work_delivered`` (work out) or ``work_absorbed`` (work
in). Omit ``heat`` to have the heat inferred from the first law (one heat flow at
``heat_temperature`` if declared, else at the conservative temperature); omit the work to have it
inferred when heat is given, or taken as zero when heat is inferred.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, model_validator

from audit.model.quantities import Power
from audit.model.steps import ClaimField, TemperatureClaim
from audit.results import StepResult
from audit.steps.base import (
    HeatClaim,
    StepBase,
    StepContext,
    finish_flow_step,
    heat_flow,
    heat_flows_from_claims,
    register,
)


class GeneralStep(StepBase):
    kind: Literal["general"]
    inlets: list[str] = Field(default_factory=list)
    outlets: list[str] = Field(default_factory=list)
    heat: list[HeatClaim] | None = None
    heat_temperature: TemperatureClaim = Field(None, description="boundary temperature of inferred heat")
    work_delivered: Annotated[Power | None, ClaimField("power", "work_absorbed")] = Field(None, ge=0)
    work_absorbed: Annotated[Power | None, ClaimField("power", "work_delivered")] = Field(None, ge=0)

    @model_validator(mode="after")
    def _check(self) -> GeneralStep:
        if self.work_delivered is not None and self.work_absorbed is not None:
            raise ValueError("give 'work_delivered' or 'work_absorbed', not both")
        if not self.inlets and not self.outlets:
            raise ValueError("a general step needs at least one inlet or outlet")
        return self

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return list(self.inlets), list(self.outlets)


def evaluate(step: GeneralStep, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a step of
    any streams, heat flows and work, inferring whichever of heat or work is not claimed from the
    first law.

    Sign convention: Q is heat into the step, W is work delivered by the step; claimed heat is read
    as written ``added``/``removed``.
    """
    inlets = [ctx.stream(i) for i in step.inlets]
    outlets = [ctx.stream(o) for o in step.outlets]
    coldest = min(s.T for s in [*inlets, *outlets])
    dE = sum(s.mass_flow * (s.h + s.kinetic_potential) for s in outlets) - sum(
        s.mass_flow * (s.h + s.kinetic_potential) for s in inlets
    )
    claimed, inferred = [], []
    work_given = step.work_delivered is not None or step.work_absorbed is not None
    W = (
        step.work_delivered
        if step.work_delivered is not None
        else (-step.work_absorbed if step.work_absorbed is not None else 0.0)
    )
    if step.heat is not None:
        heat = heat_flows_from_claims(step.heat, ctx.T0, coldest)
        claimed.append("heat")
        if work_given:
            claimed.append("work")
        else:
            W = sum(q.Q for q in heat) - dE
            inferred.append("work")
    else:
        Q = dE + W
        declared = step.heat_temperature
        heat = [heat_flow(Q, declared, ctx.T0, claimed=False, label="inferred", coldest=coldest)]
        inferred.append("heat")
        claimed.append("work" if work_given else "no work")
    result, _ = finish_flow_step(step, "general", ctx, inlets, outlets, heat, W, claimed, inferred)
    return result


register("general", GeneralStep, evaluate, "general step: any streams, heat flows and work")
