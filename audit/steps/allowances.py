"""The property-method allowance of the law checks, and the mass-conserving reading of a step.

The default verdict of a law check asks whether the rounding of the written values plus the known
spread between reference property formulations can explain its margin. The rounding part needs the
step re-evaluated (:mod:`audit.review.rounding`); this module gives the other part, cheap enough
to screen every step with: a step whose margin is within the allowance passes without any
re-evaluation.

* First law: ``PROPERTY_SPREAD`` times the step's enthalpy flows measured from the dead state,
  Σ ṁ_k |h_k − h0| (a closed step: m (|u1 − u0| + |u2 − u0|) with h0 for u0 as a scale);
* second law (work bound, entropy generation): ``PROPERTY_SPREAD`` times the exergy at stake,
  |W| + |W_rev| + T0 Σ ṁ_k |s_k − s0| + Σ_j |Q_j| T0 / T_j (never the energy turnover: liquid
  boiling at its own temperature has ΔG = 0 whatever its duty).

PROPERTY_SPREAD = 4e-4 is the largest difference between IAPWS-95 and IAPWS-IF97 in h − h0 and in
T0 (s − s0), relative to the larger of |h − h0| and T0 |s − s0|, found over 280-1000 K and
5 kPa-30 MPa away from the critical point (3.2e-4 and 2.8e-4), rounded up; the published
comparisons of IF97 with IAPWS-95 agree to about 1e-4 in h in regions 1 and 2 [1, 2].

The kinds' claim checks (a claimed duty against a side, a stack's power against V I N, the heat
an electrolyser below its thermoneutral voltage needs) take the same route (:func:`claim_rule`):
their allowance is PROPERTY_SPREAD times the duty they compare with (:func:`duty_allowance`;
nothing for arithmetic), and the review adds the rounding bound of the written values.

A balance that writes ``energy_relative`` or ``energy_absolute`` under ``tolerances:`` (or a step
that overrides them) keeps the rule it asked for: the larger of the relative tolerance times the
step's energy scale and the absolute one, with no rounding bound (:func:`declared_rule`).

Mass-conserving reading: within a group of streams that conserves its fluid (an inlet/outlet pair,
or the inlets and outlets of one fluid), the energy and entropy sums are taken with the group's
mean outlet enthalpy and entropy as reference (:func:`reference_shift`), so that a mass residual
within rounding does not become a fake energy residual of Δṁ times an absolute (formation-basis)
enthalpy; the mass residual is its own check.

References
----------
.. [1] IAPWS R7-97(2012), *Revised Release on the IAPWS Industrial Formulation 1997 for the
   Thermodynamic Properties of Water and Steam*, §9 (consistency with IAPWS-95).
.. [2] W. Wagner et al., "The IAPWS Industrial Formulation 1997 for the Thermodynamic Properties of
   Water and Steam", *J. Eng. Gas Turbines Power* 122 (2000) 150-182.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass

from audit.errors import StateError
from audit.model.tolerances import Tolerances
from audit.properties.engine import PropertyEngine
from audit.properties.humid_air import DRY_AIR_PART, HUMID_AIR
from audit.results import HeatFlow, StreamResult

_WATER_GROUP = {HUMID_AIR: "Water"}
"""Humid air exchanges water with "Water" streams: one group of the mass-conserving reading."""

PROPERTY_SPREAD = 4e-4
"""Relative spread between reference property formulations (see the module docstring) [-]."""

ROUNDING = "rounding"
"""Tolerance rule of a finding whose tolerance is the rounding bound plus the allowance."""
DECLARED = "declared"
"""Tolerance rule of a finding checked with the balance's own written tolerances."""


@dataclass(frozen=True, slots=True)
class Allowances:
    """The property-method allowances of a step's law checks [W or J] and how each was found:
    ``enthalpy`` the enthalpy flows from the dead state and ``stake`` the exergy at stake they
    are PROPERTY_SPREAD of [W or J]. Their make-up in words (``energy_basis``, ``exergy_basis``)
    is written only when a finding asks for it."""

    energy: float
    exergy: float
    enthalpy: float
    stake: float
    batch: bool = False

    @property
    def energy_basis(self) -> str:
        return (
            f"property-method allowance {_text(self.energy, self.batch)} ({PROPERTY_SPREAD:g} of "
            f"the enthalpy flows from the dead state, {_text(self.enthalpy, self.batch)})"
        )

    @property
    def exergy_basis(self) -> str:
        return (
            f"property-method allowance {_text(self.exergy, self.batch)} ({PROPERTY_SPREAD:g} of "
            f"the exergy at stake |W| + |W_rev| + T0·Σ|ṁ(s − s0)| + Σ|Q|T0/T, "
            f"{_text(self.stake, self.batch)})"
        )


