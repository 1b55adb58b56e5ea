"""Pydantic field types for quantities written with units.

``Temperature``, ``Pressure``, ``Power`` ... are floats in SI after validation and strings with a unit
in the file (and in the exported JSON Schema). Gauge pressures read the site pressure from the
validation context (``{"site_pressure": <Pa>}``), which :func:`audit.model.balance.load_balance` supplies.
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


def _quantity(kind: str) -> Any:
    spec = units.KINDS[kind]
    return Annotated[
        float,
        BeforeValidator(_parser(kind)),
        WithJsonSchema(
            {
                "type": "string",
                "pattern": QUANTITY_PATTERN,
                "description": f"{kind.replace('_', ' ')} with its unit, e.g. {spec.example}",
            }
        ),
    ]


def _parse_flow(value: Any) -> units.Flow:
    if isinstance(value, units.Flow):
        return value
    try:
        return units.to_flow(value)
    except UnitError as exc:
        raise PydanticCustomError("quantity", exc.problem.message) from None


Temperature = _quantity("temperature")
TemperatureDifference = _quantity("temperature_difference")
Pressure = _quantity("pressure")
MassFlow = _quantity("mass_flow")
MolarFlow = _quantity("molar_flow")
Power = _quantity("power")
Energy = _quantity("energy")
Mass = _quantity("mass")
SpecificEnthalpy = _quantity("specific_enthalpy")
SpecificEntropy = _quantity("specific_entropy")
Velocity = _quantity("velocity")
Length = _quantity("length")
Volume = _quantity("volume")
Voltage = _quantity("voltage")
Current = _quantity("current")

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
