"""What the electrochemical step kinds share (electrolyser, fuel cell): the model and the checks.
Not a step kind itself.

A cell stack of ``cells`` cells in series carries the stack ``current`` I through each cell at
``cell_voltage`` V; its electrical power is V I N (``power``, absorbed by an electrolyser,
delivered by a fuel cell). The cell reaction (``reaction``; by default water splitting or forming,
with the water's phase taken from the water stream) transfers n electrons per mole of reaction
(``electrons``; by default 4 per mole of O2, the O2/H2O couple). Its extent ξ̇ [mol/s] is fitted to
the streams' compositions.

The laws are those of every step, on the formation basis: the work bound compares the electrical
work with the reversible work of the streams, which for an isothermal cell exchanging heat at its
own temperature is −ΔG of the reaction (a fuel cell cannot deliver more, an electrolyser cannot
take less; ``work-above-bound``, ``input-below-minimum``). The cell checks [1, ch. 2], [2, ch. 14]:

* reversible voltage E_rev = ΔG_rxn(T, p_i) / (n F) and thermoneutral voltage E_tn = ΔH_rxn / (n F),
  for the reaction written in the direction the cell runs (splitting in an electrolyser: ΔG > 0;
  in a fuel cell the signs are reversed so both are positive). A fuel cell cannot run above E_rev,
  an electrolyser not below it (``voltage-beyond-reversible``);
* below E_tn an electrolyser must take in heat, n F ξ̇ (E_tn − V) at least, and a balance that
  claims its heat must show it (``heat-needed-below-thermoneutral``);
* Faraday's law: n F ξ̇ = η_F I N, with the faradaic efficiency η_F ≤ 1 (the charge an
  electrolyser passes makes at most n F per mole; a fuel cell's current is at most n F times the
  fuel it consumes), and equal to a claimed ``faradaic_efficiency`` (``faraday-mismatch``);
* a claimed power equals V I N (``power-mismatch``).

Conditions (:mod:`audit.steps.cell_voltage`, one function for the reported values and the checks):
E_rev and E_tn at the cell's ``temperature`` (else the outlets' mean) with every species at its own
state: each gas at its own partial pressure in its stream, a real gas with its fugacity from the
reference equation of state (the Nernst equation with fugacities), liquid water at its own
pressure; ``E_rev_standard`` beside it has every species at 1 bar. Voltage tolerance:
:data:`audit.steps.cell_checks.VOLTAGE_ALLOWANCE` (what the formation data and the property
formulation leave uncertain in E_rev) plus the rounding of the written values, which the review
adds (:mod:`audit.review.rounding`); the heat below E_tn and the stack power likewise, unless the
balance writes its own energy tolerances; Faraday: ``energy_relative``.

References
----------
.. [1] J. Larminie, A. Dicks, *Fuel Cell Systems Explained*, 2nd ed., Wiley, 2003, ch. 2.
.. [2] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 13–14.
"""

from __future__ import annotations

from collections.abc import Sequence

from pydantic import Field, field_validator, model_validator

from audit.constants import P_STANDARD
from audit.formation import species
from audit.model.steps import CurrentClaim, PowerClaim, PressureClaim, TemperatureClaim, VoltageClaim
from audit.physics.electrochemistry import (
    faradaic_efficiency,
    reversible_voltage,
    thermoneutral_voltage,
)
from audit.results import StepResult, StreamResult
from audit.steps.base import HeatClaim, StepBase, StepContext
from audit.steps.cell_checks import cell_findings
from audit.steps.cell_voltage import cell_reaction
from audit.steps.reacting import (
    element_findings,
    extents_and_findings,
    finish_reacting_step,
    heat_and_work,
    properties_at,
    step_conditions,
)
from audit.steps.reactions import Reaction, parse_reaction

ELECTROLYSER = "electrolyser"
FUEL_CELL = "fuel_cell"


class CellStep(StepBase):
    """Fields of an electrochemical step (see the module docstring)."""

    inlets: list[str] = Field(min_length=1)
    outlets: list[str] = Field(min_length=1)
    reaction: str | None = Field(
        None,
        description="the cell reaction, e.g. 'H2O(l) -> H2 + 1/2 O2' (default: water "
        "splitting or forming, the water's phase from its stream)",
    )
    electrons: int | None = Field(
        None, ge=1, description="electrons per mole of reaction (default: 4 per mole of O2)"
    )
    cell_voltage: VoltageClaim = Field(None, description="voltage of one cell")
    current: CurrentClaim = Field(None, description="stack current through each cell")
    cells: int = Field(1, ge=1, description="number of cells in series")
    power: PowerClaim = Field(None, description="electrical (DC) power of the stack")
    faradaic_efficiency: float | None = Field(
        None, description="fraction of the charge that drives the cell reaction, 0 to 1"
    )
    heat: list[HeatClaim] | None = None
    heat_temperature: TemperatureClaim = Field(None, description="boundary temperature of inferred heat")
    temperature: TemperatureClaim = Field(None, description="cell operating temperature")
    pressure: PressureClaim = Field(None, description="cell operating pressure")

    @field_validator("reaction")
    @classmethod
    def _reaction(cls, value: str | None) -> str | None:
        if value is not None:
            parse_reaction(value)  # it must read and balance
        return value

    @field_validator("faradaic_efficiency")
    @classmethod
    def _efficiency(cls, value: float | None) -> float | None:
        if value is not None and not 0.0 < value <= 1.0:
            raise ValueError(
                f"a faradaic efficiency is above 0 and at most 1 (got {value:g}): the charge "
                "passed cannot drive more reaction than Faraday's law allows"
            )
        return value

    @model_validator(mode="after")
    def _claims(self) -> CellStep:
        if self.power is None and (self.cell_voltage is None or self.current is None):
            raise ValueError(
                "give the stack 'power', or 'cell_voltage' and 'current' (with 'cells'), or all three"
            )
        if (
            self.reaction is not None
            and self.electrons is None
            and ("O2" not in parse_reaction(self.reaction).nu())
        ):
            raise ValueError("give 'electrons' (per mole of reaction) for a cell reaction without O2")
        for name in ("cell_voltage", "current", "power"):
            value = getattr(self, name)
            if value is not None and value <= 0:
                raise ValueError(f"'{name}' is a positive amount")
        return self

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return list(self.inlets), list(self.outlets)