def declared_rule(tol: Tolerances, batch: bool) -> bool:
    """True when the balance or the step writes its own energy tolerance (the old rule applies)."""
    absolute = "energy_absolute_batch" if batch else "energy_absolute"
    return bool({"energy_relative", absolute} & tol.model_fields_set)


def _dead(engine: PropertyEngine, fluid: str) -> tuple[float, float] | None:
    try:
        return engine.dead_state(fluid)
    except (StateError, ValueError, KeyError):  # pragma: no cover - a fluid with no dead state
        return None


def _text(value: float, batch: bool) -> str:
    unit, scale = ("kJ", 1e3) if batch else ("kW", 1e3)
    return f"{value / scale:.3g} {unit}"


def allowances(
    streams: Sequence[tuple[StreamResult, float]],
    heat_flows: Sequence[HeatFlow],
    W: float,
    W_rev: float,
    T0: float,
    engine: PropertyEngine,
    batch: bool = False,
) -> Allowances:
    """The allowances of a step whose ``streams`` are (state, mass flow [kg/s] or mass [kg])
    pairs (every inlet and outlet; a closed step: its initial and final state), with heat flows
    into it, work W [W] delivered and reversible work W_rev [W]; T0 [K]. See the module docstring.
    """
    enthalpy = entropy = 0.0
    for state, mass in streams:
        dead = _dead(engine, state.fluid)
        h0, s0 = dead if dead is not None else (state.h, state.s)
        enthalpy += abs(mass) * abs(state.h - h0)
        entropy += abs(mass) * abs(state.s - s0)
    heat = sum(
        abs(q.Q) * T0 / q.temperature
        for q in heat_flows
        if math.isfinite(q.temperature) and q.temperature > 0
    )
    exergy = abs(W) + abs(W_rev) + T0 * entropy + heat
    return Allowances(PROPERTY_SPREAD * enthalpy, PROPERTY_SPREAD * exergy, enthalpy, exergy, batch)


def duty_allowance(duty: float, batch: bool = False) -> tuple[float, str]:
    """The property-method allowance [W] of a claim compared with a side's duty [W] (its
    enthalpy change, ṁ Δh): PROPERTY_SPREAD |duty|, and its make-up in words. The formulations'
    difference in an enthalpy change is taken relative to that change; measured from the dead
    state instead, a refrigerant side's latent heat would make it larger than the whole duty's
    plausible error."""
    allowed = PROPERTY_SPREAD * abs(duty)
    return allowed, (
        f"property-method allowance {_text(allowed, batch)} ({PROPERTY_SPREAD:g} of the side's "
        f"duty, {_text(abs(duty), batch)})"
    )


def claim_rule(tol: Tolerances, allowance: float, basis: str, declared: float) -> tuple[float, str, str]:
    """(tolerance [W], rule, make-up) of a claim check of a flow step (a duty, an electrical
    power): the step's ``declared`` energy tolerance [W] when the balance writes its own
    (:func:`declared_rule`), else the property-method ``allowance`` [W], to which the review adds
    the rounding bound of the written values (:mod:`audit.review.rounding`)."""
    if declared_rule(tol, batch=False):
        return declared, DECLARED, "the step's energy tolerance (the balance's tolerances)"
    return allowance, ROUNDING, basis


def flow_groups(
    inlets: Sequence[StreamResult], outlets: Sequence[StreamResult], paired: bool = True
) -> list[tuple[list[StreamResult], list[StreamResult]]]:
    """The parts of a step that conserve mass on their own, as (inlets, outlets): each
    inlet/outlet pair when the step pairs its streams one to one with the same fluid (one-stream
    steps, exchanger sides) and ``paired`` (a mixer is not: its vent is no inlet's outlet), else the
    inlets and outlets of each fluid (humid air with water, which it takes up or gives off)."""
    if (
        paired
        and len(inlets) == len(outlets)
        and all(
            i.fluid == o.fluid and i.fluid != HUMID_AIR for i, o in zip(inlets, outlets, strict=True)
        )
    ):
        return [([i], [o]) for i, o in zip(inlets, outlets, strict=True)]
    by_fluid: dict[str, tuple[list[StreamResult], list[StreamResult]]] = defaultdict(lambda: ([], []))
    for s in inlets:
        by_fluid[_WATER_GROUP.get(s.fluid, s.fluid)][0].append(s)
    for s in outlets:
        by_fluid[_WATER_GROUP.get(s.fluid, s.fluid)][1].append(s)
    return list(by_fluid.values())


