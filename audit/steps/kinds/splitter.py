"""Splitter: one inlet divided into several outlets, each with the inlet's state.

No claims. Checks: every outlet has the inlet's fluid, temperature (within
``state_match_temperature``), pressure (within ``state_match_pressure_relative``) and, for a
two-phase inlet, quality (within 0.005); mass and energy as for every step.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, Finding
from audit.results import StepResult
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.wording import to_bar, to_celsius

QUALITY_MATCH = 0.005


class Splitter(StepBase):
    kind: Literal["splitter"]
    inlet: str
    outlets: list[str] = Field(min_length=2)

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], list(self.outlets)


def evaluate(step: Splitter, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a splitter
    with no heat or work; every outlet must have the inlet's state (``splitter-state-differs``).

    Sign convention: Q is heat into the step, W is work delivered by the step: Q = 0 and W = 0.
    """
    inlet = ctx.stream(step.inlet)
    outlets = [ctx.stream(o) for o in step.outlets]
    result, _ = finish_flow_step(
        step, "splitter", ctx, [inlet], outlets, [], 0.0, ["adiabatic", "no work"], []
    )
    tol = ctx.tolerances
    for out in outlets:
        differences = []
        if out.fluid != inlet.fluid:
            differences.append(f"fluid {out.fluid} instead of {inlet.fluid}")
        if abs(out.T - inlet.T) > tol.state_match_temperature:
            differences.append(f"T {to_celsius(out.T):.2f} °C instead of {to_celsius(inlet.T):.2f} °C")
        if abs(out.P - inlet.P) > tol.state_match_pressure_relative * inlet.P:
            differences.append(f"P {to_bar(out.P):.4g} bar instead of {to_bar(inlet.P):.4g} bar")
        if inlet.quality is not None and abs((out.quality or 0.0) - inlet.quality) > QUALITY_MATCH:
            shown = "none" if out.quality is None else f"{out.quality:.3f}"
            differences.append(f"quality {shown} instead of {inlet.quality:.3f}")
        if differences:
            ctx.add(
                Finding(
                    ERROR,
                    "splitter-state-differs",
                    step.id,
                    f"outlet {out.id} differs from the inlet {inlet.id}: "
                    + "; ".join(differences)
                    + " (a splitter only divides the flow)",
                    stream=out.id,
                    claimed=out.T,
                    bound=inlet.T,
                    margin=abs(out.T - inlet.T),
                    quantity="temperature",
                )
            )
    return result


register("splitter", Splitter, evaluate, "splitter: one inlet divided, state unchanged")
