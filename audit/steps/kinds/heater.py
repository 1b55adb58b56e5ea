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
from audit.results import StepResult
from audit.steps.base import (
    StepBase,
    StepContext,
    finish_flow_step,
    heat_flow,
    register,
)
from audit.wording import to_celsius


class Heater(StepBase):
    kind: Literal["heater"]
    inlet: str
    outlet: str
    duty: DutyClaim = Field(None, ge=0, description="heat received by the stream")
    source_temperature: TemperatureClaim = Field(None, description="temperature of the heat source")

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Heater, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a heater
    with no work; a declared heat source must be hotter than the outlet (``source-too-cold``).

    Sign convention: Q is heat into the step, W is work delivered by the step: the duty received is
    Q = duty > 0; W = 0.
    """
    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    if step.duty is not None:
        Q, claimed, inferred = step.duty, ["duty"], []
    else:
        Q = outlet.mass_flow * (outlet.h + outlet.kinetic_potential) - inlet.mass_flow * (
            inlet.h + inlet.kinetic_potential
        )
        claimed, inferred = [], ["duty"]
    heat = [
        heat_flow(
            Q,
            step.source_temperature,
            ctx.T0,
            claimed=step.duty is not None,
            coldest=min(inlet.T, outlet.T),
        )
    ]
    result, _ = finish_flow_step(
        step, "heater", ctx, [inlet], [outlet], heat, 0.0, claimed + ["no work"], inferred
    )
    if step.source_temperature is not None and step.source_temperature < outlet.T:
        gap = outlet.T - step.source_temperature
        ctx.add(
            Finding(
                ERROR,
                "source-too-cold",
                step.id,
                f"the heat source at {to_celsius(step.source_temperature):.1f} °C is {gap:.1f} K colder "
                f"than the outlet {outlet.id} ({to_celsius(outlet.T):.1f} °C) it is said to heat",
                claimed=step.source_temperature,
                bound=outlet.T,
                margin=gap,
                quantity="temperature",
            )
        )
    return result


register("heater", Heater, evaluate, "heater, boiler or fired heater: duty received")
