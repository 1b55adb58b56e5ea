"""How a balance file writes a state and a stream.

A state is a fluid and exactly two of T, P, quality, h, s, in one of the pairs (T, P),
(P, quality), (T, quality), (P, h), (P, s). A stream adds its flow and, optionally, its velocity and
elevation (for kinetic and potential energy) and the phase the balance says it has (checked).

A stream may print more than two properties (an over-determined state): besides the pair that
fixes its state it may give any of T, P, quality, h, s, u, specific volume ``v``, density ``rho``
and the saturation temperature ``T_sat``. The pair is the one ``state_from`` names, or else the
first of :data:`PRECEDENCE` whose two properties are given; every other property is a printed
claim, checked against that state (:mod:`audit.printed`).
"""

from __future__ import annotations

from typing import Annotated, ClassVar, Literal

from pydantic import BaseModel, ConfigDict, Field, WithJsonSchema, field_validator, model_validator

from audit.model.composition import check_fractions, named_composition
from audit.model.humid_air import HumidityRatio, RelativeHumidity, check_humid_air
from audit.model.quantities import (
    Density,
    Length,
    SpecificEnthalpy,
    SpecificEntropy,
    SpecificVolume,
    StreamFlow,
    Temperature,
    Velocity,
)
from audit.model.steps import ClaimField, PressureClaim, TemperatureClaim
from audit.model.uncertainty import StreamUncertaintyField

PAIRS = {
    frozenset({"T", "P"}): "TP",
    frozenset({"P", "quality"}): "PQ",
    frozenset({"T", "quality"}): "TQ",
    frozenset({"P", "h"}): "Ph",
    frozenset({"P", "s"}): "Ps",
}
_PROPERTIES = ("T", "P", "quality", "h", "s")
_PAIR_OF_GIVEN = {tuple(name in given for name in _PROPERTIES): pair for given, pair in PAIRS.items()}
"""(T given, P given, quality given, h given, s given) -> pair: a cheap lookup per stream."""
PAIR_FIELDS = {
    "TP": ("T", "P"),
    "PQ": ("P", "quality"),
    "TQ": ("T", "quality"),
    "Ph": ("P", "h"),
    "Ps": ("P", "s"),
}
"""The two written properties of each pair that fixes a state, in the order of ``inputs()``."""
PRECEDENCE = ("PQ", "TQ", "Ph", "Ps", "TP")
"""The pair that fixes an over-determined state when ``state_from`` names none: the first of these
whose two properties are given. A printed quality first: it says the state is saturated, where
(P, h) is ill-conditioned at the phase boundary; then (P, h), what energy balances are built on;
(T, P) last, as it cannot fix a two-phase state."""
CLAIMS = ("T", "P", "quality", "h", "s", "u", "v", "rho", "T_sat")
"""The properties a stream may print; those outside its fixing pair are claims."""


