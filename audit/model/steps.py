"""The input model every step kind builds on: the fields all steps share and heat claims.

A kind's own model (in :mod:`audit.steps.kinds`) subclasses :class:`StepBase` with
``kind: Literal["..."]`` and its claims; :func:`audit.model.balance.balance_model` joins the kinds
into the balance file's ``steps`` union.
"""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, Field, model_validator

from audit.model.quantities import Power, Temperature
from audit.model.tolerances import ToleranceOverrides
from audit.model.uncertainty import StepUncertaintyField, step_spreads


class StepBase(BaseModel):
    """Fields every step has."""

    model_config = ConfigDict(extra="forbid")

    id: str = Field(description="the step's identifier, unique in the balance")
    description: str | None = None
    tolerances: ToleranceOverrides | None = Field(
        None, description="this step's own tolerances, overriding the balance's")
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

    model_config = ConfigDict(extra="forbid")

    added: Power | None = Field(None, description="heat received by the step")
    removed: Power | None = Field(None, description="heat given off by the step")
    temperature: Temperature | None = Field(
        None, description="temperature at which the heat crosses the boundary")

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
