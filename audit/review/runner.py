"""Re-evaluation of the steps of a solved balance with some inputs changed.

The review never repeats the solver's physics: a perturbed stream is re-flashed by
:func:`audit.solve.evaluate_stream` and the step re-run by :func:`audit.solve.evaluate_step` (the
kind's own ``evaluate``). :class:`StepRunner` holds what those calls need and counts them.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import replace
from typing import Any

from pydantic import BaseModel

from audit.findings import Finding
from audit.properties.engine import PropertyEngine
from audit.results import StepResult, StreamResult
from audit.solve import Solution, evaluate_step, evaluate_stream

KEPT_STREAMS = 20_000
"""Most re-flashed streams a :class:`StepRunner` keeps (then it starts again)."""


class Overlay(Mapping[str, StreamResult]):
    """The streams of a balance with some replaced, read through without copying the balance's
    (a re-evaluation replaces one or two streams of thousands)."""

    __slots__ = ("base", "changed")

    def __init__(self, base: Mapping[str, StreamResult], changed: Mapping[str, StreamResult]) -> None:
        self.base = base
        self.changed = changed

    def __getitem__(self, stream_id: str) -> StreamResult:
        found = self.changed.get(stream_id)
        return self.base[stream_id] if found is None else found

    def __contains__(self, stream_id: object) -> bool:
        return stream_id in self.changed or stream_id in self.base

    def __iter__(self) -> Iterator[str]:
        yield from self.base
        yield from (k for k in self.changed if k not in self.base)

    def __len__(self) -> int:
        return len(self.base) + sum(1 for k in self.changed if k not in self.base)


def overlay(
    base: Mapping[str, StreamResult], changed: Mapping[str, StreamResult] | None
) -> Mapping[str, StreamResult]:
    """``base`` with the streams of ``changed`` in place of its own (:class:`Overlay`)."""
    return Overlay(base, changed) if changed else base


class StepRunner:
    """Re-evaluates steps of a solved balance with some inputs changed: perturbed streams are
    re-flashed and the step re-evaluated through the solver's public functions
    (:func:`audit.solve.evaluate_stream`, :func:`audit.solve.evaluate_step`)."""

    def __init__(self, solution: Solution) -> None:
        balance = solution.balance
        self.balance = balance
        self.document = solution.document
        self.engine = solution.engine
        self.streams = solution.streams
        self.index = {step.id: i for i, step in enumerate(balance.steps)}
        self.users: dict[str, list[int]] = defaultdict(list)
        for i, step in enumerate(balance.steps):
            inlets, outlets = step.stream_ids()
            for stream_id in dict.fromkeys([*inlets, *outlets]):
                self.users[stream_id].append(i)
        self.runs = 0
        self._kept: dict[tuple, StreamResult] = {}

    def stream(self, stream_id: str, changes: dict[str, Any]) -> StreamResult:
        """The stream re-evaluated with some of its inputs (T, P, quality, h, s, flow, a solution's
        fraction basis) changed; kept for the review, as the steps sharing a stream perturb it
        alike (the same rounding of the same written value)."""
        key = (stream_id, *changes.items())
        kept = self._kept.get(key)
        if kept is not None:
            return kept
        spec = self.balance.streams[stream_id]
        update: dict[str, Any] = {}
        for name, value in changes.items():
            update[name] = replace(spec.flow, value=value) if name == "flow" else value
        if len(self._kept) >= KEPT_STREAMS:  # a long reconciliation: memory stays bounded
            self._kept.clear()
        kept = self._kept[key] = evaluate_stream(
            stream_id, spec.model_copy(update=update), self.engine, self.streams[stream_id].line
        )
        return kept

    def run(
        self,
        index: int,
        step: Any = None,
        streams: Mapping[str, StreamResult] | None = None,
        residuals_only: bool = False,
    ) -> tuple[StepResult, list[Finding]]:
        """Evaluate step ``index`` (or a changed copy ``step``) with some streams replaced
        (``residuals_only``: see :func:`audit.solve.evaluate_step`)."""
        self.runs += 1
        return evaluate_step(
            self.balance,
            self.document,
            self.engine,
            overlay(self.streams, streams),
            index,
            step,
            residuals_only,
        )

    def on_engine(
        self, index: int, engine: PropertyEngine
    ) -> tuple[StepResult, Mapping[str, StreamResult]]:
        """Step ``index`` with each of its streams re-flashed on ``engine`` (another formulation
        of a fluid): the step's result and the streams it was evaluated on."""
        inlets, outlets = self.balance.steps[index].stream_ids()
        streams = {
            sid: evaluate_stream(sid, self.balance.streams[sid], engine, self.streams[sid].line)
            for sid in dict.fromkeys([*inlets, *outlets])
        }
        self.runs += 1
        everything = overlay(self.streams, streams)
        result, _ = evaluate_step(self.balance, self.document, engine, everything, index)
        return result, everything


def with_value(model: BaseModel, path: Sequence[str | int], value: Any) -> BaseModel:
    """A copy of ``model`` with the field at ``path`` (names and list positions) set to ``value``
    (no re-validation: the value is already SI)."""
    name = str(path[0])
    if len(path) == 1:
        return model.model_copy(update={name: value})
    child = getattr(model, name)
    if isinstance(path[1], int):
        items = list(child)
        items[path[1]] = with_value(items[path[1]], path[2:], value) if path[2:] else value
        return model.model_copy(update={name: items})
    return model.model_copy(update={name: with_value(child, path[1:], value)})