def reference_shift(
    inlets: Sequence[StreamResult], outlets: Sequence[StreamResult], paired: bool = True
) -> tuple[float, float]:
    """(Σ Δṁ_g h_ref,g [W], Σ Δṁ_g s_ref,g [W/K]) over the groups of :func:`flow_groups` that
    have both inlets and outlets, Δṁ_g being the group's mass residual (in − out) [kg/s] and
    h_ref, s_ref its mean outlet enthalpy and entropy. The energy residual relative to each
    group's reference is the residual minus the first term; the entropy generation plus the
    second; the work-bound margin plus the first minus T0 times the second. A group where humid
    air takes up or gives off water is read per conserved part (:func:`_parts_shift`)."""
    dH = dS = 0.0
    if paired and len(inlets) == len(outlets):
        pairs = tuple(zip(inlets, outlets, strict=True))
        if all(i.fluid == o.fluid and i.fluid != HUMID_AIR for i, o in pairs):
            # each inlet/outlet pair is a group (flow_groups): read as the loop below reads
            # one-stream groups, in the same arithmetic
            for i, o in pairs:
                m_out = o.mass_flow
                change = (0 + i.mass_flow) - (0 + m_out)
                if change == 0.0 or m_out <= 0.0:
                    continue
                dH += change * (0 + m_out * o.h) / m_out
                dS += change * (0 + m_out * o.s) / m_out
            return dH, dS
    for ins, outs in flow_groups(inlets, outlets, paired):
        if not ins or not outs:
            continue  # a fluid that only enters or only leaves (it reacts): taken as measured
        if any(s.fluid == HUMID_AIR for s in (*ins, *outs)) and any(
            s.fluid == "Water" for s in (*ins, *outs)
        ):
            h, s_ = _parts_shift(ins, outs)
            dH, dS = dH + h, dS + s_
            continue
        change = sum(s.mass_flow for s in ins) - sum(s.mass_flow for s in outs)
        mass = sum(s.mass_flow for s in outs)
        if change == 0.0 or mass <= 0.0:
            continue
        dH += change * sum(s.mass_flow * s.h for s in outs) / mass
        dS += change * sum(s.mass_flow * s.s for s in outs) / mass
    return dH, dS


def _parts_shift(ins: Sequence[StreamResult], outs: Sequence[StreamResult]) -> tuple[float, float]:
    """The shift of a group of humid air and water, part by part: the water's residual (liquid and
    vapour together) at the mean specific enthalpy and entropy of the group's liquid water streams
    (outlets first), and the dry air's residual at the humid air's mean outlet enthalpy and entropy
    per kg of dry air once its water is taken at that same reference. One reference for the whole
    group would price a kilogram of missing water at a kilogram of air's enthalpy (the two differ
    by about 15 MJ/kg on the formation basis). Humid air alone keeps the one reference per group.
    Assumes a group with liquid water streams of positive flow."""
    water = [s for s in outs if s.fluid == "Water"] or [s for s in ins if s.fluid == "Water"]
    air = [s for s in outs if s.fluid == HUMID_AIR] or [s for s in ins if s.fluid == HUMID_AIR]

    def part(streams: Sequence[StreamResult], name: str) -> float:
        return sum(m for st in streams for p, m in st.conserved_parts() if p == name)

    water_mass = sum(s.mass_flow for s in water)  # > 0: the group holds liquid water
    h_w = sum(s.mass_flow * s.h for s in water) / water_mass
    s_w = sum(s.mass_flow * s.s for s in water) / water_mass
    dry = part(air, DRY_AIR_PART)
    if dry > 0.0:
        h_a = (sum(s.mass_flow * s.h for s in air) - part(air, "Water") * h_w) / dry
        s_a = (sum(s.mass_flow * s.s for s in air) - part(air, "Water") * s_w) / dry
    else:
        h_a = s_a = 0.0
    d_water = part(ins, "Water") - part(outs, "Water")
    d_dry = part(ins, DRY_AIR_PART) - part(outs, DRY_AIR_PART)
    return d_water * h_w + d_dry * h_a, d_water * s_w + d_dry * s_a
