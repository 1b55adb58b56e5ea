"""Record values read through a part: records are composed, never copied field by field."""

from __future__ import annotations

from operator import attrgetter
from typing import Any, Generic, TypeVar

V = TypeVar("V")


class Delegated(property, Generic[V]):
    """A read-only value of a record's part (a stream's :class:`State`, a step's
    :class:`Balance`), read as the record's own attribute: records are composed, not copied.

    A property whose getter is :func:`operator.attrgetter` of ``part.name``: reading it runs no
    Python code (reports and the step laws read these values hundreds of thousands of times in a
    large balance). ``Delegated[float](...)`` keeps its value type in ``__orig_class__``."""

    def __init__(self, part: str, name: str, doc: str) -> None:
        super().__init__(attrgetter(f"{part}.{name}"))
        self.part, self.name, self.__doc__ = part, name, doc

    def __set_name__(self, owner: Any, name: str) -> None:
        pass  # property's own naming is not needed: the getter is not a function
