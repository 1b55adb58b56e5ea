"""Fired heater or boiler: a fuel burnt with air heats a stream (water to steam, oil, process
fluid); the fuel, air and flue gas are on the formation basis, so the first law of the whole step
accounts for the heat of combustion without a heating value.

Claims: the streams ``fuel``, ``air`` (combustion air), ``flue_gas`` and the ``heated`` side
(``inlet``, ``outlet`` and, for a boiler, ``blowdown``: the drum water drawn off, a second outlet of
the heated side); ``duty`` (optional) is the heat the heated side receives (into the steam and the
blowdown); ``heat_loss``
(default 0) is the casing and radiation loss, at ``heat_loss_temperature`` if known; ``fuel_lhv``
or ``fuel_hhv`` (optional) is a claimed heating value of the fuel, per kg (``"47.0 MJ/kg"``), per
mole (``"802 kJ/mol"``) or per normal or standard cubic metre (``"35.9 MJ/Nm3"``, ``"37.7
MJ/Sm3"``; a volume is converted with the same normal density as the stream flows: the ideal-gas
molar volume for a mixture, the real fluid for a pure one).

Checks, beyond the laws:

* the element balance of the gas side, fuel + air → flue gas (``element-imbalance``), in place of
  the per-fluid mass balance; the heated side keeps its fluid and mass (``side-changes-fluid``,
  ``mass-imbalance``);
* a claimed duty matches the heated side, its inlet flow times its energy change, within the
  rounding of the written values plus the property-method allowance (``duty-mismatch``,
  :func:`audit.steps.allowances.claim_rule`);
* a claimed heating value matches the one computed from formation data at 25 °C and 1 bar
  (``heating-value-mismatch``, relative tolerance ``energy_relative``; the message says when the
  claim matches the other heating value: HHV written for LHV is a common slip);
* the flue gas does not leave colder than the heated stream enters (``temperature-cross``).

Reported in ``extra``: the fuel's LHV and HHV [J/kg], the heat input on both [W], the efficiency
on both (heated-side duty / heat input), and the air ratio λ (oxygen supplied over the oxygen
complete combustion needs) [1, ch. 13].

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 13.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Annotated, Any, Literal

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, WithJsonSchema
from pydantic_core import PydanticCustomError

from audit import units
from audit.constants import GAS_CONSTANT
from audit.errors import UnitError
from audit.findings import ERROR, Finding, relative
from audit.model.quantities import QUANTITY_PATTERN
from audit.model.steps import DutyClaim, TemperatureClaim
from audit.results import StepResult, StreamResult
from audit.steps.allowances import claim_rule, duty_allowance
from audit.steps.base import StepBase, StepContext, register
from audit.steps.laws import format_power, side_mass_finding, tolerance_words
from audit.steps.machines import heat_loss_flow
from audit.steps.reacting import element_findings, finish_reacting_step
from audit.steps.reactions import heating_values, species_flows
from audit.wording import to_celsius

_PER_VOLUME = re.compile(r"^(.*?)/\s*([NS])m(?:3|\^3|\*\*3|³)\s*$")


@dataclass(frozen=True)
class HeatingValueClaim:
    """A heating value as written: ``value`` in J/kg (``basis`` ``"mass"``), J/mol (``"molar"``)
    or J/m**3 at ``reference`` (T [K], P [Pa]) (``"normal_volume"``)."""

    value: float
    basis: str
    text: str
    reference: tuple[float, float] | None = None


def _parse_heating_value(value: Any) -> HeatingValueClaim:
    if isinstance(value, HeatingValueClaim):
        return value
    text = str(value) if isinstance(value, str) else value
    try:
        if isinstance(text, str) and (match := _PER_VOLUME.match(text.strip())):
            reference = units.NORMAL_CONDITIONS if match.group(2) == "N" else units.STANDARD_CONDITIONS
            energy = units.to_si(match.group(1), "energy")
            return HeatingValueClaim(energy, "normal_volume", text, reference)
        try:
            return HeatingValueClaim(units.to_si(text, "specific_enthalpy"), "mass", str(text))
        except UnitError:
            return HeatingValueClaim(units.to_si(text, "specific_energy_molar"), "molar", str(text))
    except UnitError:
        pass
    if isinstance(text, str) and re.search(r"m(3|\^3|\*\*3|³)\s*$", text):
        message = (
            f"'{text}': a heating value per volume needs its reference conditions; write "
            "it per normal m³ ('35.9 MJ/Nm3', 0 °C and 101.325 kPa) or per standard m³ "
            "('37.7 MJ/Sm3', 15 °C and 101.325 kPa)"
        )
    else:
        message = (
            f"'{text}' is not a heating value; write it per kg ('47.0 MJ/kg'), per mole "
            "('802 kJ/mol') or per normal cubic metre ('35.9 MJ/Nm3')"
        )
    raise PydanticCustomError("quantity", message)


HeatingValue = Annotated[
    HeatingValueClaim,
    BeforeValidator(_parse_heating_value),
    WithJsonSchema(
        {
            "type": "string",
            "pattern": QUANTITY_PATTERN,
            "description": "a fuel heating value with its unit, e.g. '47.0 MJ/kg', '802 kJ/mol', "
            "'35.9 MJ/Nm3' (0 °C, 101.325 kPa) or '37.7 MJ/Sm3' (15 °C, 101.325 kPa)",
        }
    ),
]


class HeatedSide(BaseModel):
    model_config = ConfigDict(extra="forbid", defer_build=True)  # built with its step kind

    inlet: str
    outlet: str
    blowdown: str | None = Field(
        None, description="a boiler's blowdown: drum water drawn off (a second outlet of the side)"
    )

    def outlets(self) -> list[str]:
        return [self.outlet] if self.blowdown is None else [self.outlet, self.blowdown]


class FiredHeater(StepBase):
    kind: Literal["fired_heater"]
    fuel: str = Field(description="the fuel stream")
    air: str = Field(description="the combustion-air stream")
    flue_gas: str = Field(description="the flue-gas stream")
    heated: HeatedSide = Field(description="the heated stream: water and steam, oil, ...")
    duty: DutyClaim = Field(None, ge=0, description="heat received by the heated side")
    heat_loss: DutyClaim = Field(None, ge=0, description="casing and radiation loss (default 0)")
    heat_loss_temperature: TemperatureClaim = None
    fuel_lhv: HeatingValue | None = Field(None, description="claimed lower heating value")
    fuel_hhv: HeatingValue | None = Field(None, description="claimed higher heating value")

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.fuel, self.air, self.heated.inlet], [self.flue_gas, *self.heated.outlets()]


def evaluate(step: FiredHeater, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a fired
    heater (the element balance of the combustion side in place of the per-fluid mass balance), then
    its own checks: the heated side keeps its fluid and mass (``side-changes-fluid``,
    ``mass-imbalance``), the duty and heating value agree with the streams (``duty-mismatch``,
    ``heating-value-mismatch``), the flue gas is not colder than the heated stream's inlet
    (``temperature-cross``).

    Sign convention: Q is heat into the step, W is work delivered by the step: the casing's heat
    loss is Q < 0; no work.
    """
    fuel, air, flue = ctx.stream(step.fuel), ctx.stream(step.air), ctx.stream(step.flue_gas)
    hin = ctx.stream(step.heated.inlet)
    side = [ctx.stream(s) for s in step.heated.outlets()]
    tol = ctx.tolerances
    elements, residuals = element_findings(step.id, ctx, [fuel, air], [flue])
    problems = elements + _side_findings(step.id, ctx, hin, side)

    fuel_species = species_flows(fuel)
    values = heating_values(ctx.engine, fuel_species)
    n_fuel = sum(fuel_species.values())
    input_lhv, input_hhv = n_fuel * values.lower, n_fuel * values.higher
    heat = heat_loss_flow(
        step.heat_loss,
        step.heat_loss_temperature,
        ctx.T0,
        min(s.T for s in (fuel, air, flue, hin, *side)),
    )
    claimed = ["heat_loss" if step.heat_loss is not None else "no heat loss", "no work"]
    claimed += [name for name in ("duty", "fuel_lhv", "fuel_hhv") if getattr(step, name) is not None]
    result = finish_reacting_step(
        step,
        "fired_heater",
        ctx,
        [fuel, air, hin],
        [flue, *side],
        heat,
        0.0,
        claimed,
        [],
        (problems, residuals),
        energy_scale_floor=input_lhv,
    )

    received = sum(s.mass_flow * (s.h + s.kinetic_potential) for s in side) - hin.mass_flow * (
        hin.h + hin.kinetic_potential
    )
    oxygen = species_flows(air).get("O2", 0.0) + fuel_species.get("O2", 0.0)
    needed = n_fuel * values.oxygen_needed
    result.extra.update(
        {
            "heated_duty": received,
            "fuel_lhv": values.per_kg("lower"),
            "fuel_hhv": values.per_kg("higher"),
            "heat_input_lhv": input_lhv,
            "heat_input_hhv": input_hhv,
            "efficiency_lhv": received / input_lhv if input_lhv > 0 else None,
            "efficiency_hhv": received / input_hhv if input_hhv > 0 else None,
            "air_ratio": oxygen / needed if needed > 0 else None,
        }
    )

    # the heated side's duty with its flow conserved (each outlet's flow times its energy change
    # from the inlet; the inlet flow when there is one outlet): a flow's rounding moves it by
    # δṁ Δe, never by δṁ times an absolute (formation-basis) enthalpy
    flows = [hin.mass_flow] if len(side) == 1 else [s.mass_flow for s in side]
    heated = sum(
        m * (s.h + s.kinetic_potential - hin.h - hin.kinetic_potential)
        for m, s in zip(flows, side, strict=True)
    )
    tol_E, rule, basis = claim_rule(tol, *duty_allowance(heated), result.energy_tolerance)
    if step.duty is not None:
        result.checks["duty-mismatch"] = heated - step.duty
    if step.duty is not None and abs(heated - step.duty) > tol_E:
        gap = step.duty - heated
        ctx.add(
            Finding(
                ERROR,
                "duty-mismatch",
                step.id,
                f"the claimed duty {format_power(step.duty)} differs from the "
                f"{format_power(heated)} the heated side ({hin.id} → "
                f"{', '.join(s.id for s in side)}) receives, by "
                f"{format_power(abs(gap))} ({tolerance_words(tol_E, False)})",
                claimed=step.duty,
                bound=heated,
                margin=abs(gap),
                margin_relative=relative(abs(gap), heated),
                quantity="power",
                tolerance=tol_E,
                tolerance_rule=rule,
                tolerance_basis=basis,
            )
        )
    for which, claim in (("lower", step.fuel_lhv), ("higher", step.fuel_hhv)):
        if claim is not None:
            finding = _heating_value_finding(
                step.id, ctx, fuel, values, which, claim, tol.energy_relative
            )
            if finding is not None:
                ctx.add(finding)
    if flue.T < hin.T:
        gap = hin.T - flue.T
        ctx.add(
            Finding(
                ERROR,
                "temperature-cross",
                step.id,
                f"the flue gas {flue.id} leaves at {to_celsius(flue.T):.1f} °C, {gap:.1f} K colder than "
                f"the heated stream {hin.id} enters ({to_celsius(hin.T):.1f} °C): the gas cannot heat "
                "it at that end",
                claimed=flue.T,
                bound=hin.T,
                margin=gap,
                quantity="temperature_difference",
            )
        )
    return result


