"""Turbine / expander: one inlet, an exhaust outlet and optionally extractions, shaft power
delivered.

Claims, as practitioners write them:

* ``shaft_power``: the power the turbine DELIVERS (omit it to have it inferred from the streams);
* ``heat_loss``: heat the casing loses to ambient (default 0: adiabatic), at
  ``heat_loss_temperature`` if declared, else at the dead-state temperature;
* ``isentropic_efficiency``: optional, checked against the streams' value.

Extra checks: isentropic efficiency η_s = (h_in − h_out) / (h_in − h_out,s) ≤ 1 [1, §6.12];
outlet pressure below inlet pressure; exhaust moisture 1 − x above ``exhaust_moisture_max``
(warning; about 10–12 % is the usual design limit, common practice).

Extractions: ``extractions`` lists the bled streams in order from the inlet (highest pressure
first); ``outlet`` stays the exhaust. The laws (mass, first law, work bound, entropy generation)
then hold for the whole machine, with the shaft power its total. Each section, from the inlet or an
extraction point to the next point, expands the steam that passes it from the previous point's
state: its isentropic efficiency η = (h_a − h_b) / (h_a − h_s(P_b, s_a)) must not exceed 1
(``section-efficiency-above-one``); the points' pressures must fall along the machine
(``pressure-wrong-way``); every outlet gets the wet-exhaust check. A whole-machine isentropic
efficiency is not defined with extractions, so none may be claimed.

References
----------
.. [1] M. J. Moran, H. N. Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed.,
   Wiley, 2014.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field, model_validator

from audit.findings import ERROR, WARNING, Finding
from audit.model.steps import DutyClaim, PowerClaim, TemperatureClaim
from audit.physics.efficiency import isentropic_efficiency_expansion
from audit.results import StepResult, StreamResult
from audit.steps.allowances import PROPERTY_SPREAD
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
    extractions: list[str] = Field(
        default_factory=list,
        description="bled streams in order from the inlet (highest pressure first); 'outlet' is "
        "the exhaust",
    )

    @model_validator(mode="after")
    def _extracting(self) -> Turbine:
        if self.extractions and self.isentropic_efficiency is not None:
            raise ValueError(
                "a turbine with extractions has an isentropic efficiency per section, checked from "
                "the streams; drop 'isentropic_efficiency'"
            )
        return self

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [*self.extractions, self.outlet]


def evaluate(step: Turbine, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a turbine,
    then its own checks: outlet pressure below inlet (``pressure-wrong-way``), isentropic efficiency
    at most 1 and equal to a claimed one (``efficiency-above-one``, ``efficiency-mismatch``),
    exhaust moisture below the limit (``wet-exhaust``). With extractions: the laws over the whole
    machine, pressures falling from point to point, each section's isentropic efficiency at most 1
    (``section-efficiency-above-one``) and each outlet's moisture.

    Sign convention: Q is heat into the step, W is work delivered by the step: the shaft power
    delivered is W > 0; a claimed heat loss is Q < 0.
    """
    if step.extractions:
        return _extracting(step, ctx)
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
    _wet_exhaust(step, ctx, outlet)
    return result


def _wet_exhaust(
    step: Turbine, ctx: StepContext, outlet: StreamResult, what: str = "the exhaust"
) -> None:
    tol = ctx.tolerances
    if outlet.quality is not None and 1.0 - outlet.quality > tol.exhaust_moisture_max:
        moisture = 1.0 - outlet.quality
        ctx.add(
            Finding(
                WARNING,
                "wet-exhaust",
                step.id,
                f"{what} carries {moisture:.1%} moisture, above the {tol.exhaust_moisture_max:.0%}"
                " limit (blade erosion; common practice)",
                claimed=moisture,
                bound=tol.exhaust_moisture_max,
                margin=moisture - tol.exhaust_moisture_max,
                quantity="fraction",
                stream=outlet.id,
            )
        )


