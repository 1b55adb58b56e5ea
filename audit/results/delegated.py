"""Record values read through a part: records are composed, never copied field by field."""

from __future__ import annotations

from typing import Any, Generic, TypeVar

V = TypeVar("V")


class Delegated(Generic[V]):
    """A read-only value of a record's part (a stream's :class:`State`, a step's
    :class:`Balance`), read as the record's own attribute: records are composed, not copied."""

    def __init__(self, part: str, name: str, doc: str) -> None:
        self.part, self.name, self.__doc__ = part, name, doc

    def __get__(self, record: Any, owner: Any = None) -> V:
        if record is None:
            return self  # type: ignore[return-value]  # the descriptor itself, on the class
        return getattr(getattr(record, self.part), self.name)
