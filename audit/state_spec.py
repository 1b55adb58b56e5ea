"""How a balance file writes a state and a stream.

A state is a fluid and exactly two of T, P, quality, h, s, in one of the pairs (T, P),
(P, quality), (T, quality), (P, h), (P, s). A stream adds its flow and, optionally, its velocity and
elevation (for kinetic and potential energy) and the phase the balance says it has (checked).
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, model_validator

from audit.quantities import (
    Length,
    Pressure,
    SpecificEnthalpy,
    SpecificEntropy,
    StreamFlow,
    Temperature,
    Velocity,
)

PAIRS = {
    frozenset({"T", "P"}): "TP",
    frozenset({"P", "quality"}): "PQ",
    frozenset({"T", "quality"}): "TQ",
    frozenset({"P", "h"}): "Ph",
    frozenset({"P", "s"}): "Ps",
}
_PROPERTIES = ("T", "P", "quality", "h", "s")


class PropertyPair(BaseModel):
    """Two independent intensive properties (the fluid is given elsewhere)."""

    model_config = ConfigDict(extra="forbid")

    T: Temperature | None = Field(None, description="temperature")
    P: Pressure | None = Field(None, description="pressure (absolute, or gauge as 'barg')")
    quality: float | None = Field(
        None, ge=0.0, le=1.0, description="vapour mass fraction, 0 to 1 (two-phase states)")
    h: SpecificEnthalpy | None = Field(
        None, description="specific enthalpy on the fluid's usual table reference")
    s: SpecificEntropy | None = Field(
        None, description="specific entropy on the fluid's usual table reference")

    @model_validator(mode="after")
    def _two_properties(self) -> PropertyPair:
        given = frozenset(name for name in _PROPERTIES if getattr(self, name) is not None)
        if given not in PAIRS:
            written = ", ".join(sorted(given)) or "none"
            raise ValueError(
                f"a state needs exactly one of the pairs (T, P), (P, quality), (T, quality), "
                f"(P, h) or (P, s); this one gives: {written}"
            )
        return self

    @property
    def pair(self) -> str:
        given = frozenset(name for name in _PROPERTIES if getattr(self, name) is not None)
        return PAIRS[given]

    def inputs(self) -> tuple[str, float, float]:
        """(pair, first value, second value) in SI, in the order the pair names them."""
        pair = self.pair
        names = {"TP": ("T", "P"), "PQ": ("P", "quality"), "TQ": ("T", "quality"),
                 "Ph": ("P", "h"), "Ps": ("P", "s")}[pair]
        return pair, float(getattr(self, names[0])), float(getattr(self, names[1]))


class StateSpec(PropertyPair):
    """A fluid and two independent intensive properties."""

    fluid: str = Field(description="CoolProp fluid name, e.g. 'Water', 'Ammonia', 'Air'")


class StreamSpec(StateSpec):
    """A stream: a state, a flow, and optionally velocity, elevation and a declared phase."""

    flow: StreamFlow = Field(description="mass, molar or volumetric flow")
    velocity: Velocity | None = Field(None, description="mean velocity, for kinetic energy")
    elevation: Length | None = Field(None, description="elevation, for potential energy")
    phase: Literal["liquid", "vapour", "two-phase", "supercritical"] | None = Field(
        None, description="the phase the balance states; checked against the computed one")
    description: str | None = None
