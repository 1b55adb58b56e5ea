"""Mixer: several inlets, one outlet, adiabatic unless a heat loss is claimed (deaerators, headers,
desuperheaters by direct contact).

Claims: ``heat_loss`` (default 0) at ``heat_loss_temperature`` or, conservatively, T0.

A deaerator writes its ``vent`` too: the steam (with the gases it strips) let out of the vessel, a
second outlet; the laws then hold with both outlets.

Extra check: no outlet's pressure should exceed the lowest inlet pressure (warning: a mixing point
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
    vent: str | None = Field(None, description="a deaerator's vent: steam let out with the gases")
    heat_loss: DutyClaim = Field(None, ge=0)
    heat_loss_temperature: TemperatureClaim = None

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return list(self.inlets), [self.outlet] if self.vent is None else [self.outlet, self.vent]


def evaluate(step: Mixer, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to an
    adiabatic mixer with no work (a deaerator: with its vent as a second outlet); no outlet's
    pressure may exceed the lowest inlet pressure (``mixer-outlet-pressure``).

    Sign convention: Q is heat into the step, W is work delivered by the step: Q = 0 and W = 0.
    """
    inlets = [ctx.stream(i) for i in step.inlets]
    outlets = [ctx.stream(o) for o in step.stream_ids()[1]]
    heat = heat_loss_flow(
        step.heat_loss, step.heat_loss_temperature, ctx.T0, min(s.T for s in [*inlets, *outlets])
    )
    claimed = ["heat_loss" if step.heat_loss is not None else "adiabatic", "no work"]
    result, _ = finish_flow_step(
        step, "mixer", ctx, inlets, outlets, heat, 0.0, claimed, [], paired=False
    )
    lowest = min(inlets, key=lambda s: s.P)
    for outlet in outlets:
        if outlet.P <= lowest.P * (1.0 + ctx.tolerances.isobaric_relative):
            continue
        which = "the vent" if outlet.id == step.vent else "the outlet"
        ctx.add(
            Finding(
                WARNING,
                "mixer-outlet-pressure",
                step.id,
                f"{which} pressure ({to_bar(outlet.P):.4g} bar) is above the lowest inlet pressure "
                f"({lowest.id}, {to_bar(lowest.P):.4g} bar); mixing cannot raise pressure",
                claimed=outlet.P,
                bound=lowest.P,
                margin=outlet.P - lowest.P,
                quantity="pressure",
                stream=outlet.id if outlet.id == step.vent else None,
            )
        )
    return result


register("mixer", Mixer, evaluate, "mixer, header or deaerator: adiabatic mixing")
