"""A reviewer's acceptance of one finding, as written in a balance or in the file beside it.

Applying acceptances to an audit's findings is :mod:`audit.review.acceptance`'s job.
"""

from __future__ import annotations

import difflib
from datetime import date

from pydantic import BaseModel, ConfigDict, Field, PrivateAttr, field_validator, model_validator

from audit.findings import NAMES, Finding
from audit.printable import unsafe


class Acceptance(BaseModel):
    """One accepted finding, as written in the balance or in the file beside it."""

    model_config = ConfigDict(extra="forbid")

    finding: str = Field(description="the finding's name, e.g. 'work-above-bound'")
    step: str | None = Field(None, description="the id of the step the finding is reported at")
    stream: str | None = Field(
        None, description="the id of the stream, for findings reported at a stream"
    )
    reason: str = Field(min_length=1, description="why the finding may stand")
    accepted_by: str = Field(min_length=1, description="who accepted it")
    expires: date = Field(description="last day the acceptance holds (YYYY-MM-DD)")
    _source: str | None = PrivateAttr(None)

    @property
    def source(self) -> str | None:
        """Where it was written (file:line), once :meth:`placed` has been called."""
        return self._source

    def placed(self, source: str) -> Acceptance:
        """A copy that remembers where it was written (file:line), for the messages."""
        copy = self.model_copy()
        copy._source = source
        return copy

    @field_validator("finding")
    @classmethod
    def _known_name(cls, value: str) -> str:
        if value not in NAMES:
            close = difflib.get_close_matches(value, list(NAMES), n=1)
            hint = f"; did you mean '{close[0]}'?" if close else ""
            raise ValueError(f"'{value}' is not a finding name{hint}")
        if value.startswith("acceptance-"):
            raise ValueError(f"'{value}' is about acceptances themselves and cannot be accepted")
        return value

    @field_validator("reason", "accepted_by")
    @classmethod
    def _not_blank(cls, value: str) -> str:
        if not "".join(c for c in value if not c.isspace() and not unsafe(c)):
            raise ValueError("must not be blank (invisible characters do not count)")
        return value

    @field_validator("expires", mode="before")
    @classmethod
    def _date_as_written(cls, value: object) -> object:
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            raise ValueError(
                f"{value!r} is a number, not a date; write the date as YYYY-MM-DD (e.g. 2026-12-31)"
            )
        return value

    @model_validator(mode="after")
    def _names_a_place(self) -> Acceptance:
        if self.step is None and self.stream is None:
            raise ValueError("an acceptance names the 'step' (or the 'stream') of the finding")
        return self

    def matches(self, finding: Finding) -> bool:
        """True when ``finding`` is the one this acceptance is about."""
        return (
            finding.name == self.finding
            and (self.step is None or finding.step == self.step)
            and (self.stream is None or finding.stream == self.stream)
        )

    def where(self) -> str:
        parts = []
        if self.step is not None:
            parts.append(f"step {self.step}")
        if self.stream is not None:
            parts.append(f"stream {self.stream}")
        return ", ".join(parts)

    def label(self) -> str:
        """The text a report shows beside an accepted finding."""
        return f"{self.reason} (accepted by {self.accepted_by}, until {self.expires.isoformat()})"
