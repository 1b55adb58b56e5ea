"""Turbine / expander: one inlet, one outlet, shaft power delivered.

Claims, as practitioners write them:

* ``shaft_power``: the power the turbine DELIVERS (omit it to have it inferred from the streams);
* ``heat_loss``: heat the casing loses to ambient (default 0: adiabatic), at
  ``heat_loss_temperature`` if declared, else at the dead-state temperature;
* ``isentropic_efficiency``: optional, checked against the streams' value.

Extra checks: isentropic efficiency η_s = (h_in − h_out) / (h_in − h_out,s) ≤ 1 [1, §6.12];
outlet pressure below inlet pressure; exhaust moisture 1 − x above ``exhaust_moisture_max``
(warning; about 10–12 % is the usual design limit, common practice).

References
----------
.. [1] M. J. Moran, H. N. Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed.,
   Wiley, 2014.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, WARNING, Finding
from audit.model.steps import DutyClaim, PowerClaim, TemperatureClaim
from audit.physics.efficiency import isentropic_efficiency_expansion
from audit.results import StepResult
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.steps.machines import efficiency_findings, heat_loss_flow, isentropic_outlet_enthalpy
from audit.wording import to_bar


class Turbine(StepBase):
    kind: Literal["turbine"]
    inlet: str
    outlet: str
    shaft_power: PowerClaim = Field(None, ge=0, description="shaft power delivered by the turbine")
    heat_loss: DutyClaim = Field(None, ge=0, description="heat lost by the casing (default 0)")
    heat_loss_temperature: TemperatureClaim = None
    isentropic_efficiency: float | None = Field(None, gt=0)

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.outlet]


def evaluate(step: Turbine, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a turbine,
    then its own checks: outlet pressure below inlet (``pressure-wrong-way``), isentropic efficiency
    at most 1 and equal to a claimed one (``efficiency-above-one``, ``efficiency-mismatch``),
    exhaust moisture below the limit (``wet-exhaust``).

    Sign convention: Q is heat into the step, W is work delivered by the step: the shaft power
    delivered is W > 0; a claimed heat loss is Q < 0.
    """
    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    heat = heat_loss_flow(step.heat_loss, step.heat_loss_temperature, ctx.T0, min(inlet.T, outlet.T))
    claimed, inferred = [], []
    if step.shaft_power is not None:
        W = step.shaft_power
        claimed.append("shaft_power")
    else:
        Q = sum(q.Q for q in heat)
        W = Q - (
            outlet.mass_flow * (outlet.h + outlet.kinetic_potential)
            - inlet.mass_flow * (inlet.h + inlet.kinetic_potential)
        )
        inferred.append("shaft_power")
    claimed.append("heat_loss" if step.heat_loss is not None else "adiabatic")
    result, _ = finish_flow_step(step, "turbine", ctx, [inlet], [outlet], heat, W, claimed, inferred)
    tol = ctx.tolerances

    if outlet.P >= inlet.P:
        ctx.add(
            Finding(
                ERROR,
                "pressure-wrong-way",
                step.id,
                f"the outlet pressure ({to_bar(outlet.P):.4g} bar) is not below the inlet pressure "
                f"({to_bar(inlet.P):.4g} bar); a turbine expands its fluid (inlet and outlet swapped?)",
                claimed=outlet.P,
                bound=inlet.P,
                margin=outlet.P - inlet.P,
                quantity="pressure",
            )
        )
    h_s = isentropic_outlet_enthalpy(step.id, inlet, outlet, ctx)
    if h_s is not None and inlet.h - h_s > 0:
        eta = isentropic_efficiency_expansion(inlet.h, outlet.h, h_s)
        efficiency_findings(step, result, ctx, eta, h_s, "turbine")
    if outlet.quality is not None and 1.0 - outlet.quality > tol.exhaust_moisture_max:
        moisture = 1.0 - outlet.quality
        ctx.add(
            Finding(
                WARNING,
                "wet-exhaust",
                step.id,
                f"the exhaust carries {moisture:.1%} moisture, above the {tol.exhaust_moisture_max:.0%}"
                " limit (blade erosion; common practice)",
                claimed=moisture,
                bound=tol.exhaust_moisture_max,
                margin=moisture - tol.exhaust_moisture_max,
                quantity="fraction",
                stream=outlet.id,
            )
        )
    return result


register("turbine", Turbine, evaluate, "turbine or expander: shaft power delivered")
