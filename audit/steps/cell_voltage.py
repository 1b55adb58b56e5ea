"""The reversible and thermoneutral voltages of a cell step, from each species' own state.

One function, :func:`cell_reaction`, gives the reaction properties that the reported E_rev and
E_tn, the voltage check and the heat check all use. The cell's temperature T is the declared
``temperature`` or else the outlets' mean (:func:`audit.steps.reacting.step_conditions`). Every
species of the reaction is taken at its own pressure: a reactant from the inlet, a product from the
outlet that carries most of it, at its partial pressure x_i·P there (the whole pressure for a pure
stream); liquid water at its own stream's pressure; the cell's declared ``pressure`` (else the
outlets' mean) only for a species no stream carries. Each gas is a real gas, its fugacity from the
reference equation of state [2], so that [1, ch. 2]

    E_rev = −ΔG_rxn(T, p_i) / (n F) = E°(T) − (R T / (n F)) Σ ν_i ln(f_i / p°)   (Nernst)

for the reaction written in the direction of a galvanic cell (products' ν_i > 0), and
E_tn = −ΔH_rxn(T, p_i) / (n F) with each species' real enthalpy.

References
----------
.. [1] J. Larminie, A. Dicks, *Fuel Cell Systems Explained*, 2nd ed., Wiley, 2003, ch. 2.
.. [2] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 11 (fugacity), 14.
"""

from __future__ import annotations

from collections.abc import Sequence

from audit.errors import StateError
from audit.results import StreamResult
from audit.steps.base import StepContext
from audit.steps.reactions import (
    Reaction,
    ReactionProperties,
    Term,
    reaction_properties_at_states,
    species_flows,
)


def _carries(stream: StreamResult, term: Term) -> float:
    """Moles per second of ``term``'s species that ``stream`` carries in ``term``'s phase."""
    try:
        flows = species_flows(stream)
    except StateError:  # a stream without formation data carries no species
        return 0.0
    amount = flows.get(term.formula, 0.0)
    liquid_stream = stream.composition is None and stream.phase == "liquid"
    if (term.phase == "l") != liquid_stream:
        return 0.0
    return amount


def species_pressures(
    reaction: Reaction, inlets: Sequence[StreamResult], outlets: Sequence[StreamResult]
) -> dict[str, float]:
    """Each species' own pressure [Pa] by label: its partial pressure in the stream (inlets for a
    reactant, outlets for a product) that carries most of it; species no stream carries are left
    out."""
    pressures: dict[str, float] = {}
    for nu, term in reaction.signed_terms():
        side = inlets if nu < 0 else outlets
        best = max(side, key=lambda s: _carries(s, term), default=None)
        if best is None or _carries(best, term) <= 0.0:
            continue
        share = 1.0 if best.composition is None else best.composition.get(term.formula, 0.0)
        pressures[term.label] = share * best.P
    return pressures


def cell_reaction(
    ctx: StepContext,
    reaction: Reaction,
    T: float,
    inlets: Sequence[StreamResult],
    outlets: Sequence[StreamResult],
    default_P: float,
) -> ReactionProperties:
    """ΔH, ΔS, ΔG of the cell reaction at T [K] with each species at its own state (see the
    module docstring); ``default_P`` [Pa] for a species no stream carries."""
    pressures = species_pressures(reaction, inlets, outlets)
    return reaction_properties_at_states(ctx.engine, reaction, T, pressures, default_P)
