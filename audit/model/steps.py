"""The input model every step kind builds on: the fields all steps share, heat claims, and the
declaration of a step's claims.

A kind's own model (in :mod:`audit.steps.kinds`) subclasses :class:`StepBase` with
``kind: Literal["..."]`` and its claims; :func:`audit.model.balance.balance_model` joins the kinds
into the balance file's ``steps`` union.

**Claims are declared once, on the field.** A claim is a number the step states about itself (a
shaft power, a duty, a boundary temperature, a vessel's state) as opposed to what it is connected
to. Its field carries a :class:`ClaimField` marker, usually through one of the aliases below
(``shaft_power: PowerClaim = ...``), or written out when it needs more
(``work_delivered: Annotated[Power | None, ClaimField("power", "work_absorbed")]``).
:func:`step_claims` reads the markers, through nested models and lists of them, and is the only
list of a step's claims: every declared claim is an uncertain input of the review
(:mod:`audit.review.inputs`), a candidate for probable causes (:mod:`audit.review.slips`) and a
key a step's ``uncertainty:`` may name (:func:`step_spreads`).
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from typing import Annotated

from pydantic import BaseModel, ConfigDict, Field, model_validator

from audit.errors import UnitError
from audit.model.quantities import Current, Power, Pressure, Temperature, Voltage
from audit.model.tolerances import ToleranceOverrides
from audit.model.uncertainty import (
    SPREAD_KINDS,
    Spread,
    StepUncertaintyField,
    coverage_divisor,
    parse_spread,
)


# -- the declaration of a claim ------------------------------------------------------------------
@dataclass(frozen=True)
class ClaimField:
    """Marks a field of a step model as a claim.

    ``category`` names the balance default it takes (a field of
    :class:`audit.model.uncertainty.BalanceUncertainty`: ``power`` for shaft or electrical power
    and work, ``duty`` for heat duties and heat losses, ``energy``, ``temperature``, ``pressure``,
    ``mass``, ``quality``; or a kind of spread with no default, such as ``voltage``).
    ``opposite`` names the sibling field that states the same amount the other way round
    (``added``/``removed``, ``work_delivered``/``work_absorbed``), when there is one."""

    category: str
    opposite: str | None = None

    def __post_init__(self) -> None:
        if self.kind not in SPREAD_KINDS:
            raise ValueError(f"unknown kind of claim '{self.category}'")

    @property
    def kind(self) -> str:
        """The kind of spread and of value (a key of :data:`audit.model.uncertainty.SPREAD_KINDS`)."""
        return "power" if self.category == "duty" else self.category


PowerClaim = Annotated[Power | None, ClaimField("power")]
"""A shaft or electrical power, or a work rate [W], claimed by the step."""
DutyClaim = Annotated[Power | None, ClaimField("duty")]
"""A heat duty or heat loss [W] claimed by the step."""
TemperatureClaim = Annotated[Temperature | None, ClaimField("temperature")]
"""A temperature [K] claimed by the step (a boundary, source, sink or operating temperature)."""
PressureClaim = Annotated[Pressure | None, ClaimField("pressure")]
"""A pressure [Pa] claimed by the step."""
VoltageClaim = Annotated[Voltage | None, ClaimField("voltage")]
"""A voltage [V] claimed by the step."""
CurrentClaim = Annotated[Current | None, ClaimField("current")]
"""A current [A] claimed by the step."""


def claim_fields(model: type[BaseModel]) -> dict[str, ClaimField]:
    """The fields of ``model`` declared as claims, with their declaration."""
    known = _CLAIM_FIELDS.get(model)
    if known is None:
        known = _CLAIM_FIELDS[model] = {
            name: meta
            for name, info in model.model_fields.items()
            for meta in info.metadata
            if isinstance(meta, ClaimField)
        }
    return dict(known)


_CLAIM_FIELDS: dict[type[BaseModel], dict[str, ClaimField]] = {}
""":func:`claim_fields` of each model class, read once (the review asks for every step)."""


@dataclass(frozen=True)
class Claim:
    """One number a step claims: its field ``path`` (names and list positions), its dotted
    ``key`` (without positions), its declaration and its value [SI]."""

    path: tuple[str | int, ...]
    key: str
    declared: ClaimField
    value: float

    @property
    def kind(self) -> str:
        """Its kind of spread and of value: power, energy, temperature, pressure, ..."""
        return self.declared.kind

    @property
    def category(self) -> str:
        """The balance default it takes: power, duty, energy, temperature, pressure, ..."""
        return self.declared.category

    @property
    def opposite(self) -> str | None:
        """The sibling field that states it the other way round, if any."""
        return self.declared.opposite


def step_claims(model: BaseModel, prefix: tuple[str | int, ...] = ()) -> Iterator[Claim]:
    """Every claim a step writes (its fields declared with :class:`ClaimField` that hold a
    number), in nested models and lists of them too."""
    declared = claim_fields(type(model))
    for name in type(model).model_fields:
        value = getattr(model, name)
        if value is None:
            continue
        if isinstance(value, BaseModel):
            yield from step_claims(value, (*prefix, name))
        elif isinstance(value, list):
            for index, item in enumerate(value):
                if isinstance(item, BaseModel):
                    yield from step_claims(item, (*prefix, name, index))
        elif name in declared and isinstance(value, (int, float)) and not isinstance(value, bool):
            path = (*prefix, name)
            key = ".".join(str(p) for p in path if not isinstance(p, int))
            yield Claim(path, key, declared[name], float(value))


def step_spreads(step: BaseModel) -> tuple[str | None, dict[str, Spread], float | None]:
    """(``'exact'``, ``'measured'`` or None; the step's own spreads by claim key; the divisor of
    its own coverage, or None to use the balance's). Raises :class:`UnitError` naming a key that is
    not a claim of the step, or a spread that cannot be read."""
    declared = getattr(step, "uncertainty", None)
    if declared is None or isinstance(declared, str):
        return declared, {}, None
    claims = {claim.key: claim for claim in step_claims(step)}
    spreads: dict[str, Spread] = {}
    divisor = None
    for key, text in declared.items():
        if key == "coverage":
            divisor = coverage_divisor(str(text))
            continue
        if key not in claims:
            known = ", ".join(sorted(claims)) or "none"
            raise UnitError(
                f"the uncertainty names '{key}', which is not a claim this step "
                f"gives; its claims are: {known}"
            )
        spreads[key] = parse_spread(text, claims[key].kind)
    return "declared", spreads, divisor


# -- the models ------------------------------------------------------------------------------------
class StepBase(BaseModel):
    """Fields every step has."""

    model_config = ConfigDict(extra="forbid", defer_build=True)

    id: str = Field(description="the step's identifier, unique in the balance")
    description: str | None = None
    tolerances: ToleranceOverrides | None = Field(
        None, description="this step's own tolerances, overriding the balance's"
    )
    uncertainty: StepUncertaintyField = None

    @model_validator(mode="after")
    def _uncertainty_names_claims(self) -> StepBase:
        step_spreads(self)  # raises naming a key that is not a claim, or an unreadable spread
        return self

    def stream_ids(self) -> tuple[list[str], list[str]]:
        """(inlet stream ids, outlet stream ids) for the plant's topology."""
        raise NotImplementedError


class HeatClaim(BaseModel):
    """A heat flow written without signs: ``added`` to the step or ``removed`` from it, crossing
    the boundary at ``temperature`` (the source or sink temperature) when it is known."""

    model_config = ConfigDict(extra="forbid", defer_build=True)  # built with the step kinds

    added: Annotated[Power | None, ClaimField("duty", "removed")] = Field(
        None, description="heat received by the step"
    )
    removed: Annotated[Power | None, ClaimField("duty", "added")] = Field(
        None, description="heat given off by the step"
    )
    temperature: TemperatureClaim = Field(
        None, description="temperature at which the heat crosses the boundary"
    )

    @model_validator(mode="after")
    def _one_direction(self) -> HeatClaim:
        if (self.added is None) == (self.removed is None):
            raise ValueError("a heat flow needs exactly one of 'added' or 'removed'")
        for value in (self.added, self.removed):
            if value is not None and value < 0:
                raise ValueError("write heat as a positive amount under 'added' or 'removed'")
        return self

    @property
    def into_step(self) -> float:
        return self.added if self.added is not None else -float(self.removed)  # type: ignore