def _side_findings(
    step_id: str, ctx: StepContext, inlet: StreamResult, outlets: list[StreamResult]
) -> list[Finding]:
    found = []
    for outlet in outlets:
        if inlet.fluid != outlet.fluid:
            found.append(
                Finding(
                    ERROR,
                    "side-changes-fluid",
                    step_id,
                    f"the heated side enters as {inlet.fluid} ({inlet.id}) and leaves as "
                    f"{outlet.fluid} ({outlet.id}); it keeps its own fluid",
                )
            )
    finding = side_mass_finding(step_id, "heated", inlet, outlets, ctx.tolerances)
    if finding is not None:
        found.append(finding)
    return found


def _heating_value_finding(
    step_id: str,
    ctx: StepContext,
    fuel: StreamResult,
    values: Any,
    which: str,
    claim: HeatingValueClaim,
    rtol: float,
) -> Finding | None:
    """Compare a claimed heating value with the computed one, in the claim's own basis."""
    molar = {"lower": values.lower, "higher": values.higher}
    if claim.basis == "mass":
        scale, unit, shown = 1.0 / values.molar_mass, "MJ/kg", 1e-6
    elif claim.basis == "molar":
        scale, unit, shown = 1.0, "kJ/mol", 1e-3
    else:
        T_ref, P_ref = claim.reference  # type: ignore[misc]
        if fuel.composition is not None:
            scale = P_ref / (GAS_CONSTANT * T_ref)  # mol/m**3, ideal gas as for the flows
        else:
            scale = ctx.engine.state(fuel.fluid, "TP", T_ref, P_ref).rho / (values.molar_mass)
        unit = "MJ/Nm³" if T_ref == units.NORMAL_CONDITIONS[0] else "MJ/Sm³"
        shown = 1e-6
    computed = molar[which] * scale
    other_name = "higher" if which == "lower" else "lower"
    other = molar[other_name] * scale
    gap = claim.value - computed
    if abs(gap) <= rtol * abs(computed):
        return None
    short = {"lower": "LHV", "higher": "HHV"}
    hint = ""
    if abs(claim.value - other) <= rtol * abs(other):
        hint = (
            f"; it matches the {other_name} heating value ({other * shown:.4g} {unit}): "
            f"{short[other_name]} written for {short[which]}?"
        )
    return Finding(
        ERROR,
        "heating-value-mismatch",
        step_id,
        f"the claimed {which} heating value of the fuel {fuel.id}, {claim.value * shown:.4g} "
        f"{unit}, differs from the {computed * shown:.4g} {unit} computed from formation data "
        f"(25 °C, 1 bar) by {abs(gap) * shown:.3g} {unit} ({abs(gap) / abs(computed):.1%}; "
        f"tolerance {rtol:.1%}){hint}",
        claimed=claim.value,
        bound=computed,
        margin=abs(gap),
        margin_relative=relative(abs(gap), computed),
        quantity="specific_energy" if claim.basis == "mass" else None,
        tolerance=rtol * computed,
    )


register(
    "fired_heater",
    FiredHeater,
    evaluate,
    "fired heater or boiler: fuel + air → flue gas, heating a stream",
)
