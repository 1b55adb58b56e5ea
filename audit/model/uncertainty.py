"""How a balance file declares measurement uncertainty (the schema; the propagation is
:mod:`audit.review.uncertainty`).

Three levels, each overriding the one above::

    balance:
      uncertainty:                 # defaults per kind of quantity
        basis: measured            # or design: every value exact unless it declares its own
        coverage: standard         # the values below are standard uncertainties (or expanded-k2)
        coverage_factor: 2         # k of the expanded uncertainty the verdicts compare
        temperature: 0.5 K
        pressure: 0.25 %           # of the absolute pressure, or '0.02 bar'
        flow: 1 %
        quality: 0.01
        power: 0.5 %               # shaft and electrical power, work
        duty: 2 %                  # heat duties and heat losses
        energy: 2 %                # batch heat and work
        mass: 0.5 %                # a vessel's contents
        correlations:              # correlated reading errors (used by the reconciliation)
          - {readings: [S05.flow, S06.flow], coefficient: 0.5}
    streams:
      S20: {..., uncertainty: {P: 0.02 bar, flow: 2 %}}   # or 'exact', or 'measured'
    steps:
      - {id: R1, ..., uncertainty: {duty: 3 %}}          # claims by name; or 'exact', 'measured'

A spread is written as ``exact``, a relative value ``"2 %"`` (of the value it qualifies; not for
temperatures or qualities), an absolute value with a unit (``"0.5 K"``, ``"0.02 bar"``,
``"5 kW"``), or for a quality a plain number (``0.01``). Under ``basis: measured`` the defaults apply
to every stream and claim that does not say otherwise; under ``basis: design`` nothing is uncertain
unless a stream or step declares it (``uncertainty: measured`` takes the balance's defaults).

A step names its claims by their field names, nested ones with dots and without list positions:
``shaft_power``, ``duty``, ``heat.added``, ``heat.temperature``, ``initial.T``, ``mass``. Which
fields are claims, and which default each takes, is declared on the step models' fields
(:class:`audit.model.steps.ClaimField`).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Field, PlainValidator, WithJsonSchema
from pydantic_core import PydanticCustomError

from audit import units
from audit.errors import UnitError

EXACT_WORDS = ("exact", "measured")
_COVERAGE = re.compile(r"^(standard|expanded-k(\d+(?:\.\d+)?))$")
_PERCENT = re.compile(r"^\s*((?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*%\s*$")

# Kind of a spread -> (kind in audit.units for an absolute value, relative allowed, example).
SPREAD_KINDS: dict[str, tuple[str | None, bool, str]] = {
    "temperature": ("temperature_difference", False, "'0.5 K'"),
    "pressure": ("pressure", True, "'0.25 %' or '0.02 bar'"),
    "flow": ("flow", True, "'1 %' or '0.05 kg/s'"),
    "quality": (None, False, "0.01"),
    "specific_enthalpy": ("specific_enthalpy", True, "'1 %' or '2 kJ/kg'"),
    "specific_entropy": ("specific_entropy", True, "'1 %' or '0.01 kJ/(kg K)'"),
    "power": ("power", True, "'0.5 %' or '5 kW'"),
    "energy": ("energy", True, "'2 %' or '1 MJ'"),
    "mass": ("mass", True, "'0.5 %' or '5 kg'"),
    "length": ("length", True, "'0.1 m'"),
    "velocity": ("velocity", True, "'2 %' or '0.5 m/s'"),
    "voltage": ("voltage", True, "'0.5 %' or '0.01 V'"),
    "current": ("current", True, "'0.5 %' or '5 A'"),
    "volume": ("volume", True, "'1 %' or '0.01 m3'"),
}


@dataclass(frozen=True)
class Spread:
    """A declared uncertainty: ``value`` is a fraction of the qualified value when ``relative``,
    else an absolute amount in SI (a flow in the SI unit of its ``flow_basis``)."""

    value: float
    relative: bool
    text: str
    flow_basis: str | None = None
    flow_reference: tuple[float, float] | None = None

    def standard(self, nominal: float, divisor: float) -> float:
        """The standard uncertainty [SI] of a value ``nominal`` [SI], the declared spread divided
        by ``divisor`` (the coverage factor it was stated with; 1 for a standard uncertainty)."""
        amount = self.value * abs(nominal) if self.relative else self.value
        return amount / divisor


EXACT = Spread(0.0, False, "exact")


def parse_spread(text: Any, kind: str) -> Spread:
    """Read a spread of ``kind`` (a key of :data:`SPREAD_KINDS`); :class:`UnitError` if it
    cannot be read."""
    unit_kind, relative_ok, example = SPREAD_KINDS[kind]
    what = kind.replace("_", " ")
    if isinstance(text, str) and text.strip() == "exact":
        return EXACT
    if (isinstance(text, str) and text.strip().startswith("-")) or (
        isinstance(text, (int, float)) and not isinstance(text, bool) and text < 0
    ):
        raise UnitError(f"an uncertainty is at least zero; got '{text}'")
    if kind == "quality":
        if isinstance(text, bool) or not isinstance(text, (int, float, str)):
            raise UnitError(f"a quality uncertainty is a plain number such as 0.01; got {text!r}")
        try:
            value = float(text)
        except ValueError:
            raise UnitError(
                f"a quality uncertainty is a plain number such as 0.01 (an absolute fraction), "
                f"not '{text}'"
            ) from None
        return _checked(value, False, str(text))
    if isinstance(text, str):
        match = _PERCENT.match(text)
        if match:
            if not relative_ok:
                raise UnitError(
                    f"a {what} uncertainty is absolute, such as {example}; '{text}' is relative"
                )
            return _checked(float(match.group(1)) / 100.0, True, text)
    if unit_kind == "flow":
        try:
            flow = units.to_flow(text)
        except UnitError as exc:
            raise UnitError(
                f"a flow uncertainty is written like {example}: {exc.problem.message}"
            ) from None
        return _checked(flow.value, False, str(text), flow.basis, flow.reference)
    try:
        # site_pressure 0: a spread is a difference, so '0.02 barg' and '0.02 bar' agree.
        value = units.to_si(text, unit_kind, site_pressure=0.0)  # type: ignore[arg-type]
    except UnitError as exc:
        raise UnitError(
            f"a {what} uncertainty is written like {example}: {exc.problem.message}"
        ) from None
    return _checked(value, False, str(text))


def _checked(
    value: float,
    relative: bool,
    text: str,
    basis: str | None = None,
    reference: tuple[float, float] | None = None,
) -> Spread:
    if not math.isfinite(value):
        raise UnitError(f"an uncertainty is a finite number; got '{text}'")
    if value < 0.0:
        raise UnitError(f"an uncertainty is at least zero; got '{text}'")
    return Spread(value, relative, text, basis, reference)


def coverage_divisor(coverage: str | None) -> float:
    """The factor a declared spread is divided by to give a standard uncertainty: 1 for
    ``standard``, k for ``expanded-k<k>``."""
    if coverage is None or coverage == "standard":
        return 1.0
    match = _COVERAGE.match(coverage)
    if not match or match.group(2) is None:
        raise UnitError(f"unknown coverage '{coverage}'; write 'standard' or 'expanded-k2'")
    return float(match.group(2))


def _spread_validator(kind: str) -> PlainValidator:
    def validate(value: Any) -> Spread:
        if isinstance(value, Spread):
            return value
        try:
            return parse_spread(value, kind)
        except UnitError as exc:
            raise PydanticCustomError("uncertainty", exc.problem.message) from None

    return PlainValidator(validate)


def _spread_schema(kind: str) -> WithJsonSchema:
    example = SPREAD_KINDS[kind][2]
    schema: dict[str, Any] = {
        "description": f"{kind.replace('_', ' ')} uncertainty: 'exact', or like {example}"
    }
    schema.update({"type": ["number", "string"]} if kind == "quality" else {"type": "string"})
    return WithJsonSchema(schema)


# Written out one by one so that type checkers see a Spread, as pydantic does after validation.
TemperatureSpread = Annotated[Spread, _spread_validator("temperature"), _spread_schema("temperature")]
PressureSpread = Annotated[Spread, _spread_validator("pressure"), _spread_schema("pressure")]
FlowSpread = Annotated[Spread, _spread_validator("flow"), _spread_schema("flow")]
QualitySpread = Annotated[Spread, _spread_validator("quality"), _spread_schema("quality")]
EnthalpySpread = Annotated[
    Spread, _spread_validator("specific_enthalpy"), _spread_schema("specific_enthalpy")
]
EntropySpread = Annotated[
    Spread, _spread_validator("specific_entropy"), _spread_schema("specific_entropy")
]
PowerSpread = Annotated[Spread, _spread_validator("power"), _spread_schema("power")]
EnergySpread = Annotated[Spread, _spread_validator("energy"), _spread_schema("energy")]
MassSpread = Annotated[Spread, _spread_validator("mass"), _spread_schema("mass")]


def _coverage(value: Any) -> str:
    if isinstance(value, str) and _COVERAGE.match(value.strip()):
        return value.strip()
    raise PydanticCustomError(
        "uncertainty",
        f"unknown coverage {value!r}; write 'standard' (standard uncertainties) or "
        "'expanded-k2' (expanded uncertainties with coverage factor k = 2)",
    )


Coverage = Annotated[
    str,
    PlainValidator(_coverage),
    WithJsonSchema(
        {
            "type": "string",
            "pattern": _COVERAGE.pattern,
            "description": "how the spreads are stated: 'standard' (one standard uncertainty) or "
            "'expanded-k2' (expanded with coverage factor k = 2)",
        }
    ),
]


class Correlation(BaseModel):
    """Two readings whose errors are correlated (one transmitter type, one calibration): their
    covariance is ``coefficient`` u₁ u₂ (GUM, JCGM 100:2008, §5.2.2)."""

    model_config = ConfigDict(extra="forbid")

    readings: tuple[str, str] = Field(
        description="the two readings, each STREAM.PROPERTY or STEP.CLAIM as the reconciliation "
        "names them, e.g. [S05.flow, S06.flow] or [C1.shaft_power, P1.shaft_power]"
    )
    coefficient: float = Field(
        ge=-1.0,
        le=1.0,
        description="correlation coefficient r of their errors, from -1 to 1 (0: independent)",
    )


class BalanceUncertainty(BaseModel):
    """A balance's default uncertainties per kind of quantity (``balance: uncertainty:``)."""

    model_config = ConfigDict(extra="forbid")

    basis: Literal["measured", "design"] = Field(
        "measured",
        description="'measured': the defaults apply to every stream and claim; "
        "'design': values are exact unless a stream or step declares its own uncertainty",
    )
    coverage: Coverage = "standard"
    coverage_factor: float = Field(
        2.0,
        gt=0,
        description="coverage factor k of the expanded uncertainty the verdicts "
        "compare (default 2, about 95 % for a normal distribution)",
    )
    temperature: TemperatureSpread | None = None
    pressure: PressureSpread | None = None
    flow: FlowSpread | None = None
    quality: QualitySpread | None = None
    power: PowerSpread | None = Field(None, description="shaft or electrical power and work")
    duty: PowerSpread | None = Field(None, description="heat duties and heat losses")
    energy: EnergySpread | None = Field(None, description="batch (vessel) heat and work")
    mass: MassSpread | None = Field(None, description="a vessel's contents")
    correlations: list[Correlation] = Field(
        default_factory=list,
        description="pairs of readings whose errors are correlated; used by the reconciliation "
        "(plant-audit reconcile); the verdicts take every input as independent",
    )


