"""The reconciliation problem built from a solved balance: its variables and its constraints.

Variables are the balance's uncertain inputs as :mod:`audit.review.uncertainty` reads them
(:func:`~audit.review.inputs.stream_inputs`, :func:`~audit.review.inputs.claim_inputs`):
each stream's two state properties and its flow, each step's uncertain claims. A quantity named
as *unmeasured* (or a reading removed as a gross error) stays a variable without a measurement:
it is estimated from the constraints.

Constraints, per step (each re-evaluated through :func:`audit.solve.evaluate_stream` and
:func:`audit.solve.evaluate_step`, so no physics is written twice):

* mass: the residual of each part of the step that conserves its fluid (an inlet and its paired
  outlet, or the inlets and outlets of one fluid) [kg/s]; for a step where a fluid only enters or
  only leaves (it reacts), the step's own mass residuals (per element for reacting kinds);
* first law: the step's energy residual [W] (or [J] for a batch vessel), with the enthalpy of
  each conserved fluid taken relative to its outlets (:func:`audit.review.margins.reference_shift`),
  so that the formation basis cannot leak into it while mass does not yet close;
* a claimed exchanger duty: the duty the cold side receives equals the claim [W].
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from audit.errors import InputError
from audit.model.steps import step_claims
from audit.model.streams import PAIR_FIELDS
from audit.results import StepResult, StreamResult
from audit.review.inputs import Input, claim_inputs, stream_inputs
from audit.review.margins import flow_groups, reference_shift
from audit.review.runner import StepRunner, with_value
from audit.solve import Solution


@dataclass(frozen=True)
class Variable:
    """One quantity of the reconciliation: ``key`` is ``S20.P`` or ``C1.shaft_power``;
    ``measured`` its reading [SI] and ``u`` its standard uncertainty [SI] (None: unmeasured)."""

    key: str
    item: Input
    measured: float
    u: float | None

    @property
    def is_measured(self) -> bool:
        return self.u is not None


@dataclass(frozen=True)
class Constraint:
    """One equation the reconciled values must satisfy: a step's mass, energy or duty balance."""

    key: str
    step: str
    kind: str  # "mass", "energy" or "duty"
    unit: str  # "kg/s", "W", "J"


def key_of(item: Input) -> str:
    """``S20.P`` for a stream input, ``C1.shaft_power`` (``CIP1.heat[0].added``) for a claim."""
    path = "".join(f"[{p}]" if isinstance(p, int) else f".{p}" for p in item.path)
    return f"{item.ident}{path}"


def build_variables(solution: Solution, unmeasured: Sequence[str] = ()) -> list[Variable]:
    """Every uncertain input of the balance as a variable, plus the ``unmeasured`` quantities
    (keys such as ``S20.quality`` or ``C1.shaft_power``, estimated from the constraints).
    Raises :class:`InputError` for a key that names no stream property or claim."""
    balance, document = solution.balance, solution.document
    unc = balance.balance.uncertainty
    found: dict[str, Variable] = {}
    for stream_id, spec in balance.streams.items():
        for item in stream_inputs(stream_id, spec, unc, document):
            found[key_of(item)] = Variable(key_of(item), item, item.value, item.u)
    for index, step in enumerate(balance.steps):
        for item in claim_inputs(index, step, unc, document):
            found[key_of(item)] = Variable(key_of(item), item, item.value, item.u)
    for key in unmeasured:
        item = found[key].item if key in found else _unmeasured_input(solution, key)
        found[key] = Variable(key, item, item.value, None)
    return list(found.values())


def _unmeasured_input(solution: Solution, key: str) -> Input:
    balance = solution.balance
    owner, _, name = key.partition(".")
    if owner in balance.streams:
        spec = balance.streams[owner]
        pair, a, b = spec.inputs()
        values = dict(zip(PAIR_FIELDS[pair], (a, b), strict=True))
        values["flow"] = spec.flow.value
        if name in values:
            return Input(
                f"stream {owner} {name}", None, "stream", owner, (name,), values[name], math.inf
            )
        raise InputError(
            f"'{key}': stream {owner} is written with "
            f"{', '.join(values)}; an unmeasured quantity is one of these"
        )
    for step in balance.steps:
        if step.id == owner:
            for claim in step_claims(step):
                if ".".join(str(p) for p in claim.path) == name or claim.key == name:
                    return Input(
                        f"step {owner} {claim.key}",
                        None,
                        "step",
                        owner,
                        claim.path,
                        claim.value,
                        math.inf,
                    )
            raise InputError(f"'{key}': step {owner} claims no '{name}'")
    raise InputError(
        f"'{key}' names no stream or step of this balance; write it as "
        "STREAM.PROPERTY (S20.quality) or STEP.CLAIM (C1.shaft_power)"
    )


