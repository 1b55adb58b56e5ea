"""Closed vessel (batch step): a fixed mass of one fluid goes from an initial to a final state.

Claims are totals [J], not rates: ``heat`` (a list of ``added``/``removed`` amounts, each with the
temperature of its source or sink if known) and ``work_delivered`` (work done BY the contents, e.g.
pushing a piston) or ``work_absorbed`` (work done ON the contents, e.g. a stirrer or a compressor
piston). Omit one of heat or work to have it inferred.

Balances (design note 2.6): Q − W = m (u2 − u1); S_gen = m (s2 − s1) − Σ Q_j/T_j;
W_rev = −(ΔU − T0 ΔS) + Σ Q_j (1 − T0/T_j), total work.

Bound basis (:mod:`audit.steps.potentials`): isothermal (T1, T2 and every declared heat
temperature within ``isothermal_band`` of one temperature T, undeclared heat exchanged at T) gives
W ≤ −ΔA = −(ΔU − T ΔS), the useful work at most −ΔA − P0 ΔV and, when also isobaric, the work
other than expansion work at most −ΔG = −ΔA − P ΔV; otherwise the closed-system exergy drop, and
the useful work at most W_rev − P0 ΔV.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import BaseModel, ConfigDict, model_validator

from audit.errors import StateError
from audit.model.quantities import Energy, Mass
from audit.model.steps import ClaimField, TemperatureClaim
from audit.model.streams import PropertyPair
from audit.physics.efficiency import second_law_efficiency
from audit.results import HeatFlow, StepResult, StreamResult
from audit.steps.allowances import allowances, declared_rule
from audit.steps.balances import closed_balance
from audit.steps.base import CONSERVATIVE_NOTE, StepBase, StepContext, heat_flow, register
from audit.steps.laws import energy_tolerance, law_findings
from audit.steps.potentials import exchange_at, govern_closed, isothermal_temperature


class BatchHeat(BaseModel):
    """A heat amount [J] written without signs."""

    model_config = ConfigDict(extra="forbid", defer_build=True)  # built with its step kind

    added: Annotated[Energy | None, ClaimField("energy", "removed")] = None
    removed: Annotated[Energy | None, ClaimField("energy", "added")] = None
    temperature: TemperatureClaim = None

    @model_validator(mode="after")
    def _one_direction(self) -> BatchHeat:
        if (self.added is None) == (self.removed is None):
            raise ValueError("a heat amount needs exactly one of 'added' or 'removed'")
        for value in (self.added, self.removed):
            if value is not None and value < 0:
                raise ValueError("write heat as a positive amount under 'added' or 'removed'")
        return self


class Vessel(StepBase):
    kind: Literal["vessel"]
    fluid: str
    mass: Annotated[Mass, ClaimField("mass")]
    initial: PropertyPair
    final: PropertyPair
    heat: list[BatchHeat] | None = None
    work_delivered: Annotated[Energy | None, ClaimField("energy", "work_absorbed")] = None
    work_absorbed: Annotated[Energy | None, ClaimField("energy", "work_delivered")] = None

    @model_validator(mode="after")
    def _one_work(self) -> Vessel:
        if self.work_delivered is not None and self.work_absorbed is not None:
            raise ValueError("give 'work_delivered' or 'work_absorbed', not both")
        if self.mass <= 0:
            raise ValueError("the vessel's mass must be positive")
        return self

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [], []


def _contents(step: Vessel, ctx: StepContext, which: str, spec: PropertyPair) -> StreamResult:
    pair, a, b = spec.inputs()
    try:
        s = ctx.engine.state(step.fluid, pair, a, b)
    except StateError as exc:
        raise StateError(f"the {which} state: {exc.problem.message}") from None
    return StreamResult(
        id=f"{step.id}.{which}",
        state=s,
        mass_flow=step.mass,
        molar_flow=step.mass / s.molar_mass,
        flow_as_written="",
    )


def evaluate(step: Vessel, ctx: StepContext) -> StepResult:
    """Apply the laws of a closed step from the initial to the final contents (mass, first law, work
    bound, entropy generation; totals in J and J/K) against the governing bound (−ΔA isothermal,
    else the exergy drop; the useful-work bound beside it).

    Sign convention: Q is heat into the step, W is work delivered by the step, both totals over the
    process; heat not claimed is inferred.
    """
    initial = _contents(step, ctx, "initial", step.initial)
    final = _contents(step, ctx, "final", step.final)
    m = step.mass
    dU = m * (final.u - initial.u)
    coldest = min(initial.T, final.T)
    claimed, inferred = [], []
    if step.work_delivered is not None:
        W, work_claimed = step.work_delivered, True
    elif step.work_absorbed is not None:
        W, work_claimed = -step.work_absorbed, True
    else:
        W, work_claimed = 0.0, False
    heat: list[HeatFlow] = []
    if step.heat is not None:
        for claim in step.heat:
            Q = claim.added if claim.added is not None else -float(claim.removed)  # type: ignore
            heat.append(heat_flow(Q, claim.temperature, ctx.T0, claimed=True, coldest=coldest))
        claimed.append("heat")
        if work_claimed:
            claimed.append("work")
        else:
            W = sum(q.Q for q in heat) - dU
            inferred.append("work")
    else:
        Q = dU + W
        heat.append(heat_flow(Q, None, ctx.T0, claimed=False, label="inferred", coldest=coldest))
        inferred.append("heat")
        claimed.append("work" if work_claimed else "no work")
    tol = ctx.tolerances
    T_iso = isothermal_temperature([initial.T, final.T], heat, tol.isothermal_band)
    if T_iso is not None:
        exchange_at(heat, T_iso)
    balance = closed_balance(m, initial, final, heat, W, ctx.T0)
    V1, V2 = m / initial.rho, m / final.rho
    isobaric = abs(final.P - initial.P) <= tol.isobaric_relative * initial.P
    P_one = 0.5 * (initial.P + final.P) if isobaric else None
    basis, classical = govern_closed(balance, T_iso, P_one, ctx.P0, V2 - V1)
    conservative = any(q.conservative for q in heat)
    for finding in law_findings(
        step.id,
        balance,
        tol,
        ctx.T0,
        batch=True,
        inlet_mass=m,
        conservative_note=CONSERVATIVE_NOTE if conservative else "",
        allowance=None
        if declared_rule(tol, batch=True)
        else allowances(
            [(initial, m), (final, m)], heat, W, balance.W_rev, ctx.T0, ctx.engine, batch=True
        ),
    ):
        ctx.add(finding)
    second = second_law_efficiency(W, balance.W_rev)
    return StepResult(
        id=step.id,
        kind="vessel",
        batch=True,
        inlets=[],
        outlets=[],
        balance=balance,
        heat_flows=heat,
        energy_tolerance=energy_tolerance(balance, tol, batch=True),
        bound_basis=basis,
        classical_bound=classical,
        second_law_efficiency=second,
        claimed=claimed,
        inferred=inferred,
        notes=[CONSERVATIVE_NOTE] if conservative else [],
        extra={"V_initial": V1, "V_final": V2},
        description=step.description,
        line=ctx.line,
    )


register("vessel", Vessel, evaluate, "closed vessel (batch): totals in J from state 1 to 2")