class PropertyPair(BaseModel):
    """Two independent intensive properties (the fluid is given elsewhere)."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)

    T: TemperatureClaim = Field(None, description="temperature")
    P: PressureClaim = Field(None, description="pressure (absolute, or gauge as 'barg')")
    quality: Annotated[float | None, ClaimField("quality")] = Field(
        None, ge=0.0, le=1.0, description="vapour mass fraction, 0 to 1 (two-phase states)"
    )
    h: Annotated[SpecificEnthalpy | None, ClaimField("specific_enthalpy")] = Field(
        None, description="specific enthalpy on the fluid's usual table reference"
    )
    s: Annotated[SpecificEntropy | None, ClaimField("specific_entropy")] = Field(
        None, description="specific entropy on the fluid's usual table reference"
    )

    over_determined: ClassVar[bool] = False
    """Whether more than two properties may be given (streams: yes; a vessel's contents: no)."""

    @field_validator("quality", mode="before")
    @classmethod
    def _quality_number(cls, value: object) -> object:
        if isinstance(value, bool):
            raise ValueError(
                f"expected a plain number here, not the value {value} (quality is the vapour mass "
                "fraction, a number from 0 to 1, e.g. 0.95)"
            )
        return value

    @model_validator(mode="after")
    def _two_properties(self) -> PropertyPair:
        if self._given() in _PAIR_OF_GIVEN and getattr(self, "state_from", None) is None:
            return self
        if self.over_determined:
            self._fixing_pair()
            return self
        given = frozenset(name for name in _PROPERTIES if getattr(self, name) is not None)
        if given not in PAIRS:
            written = ", ".join(sorted(given)) or "none"
            raise ValueError(
                f"a state needs exactly one of the pairs (T, P), (P, quality), (T, quality), "
                f"(P, h) or (P, s); this one gives: {written}"
            )
        return self

    def _given(self) -> tuple[bool, bool, bool, bool, bool]:
        return (
            self.T is not None,
            self.P is not None,
            self.quality is not None,
            self.h is not None,
            self.s is not None,
        )

    @property
    def pair(self) -> str:
        """The input pair that fixes the state (``"TP"``, ``"PQ"``, ``"TQ"``, ``"Ph"``, ``"Ps"``)."""
        simple = _PAIR_OF_GIVEN.get(self._given())
        if simple is not None and getattr(self, "state_from", None) is None:
            return simple
        return self._fixing_pair()

    def _fixing_pair(self) -> str:
        named = getattr(self, "state_from", None)
        given = {name for name in CLAIMS if getattr(self, name, None) is not None}
        if named is not None:
            pair = PAIRS.get(frozenset(named))
            if pair is None:
                raise ValueError(
                    f"state_from names {', '.join(named)}, which is not one of the pairs (T, P), "
                    "(P, quality), (T, quality), (P, h) or (P, s)"
                )
            missing = [name for name in named if name not in given]
            if missing:
                raise ValueError(
                    f"state_from names {', '.join(missing)}, which the stream does not give"
                )
            return pair
        for pair in PRECEDENCE:
            if all(name in given for name in PAIR_FIELDS[pair]):
                return pair
        written = ", ".join(name for name in CLAIMS if name in given) or "none"
        raise ValueError(
            f"a state needs one of the pairs (T, P), (P, quality), (T, quality), (P, h) or (P, s); "
            f"this one gives: {written}"
        )

    def claims(self) -> list[str]:
        """The printed properties outside the fixing pair (checked against the state)."""
        fixing = PAIR_FIELDS[self.pair]
        return [n for n in CLAIMS if n not in fixing and getattr(self, n, None) is not None]

    def inputs(self) -> tuple[str, float, float]:
        """(pair, first value, second value) in SI, in the order the pair names them."""
        pair = self.pair
        names = PAIR_FIELDS[pair]
        return pair, float(getattr(self, names[0])), float(getattr(self, names[1]))


class StateSpec(PropertyPair):
    """A fluid and two independent intensive properties."""

    fluid: str = Field(description="CoolProp fluid name, e.g. 'Water', 'Ammonia', 'Air'")


class StreamSpec(StateSpec):
    """A stream: a state, a flow, and optionally velocity, elevation, a declared phase and printed
    properties beyond the two that fix its state (see the module docstring).

    Humid air is ``fluid: humid air`` with T, P and one humidity (:mod:`audit.model.humid_air`).
    A gas mixture gives ``composition`` (mole fractions by formula or CoolProp name, or mass
    fractions with ``composition_basis: mass``, or a named composition such as ``air``) instead of
    ``fluid``, with T and P; it is evaluated as an ideal-gas mixture (:mod:`audit.properties.mixtures`).
    """

    fluid: str | None = Field(  # type: ignore[assignment]
        None,
        description="CoolProp fluid name, e.g. 'Water', 'Ammonia', 'Air' (or give "
        "'composition' for a gas mixture); or a liquid by its plain name, e.g. 'propylene "
        "glycol' with 'fraction' (see 'fraction')",
    )
    composition: dict[str, float] | str | None = Field(
        None,
        description="a gas mixture instead of 'fluid': fractions by species formula or "
        "CoolProp name, e.g. {CH4: 0.97, N2: 0.02, CO2: 0.01}, summing to 1; or a named "
        "composition: 'air' (dry air)",
    )
    composition_basis: Literal["mole", "mass"] = Field(
        "mole", description="whether the composition gives mole (default) or mass fractions"
    )
    fraction: Annotated[
        float | None,
        WithJsonSchema(
            {
                "anyOf": [
                    {"type": "number", "minimum": 0, "maximum": 1},
                    {"type": "string", "pattern": r"^\s*[0-9]+(\.[0-9]*)?\s*%\s*$"},
                    {"type": "null"},
                ]
            }
        ),
    ] = Field(
        None,
        description="an aqueous solution (brine, glycol): the solute's fraction, 0 to 1 or a "
        "percentage ('30 %'), with 'fraction_basis'; 'fluid' names the solute: ethylene glycol, "
        "propylene glycol, glycerol, ethanol, methanol, ammonia, calcium chloride, magnesium "
        "chloride, sodium chloride, lithium chloride, potassium carbonate, potassium acetate, "
        "potassium formate (Melinder 2010 fits, within their ranges; T and P only). Pure "
        "heat-transfer liquids take no fraction: diethylbenzene, d-limonene",
    )
    fraction_basis: Literal["mass", "volume"] | None = Field(
        None,
        description="whether 'fraction' is by mass or by volume (volume: pure solute and water "
        "before mixing, at 20 °C; offered for the glycols and glycerol)",
    )
    flow: StreamFlow = Field(description="mass, molar or volumetric flow")
    velocity: Velocity | None = Field(None, description="mean velocity, for kinetic energy")
    elevation: Length | None = Field(None, description="elevation, for potential energy")
    u: SpecificEnthalpy | None = Field(
        None, description="printed specific internal energy (a claim checked against the state)"
    )
    v: SpecificVolume | None = Field(
        None, description="printed specific volume (a claim checked against the state)"
    )
    rho: Density | None = Field(None, description="printed density (a claim checked against the state)")
    T_sat: TemperatureClaim = Field(
        None, description="printed saturation temperature at the stream's pressure (a claim)"
    )
    state_from: (
        tuple[Literal["T", "P", "quality", "h", "s"], Literal["T", "P", "quality", "h", "s"]] | None
    ) = Field(
        None,
        description="the two properties that fix the state when more are printed, e.g. "
        "[P, h]; without it the first given of (P, quality), (T, quality), (P, h), (P, s), "
        "(T, P)",
    )
    phase: Literal["liquid", "vapour", "two-phase", "supercritical"] | None = Field(
        None, description="the phase the balance states; checked against the computed one"
    )
    description: str | None = None
    uncertainty: StreamUncertaintyField = None
    relative_humidity: RelativeHumidity | None = Field(
        None,
        description="humid air: relative humidity, a fraction from 0 to 1 or a percentage with "
        "'%' (e.g. 0.6 or '60 %')",
    )
    humidity_ratio: HumidityRatio | None = Field(
        None,
        description="humid air: kg of water vapour per kg of dry air, or with 'g/kg' "
        "(e.g. 0.010 or '10 g/kg')",
    )
    wet_bulb: Temperature | None = Field(
        None, description="humid air: thermodynamic wet-bulb temperature"
    )
    dew_point: Temperature | None = Field(None, description="humid air: dew-point temperature")
    flow_of: Literal["humid air", "dry air"] | None = Field(
        None,
        description="humid air: whether the mass flow written is of the humid air (default) or "
        "of its dry air",
    )

    over_determined: ClassVar[bool] = True

    @field_validator("state_from", mode="before")
    @classmethod
    def _pair_as_text(cls, value: object) -> object:
        """A stream table writes the pair as text: 'P, h' or 'P h'."""
        if isinstance(value, str):
            return [part for part in value.replace(",", " ").split() if part]
        return value

    @field_validator("fraction", mode="before")
    @classmethod
    def _fraction_number(cls, value: object) -> object:
        """A fraction is a number from 0 to 1 or a percentage written '30 %'."""
        if isinstance(value, bool):
            raise ValueError(f"expected a fraction (0 to 1, or '30 %'), not {value}")
        if isinstance(value, str) and value.strip().endswith("%"):
            try:
                return float(value.strip()[:-1]) / 100.0
            except ValueError:
                raise ValueError(f"'{value}' is not a percentage such as '30 %'") from None
        if isinstance(value, int | float) and not 0.0 <= value <= 1.0:
            raise ValueError(
                f"a fraction is a number from 0 to 1; {value} is not (write '{value} %' for a "
                "percentage)"
            )
        return value

    @model_validator(mode="after")
    def _solution(self) -> StreamSpec:
        if self.fraction is None and self.fraction_basis is None:
            return self
        if self.fraction is None or self.fraction_basis is None:
            raise ValueError(
                "a solution gives both 'fraction' and 'fraction_basis' (mass or volume): the "
                "balance says which"
            )
        if not 0.0 <= self.fraction <= 1.0:
            raise ValueError(f"a fraction is from 0 to 100 %; {self.fraction * 100:g} % is not")
        if self.fluid is None:
            raise ValueError("a solution names its solute in 'fluid', e.g. 'propylene glycol'")
        if self.pair != "TP" or self.claims() or self.state_from is not None:
            raise ValueError("a liquid solution is written with T and P only")
        if self.phase not in (None, "liquid"):
            raise ValueError(f"a liquid solution is a liquid; it cannot be declared {self.phase}")
        return self

    @model_validator(mode="after")
    def _fluid_or_composition(self) -> StreamSpec:
        if (self.fluid is None) == (self.composition is None):
            raise ValueError(
                "a stream needs exactly one of 'fluid' (a pure fluid) or 'composition' (a gas mixture)"
            )
        check_humid_air(self)
        if self.composition is None:
            return self
        if self.claims() or self.state_from is not None:
            raise ValueError("a gas mixture is written with T and P only")
        if isinstance(self.composition, str):
            if self.composition_basis == "mass":
                raise ValueError(
                    "a named composition gives mole fractions; drop 'composition_basis: mass'"
                )
            self.composition = named_composition(self.composition)
        check_fractions(self.composition, self.composition_basis)
        if self.pair != "TP":
            raise ValueError("a gas mixture is written with T and P")
        if self.phase not in (None, "vapour"):
            raise ValueError(f"a gas mixture is a gas; it cannot be declared {self.phase}")
        return self