class Network:
    """The constraints of a balance as a function of its variables' values [SI]."""

    def __init__(self, solution: Solution, variables: Sequence[Variable]) -> None:
        self.solution = solution
        self.runner = StepRunner(solution)
        self.variables = list(variables)
        self.index = {var.key: i for i, var in enumerate(self.variables)}
        self.by_stream: dict[str, list[int]] = defaultdict(list)
        self.by_step: dict[str, list[int]] = defaultdict(list)
        for i, var in enumerate(self.variables):
            table = self.by_stream if var.item.owner == "stream" else self.by_step
            table[var.item.ident].append(i)
        self.constraints: list[Constraint] = []
        self._groups: dict[str, list[tuple[tuple[str, ...], tuple[str, ...]]]] = {}
        self._reacting: dict[str, list[str]] = {}
        streams = solution.streams
        for result in solution.results:
            groups = flow_groups(result, streams)
            self._groups[result.id] = groups
            if result.batch:
                pass
            elif all(ins and outs for ins, outs in groups):
                for ins, outs in groups:
                    self.constraints.append(
                        Constraint(
                            f"{result.id} mass {'+'.join(ins)}→{'+'.join(outs)}",
                            result.id,
                            "mass",
                            "kg/s",
                        )
                    )
            else:
                self._reacting[result.id] = sorted(result.mass_residual)
                for name in self._reacting[result.id]:
                    self.constraints.append(
                        Constraint(f"{result.id} mass {name}", result.id, "mass", "kg/s")
                    )
            self.constraints.append(
                Constraint(f"{result.id} energy", result.id, "energy", "J" if result.batch else "W")
            )
            if "cold_duty" in result.extra and "duty" in result.claimed:
                self.constraints.append(Constraint(f"{result.id} duty", result.id, "duty", "W"))
        self.evaluations = 0
        self._cache: dict[tuple, StreamResult] = {}
        self.last_jacobian: tuple[Any, Any] | None = None  # (x, ∂f/∂x at x), see rounds
        self.correlations: dict[tuple[int, int], float] = {}  # {(i, j): r}, see correlations

    @property
    def x0(self) -> list[float]:
        """The values as read [SI] (an unmeasured quantity: its written value, the start)."""
        return [var.measured for var in self.variables]

    def streams_at(self, x: Sequence[float]) -> dict[str, StreamResult]:
        """The streams re-evaluated at the values ``x`` (each distinct state flashed once)."""
        streams = dict(self.solution.streams)
        for stream_id, indices in self.by_stream.items():
            changes = {
                str(self.variables[i].item.path[0]): float(x[i])
                for i in indices
                if x[i] != self.variables[i].item.value
            }
            if changes:
                key = (stream_id, *sorted(changes.items()))
                if key not in self._cache:
                    if len(self._cache) > 20_000:
                        self._cache.clear()
                    self._cache[key] = self.runner.stream(stream_id, changes)
                streams[stream_id] = self._cache[key]
        return streams

    def steps_touched(self, index: int) -> set[str]:
        """The ids of the steps whose constraints variable ``index`` enters."""
        item = self.variables[index].item
        if item.owner == "step":
            return {item.ident}
        steps = self.runner.balance.steps
        return {steps[i].id for i in self.runner.users.get(item.ident, [])}

    def steps_at(
        self, x: Sequence[float], streams: dict[str, StreamResult], only: set[str] | None = None
    ) -> list[tuple[StepResult, Any]]:
        """The steps (result and claims) re-evaluated on ``streams`` with their claims at ``x``,
        for their balances only (``residuals_only``: their other findings are not wanted)."""
        results = []
        for index, step in enumerate(self.runner.balance.steps):
            if only is not None and step.id not in only:
                continue
            changed: Any = step
            for i in self.by_step.get(step.id, []):
                if x[i] != self.variables[i].item.value:
                    changed = with_value(changed, self.variables[i].item.path, float(x[i]))
            results.append((self.runner.run(index, changed, streams, True)[0], changed))
        return results

    def residuals(self, x: Sequence[float], steps: set[str] | None = None) -> list[float]:
        """The constraint residuals at ``x`` in the order of :attr:`constraints` [kg/s, W or J];
        with ``steps``, just the constraints of those steps are computed (the others are NaN).
        Raises :class:`InputError` where a state cannot be evaluated."""
        self.evaluations += 1
        streams = self.streams_at(x)
        found: dict[str, float] = {}
        for result, step in self.steps_at(x, streams, steps):
            found.update(self._step_residuals(result, step, streams))
        return [found.get(c.key, math.nan) for c in self.constraints]

    def magnitudes(self, x: Sequence[float]) -> list[float]:
        """The size of the terms of each constraint at ``x``, in its unit: the flows of a mass
        balance's streams [kg/s]; Σ ṁ h in and out plus |Q| and |W| of an energy or duty
        balance [W] (a vessel's m u and totals [J]). The round-off of a residual is about
        machine precision times this size."""
        self.evaluations += 1
        streams = self.streams_at(x)
        size: dict[str, float] = {}
        for result, _ in self.steps_at(x, streams):
            flows = sum(streams[s].mass_flow for s in [*result.inlets, *result.outlets])
            energy = abs(result.H_in) + abs(result.H_out) + abs(result.Q) + abs(result.W)
            size[result.id] = energy
            size[f"{result.id} flows"] = flows
        return [
            size[f"{c.step} flows"] if c.kind == "mass" and size[f"{c.step} flows"] else size[c.step]
            for c in self.constraints
        ]

    def _step_residuals(
        self, result: StepResult, step: Any, streams: dict[str, StreamResult]
    ) -> dict[str, float]:
        found: dict[str, float] = {}
        if result.id in self._reacting:
            for name in self._reacting[result.id]:
                found[f"{result.id} mass {name}"] = result.mass_residual.get(name, 0.0)
            found[f"{result.id} energy"] = result.energy_residual
        else:
            for ins, outs in self._groups[result.id] if not result.batch else []:
                found[f"{result.id} mass {'+'.join(ins)}→{'+'.join(outs)}"] = sum(
                    streams[i].mass_flow for i in ins
                ) - sum(streams[o].mass_flow for o in outs)
            shift = 0.0 if result.batch else reference_shift(result, streams, {})[0]
            found[f"{result.id} energy"] = result.energy_residual - shift
        if "cold_duty" in result.extra and "duty" in result.claimed:
            found[f"{result.id} duty"] = result.extra["cold_duty"] - float(step.duty)
        return found