class StreamUncertainty(BaseModel):
    """A stream's own uncertainties, by the names of its properties."""

    model_config = ConfigDict(extra="forbid")

    coverage: Coverage | None = None
    T: TemperatureSpread | None = None
    P: PressureSpread | None = None
    quality: QualitySpread | None = None
    h: EnthalpySpread | None = None
    s: EntropySpread | None = None
    flow: FlowSpread | None = None


StreamUncertaintyField = Annotated[
    Literal["exact", "measured"] | StreamUncertainty | None,
    Field(
        description="this stream's uncertainties: 'exact', 'measured' (the balance's defaults) "
        "or a mapping such as {T: 0.2 K, flow: 2 %} over the balance's defaults"
    ),
]

StepUncertaintyField = Annotated[
    Literal["exact", "measured"] | dict[str, str | float] | None,
    Field(
        description="this step's claim uncertainties: 'exact', 'measured' (the balance's "
        "defaults) or a mapping of claim names to spreads, e.g. {shaft_power: 1 %, "
        "coverage: expanded-k2}"
    ),
]

STREAM_CATEGORY = {"T": "temperature", "P": "pressure", "quality": "quality", "flow": "flow"}
_STREAM_KIND = {
    "T": "temperature",
    "P": "pressure",
    "quality": "quality",
    "h": "specific_enthalpy",
    "s": "specific_entropy",
    "flow": "flow",
}
