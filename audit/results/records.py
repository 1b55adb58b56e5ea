"""Result records as plain data for JSON and tables (their published fields, in order)."""

from __future__ import annotations

import copy
from dataclasses import fields, is_dataclass
from typing import Any

from audit.results.steps import HEAT_FLOW_FIELDS, STEP_FIELDS, HeatFlow, StepResult
from audit.results.streams import STREAM_FIELDS, StreamResult

_PUBLISHED: dict[type, tuple[str, ...]] = {
    StreamResult: STREAM_FIELDS,
    StepResult: STEP_FIELDS,
    HeatFlow: HEAT_FLOW_FIELDS,
}


def as_record(value: Any) -> Any:
    """``value`` as plain data for JSON and tables, like :func:`dataclasses.asdict`: a result
    object becomes a dict of its published fields in order (:data:`STEP_FIELDS`,
    :data:`HEAT_FLOW_FIELDS`; every field for the other records), recursively; lists, tuples and
    dicts are copied."""
    published = _PUBLISHED.get(type(value))
    if published is not None:
        return {name: as_record(getattr(value, name)) for name in published}
    if is_dataclass(value) and not isinstance(value, type):
        return {name: as_record(getattr(value, name)) for name in (f.name for f in fields(value))}
    if isinstance(value, (list, tuple)):
        return type(value)(as_record(v) for v in value)
    if isinstance(value, dict):
        return {k: as_record(v) for k, v in value.items()}
    return copy.deepcopy(value)
