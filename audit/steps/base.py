"""What every step kind shares: the evaluation context, the registry and the finishing helper.

A step kind is one module in :mod:`audit.steps.kinds` that defines a pydantic model (a subclass of
:class:`audit.model.steps.StepBase` with ``kind: Literal["..."]``) and an ``evaluate(step, ctx)``
function, and calls :func:`register` once. ``evaluate`` turns the step's claims into heat flows into
the step and work delivered by the step, lets :func:`finish_flow_step` apply the laws, and adds the
kind's own checks.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from audit.findings import Finding
from audit.model.steps import HeatClaim, StepBase
from audit.model.tolerances import Tolerances
from audit.physics.efficiency import second_law_efficiency
from audit.properties.engine import PropertyEngine
from audit.results import Balance, BoundaryChoice, HeatFlow, StepResult, StreamResult
from audit.steps.allowances import allowances, declared_rule, reference_shift
from audit.steps.balances import flow_balance
from audit.steps.laws import energy_tolerance, law_findings
from audit.steps.potentials import exchange_at, govern_flow, isothermal_temperature

CONSERVATIVE_WORDS = "conservative boundary temperature"
"""What the note of a heat flow says when its boundary temperature was not declared."""

CONSERVATIVE_NOTE = (
    "Heat with no declared boundary temperature is taken as received from an infinitely hot "
    "source, or rejected at the dead-state temperature: the choice least likely to flag a "
    "violation."
)


@dataclass
class StepContext:
    """What a step's ``evaluate`` may use: the evaluated streams, the property engine, the dead
    state, its tolerances, and where its findings go."""

    streams: Mapping[str, StreamResult]
    engine: PropertyEngine
    T0: float
    P0: float
    tolerances: Tolerances
    line: int | None = None
    findings: list[Finding] = field(default_factory=list)
    residuals_only: bool = False
    """Set by the reconciliation and the review's propagation, which read a step's balances, its
    isentropic efficiency, ``extra`` duties and claim checks (``StepResult.checks``) only, never
    its findings: the law findings are then not raised (:func:`finish_flow_step`), and a kind may
    skip checks that compute none of these (a heat exchanger's approach profile)."""

    def stream(self, stream_id: str) -> StreamResult:
        return self.streams[stream_id]

    def add(self, finding: Finding) -> None:
        self.findings.append(finding)


@dataclass(frozen=True)
class StepKind:
    name: str
    model: type[StepBase]
    evaluate: Callable[[Any, StepContext], StepResult]
    summary: str


REGISTRY: dict[str, StepKind] = {}


def register(
    name: str, model: type[StepBase], evaluate: Callable[[Any, StepContext], StepResult], summary: str
) -> None:
    """Register a step kind under ``name`` (the value of ``kind:`` in the file)."""
    if name in REGISTRY:
        raise ValueError(f"step kind {name!r} registered twice")  # pragma: no cover
    REGISTRY[name] = StepKind(name, model, evaluate, summary)


def boundary_temperature(
    Q: float, declared: float | None, T0: float, coldest: float | None = None
) -> float:
    """The boundary temperature of a heat flow Q [W] into the step [K].

    The declared one when there is one; else the conservative choice: heat in comes from an
    infinitely hot source, heat out goes to the dead state T0 or, when a stream of the step is
    colder than T0, to that coldest stream temperature (a sink the stream can always reject to).
    """
    if declared is not None:
        return declared
    if Q > 0:
        return math.inf
    return T0 if coldest is None else min(T0, coldest)


def inferred_heat(balance_without_heat: Balance) -> float:
    """Heat into the step [W] that closes the first law when no heat is claimed."""
    return -balance_without_heat.energy_residual


def finish_flow_step(
    step: StepBase,
    kind: str,
    ctx: StepContext,
    inlets: Sequence[StreamResult],
    outlets: Sequence[StreamResult],
    heat_flows: list[HeatFlow],
    W: float,
    claimed: list[str],
    inferred: list[str],
    check_energy: bool = True,
    energy_finding: str = "energy-imbalance",
    notes: Sequence[str] = (),
    check_mass: bool = True,
    energy_scale_floor: float = 0.0,
    paired: bool = True,
) -> tuple[StepResult, Balance]:
    """Apply the laws to a flow step and build its :class:`StepResult` (kind checks come after).

    The work bound is the one that governs (:mod:`audit.steps.potentials`): −ΔG at the step's
    one temperature for an isothermal step (its undeclared heat exchanged at that temperature),
    else the exergy drop.

    ``energy_scale_floor`` [W] raises the scale of the relative energy tolerance where the streams'
    own turnover misses the step's largest energy term (a reacting step's heat of reaction).
    ``paired=False`` says that equal numbers of inlets and outlets are not pairs (a mixer with a
    vent; :func:`audit.steps.allowances.flow_groups`).
    """
    tol = ctx.tolerances
    streams = (*inlets, *outlets)
    T_iso = isothermal_temperature([s.T for s in streams], heat_flows, tol.isothermal_band)
    if T_iso is not None:
        exchange_at(heat_flows, T_iso)
    balance = flow_balance(inlets, outlets, heat_flows, W, ctx.T0)
    balance.energy_scale = max(balance.energy_scale, energy_scale_floor)
    basis, classical = govern_flow(balance, T_iso)
    conservative = any(q.conservative for q in heat_flows) if heat_flows else False
    inlet_mass = sum(s.mass_flow for s in inlets)
    if not ctx.residuals_only:  # else only the balance is read: its law findings are not wanted
        allowance = (
            None
            if declared_rule(tol, batch=False)
            else allowances(
                [(s, s.mass_flow) for s in streams],
                heat_flows,
                W,
                balance.W_rev,
                ctx.T0,
                ctx.engine,
            )
        )
        for finding in law_findings(
            step.id,
            balance,
            tol,
            ctx.T0,
            batch=False,
            inlet_mass=inlet_mass,
            conservative_note=CONSERVATIVE_NOTE if conservative else "",
            check_energy=check_energy,
            energy_finding=energy_finding,
            check_mass=check_mass,
            allowance=allowance,
            shift=reference_shift(inlets, outlets, paired),
        ):
            ctx.add(finding)
    result = StepResult(
        id=step.id,
        kind=kind,
        batch=False,
        inlets=[s.id for s in inlets],
        outlets=[s.id for s in outlets],
        balance=balance,
        heat_flows=heat_flows,
        energy_tolerance=energy_tolerance(balance, tol, batch=False),
        bound_basis=basis,
        classical_bound=classical,
        second_law_efficiency=second_law_efficiency(W, balance.W_rev),
        claimed=claimed,
        inferred=inferred,
        notes=list(notes),
        description=step.description,
        line=ctx.line,
    )
    if conservative:
        result.notes.append(CONSERVATIVE_NOTE)
    return result, balance


def heat_flows_from_claims(
    claims: Sequence[HeatClaim], T0: float, coldest: float | None = None
) -> list[HeatFlow]:
    """Heat flows into the step from written claims, with conservative boundary temperatures."""
    return [
        heat_flow(claim.into_step, claim.temperature, T0, claimed=True, coldest=coldest)
        for claim in claims
    ]


def heat_flow(
    Q: float,
    declared: float | None,
    T0: float,
    claimed: bool,
    label: str = "",
    coldest: float | None = None,
) -> HeatFlow:
    """A heat flow Q [W] into the step at the ``declared`` boundary temperature [K] or, when there
    is none, at the conservative one of :func:`boundary_temperature`; ``label`` (``"inferred"``,
    ``"heat loss"``) begins its note, which also says when the boundary is conservative."""
    boundary = BoundaryChoice.DECLARED if declared is not None else BoundaryChoice.CONSERVATIVE
    note = label
    if boundary is BoundaryChoice.CONSERVATIVE:
        note = f"{label}, {CONSERVATIVE_WORDS}" if label else CONSERVATIVE_WORDS
    return HeatFlow(
        Q=Q,
        temperature=boundary_temperature(Q, declared, T0, coldest),
        claimed=claimed,
        note=note,
        boundary=boundary,
    )
