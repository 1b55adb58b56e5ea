"""Throttle valve: one inlet, one outlet, no work, no heat; the throttling is isenthalpic.

No claims. Checks: the outlet enthalpy equals the inlet's (the valve's first law, reported as
``valve-not-isenthalpic``); the outlet pressure is below the inlet's; entropy generation > 0 (the
shared law check).
"""

from __future__ import annotations

from typing import Literal

from audit.findings import ERROR, Finding
from audit.results import StepResult
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.wording import to_bar


class Valve(StepBase):
    kind: Literal["valve"]
    inlet: str
    outlet: str

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Valve, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a throttle
    valve with no heat or work; the outlet pressure must be below the inlet's and the enthalpy
    unchanged (``pressure-wrong-way``, ``valve-not-isenthalpic``).

    Sign convention: Q is heat into the step, W is work delivered by the step: Q = 0 and W = 0.
    """
    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    result, _ = finish_flow_step(
        step,
        "valve",
        ctx,
        [inlet],
        [outlet],
        [],
        0.0,
        ["adiabatic", "no work"],
        [],
        energy_finding="valve-not-isenthalpic",
    )
    if outlet.P >= inlet.P:
        ctx.add(
            Finding(
                ERROR,
                "pressure-wrong-way",
                step.id,
                f"the outlet pressure ({to_bar(outlet.P):.4g} bar) is not below the inlet pressure "
                f"({to_bar(inlet.P):.4g} bar); a throttle valve only lowers pressure",
                claimed=outlet.P,
                bound=inlet.P,
                margin=outlet.P - inlet.P,
                quantity="pressure",
            )
        )
    return result


register("valve", Valve, evaluate, "throttle valve: isenthalpic, no work")
