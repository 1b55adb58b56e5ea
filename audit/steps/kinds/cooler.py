"""Cooler: one stream cooled by a duty it REJECTS (condensers, coolers, after-coolers).

Claims: ``duty`` is the heat the stream gives off (omit it to infer it); ``sink_temperature`` is
the temperature of the sink (cooling water, air, a boiling refrigerant) if known; without it the heat
goes to the dead state T0, or to the stream's own outlet temperature when that is colder than T0
(the choice least likely to flag a violation).

Extra check: a declared sink hotter than the cooled stream's outlet cannot cool it
(``sink-too-hot``).
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, Finding
from audit.model.steps import DutyClaim, TemperatureClaim
from audit.results import StepResult
from audit.steps.base import (
    StepBase,
    StepContext,
    finish_flow_step,
    heat_flow,
    register,
)
from audit.wording import to_celsius


class Cooler(StepBase):
    kind: Literal["cooler"]
    inlet: str
    outlet: str
    duty: DutyClaim = Field(None, ge=0, description="heat given off by the stream")
    sink_temperature: TemperatureClaim = Field(None, description="temperature of the sink")

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Cooler, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a cooler
    with no work; a declared heat sink must be colder than the outlet (``sink-too-hot``).

    Sign convention: Q is heat into the step, W is work delivered by the step: the duty rejected is
    Q = −duty < 0; W = 0.
    """
    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    if step.duty is not None:
        Q, claimed, inferred = -step.duty, ["duty"], []
    else:
        Q = outlet.mass_flow * (outlet.h + outlet.kinetic_potential) - inlet.mass_flow * (
            inlet.h + inlet.kinetic_potential
        )
        claimed, inferred = [], ["duty"]
    heat = [
        heat_flow(
            Q,
            step.sink_temperature,
            ctx.T0,
            claimed=step.duty is not None,
            coldest=min(inlet.T, outlet.T),
        )
    ]
    result, _ = finish_flow_step(
        step, "cooler", ctx, [inlet], [outlet], heat, 0.0, claimed + ["no work"], inferred
    )
    if step.sink_temperature is not None and step.sink_temperature > outlet.T:
        gap = step.sink_temperature - outlet.T
        ctx.add(
            Finding(
                ERROR,
                "sink-too-hot",
                step.id,
                f"the heat sink at {to_celsius(step.sink_temperature):.1f} °C is {gap:.1f} K hotter "
                f"than the outlet {outlet.id} ({to_celsius(outlet.T):.1f} °C) it is said to cool",
                claimed=step.sink_temperature,
                bound=outlet.T,
                margin=gap,
                quantity="temperature",
            )
        )
    return result


register("cooler", Cooler, evaluate, "cooler or condenser: duty rejected")
