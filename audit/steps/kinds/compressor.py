"""Compressor / fan / blower: one inlet, one outlet, shaft power absorbed.

Claims: ``shaft_power`` is the power the compressor ABSORBS (omit it to infer it); ``heat_loss``
(default 0: adiabatic; an intercooled machine writes its cooling here) at ``heat_loss_temperature``
if declared, else T0; ``isentropic_efficiency`` optional, checked against the streams.

Extra checks: η_s = (h_out,s − h_in)/(h_out − h_in) ≤ 1; outlet pressure above inlet pressure;
liquid or two-phase fluid at the suction (error: compressors are not built to take liquid);
saturated vapour (quality 1) is dry vapour.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, Finding
from audit.model.steps import DutyClaim, PowerClaim, TemperatureClaim
from audit.results import StepResult, StreamResult
from audit.steps.base import StepBase, StepContext, register
from audit.steps.machines import evaluate_work_absorber


class Compressor(StepBase):
    kind: Literal["compressor"]
    inlet: str
    outlet: str
    shaft_power: PowerClaim = Field(None, ge=0, description="shaft power absorbed by the compressor")
    heat_loss: DutyClaim = Field(None, ge=0, description="heat removed from the gas (default 0)")
    heat_loss_temperature: TemperatureClaim = None
    isentropic_efficiency: float | None = Field(None, gt=0)

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Compressor, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a
    compressor, then its own checks: outlet pressure above inlet (``pressure-wrong-way``),
    isentropic efficiency at most 1 and equal to a claimed one (``efficiency-above-one``,
    ``efficiency-mismatch``), dry vapour or gas at suction (``liquid-at-suction``).

    Sign convention: Q is heat into the step, W is work delivered by the step: the shaft power
    absorbed is W < 0; a claimed heat loss is Q < 0.
    """
    result = evaluate_work_absorber(step, "compressor", ctx, "compressor")
    inlet = ctx.stream(step.inlet)
    if inlet.phase in ("liquid", "two-phase", "supercritical liquid") and not _dry_saturated(inlet):
        detail = f"quality {inlet.quality:.3f}" if inlet.quality is not None else inlet.phase
        ctx.add(
            Finding(
                ERROR,
                "liquid-at-suction",
                step.id,
                f"the suction stream {inlet.id} is {detail}; a compressor must take dry vapour or gas",
                stream=inlet.id,
                claimed=inlet.quality,
                bound=1.0,
                quantity="fraction",
            )
        )
    return result


def _dry_saturated(stream: StreamResult) -> bool:
    """True for saturated vapour (quality 1): on the dew line, with no liquid in it."""
    return stream.phase == "two-phase" and stream.quality is not None and stream.quality >= 1.0


register("compressor", Compressor, evaluate, "compressor, fan or blower: shaft power absorbed")
