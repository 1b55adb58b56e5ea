"""How a balance file writes humid air: ``fluid: humid air`` with T, P and exactly one humidity.

The humidity is one of ``relative_humidity`` (a fraction from 0 to 1, or a percentage written with
``%``: ``0.6`` or ``'60 %'``), ``humidity_ratio`` (kg of water vapour per kg of dry air, or with
``g/kg``: ``0.010`` or ``'10 g/kg'``), ``wet_bulb`` or ``dew_point`` (temperatures). The flow is
of the humid air (mass, or a normal or actual volume) unless ``flow_of: dry air`` says that the
mass flow written is of its dry air.
"""

from __future__ import annotations

import re
from typing import Annotated

from pydantic import BeforeValidator, WithJsonSchema

HUMID_AIR_NAMES = {"humid air", "humidair", "moist air", "humid_air", "moist_air"}
"""Names of the humid-air fluid (any case)."""
HUMIDITIES = ("relative_humidity", "humidity_ratio", "wet_bulb", "dew_point")
"""The fields that give a humid-air stream's humidity; exactly one is written."""

_NUMBER = r"\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*"


def is_humid_air(fluid: str | None) -> bool:
    """True for the names of humid air (``humid air``, ``moist air``)."""
    return fluid is not None and fluid.strip().lower() in HUMID_AIR_NAMES


def parse_relative_humidity(value: object) -> object:
    """A relative humidity as written → a fraction [-]: a plain number is a fraction, a text with
    ``%`` a percentage. ValueError for anything else or outside 0 to 1."""
    if isinstance(value, bool):
        raise ValueError("expected a relative humidity, e.g. 0.6 or '60 %'")
    if isinstance(value, str):
        match = re.fullmatch(_NUMBER + r"(%?)\s*", value)
        if match is None:
            raise ValueError(
                f"cannot read the relative humidity '{value}': write a fraction from 0 to 1 "
                "(e.g. 0.6) or a percentage with '%' (e.g. '60 %')"
            )
        number = float(match.group(1))
        value = number / 100.0 if match.group(2) else number
    if isinstance(value, (int, float)):
        if not 0.0 <= value <= 1.0:
            raise ValueError(
                f"a relative humidity of {value:g} is outside 0 to 1: write a fraction (e.g. 0.6) "
                "or a percentage with '%' (e.g. '60 %')"
            )
        return float(value)
    return value


def parse_humidity_ratio(value: object) -> object:
    """A humidity ratio as written → kg of water vapour per kg of dry air: a plain number (or with
    ``kg/kg``) as it is, with ``g/kg`` divided by 1000."""
    if isinstance(value, bool):
        raise ValueError("expected a humidity ratio, e.g. 0.010 or '10 g/kg'")
    if isinstance(value, str):
        match = re.fullmatch(_NUMBER + r"(g/kg|kg/kg)?\s*", value)
        if match is None:
            raise ValueError(
                f"cannot read the humidity ratio '{value}': write kg of water per kg of dry air "
                "(e.g. 0.010) or grams per kg with 'g/kg' (e.g. '10 g/kg')"
            )
        value = float(match.group(1)) / (1000.0 if match.group(2) == "g/kg" else 1.0)
    if isinstance(value, (int, float)) and not 0.0 <= value <= 10.0:
        raise ValueError(f"a humidity ratio of {value:g} kg/kg is not possible")
    return value


def check_humid_air(spec: object) -> None:
    """The rules of a humid-air stream (ValueError): T and P, one humidity, no printed properties
    beyond them; and no humidity on any other stream."""
    given = [name for name in HUMIDITIES if getattr(spec, name, None) is not None]
    fluid = getattr(spec, "fluid", None)
    if not is_humid_air(fluid):
        if given:
            raise ValueError(f"'{given[0]}' is for humid air: write 'fluid: humid air'")
        if getattr(spec, "flow_of", None) is not None:
            raise ValueError("'flow_of' is for humid air: write 'fluid: humid air'")
        return
    if len(given) != 1:
        written = ", ".join(given) or "none"
        raise ValueError(
            "humid air needs exactly one of relative_humidity, humidity_ratio, wet_bulb or "
            f"dew_point; this one gives: {written}"
        )
    if getattr(spec, "T", None) is None or getattr(spec, "P", None) is None:
        raise ValueError("humid air is written with T and P and one humidity")
    extra = [
        name
        for name in ("quality", "h", "s", "u", "v", "rho", "T_sat", "state_from")
        if getattr(spec, name, None) is not None
    ]
    if extra:
        raise ValueError(f"humid air is written with T, P and one humidity only, not {extra[0]}")
    flow = getattr(spec, "flow", None)
    if getattr(spec, "flow_of", None) == "dry air" and getattr(flow, "basis", "mass") != "mass":
        raise ValueError("'flow_of: dry air' takes a mass flow of the dry air (e.g. '10 kg/s')")
    if getattr(spec, "phase", None) not in (None, "vapour"):
        raise ValueError(f"humid air is a gas; it cannot be declared {spec.phase}")  # type: ignore[attr-defined]


RelativeHumidity = Annotated[
    float,
    BeforeValidator(parse_relative_humidity),
    WithJsonSchema(
        {
            "anyOf": [
                {"type": "number", "minimum": 0, "maximum": 1},
                {"type": "string", "pattern": r"^\s*[0-9.]+\s*%?\s*$"},
            ],
            "description": "a fraction from 0 to 1 (0.6) or a percentage with '%' ('60 %')",
        }
    ),
]
"""A relative humidity as written (a fraction, or a percentage with '%'), as a fraction [-]."""
DEAD_STATE_HUMIDITY = 1.0
"""The dead state's relative humidity unless the balance writes one: saturated, so that liquid
water at (T0, P0), which "Water" streams are measured from, has no exergy against the dead-state
atmosphere (Wepfer, Gaggioli and Obert 1979 discuss the choice; a balance writes the site's)."""
HumidityRatio = Annotated[
    float,
    BeforeValidator(parse_humidity_ratio),
    WithJsonSchema(
        {
            "anyOf": [
                {"type": "number", "minimum": 0},
                {"type": "string", "pattern": r"^\s*[0-9.eE+-]+\s*(g/kg|kg/kg)?\s*$"},
            ],
            "description": "kg of water vapour per kg of dry air (0.010) or with 'g/kg' ('10 g/kg')",
        }
    ),
]
"""A humidity ratio as written, in kg of water vapour per kg of dry air."""
