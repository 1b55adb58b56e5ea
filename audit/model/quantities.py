"""Pydantic field types for quantities written with units.

``Temperature``, ``Pressure``, ``Power`` ... are floats in SI after validation and strings with a unit
in the file (and in the exported JSON Schema). Gauge pressures read the site pressure from the
validation context (``{"site_pressure": <Pa>}``), which
:func:`audit.model.balance.validate_document` supplies.
"""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import BeforeValidator, ValidationInfo, WithJsonSchema
from pydantic_core import PydanticCustomError

from audit import units
from audit.errors import UnitError

QUANTITY_PATTERN = r"^\s*[-+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?\s*\S.*$"


def _parser(kind: str):
    def parse(value: Any, info: ValidationInfo) -> float:
        site = (info.context or {}).get("site_pressure")
        try:
            return units.to_si(value, kind, site_pressure=site)
        except UnitError as exc:
            raise PydanticCustomError("quantity", exc.problem.message) from None

    return parse


def _schema(kind: str) -> WithJsonSchema:
    spec = units.KINDS[kind]
    return WithJsonSchema(
        {
            "type": "string",
            "pattern": QUANTITY_PATTERN,
            "description": f"{kind.replace('_', ' ')} with its unit, e.g. {spec.example}",
        }
    )


def _parse_flow(value: Any) -> units.Flow:
    if isinstance(value, units.Flow):
        return value
    try:
        return units.to_flow(value)
    except UnitError as exc:
        raise PydanticCustomError("quantity", exc.problem.message) from None


# Written out one by one (not built by a factory) so that type checkers see a float, as pydantic
# does after validation.
Temperature = Annotated[float, BeforeValidator(_parser("temperature")), _schema("temperature")]
TemperatureDifference = Annotated[
    float, BeforeValidator(_parser("temperature_difference")), _schema("temperature_difference")
]
Pressure = Annotated[float, BeforeValidator(_parser("pressure")), _schema("pressure")]
MassFlow = Annotated[float, BeforeValidator(_parser("mass_flow")), _schema("mass_flow")]
MolarFlow = Annotated[float, BeforeValidator(_parser("molar_flow")), _schema("molar_flow")]
Power = Annotated[float, BeforeValidator(_parser("power")), _schema("power")]
Energy = Annotated[float, BeforeValidator(_parser("energy")), _schema("energy")]
Mass = Annotated[float, BeforeValidator(_parser("mass")), _schema("mass")]
SpecificEnthalpy = Annotated[
    float, BeforeValidator(_parser("specific_enthalpy")), _schema("specific_enthalpy")
]
SpecificEntropy = Annotated[
    float, BeforeValidator(_parser("specific_entropy")), _schema("specific_entropy")
]
Velocity = Annotated[float, BeforeValidator(_parser("velocity")), _schema("velocity")]
Density = Annotated[float, BeforeValidator(_parser("density")), _schema("density")]
SpecificVolume = Annotated[
    float, BeforeValidator(_parser("specific_volume")), _schema("specific_volume")
]
Length = Annotated[float, BeforeValidator(_parser("length")), _schema("length")]
Volume = Annotated[float, BeforeValidator(_parser("volume")), _schema("volume")]
Voltage = Annotated[float, BeforeValidator(_parser("voltage")), _schema("voltage")]
Current = Annotated[float, BeforeValidator(_parser("current")), _schema("current")]

StreamFlow = Annotated[
    units.Flow,
    BeforeValidator(_parse_flow),
    WithJsonSchema(
        {
            "type": "string",
            "pattern": QUANTITY_PATTERN,
            "description": "mass, molar or volumetric flow with its unit, e.g. '12 t/h', "
            "'3.3 kg/s', '10 kmol/h', '1500 Nm3/h' (0 °C, 101.325 kPa), '1500 Sm3/h' "
            "(15 °C, 101.325 kPa) or '120 m3/h' (at the stream's own state)",
        }
    ),
]
