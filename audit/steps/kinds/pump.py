"""Pump: one inlet, one outlet, shaft power absorbed.

Claims: ``shaft_power`` is the power the pump ABSORBS (omit it to infer it); ``heat_loss``
(default 0); ``isentropic_efficiency`` optional, checked against the streams.

Extra checks: η_s ≤ 1; outlet pressure above inlet pressure; an inlet that is not liquid (error);
an inlet subcooled by less than ``pump_subcooling_min`` (warning: cavitation risk, common practice;
a net positive suction head check needs the suction layout, which a balance does not hold).
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, WARNING, Finding
from audit.model.steps import DutyClaim, PowerClaim, TemperatureClaim
from audit.results import StepResult
from audit.steps.base import StepBase, StepContext, register
from audit.steps.machines import evaluate_work_absorber
from audit.wording import to_celsius


class Pump(StepBase):
    kind: Literal["pump"]
    inlet: str
    outlet: str
    shaft_power: PowerClaim = Field(None, ge=0, description="shaft power absorbed by the pump")
    heat_loss: DutyClaim = Field(None, ge=0, description="heat lost (default 0)")
    heat_loss_temperature: TemperatureClaim = None
    isentropic_efficiency: float | None = Field(None, gt=0)

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Pump, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a pump,
    then its own checks: outlet pressure above inlet (``pressure-wrong-way``), isentropic efficiency
    at most 1 and equal to a claimed one (``efficiency-above-one``, ``efficiency-mismatch``), liquid
    at the inlet (``pump-inlet-not-liquid``) with enough subcooling (``pump-near-saturation``).

    Sign convention: Q is heat into the step, W is work delivered by the step: the shaft power
    absorbed is W < 0; a claimed heat loss is Q < 0.
    """
    result = evaluate_work_absorber(step, "pump", ctx, "pump")
    inlet = ctx.stream(step.inlet)
    saturated_liquid = inlet.phase == "two-phase" and (inlet.quality or 0.0) <= 1e-9
    if inlet.phase not in ("liquid", "supercritical liquid") and not saturated_liquid:
        ctx.add(
            Finding(
                ERROR,
                "pump-inlet-not-liquid",
                step.id,
                f"the pump inlet {inlet.id} is {inlet.phase}; a pump needs liquid at its inlet",
                stream=inlet.id,
            )
        )
        return result
    T_sat = ctx.engine.saturation_temperature(inlet.fluid, inlet.P)
    if T_sat is not None:
        subcooling = T_sat - inlet.T
        result.extra["inlet_subcooling"] = subcooling
        minimum = ctx.tolerances.pump_subcooling_min
        if subcooling < minimum:
            ctx.add(
                Finding(
                    WARNING,
                    "pump-near-saturation",
                    step.id,
                    f"the pump inlet {inlet.id} is only {subcooling:.2f} K below its saturation "
                    f"temperature ({to_celsius(T_sat):.2f} °C): cavitation risk (minimum "
                    f"{minimum:g} K, common practice)",
                    claimed=subcooling,
                    bound=minimum,
                    margin=minimum - subcooling,
                    quantity="temperature_difference",
                    tolerance=minimum,
                    stream=inlet.id,
                )
            )
    return result


register("pump", Pump, evaluate, "pump: shaft power absorbed")
