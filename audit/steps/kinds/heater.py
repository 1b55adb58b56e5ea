"""Heater: one stream heated by a duty it RECEIVES (boilers, fired heaters, steam heaters,
evaporators).

Claims: ``duty`` is the heat the stream receives (omit it to infer it from the streams);
``source_temperature`` is the temperature of the heat source (flame, condensing steam, hot oil) if
known; without it the heat is taken from an infinitely hot source (the choice least likely to flag a
violation).

Extra check: a declared source colder than the heated stream's outlet cannot heat it
(``source-too-cold``).
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, Finding
from audit.model.steps import DutyClaim, TemperatureClaim
from audit.results import HeatFlow, StepResult
from audit.steps.base import StepBase, StepContext, boundary_temperature, finish_flow_step, register


class Heater(StepBase):
    kind: Literal["heater"]
    inlet: str
    outlet: str
    duty: DutyClaim = Field(None, ge=0, description="heat received by the stream")
    source_temperature: TemperatureClaim = Field(
        None, description="temperature of the heat source")

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Heater, ctx: StepContext) -> StepResult:
    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    if step.duty is not None:
        Q, claimed, inferred = step.duty, ["duty"], []
    else:
        Q = (outlet.mass_flow * (outlet.h + outlet.kinetic_potential)
             - inlet.mass_flow * (inlet.h + inlet.kinetic_potential))
        claimed, inferred = [], ["duty"]
    T_b = boundary_temperature(Q, step.source_temperature, ctx.T0, min(inlet.T, outlet.T))
    note = "" if step.source_temperature is not None else "conservative boundary temperature"
    heat = [HeatFlow(Q=Q, temperature=T_b, claimed=step.duty is not None, note=note)]
    result, _ = finish_flow_step(step, "heater", ctx, [inlet], [outlet], heat, 0.0,
                                 claimed + ["no work"], inferred)
    if step.source_temperature is not None and step.source_temperature < outlet.T:
        gap = outlet.T - step.source_temperature
        ctx.add(Finding(
            ERROR, "source-too-cold", step.id,
            f"the heat source at {step.source_temperature - 273.15:.1f} °C is {gap:.1f} K colder "
            f"than the outlet {outlet.id} ({outlet.T - 273.15:.1f} °C) it is said to heat",
            claimed=step.source_temperature, bound=outlet.T, margin=gap,
            quantity="temperature",
        ))
    return result


register("heater", Heater, evaluate, "heater, boiler or fired heater: duty received")
