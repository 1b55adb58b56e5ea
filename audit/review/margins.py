"""The margins of the law findings, as functions of a re-evaluated step.

A law finding (first law, work bound, entropy generation, mass, isentropic efficiency) states a
margin: positive, the size of the violation. :func:`margin_function` gives that margin as a function
of a re-evaluated step, so that propagation and probable causes can read it again after a change.

Flows are read as mass-conserving: a change δ of an inlet's flow is taken with the outlets of its
group (its paired outlet, or the outlets of the same fluid) following by conservation of mass, so
the first-law residual moves by δ (h_in − h_out) and an outlet's own flow adds nothing to the
energy, entropy and work margins (the flows of one stream through a step are one measured
quantity: fully correlated, GUM [1, §5.2]); mass-imbalance margins take every flow independently.
On the formation basis an independent flow change would otherwise carry δ times an absolute
enthalpy, an artefact of the reference state (:func:`reference_shift`). The streams of a fluid
that reacts (it only enters or only leaves the step) keep independent flows.

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
   measurement* (GUM).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping

from audit.findings import Finding
from audit.properties.humid_air import HUMID_AIR
from audit.results import StepResult, StreamResult
from audit.steps.allowances import flow_groups as step_flow_groups

ENERGY_FINDINGS = ("energy-imbalance", "valve-not-isenthalpic")
WORK_FINDINGS = ("work-above-bound", "input-below-minimum")
LAW_FINDINGS = (
    *ENERGY_FINDINGS,
    *WORK_FINDINGS,
    "negative-entropy-generation",
    "mass-imbalance",
    "efficiency-above-one",
)
"""Findings whose margin is propagated and which get a verdict."""
CLAIM_FINDINGS = (
    "duty-mismatch",
    "power-mismatch",
    "heat-needed-below-thermoneutral",
    "voltage-beyond-reversible",
    "cop-above-reversible",
    "water-below-wet-bulb",
)
"""Claim checks of the step kinds whose margin the rounding verdict propagates: the kind records
the signed value on the step result (``StepResult.checks``)."""

SHIFTED_FINDINGS = (*ENERGY_FINDINGS, *WORK_FINDINGS, "negative-entropy-generation")
"""Findings whose margin is read with the mass-conserving reference shift."""

Margin = Callable[[StepResult, Mapping[str, StreamResult]], float]


def paired(result: StepResult) -> bool:
    """Whether the step's equal numbers of inlets and outlets may be read as pairs: every kind
    but the mixer (its vent is no inlet's outlet; it calls the step stage with ``paired=False``,
    :func:`audit.steps.base.finish_flow_step`)."""
    return result.kind != "mixer"


def flow_groups(
    result: StepResult, streams: Mapping[str, StreamResult]
) -> list[tuple[tuple[str, ...], tuple[str, ...]]]:
    """The parts of a step that conserve mass on their own, as (inlets, outlets) stream ids: the
    step stage's own grouping (:func:`audit.steps.allowances.flow_groups`), so that a margin read
    here is the margin the step stage raised. Each inlet/outlet pair when the step pairs its
    streams one to one with the same fluid (one-stream steps, exchanger sides), else the inlets
    and outlets of each fluid (humid air with water; a mixer's streams are never pairs)."""
    groups = step_flow_groups(
        [streams[i] for i in result.inlets], [streams[o] for o in result.outlets], paired(result)
    )
    return [(tuple(s.id for s in a), tuple(s.id for s in b)) for a, b in groups]


def exchanges_water(result: StepResult, streams: Mapping[str, StreamResult]) -> bool:
    """Whether a mass-conserving group of the step holds humid air with streams of another fluid
    (a cooling tower's air with its water). Such a group's reference is the mean outlet enthalpy
    of air and water together, on the formation basis: a change of one written flow moves it by
    the difference between water's and humid air's formation enthalpies (megajoules per kg), not
    by the stream's own change of state, so its margin is not propagated (:func:`margin_function`
    gives None for the energy, work and entropy findings)."""
    for ins, outs in flow_groups(result, streams):
        fluids = {streams[x].fluid for x in (*ins, *outs)}
        if HUMID_AIR in fluids and len(fluids) > 1:
            return True
    return False


def _group_residual(
    group: tuple[tuple[str, ...], tuple[str, ...]], streams: Mapping[str, StreamResult]
) -> float:
    ins, outs = group
    return sum(streams[i].mass_flow for i in ins) - sum(streams[o].mass_flow for o in outs)


def reference_shift(
    result: StepResult, streams: Mapping[str, StreamResult], nominal: dict[tuple, float]
) -> tuple[float, float]:
    """(Σ h_ref Δṁ [W], Σ s_ref Δṁ [W/K]) over the step's mass-conserving groups, Δṁ being the
    change of a group's mass residual from its ``nominal`` value [kg/s] and h_ref, s_ref the
    group's mean outlet enthalpy and entropy [J/kg, J/(kg K)].

    Subtracting these terms reads an inlet flow perturbed by δ as the group's inlets and outlets
    perturbed together (its outlets follow by conservation of mass: the flows of a group are one
    quantity, fully correlated, GUM §5.2): the residual changes by δ (h_in − h_out), never by δ
    times an absolute enthalpy, which on the formation basis would be a reference artefact.

    A fluid that only enters or only leaves the step (a fuel, a flue gas: it reacts) keeps its
    flow as measured: its change carries its formation-basis enthalpy, elements are not
    rebalanced."""
    dH = dS = 0.0
    for group in flow_groups(result, streams):
        change = _group_residual(group, streams) - nominal.get(group, 0.0)
        if change == 0.0 or not group[0] or not group[1]:
            continue  # a fluid that only enters or only leaves (it reacts): taken as measured
        reference = group[1]
        mass = sum(streams[x].mass_flow for x in reference)
        if mass <= 0.0:
            continue
        dH += change * sum(streams[x].mass_flow * streams[x].h for x in reference) / mass
        dS += change * sum(streams[x].mass_flow * streams[x].s for x in reference) / mass
    return dH, dS


def margin_function(
    finding: Finding, result: StepResult, streams: Mapping[str, StreamResult], T0: float
) -> Margin | None:
    """The finding's margin as a function of a re-evaluated step (positive = violation), or None
    when the finding is not a law finding this module knows how to propagate (nor an energy,
    work or entropy finding of a step where humid air exchanges water, :func:`exchanges_water`;
    nor a margin that no candidate reproduces). The function is
    checked to give the finding's own margin on the nominal step. Energy, entropy and work
    margins take flow changes as mass-conserving (:func:`reference_shift`); T0 [K]."""
    name = finding.name
    if name in SHIFTED_FINDINGS and exchanges_water(result, streams):
        return None
    candidates: list[Margin] = []
    # The step stage reads these margins with each conserved fluid's own reference
    # (audit.steps.allowances.reference_shift): the whole group residual is shifted, nominal or not.
    nominal: dict[tuple, float] = {}
    if name in ENERGY_FINDINGS:
        # The sign of the residual the step stage judged: the shifted one. A mass residual within
        # its tolerance can shift the raw residual by more than the finding's margin and flip it.
        shifted = result.energy_residual - reference_shift(result, streams, nominal)[0]
        sign = 1.0 if shifted >= 0 else -1.0
        candidates.append(lambda r, s: sign * (r.energy_residual - reference_shift(r, s, nominal)[0]))
    elif name in WORK_FINDINGS:

        def work(r: StepResult, s: Mapping[str, StreamResult]) -> float:
            dH, dS = reference_shift(r, s, nominal)
            return r.W - r.W_rev + dH - T0 * dS

        candidates.append(work)
    elif name == "negative-entropy-generation":
        candidates.append(lambda r, s: -(r.S_gen + reference_shift(r, s, nominal)[1]))
    elif name == "efficiency-above-one":
        candidates.append(
            lambda r, s: (
                (r.isentropic_efficiency if r.isentropic_efficiency is not None else math.nan) - 1.0
            )
        )
    elif name in CLAIM_FINDINGS:
        candidates.append(_claim_margin(finding))
    elif name == "mass-imbalance" and not result.batch and finding.claimed is not None:
        sign = 1.0 if finding.claimed >= 0 else -1.0
        for fluid in result.mass_residual:
            candidates.append(_fluid_residual(fluid, sign))
        for i in range(min(len(result.inlets), len(result.outlets))):
            candidates.append(_pair_residual(i, sign))
    if finding.margin is None:
        return None
    for candidate in candidates:
        value = candidate(result, streams)
        if math.isfinite(value) and math.isclose(
            value, finding.margin, rel_tol=1e-9, abs_tol=1e-9 * max(1.0, abs(finding.margin))
        ):
            return candidate
    return None


def _fluid_residual(fluid: str, sign: float) -> Margin:
    """The mass residual of one fluid [kg/s], signed as the finding's."""

    def margin(r: StepResult, s: Mapping[str, StreamResult]) -> float:
        return sign * r.mass_residual.get(fluid, 0.0)

    return margin


def _pair_residual(i: int, sign: float) -> Margin:
    """The flow of inlet ``i`` minus that of outlet ``i`` [kg/s], signed as the finding's."""

    def margin(r: StepResult, s: Mapping[str, StreamResult]) -> float:
        return sign * (s[r.inlets[i]].mass_flow - s[r.outlets[i]].mass_flow)

    return margin


def _claim_margin(finding: Finding) -> Margin:
    """The margin of a kind's claim check from the value the kind records: a mismatch's bound
    minus its claim, signed as the finding's; a violation (voltage, heat) as it is."""
    name = finding.name
    sign = 1.0
    if name in ("duty-mismatch", "power-mismatch") and None not in (finding.bound, finding.claimed):
        sign = 1.0 if (finding.bound or 0.0) - (finding.claimed or 0.0) >= 0 else -1.0

    def margin(r: StepResult, s: Mapping[str, StreamResult]) -> float:
        return sign * r.checks.get(name, math.nan)

    return margin