def _extracting(step: Turbine, ctx: StepContext) -> StepResult:
    """The laws over the whole machine, then each section's checks (module docstring)."""
    inlet = ctx.stream(step.inlet)
    points = [ctx.stream(x) for x in step.extractions] + [ctx.stream(step.outlet)]
    coldest = min(s.T for s in (inlet, *points))
    heat = heat_loss_flow(step.heat_loss, step.heat_loss_temperature, ctx.T0, coldest)
    claimed, inferred = [], []
    if step.shaft_power is not None:
        W = step.shaft_power
        claimed.append("shaft_power")
    else:
        W = sum(q.Q for q in heat) - (
            sum(s.mass_flow * (s.h + s.kinetic_potential) for s in points)
            - inlet.mass_flow * (inlet.h + inlet.kinetic_potential)
        )
        inferred.append("shaft_power")
    claimed.append("heat_loss" if step.heat_loss is not None else "adiabatic")
    result, _ = finish_flow_step(step, "turbine", ctx, [inlet], points, heat, W, claimed, inferred)
    if ctx.residuals_only:  # the sections' checks set nothing on the result
        return result
    before = inlet
    for point in points:
        if point.P >= before.P:
            ctx.add(
                Finding(
                    ERROR,
                    "pressure-wrong-way",
                    step.id,
                    f"{_named(step, point)} ({to_bar(point.P):.4g} bar) is not below "
                    f"{_named(step, before)} ({to_bar(before.P):.4g} bar); a turbine expands its "
                    "steam from the inlet through each extraction to the exhaust (list the "
                    "extractions from the inlet down)",
                    claimed=point.P,
                    bound=before.P,
                    margin=point.P - before.P,
                    quantity="pressure",
                    stream=point.id,
                )
            )
        else:
            _section(step, ctx, before, point)
        what = "the exhaust" if point.id == step.outlet else f"the extraction {point.id}"
        _wet_exhaust(step, ctx, point, what)
        before = point
    return result


def _named(step: Turbine, stream: StreamResult) -> str:
    if stream.id == step.inlet:
        return f"the inlet {stream.id}"
    return f"the exhaust {stream.id}" if stream.id == step.outlet else f"the extraction {stream.id}"


def _section(step: Turbine, ctx: StepContext, start: StreamResult, end: StreamResult) -> None:
    """The isentropic efficiency of the section from ``start`` to ``end`` at most 1, within the
    balance's ``efficiency`` tolerance or else the property-method allowance PROPERTY_SPREAD
    (|h_a − h0| + |h_b − h0| + |h_s − h0|) / |h_a − h_b| (:mod:`audit.steps.allowances`)."""
    h_s = isentropic_outlet_enthalpy(step.id, start, end, ctx)
    if h_s is None or start.h - h_s <= 0:
        return
    eta = isentropic_efficiency_expansion(start.h, end.h, h_s)
    tol = ctx.tolerances
    if "efficiency" in tol.model_fields_set:
        allowed = tol.efficiency
    else:
        h0, _ = ctx.engine.dead_state(start.fluid)
        drop = abs(start.h - end.h)
        spread = abs(start.h - h0) + abs(end.h - h0) + abs(h_s - h0)
        allowed = PROPERTY_SPREAD * spread / drop if drop > 0 else 0.0
    if eta <= 1.0 + allowed:
        return
    ctx.add(
        Finding(
            ERROR,
            "section-efficiency-above-one",
            step.id,
            f"the section from {_named(step, start)} to {_named(step, end)} has an isentropic "
            f"efficiency of {eta:.3f} (it drops {(start.h - end.h) / 1e3:.1f} kJ/kg where an "
            f"isentropic expansion drops {(start.h - h_s) / 1e3:.1f} kJ/kg), above 1, which no "
            "turbine section reaches",
            claimed=eta,
            bound=1.0,
            margin=eta - 1.0,
            margin_relative=eta - 1.0,
            quantity="fraction",
            tolerance=allowed,
            stream=end.id,
        )
    )


register("turbine", Turbine, evaluate, "turbine or expander: shaft power delivered")
