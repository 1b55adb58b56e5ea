"""Mixer: several inlets, one outlet, adiabatic unless a heat loss is claimed (deaerators, headers,
desuperheaters by direct contact).

Claims: ``heat_loss`` (default 0) at ``heat_loss_temperature`` or, conservatively, T0.

Extra check: the outlet pressure should not exceed the lowest inlet pressure (warning: a mixing point
without a pump cannot raise pressure).
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import WARNING, Finding
from audit.model.steps import DutyClaim, TemperatureClaim
from audit.results import StepResult
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.steps.machines import heat_loss_flow
from audit.wording import to_bar


class Mixer(StepBase):
    kind: Literal["mixer"]
    inlets: list[str] = Field(min_length=2)
    outlet: str
    heat_loss: DutyClaim = Field(None, ge=0)
    heat_loss_temperature: TemperatureClaim = None

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return list(self.inlets), [self.outlet]


def evaluate(step: Mixer, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to an
    adiabatic mixer with no work; the outlet pressure must not exceed the lowest inlet pressure
    (``mixer-outlet-pressure``).

    Sign convention: Q is heat into the step, W is work delivered by the step: Q = 0 and W = 0.
    """
    inlets = [ctx.stream(i) for i in step.inlets]
    outlet = ctx.stream(step.outlet)
    heat = heat_loss_flow(
        step.heat_loss, step.heat_loss_temperature, ctx.T0, min(s.T for s in [*inlets, outlet])
    )
    claimed = ["heat_loss" if step.heat_loss is not None else "adiabatic", "no work"]
    result, _ = finish_flow_step(step, "mixer", ctx, inlets, [outlet], heat, 0.0, claimed, [])
    lowest = min(inlets, key=lambda s: s.P)
    if outlet.P > lowest.P * (1.0 + ctx.tolerances.isobaric_relative):
        ctx.add(
            Finding(
                WARNING,
                "mixer-outlet-pressure",
                step.id,
                f"the outlet pressure ({to_bar(outlet.P):.4g} bar) is above the lowest inlet pressure "
                f"({lowest.id}, {to_bar(lowest.P):.4g} bar); mixing cannot raise pressure",
                claimed=outlet.P,
                bound=lowest.P,
                margin=outlet.P - lowest.P,
                quantity="pressure",
            )
        )
    return result


register("mixer", Mixer, evaluate, "mixer, header or deaerator: adiabatic mixing")
