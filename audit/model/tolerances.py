"""Tolerances of every check: documented defaults, overridable per balance and per step.

The defaults are common practice for design balances (no published source); each is stated in the
workbook's method sheet and in the README's table. A balance overrides them under
``balance: tolerances:``, a step under its own ``tolerances:``.
"""

from __future__ import annotations

from typing import Any

from pydantic import BaseModel, ConfigDict, Field, field_validator

from audit.model.quantities import Energy, MassFlow, Power, TemperatureDifference

MAX_RELATIVE = 0.5
"""Largest relative tolerance accepted (common practice: a check that lets half of the turnover go
unaccounted for checks nothing; a typical design tolerance is 1 %)."""

MAX_ABSOLUTE = {
    "energy_absolute": (10e6, "10 MW"),
    "energy_absolute_batch": (10e9, "10 GJ"),
    "mass_absolute": (10.0, "10 kg/s"),
    "saturation_band": (50.0, "50 K"),
    "state_match_temperature": (50.0, "50 K"),
    "min_approach": (200.0, "200 K"),
    "pump_subcooling_min": (200.0, "200 K"),
    "isothermal_band": (50.0, "50 K"),
}
"""Largest absolute tolerance accepted [SI] with its spelling (common practice: an order of
magnitude or more beyond any tolerance a reviewer would set; a larger one would let any claim pass)."""


def _within_limit(value: Any, info: Any) -> Any:
    limit = MAX_ABSOLUTE.get(info.field_name)
    if value is not None and limit is not None and not 0 <= value <= limit[0]:
        raise ValueError(f"a tolerance of {info.field_name} must be from 0 to {limit[1]}")
    return value


class Tolerances(BaseModel):
    """Tolerances in SI after validation; written with units in the file."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)

    energy_relative: float = Field(
        0.01,
        ge=0,
        le=MAX_RELATIVE,
        description="energy residual and work-bound margin allowed, as a fraction of "
        "the step's largest energy term (its energy turnover, duty or work)",
    )
    energy_absolute: Power = Field(
        "1 kW",
        validate_default=True,
        description="energy residual and work-bound margin always allowed for a flow step",
    )
    energy_absolute_batch: Energy = Field(
        "1 kJ",
        validate_default=True,
        description="energy residual and work-bound margin always allowed for a closed vessel",
    )
    energy_floor_fraction: float = Field(
        0.05,
        ge=0,
        le=MAX_RELATIVE,
        description="the absolute energy floor never exceeds this fraction of the step's own "
        "work or heat (so that it cannot hide a small machine)",
    )
    mass_relative: float = Field(
        0.002,
        ge=0,
        le=MAX_RELATIVE,
        description="mass residual allowed, as a fraction of the inlet flow",
    )
    mass_absolute: MassFlow = Field(
        "0.36 kg/h", validate_default=True, description="mass residual always allowed"
    )
    efficiency: float = Field(
        0.0, ge=0, le=1, description="how far an isentropic efficiency may exceed 1 before it is flagged"
    )
    saturation_band: TemperatureDifference = Field(
        "0.1 K",
        validate_default=True,
        description="a (T, P) state this close to T_sat(P) is ambiguous and needs a quality",
    )
    state_match_temperature: TemperatureDifference = Field(
        "0.5 K",
        validate_default=True,
        description="splitter outlets may differ from the inlet temperature by this much",
    )
    state_match_pressure_relative: float = Field(
        0.005,
        ge=0,
        le=MAX_RELATIVE,
        description="splitter outlets may differ from the inlet pressure by this fraction",
    )
    min_approach: TemperatureDifference = Field(
        "0 K",
        validate_default=True,
        description="smallest temperature difference allowed between the two sides of a heat "
        "exchanger (a stated design minimum; 0 K checks only that the temperatures do not cross)",
    )
    exhaust_moisture_max: float = Field(
        0.12,
        ge=0,
        le=1,
        description="turbine exhaust moisture (1 - quality) above which a "
        "warning is given (common practice: 10-12 %)",
    )
    pump_subcooling_min: TemperatureDifference = Field(
        "2 K",
        validate_default=True,
        description="a pump inlet less subcooled than this is warned of (cavitation risk)",
    )
    isothermal_band: TemperatureDifference = Field(
        "0.5 K",
        validate_default=True,
        description="streams within this temperature span count as isothermal for the bound basis",
    )
    _limits = field_validator(*MAX_ABSOLUTE)(_within_limit)

    isobaric_relative: float = Field(
        0.005,
        ge=0,
        le=MAX_RELATIVE,
        description="streams within this relative pressure span count as isobaric for the bound basis",
    )


class ToleranceOverrides(BaseModel):
    """Per-step overrides: any subset of :class:`Tolerances`."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)

    energy_relative: float | None = Field(None, ge=0, le=MAX_RELATIVE)
    energy_absolute: Power | None = None
    energy_absolute_batch: Energy | None = None
    energy_floor_fraction: float | None = Field(None, ge=0, le=MAX_RELATIVE)
    mass_relative: float | None = Field(None, ge=0, le=MAX_RELATIVE)
    mass_absolute: MassFlow | None = None
    efficiency: float | None = Field(None, ge=0, le=1)
    state_match_temperature: TemperatureDifference | None = None
    state_match_pressure_relative: float | None = Field(None, ge=0, le=MAX_RELATIVE)
    min_approach: TemperatureDifference | None = None
    exhaust_moisture_max: float | None = Field(None, ge=0, le=1)
    pump_subcooling_min: TemperatureDifference | None = None
    isothermal_band: TemperatureDifference | None = None
    isobaric_relative: float | None = Field(None, ge=0, le=MAX_RELATIVE)

    _limits = field_validator(*(n for n in MAX_ABSOLUTE if n != "saturation_band"))(_within_limit)


def merged(base: Tolerances, overrides: ToleranceOverrides | None) -> Tolerances:
    """The balance's tolerances with a step's overrides applied."""
    if overrides is None:
        return base
    changes = {k: v for k, v in overrides.model_dump().items() if v is not None}
    return base.model_copy(update=changes) if changes else base
