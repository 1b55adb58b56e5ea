"""What the reacting step kinds share (reactor, fired heater, electrolyser, fuel cell): the element
balance, extents and their species check, reaction conditions, and applying the laws.

On the formation basis (design note 2.3) the first law, entropy generation and reversible work of
:mod:`audit.steps.laws` hold unchanged for reacting steps; only the mass balance changes: a fluid is not
conserved, its elements are [1, ch. 13]. So a reacting step skips the per-fluid mass check and checks
each element instead (``element-imbalance``, in kg/s of the element with the step's mass
tolerances). Where the elements do not balance, the energy and entropy sums compare different
amounts of matter and say nothing more, so the law findings are left out (as for a mass imbalance).

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 13.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence

from pydantic import BaseModel, ConfigDict, Field, field_validator

from audit.findings import ERROR, WARNING, Finding, relative
from audit.model.quantities import MolarFlow
from audit.results import HeatFlow, StepResult, StreamResult
from audit.steps.base import (
    HeatClaim,
    StepBase,
    StepContext,
    finish_flow_step,
    heat_flow,
    heat_flows_from_claims,
)
from audit.steps.reactions import (
    Reaction,
    ReactionProperties,
    element_flows,
    element_mass,
    fit_extents,
    parse_reaction,
    reaction_properties,
    total_species,
)


class ReactionClaim(BaseModel):
    """A reaction by stoichiometry and, optionally, its extent (omit it to infer it from the
    streams' compositions)."""

    model_config = ConfigDict(extra="forbid", defer_build=True)  # built with its step kind

    equation: str = Field(description="e.g. 'CH4 + 2 O2 -> CO2 + 2 H2O'")
    extent: MolarFlow | None = Field(
        None, description="moles of reaction per unit time, e.g. '12.5 mol/s' or '45 kmol/h'"
    )

    @field_validator("equation")
    @classmethod
    def _balanced(cls, value: str) -> str:
        parse_reaction(value)
        return value

    @property
    def reaction(self) -> Reaction:
        return parse_reaction(self.equation)


# -- elements ------------------------------------------------------------------------------------
def element_findings(
    step_id: str, ctx: StepContext, inlets: Sequence[StreamResult], outlets: Sequence[StreamResult]
) -> tuple[list[Finding], dict[str, float]]:
    """The element balance: findings and the residual per element [kg/s] (inlets − outlets)."""
    into = element_flows(total_species(inlets))
    out = element_flows(total_species(outlets))
    tol = ctx.tolerances
    inlet_mass = sum(s.mass_flow for s in inlets)
    mass_tol = max(tol.mass_relative * inlet_mass, tol.mass_absolute)
    residuals: dict[str, float] = {}
    findings = []
    for element in sorted(set(into) | set(out)):
        moles = into.get(element, 0.0) - out.get(element, 0.0)
        mass = element_mass(element, moles)
        residuals[element] = mass
        if abs(mass) > mass_tol:
            direction = "vanishes" if mass > 0 else "appears"
            findings.append(
                Finding(
                    ERROR,
                    "element-imbalance",
                    step_id,
                    f"{abs(mass):.4g} kg/s of {element} ({abs(moles):.4g} mol/s of atoms) {direction} "
                    f"in the step: the inlets carry {element_mass(element, into.get(element, 0.0)):.4g}"
                    f" kg/s, the outlets {element_mass(element, out.get(element, 0.0)):.4g} kg/s "
                    f"(tolerance {mass_tol:.3g} kg/s)",
                    claimed=mass,
                    bound=0.0,
                    margin=abs(mass),
                    margin_relative=relative(abs(mass), inlet_mass),
                    quantity="mass_flow",
                    tolerance=mass_tol,
                )
            )
    return findings, residuals


# -- extents ------------------------------------------------------------------------------------------
def extents_and_findings(
    step_id: str,
    ctx: StepContext,
    reactions: Sequence[Reaction],
    claimed: Sequence[float | None],
    inlets: Sequence[StreamResult],
    outlets: Sequence[StreamResult],
) -> tuple[list[float], list[Finding]]:
    """Extents [mol/s] (claimed, or fitted to the streams) and a ``species-imbalance`` finding
    for species changes the reactions do not explain: an error when extents were claimed (the
    claim contradicts the streams), a warning otherwise (a reaction that is not written)."""
    into, out = total_species(inlets), total_species(outlets)
    change = {f: out.get(f, 0.0) - into.get(f, 0.0) for f in set(into) | set(out)}
    extents, residual = fit_extents(reactions, change, claimed)
    tol = ctx.tolerances
    inlet_mass = sum(s.mass_flow for s in inlets)
    mass_tol = max(tol.mass_relative * inlet_mass, tol.mass_absolute)
    off = []
    for formula, moles in sorted(residual.items()):
        mass = moles * ctx.engine.species_molar_mass(formula)
        if abs(mass) > mass_tol:
            off.append((formula, moles, mass))
    if not off:
        return extents, []
    any_claimed = any(c is not None for c in claimed)
    worst = max(abs(m) for _, _, m in off)
    detail = ", ".join(
        f"{formula} {'appears' if moles > 0 else 'vanishes'} at {abs(moles):.4g} mol/s "
        f"({abs(mass):.4g} kg/s)"
        for formula, moles, mass in off
    )
    written = "; ".join(
        f"'{r.equation}' at {x:.4g} mol/s" for r, x in zip(reactions, extents, strict=True)
    )
    words = (
        "the claimed extents do not match the streams"
        if any_claimed
        else "the written reactions do not explain the streams' change in composition"
    )
    return extents, [
        Finding(
            ERROR if any_claimed else WARNING,
            "species-imbalance",
            step_id,
            f"{words}: beyond {written}, {detail} (tolerance {mass_tol:.3g} kg/s)",
            claimed=worst,
            bound=0.0,
            margin=worst,
            margin_relative=relative(worst, inlet_mass),
            quantity="mass_flow",
            tolerance=mass_tol,
        )
    ]


# -- conditions ---------------------------------------------------------------------------------
def step_conditions(
    declared_T: float | None, declared_P: float | None, outlets: Sequence[StreamResult]
) -> tuple[float, float]:
    """The (T [K], P [Pa]) at which a step's reaction properties are reported: the declared ones,
    else the outlets' molar-flow-weighted mean temperature and pressure."""
    total = sum(s.molar_flow for s in outlets) or 1.0
    T = declared_T if declared_T is not None else sum(s.molar_flow * s.T for s in outlets) / total
    P = declared_P if declared_P is not None else sum(s.molar_flow * s.P for s in outlets) / total
    return T, P


def properties_at(
    ctx: StepContext, reactions: Sequence[Reaction], T: float, P: float
) -> list[ReactionProperties]:
    return [reaction_properties(ctx.engine, r, T, P) for r in reactions]


def reaction_rows(
    reactions: Sequence[Reaction],
    extents: Sequence[float],
    claimed: Sequence[float | None],
    props: Sequence[ReactionProperties],
) -> list[dict]:
    """The reactions for ``StepResult.extra``: equation, extent [mol/s] and ΔH, ΔS, ΔG of
    reaction [J/mol, J/(mol K)] at the reported conditions."""
    return [
        {
            "equation": r.equation,
            "extent": x,
            "extent_claimed": c is not None,
            "dH_rxn": p.dH,
            "dS_rxn": p.dS,
            "dG_rxn": p.dG,
            "T": p.T,
            "P": p.P,
        }
        for r, x, c, p in zip(reactions, extents, claimed, props, strict=True)
    ]


# -- heat and work ---------------------------------------------------------------------------
def heat_and_work(
    ctx: StepContext,
    inlets: Sequence[StreamResult],
    outlets: Sequence[StreamResult],
    heat: list[HeatClaim] | None,
    heat_temperature: float | None,
    W: float | None,
) -> tuple[list[HeatFlow], float, list[str], list[str]]:
    """Heat flows into the step [W] and work out [W] from the claims, inferring the one that is
    not given from the first law (as the general step does): claimed heat with no work → work
    inferred; no heat → heat inferred (work as claimed, or zero)."""
    coldest = min(s.T for s in [*inlets, *outlets])
    dE = sum(s.mass_flow * (s.h + s.kinetic_potential) for s in outlets) - sum(
        s.mass_flow * (s.h + s.kinetic_potential) for s in inlets
    )
    claimed: list[str] = []
    inferred: list[str] = []
    if heat is not None:
        flows = heat_flows_from_claims(heat, ctx.T0, coldest)
        claimed.append("heat")
        if W is None:
            W = sum(q.Q for q in flows) - dE
            inferred.append("work")
        else:
            claimed.append("work")
        return flows, W, claimed, inferred
    work = 0.0 if W is None else W
    claimed.append("no work" if W is None else "work")
    Q = dE + work
    flows = [heat_flow(Q, heat_temperature, ctx.T0, claimed=False, label="inferred", coldest=coldest)]
    inferred.append("heat")
    return flows, work, claimed, inferred


def finish_reacting_step(
    step: StepBase,
    kind: str,
    ctx: StepContext,
    inlets: Sequence[StreamResult],
    outlets: Sequence[StreamResult],
    heat: list[HeatFlow],
    W: float,
    claimed: list[str],
    inferred: list[str],
    elements: tuple[list[Finding], dict[str, float]],
    energy_scale_floor: float = 0.0,
    notes: Sequence[str] = (),
) -> StepResult:
    """The laws of a reacting step, with the element balance in place of the per-fluid mass
    balance (see the module docstring); ``StepResult.mass_residual`` holds the residual per
    element [kg/s]."""
    element_problems, residuals = elements
    target = dataclasses.replace(ctx, findings=[]) if element_problems else ctx
    result, _ = finish_flow_step(
        step,
        kind,
        target,
        inlets,
        outlets,
        heat,
        W,
        claimed,
        inferred,
        notes=notes,
        check_mass=False,
        energy_scale_floor=energy_scale_floor,
    )
    for finding in element_problems:
        ctx.add(finding)
    result.balance.mass_residual = residuals
    if element_problems:
        result.notes.append(
            "The elements do not balance, so the energy and entropy checks were not applied."
        )
    return result
