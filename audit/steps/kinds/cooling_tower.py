"""Wet cooling tower: warm water cooled by humid air, part of it evaporating into the air.

Streams: ``water_in`` and ``water_out`` (the circulating water), ``air_in`` and ``air_out`` (humid
air, :mod:`audit.properties.humid_air`), and optionally ``make_up`` (water added) and ``blowdown``
(water drawn off). Claims: ``fan_power``, the power the fans ABSORB (default 0: natural draught);
the tower exchanges no other heat.

Checks, beyond the laws (the first law and Ṡ_gen ≥ 0 over all its streams):

* the dry air passes through (``mass-imbalance``) and the water balances with the evaporation:
  water in + make-up + the inlet air's vapour = water out + blowdown + the outlet air's vapour
  (``mass-imbalance``, tolerance relative to the circulating water);
* the water leaves no colder than the inlet air's thermodynamic wet-bulb temperature
  (``water-below-wet-bulb``): the limit of evaporative cooling [1, ch. 40], checked on its own,
  because a water outlet below it can still show positive entropy generation overall;
* outlet air above saturation is refused where the stream is read (a humid-air state holds no
  more vapour than at saturation).

The step's notes give the range, the approach to the wet bulb and the evaporation.

Sign convention: Q is heat into the step (none), W is work delivered by the step: the fan power
absorbed is W = −fan_power.

References
----------
.. [1] ASHRAE Handbook—HVAC Systems and Equipment, ch. 40 "Cooling towers", ASHRAE, 2016.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from audit.findings import ERROR, Finding, relative
from audit.model.steps import PowerClaim
from audit.results import StepResult, StreamResult
from audit.steps.allowances import DECLARED, ROUNDING, declared_rule
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.wording import celsius, kelvin_difference

WET_BULB_ALLOWANCE = 0.02
"""The property allowance [K] of the wet-bulb check: the model's wet bulb agrees with ASHRAE RP-1485
to 0.011 K over 20-45 °C (tests/test_humid_air.py), rounded up. The review adds the rounding of
the written values (the water's outlet temperature, the air's temperature, pressure and humidity),
as for the laws (:mod:`audit.review.rounding`); a balance that writes its own tolerances keeps the
allowance alone."""


class CoolingTower(StepBase):
    kind: Literal["cooling_tower"]
    water_in: str = Field(description="warm water to the tower")
    water_out: str = Field(description="cooled water from the basin")
    air_in: str = Field(description="humid air drawn in")
    air_out: str = Field(description="humid air leaving (at most saturated)")
    make_up: str | None = Field(None, description="make-up water added (optional)")
    blowdown: str | None = Field(None, description="blowdown water drawn off (optional)")
    fan_power: PowerClaim = Field(None, ge=0, description="power absorbed by the fans (default 0)")

    def stream_ids(self) -> tuple[list[str], list[str]]:
        inlets = [self.water_in, self.air_in] + ([self.make_up] if self.make_up else [])
        outlets = [self.water_out, self.air_out] + ([self.blowdown] if self.blowdown else [])
        return inlets, outlets


def _parts(stream: StreamResult) -> dict[str, float]:
    return dict(stream.conserved_parts())


def evaluate(step: CoolingTower, ctx: StepContext) -> StepResult:
    """Apply the laws of every step to a wet cooling tower (adiabatic, fans absorbing their power),
    then its own checks: the dry air passes through and the water balances with the evaporation
    (``mass-imbalance``), and the water leaves no colder than the inlet air's wet bulb
    (``water-below-wet-bulb``).

    Sign convention: Q is heat into the step (none), W is work delivered by the step: the fan power
    absorbed is W = −fan_power.
    """
    ids_in, ids_out = step.stream_ids()
    inlets, outlets = [ctx.stream(i) for i in ids_in], [ctx.stream(i) for i in ids_out]
    water_in, water_out = ctx.stream(step.water_in), ctx.stream(step.water_out)
    air_in, air_out = ctx.stream(step.air_in), ctx.stream(step.air_out)
    claimed = ["fan_power"] if step.fan_power is not None else ["no fan power"]
    result, _ = finish_flow_step(
        step,
        "cooling_tower",
        ctx,
        inlets,
        outlets,
        [],
        -(step.fan_power or 0.0),
        claimed + ["no heat but through the streams"],
        [],
        check_mass=False,
    )
    dry_in, dry_out = _parts(air_in).get("dry air", 0.0), _parts(air_out).get("dry air", 0.0)
    _mass(step.id, "dry air", dry_in - dry_out, dry_in, ctx, "of dry air")
    water = sum(_parts(s).get("Water", 0.0) for s in inlets) - sum(
        _parts(s).get("Water", 0.0) for s in outlets
    )
    evaporation = _parts(air_out).get("Water", 0.0) - _parts(air_in).get("Water", 0.0)
    _mass(
        step.id,
        "Water",
        water,
        water_in.mass_flow,
        ctx,
        f"of water (the air takes up {evaporation:.4g} kg/s)",
    )
    wet_bulb = ctx.engine.wet_bulb_temperature(
        air_in.T, air_in.P, ctx.engine.humidity_ratio_of_state(air_in.state)
    )
    result.notes.append(
        f"range {kelvin_difference(water_in.T - water_out.T)}, approach "
        f"{kelvin_difference(water_out.T - wet_bulb)} to the inlet air's wet bulb "
        f"{celsius(wet_bulb)}, evaporation {evaporation:.4g} kg/s"
    )
    result.checks["water-below-wet-bulb"] = wet_bulb - water_out.T
    if wet_bulb - water_out.T > WET_BULB_ALLOWANCE:
        ctx.add(
            Finding(
                ERROR,
                "water-below-wet-bulb",
                step.id,
                f"the water leaves at {celsius(water_out.T)} ({water_out.id}), "
                f"{kelvin_difference(wet_bulb - water_out.T)} below the wet-bulb temperature "
                f"{celsius(wet_bulb)} of the inlet air {air_in.id}: evaporation cannot cool water "
                "below the wet bulb of the air it meets",
                claimed=water_out.T,
                bound=wet_bulb,
                margin=wet_bulb - water_out.T,
                quantity="temperature",
                tolerance=WET_BULB_ALLOWANCE,
                tolerance_rule=DECLARED if declared_rule(ctx.tolerances, batch=False) else ROUNDING,
                tolerance_basis=f"model allowance {WET_BULB_ALLOWANCE:g} K (wet bulb against RP-1485)",
                stream=water_out.id,
            )
        )
    return result


def _mass(step_id: str, what: str, residual: float, scale: float, ctx: StepContext, words: str) -> None:
    """A mass balance of the tower: ``residual`` in − out [kg/s], tolerance relative to ``scale``."""
    tol = ctx.tolerances
    mass_tol = max(tol.mass_relative * scale, tol.mass_absolute)
    if abs(residual) <= mass_tol:
        return
    direction = "vanishes" if residual > 0 else "appears"
    ctx.add(
        Finding(
            ERROR,
            "mass-imbalance",
            step_id,
            f"{abs(residual):.4g} kg/s {words} {direction} in the tower: the inlets carry "
            f"{abs(residual):.4g} kg/s {'more' if residual > 0 else 'less'} {what} than the outlets",
            claimed=residual,
            bound=0.0,
            margin=abs(residual),
            margin_relative=relative(abs(residual), scale),
            quantity="mass_flow",
            tolerance=mass_tol,
        )
    )


register("cooling_tower", CoolingTower, evaluate, "wet cooling tower: water cooled by humid air")
