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
from audit.results import HeatFlow, StepResult
from audit.steps.base import StepBase, StepContext, boundary_temperature, finish_flow_step, register


class Cooler(StepBase):
    kind: Literal["cooler"]
    inlet: str
    outlet: str
    duty: DutyClaim = Field(None, ge=0, description="heat given off by the stream")
    sink_temperature: TemperatureClaim = Field(None, description="temperature of the sink")

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Cooler, ctx: StepContext) -> StepResult:
    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    if step.duty is not None:
        Q, claimed, inferred = -step.duty, ["duty"], []
    else:
        Q = (outlet.mass_flow * (outlet.h + outlet.kinetic_potential)
             - inlet.mass_flow * (inlet.h + inlet.kinetic_potential))
        claimed, inferred = [], ["duty"]
    T_b = boundary_temperature(Q, step.sink_temperature, ctx.T0, min(inlet.T, outlet.T))
    note = "" if step.sink_temperature is not None else "conservative boundary temperature"
    heat = [HeatFlow(Q=Q, temperature=T_b, claimed=step.duty is not None, note=note)]
    result, _ = finish_flow_step(step, "cooler", ctx, [inlet], [outlet], heat, 0.0,
                                 claimed + ["no work"], inferred)
    if step.sink_temperature is not None and step.sink_temperature > outlet.T:
        gap = step.sink_temperature - outlet.T
        ctx.add(Finding(
            ERROR, "sink-too-hot", step.id,
            f"the heat sink at {step.sink_temperature - 273.15:.1f} °C is {gap:.1f} K hotter than "
            f"the outlet {outlet.id} ({outlet.T - 273.15:.1f} °C) it is said to cool",
            claimed=step.sink_temperature, bound=outlet.T, margin=gap,
            quantity="temperature",
        ))
    return result


register("cooler", Cooler, evaluate, "cooler or condenser: duty rejected")