def default_reaction(kind: str, inlets: Sequence[StreamResult], outlets: Sequence[StreamResult]) -> str:
    """Water splitting (electrolyser) or forming (fuel cell), liquid water when the water stream
    (a pure-water inlet of an electrolyser, outlet of a fuel cell) is liquid."""
    streams = inlets if kind == ELECTROLYSER else outlets
    liquid = any(
        s.composition is None
        and (d := species(s.fluid)) is not None
        and d.formula == "H2O"
        and s.phase == "liquid"
        for s in streams
    )
    water = "H2O(l)" if liquid else "H2O"
    return f"{water} -> H2 + 1/2 O2" if kind == ELECTROLYSER else f"H2 + 1/2 O2 -> {water}"


def _reversed(reaction: Reaction) -> Reaction:
    return Reaction(f"{reaction.equation} (reversed)", reaction.products, reaction.reactants)


def evaluate_cell(step: CellStep, ctx: StepContext, kind: str) -> StepResult:
    """Laws and cell checks of an electrolyser or fuel cell (see the module docstring)."""
    driven = kind == ELECTROLYSER  # the cell absorbs electrical work
    inlets = [ctx.stream(i) for i in step.inlets]
    outlets = [ctx.stream(o) for o in step.outlets]
    notes = []
    text = step.reaction
    if text is None:
        text = default_reaction(kind, inlets, outlets)
        notes.append(f"Cell reaction taken as '{text}' (the default for the kind).")
    reaction = parse_reaction(text)
    T_rep, P_rep = step_conditions(step.temperature, step.pressure, outlets)
    reported = cell_reaction(ctx, reaction, T_rep, inlets, outlets, P_rep)
    if (reported.dG < 0) == driven:  # written against the direction the cell runs
        reaction = _reversed(reaction)
        reported = cell_reaction(ctx, reaction, T_rep, inlets, outlets, P_rep)
    n = step.electrons or round(4 * abs(reaction.nu()["O2"]))
    sign = 1.0 if driven else -1.0

    elements = element_findings(step.id, ctx, inlets, outlets)
    extents, species_found = extents_and_findings(step.id, ctx, [reaction], [None], inlets, outlets)
    xi = extents[0]
    stack = (
        step.cell_voltage * step.current * step.cells
        if step.cell_voltage is not None and step.current is not None
        else None
    )
    electrical = step.power if step.power is not None else stack
    assert electrical is not None  # the model requires one
    heat, W, claimed, inferred = heat_and_work(
        ctx, inlets, outlets, step.heat, step.heat_temperature, -electrical if driven else electrical
    )
    claimed = [c for c in claimed if c != "work"] + [
        name
        for name in ("power", "cell_voltage", "current", "faradaic_efficiency")
        if getattr(step, name) is not None
    ]
    if step.power is None:
        inferred.append("power (V × I × cells)")
    result = finish_reacting_step(
        step,
        kind,
        ctx,
        inlets,
        outlets,
        heat,
        W,
        claimed,
        inferred,
        elements,
        energy_scale_floor=abs(xi * reported.dH),
        notes=notes,
    )
    if not elements[0]:
        for finding in species_found:
            ctx.add(finding)

    E_rev = reversible_voltage(-sign * reported.dG, n)
    E_tn = thermoneutral_voltage(-sign * reported.dH, n)
    # E_rev with every species at 1 bar is reported only (not read with the balances)
    standard = None if ctx.residuals_only else properties_at(ctx, [reaction], T_rep, P_STANDARD)[0]
    charge = step.current * step.cells if step.current is not None else None
    efficiency = None
    if charge is not None and xi > 0.0:
        efficiency = faradaic_efficiency(n, xi, charge, electrolytic=driven)
    result.extra.update(
        {
            "reaction": reaction.equation,
            "electrons": n,
            "extent": xi,
            "reaction_T": T_rep,
            "reaction_P": P_rep,
            "dH_rxn": reported.dH,
            "dS_rxn": reported.dS,
            "dG_rxn": reported.dG,
            "species_pressures": dict(reported.pressures or {}),
            "fugacity_coefficients": dict(reported.fugacity or {}),
            "E_rev": E_rev,
            "E_tn": E_tn,
            "E_rev_standard": None if standard is None else reversible_voltage(-sign * standard.dG, n),
            "E_rev_checked": E_rev,
            "E_tn_checked": E_tn,
            "gibbs_work": sign * xi * reported.dG,
            "electrical_power": electrical,
            "stack_power": stack,
            "charge_rate": charge,
            "faradaic_efficiency": efficiency,
        }
    )
    if not elements[0]:
        for finding in cell_findings(
            step, ctx, result, driven, n, xi, E_rev, E_tn, efficiency, stack, heat
        ):
            ctx.add(finding)
    return result
