"""Chiller and heat pump given by their liquid sides and their power.

A ``chiller`` (or ``heat_pump``) is written by the streams of its two sides, whatever liquid they
carry (water, a brine, a glycol): the ``evaporator`` side is cooled (chilled water, or the source
of a heat pump) and the ``condenser`` side is heated (condenser water, or the heated water of a heat
pump). The refrigerant circuit inside is not written.

Claims: ``power`` is the power the machine ABSORBS (compressor shaft or electrical input); a
chiller may claim its ``cooling_duty`` (heat taken from the evaporator side) and a heat pump its
``heating_duty`` (heat given to the condenser side); ``cop`` is the coefficient of performance on
the datasheet (cooling duty / power for a chiller, heating duty / power for a heat pump). Without a
power the machine's power is ``cop`` times less than its duty, or else what closes the first law.
The machine exchanges no other heat (its losses are inside the duties).

Checks, beyond the laws over the four streams (the first law P = Q_c − Q_e and Ṡ_gen ≥ 0):

* each side keeps its mass (``mass-imbalance``); the evaporator side is cooled and the condenser
  side heated (``machine-side-wrong-way``); a claimed duty agrees with its side (``duty-mismatch``);
* the COP is at most the reversible one between the two sides' entropic mean temperatures
  (``cop-above-reversible``, :mod:`audit.physics.refrigeration`): not a Carnot figure between
  the inlet temperatures, which would let chilled water 12 → 7 °C against condenser water
  30 → 35 °C pass a COP of 15 (the limit is 12.3).

Sign convention: Q is heat into the step (none), W is work delivered by the step: the power
absorbed is W = −power.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from audit.findings import ERROR, Finding, relative
from audit.model.steps import DutyClaim, PowerClaim
from audit.physics.refrigeration import (
    entropic_mean_temperature,
    reversible_cop_cooling,
    reversible_cop_heating,
)
from audit.results import StepResult, StreamResult
from audit.steps.allowances import DECLARED, PROPERTY_SPREAD, ROUNDING, declared_rule
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.steps.laws import format_power, side_mass_finding
from audit.wording import to_celsius


class Side(BaseModel):
    model_config = ConfigDict(extra="forbid", defer_build=True)  # built with its step kind

    inlet: str
    outlet: str


class _Machine(StepBase):
    """The fields a chiller and a heat pump share."""

    evaporator: Side = Field(description="the cooled side (chilled water, a source): inlet and outlet")
    condenser: Side = Field(description="the heated side (condenser water): inlet and outlet")
    power: PowerClaim = Field(None, ge=0, description="power absorbed by the machine")
    cop: float | None = Field(
        None, gt=0, description="coefficient of performance on the datasheet (duty / power)"
    )

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.evaporator.inlet, self.condenser.inlet], [
            self.evaporator.outlet,
            self.condenser.outlet,
        ]


class Chiller(_Machine):
    kind: Literal["chiller"]
    cooling_duty: DutyClaim = Field(None, ge=0, description="heat taken from the evaporator side")


class HeatPump(_Machine):
    kind: Literal["heat_pump"]
    heating_duty: DutyClaim = Field(None, ge=0, description="heat given to the condenser side")


def _side_heat(inlet: StreamResult, outlet: StreamResult) -> float:
    """Heat received by a side [W] with its flow conserved: ṁ_in (e_out − e_in). A side's mass
    residual is its own check (``mass-imbalance``); read as ṁ_out e_out − ṁ_in e_in it would price
    a rounding of one flow at an absolute (formation-basis) enthalpy, megawatts on a water side."""
    return inlet.mass_flow * (outlet.h + outlet.kinetic_potential - inlet.h - inlet.kinetic_potential)


def evaluate(step: Chiller | HeatPump, ctx: StepContext) -> StepResult:
    """Apply the laws of every step to a chiller or heat pump over its four streams (adiabatic,
    driven by its power), then its own checks: each side keeps its mass (``mass-imbalance``), the
    evaporator side is cooled and the condenser side heated (``machine-side-wrong-way``), a claimed
    duty agrees with its side (``duty-mismatch``), and the COP is at most the reversible one from
    the entropy balance over the four streams (``cop-above-reversible``).

    Sign convention: Q is heat into the step (none: the machine exchanges heat only with its
    streams), W is work delivered by the step: the power absorbed is W = −power.
    """
    heating = step.kind == "heat_pump"
    e_in, e_out = ctx.stream(step.evaporator.inlet), ctx.stream(step.evaporator.outlet)
    c_in, c_out = ctx.stream(step.condenser.inlet), ctx.stream(step.condenser.outlet)
    Q_e = -_side_heat(e_in, e_out)  # heat taken from the evaporator side
    Q_c = _side_heat(c_in, c_out)  # heat given to the condenser side
    duty_claim = getattr(step, "heating_duty" if heating else "cooling_duty", None)
    duty_name = "heating_duty" if heating else "cooling_duty"
    duty = duty_claim if duty_claim is not None else (Q_c if heating else Q_e)
    claimed, inferred = [], []
    if step.power is not None:
        power = step.power
        claimed.append("power")
    elif step.cop is not None:
        power = duty / step.cop
        claimed.append("cop")
    else:
        power = Q_c - Q_e
        inferred.append("power")
    if duty_claim is not None:
        claimed.append(duty_name)
    result, _ = finish_flow_step(
        step,
        step.kind,
        ctx,
        [e_in, c_in],
        [e_out, c_out],
        [],
        -power,
        claimed + ["no heat but through the streams"],
        inferred,
    )
    for name, inlet, outlet in (("evaporator", e_in, e_out), ("condenser", c_in, c_out)):
        _mass_check(step.id, name, inlet, outlet, ctx)
    if Q_e <= 0 or Q_c <= 0:
        _wrong_way(step.id, e_in, e_out, c_in, c_out, Q_e, Q_c, ctx)
        return result
    if duty_claim is not None:
        side = Q_c if heating else Q_e
        if abs(side - duty_claim) > result.energy_tolerance:
            words = "condenser" if heating else "evaporator"
            ctx.add(
                Finding(
                    ERROR,
                    "duty-mismatch",
                    step.id,
                    f"the claimed {duty_name.replace('_', ' ')} ({format_power(duty_claim)}) differs "
                    f"from the {format_power(side)} the {words} side carries",
                    claimed=duty_claim,
                    bound=side,
                    margin=abs(duty_claim - side),
                    margin_relative=relative(abs(duty_claim - side), side),
                    quantity="power",
                    tolerance=result.energy_tolerance,
                )
            )
    _cop_check(step, e_in, e_out, c_in, c_out, duty, power, heating, ctx, result)
    return result


def _mass_check(
    step_id: str, name: str, inlet: StreamResult, outlet: StreamResult, ctx: StepContext
) -> None:
    finding = side_mass_finding(step_id, name, inlet, [outlet], ctx.tolerances)
    if finding is not None:
        ctx.add(finding)


def _wrong_way(
    step_id: str,
    e_in: StreamResult,
    e_out: StreamResult,
    c_in: StreamResult,
    c_out: StreamResult,
    Q_e: float,
    Q_c: float,
    ctx: StepContext,
) -> None:
    """The evaporator side must give heat (be cooled) and the condenser side take it (be heated)."""
    for name, inlet, outlet, heat, verb in (
        ("evaporator", e_in, e_out, Q_e, "cooled"),
        ("condenser", c_in, c_out, Q_c, "heated"),
    ):
        if heat > 0:
            continue
        ctx.add(
            Finding(
                ERROR,
                "machine-side-wrong-way",
                step_id,
                f"the {name} side is not {verb}: it enters at {to_celsius(inlet.T):.2f} °C "
                f"({inlet.id}) and leaves at {to_celsius(outlet.T):.2f} °C ({outlet.id}) "
                "(inlet and outlet, or the two sides, swapped?)",
                claimed=heat,
                bound=0.0,
                margin=abs(heat),
                quantity="power",
            )
        )


def _cop_check(
    step: Chiller | HeatPump,
    e_in: StreamResult,
    e_out: StreamResult,
    c_in: StreamResult,
    c_out: StreamResult,
    duty: float,
    power: float,
    heating: bool,
    ctx: StepContext,
    result: StepResult,
) -> None:
    """The COP (claimed, or duty over power) against the reversible one between the two sides'
    entropic mean temperatures. The allowance is the property-method spread carried through
    T̄/(T̄_c − T̄_e); the review adds the rounding of the written values (the COP's digits, the
    temperatures', the flows' and the power's, carried through the step), as for the laws; the
    signed excess COP − COP_rev is recorded in ``result.checks``."""
    T_e = entropic_mean_temperature(e_out.h - e_in.h, e_out.s - e_in.s, e_in.T, e_out.T)
    T_c = entropic_mean_temperature(c_out.h - c_in.h, c_out.s - c_in.s, c_in.T, c_out.T)
    limit = reversible_cop_heating(T_e, T_c) if heating else reversible_cop_cooling(T_e, T_c)
    if power <= 0 or limit == float("inf"):
        return
    cop = step.cop if step.cop is not None else duty / power
    tolerance = limit * PROPERTY_SPREAD * T_c / (T_c - T_e)
    result.checks["cop-above-reversible"] = cop - limit
    if cop - limit <= tolerance:
        return
    what = "heating" if heating else "cooling"
    ctx.add(
        Finding(
            ERROR,
            "cop-above-reversible",
            step.id,
            f"the {what} COP {cop:.3g} is above the reversible {limit:.3g} between the evaporator "
            f"side ({to_celsius(e_in.T):.1f} → {to_celsius(e_out.T):.1f} °C, mean "
            f"{to_celsius(T_e):.2f} °C) and the condenser side ({to_celsius(c_in.T):.1f} → "
            f"{to_celsius(c_out.T):.1f} °C, mean {to_celsius(T_c):.2f} °C): the machine would "
            "destroy entropy",
            claimed=cop,
            bound=limit,
            margin=cop - limit,
            margin_relative=relative(cop - limit, limit),
            quantity="fraction",
            tolerance=tolerance,
            # a balance that writes its own tolerances keeps the allowance alone
            tolerance_rule=DECLARED if declared_rule(ctx.tolerances, batch=False) else ROUNDING,
            tolerance_basis=(
                f"property-method allowance {tolerance:.3g} ({PROPERTY_SPREAD:g} of the reversible "
                "COP carried through T̄_c/(T̄_c − T̄_e))"
            ),
        )
    )


register("chiller", Chiller, evaluate, "chiller: power absorbed, heat from chilled to condenser side")
register("heat_pump", HeatPump, evaluate, "heat pump: power absorbed, heat to the condenser side")
