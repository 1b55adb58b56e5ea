"""How a balance declares the reference its printed h and s are written on, and the formulation
(equation of state) its numbers were computed with.

References. Tables of one fluid print h and s from different zero points; the differences are a
constant in h and a constant in s. A balance names the common ones in the trade's own words:

* ``IIR``: h = 200 kJ/kg and s = 1 kJ/(kg·K) for the saturated liquid at 0 °C (International
  Institute of Refrigeration);
* ``ASHRAE``: h = 0 and s = 0 for the saturated liquid at −40 °C;
* ``NBP``: h = 0 and s = 0 for the saturated liquid at the normal boiling point (101.325 kPa);
* ``IAPWS``: u = 0 and s = 0 for the liquid at the triple point (water; IAPWS-95 and IF97);

or gives an explicit (h, s) at a stated state (:class:`ExplicitReference`). ``reference:`` under
``balance:`` is one of these for every pure fluid of the balance, or a mapping fluid → reference.

Formulations. ``formulation:`` says which equation of state the balance's numbers were computed
with: ``reference`` (the default: the fluid's reference equation, IAPWS-95 for water) or ``IF97``
(IAPWS-IF97, the industrial formulation for water and steam); one word for every fluid it applies
to, or a mapping fluid → formulation.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, model_validator

from audit.model.quantities import Pressure, SpecificEnthalpy, SpecificEntropy, Temperature

NamedReference = Literal["IIR", "ASHRAE", "NBP", "IAPWS"]
NAMED_REFERENCES: dict[str, str] = {
    "IIR": "h = 200 kJ/kg, s = 1 kJ/(kg·K) for the saturated liquid at 0 °C",
    "ASHRAE": "h = 0, s = 0 for the saturated liquid at −40 °C",
    "NBP": "h = 0, s = 0 for the saturated liquid at the normal boiling point (101.325 kPa)",
    "IAPWS": "u = 0, s = 0 for the liquid at the triple point",
}
"""Each named reference in plain words (the README and the method sheet print them)."""

Formulation = Literal["reference", "IF97"]
FORMULATION_FLUIDS: dict[str, frozenset[str]] = {"IF97": frozenset({"Water"})}
"""The fluids each formulation other than ``reference`` exists for (CoolProp names)."""


class ExplicitReference(BaseModel):
    """h and s at a stated state (T and P, or T or P with a quality)."""

    model_config = ConfigDict(extra="forbid")

    h: SpecificEnthalpy = Field(description="the printed h of the stated state")
    s: SpecificEntropy = Field(description="the printed s of the stated state")
    T: Temperature | None = Field(None, description="temperature of the stated state")
    P: Pressure | None = Field(None, description="pressure of the stated state")
    quality: float | None = Field(None, ge=0.0, le=1.0, description="quality of the stated state")

    @model_validator(mode="after")
    def _state(self) -> ExplicitReference:
        given = {n for n in ("T", "P", "quality") if getattr(self, n) is not None}
        if given not in ({"T", "P"}, {"T", "quality"}, {"P", "quality"}):
            raise ValueError(
                "a reference state is given by T and P, or by T or P with a quality; "
                f"this one gives: {', '.join(sorted(given)) or 'none'}"
            )
        return self

    def inputs(self) -> tuple[str, float, float]:
        """(pair, a, b) of the stated state, in the engine's pair names."""
        if self.quality is None:
            return "TP", float(self.T), float(self.P)  # type: ignore[arg-type]
        if self.T is not None:
            return "TQ", float(self.T), self.quality
        return "PQ", float(self.P), self.quality  # type: ignore[arg-type]


Reference = NamedReference | ExplicitReference
ReferenceField = Reference | dict[str, Reference] | None
FormulationField = Formulation | dict[str, Formulation] | None


def for_fluid(declared: object, fluid: str, aliases: tuple[str, ...] = ()) -> object:
    """The declaration (a reference or a formulation) that applies to ``fluid``: the one word for
    every fluid, or the mapping's entry under its name or one of its ``aliases``; None when none."""
    if not isinstance(declared, dict):
        return declared
    for name in (fluid, *aliases):
        if name in declared:
            return declared[name]
    return None
