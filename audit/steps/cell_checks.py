"""The electrochemical checks of a cell step: its voltage against the reversible and thermoneutral
voltages over the step's range of temperature and pressure, its current against Faraday's law.
"""

from __future__ import annotations

from typing import Any

from audit.findings import ERROR, Finding, relative
from audit.physics.electrochemistry import (
    faraday_current,
)
from audit.results import StepResult
from audit.steps.allowances import DECLARED, ROUNDING, claim_rule
from audit.steps.base import StepContext
from audit.steps.laws import format_power, tolerance_words
from audit.wording import to_celsius

VOLTAGE_ALLOWANCE = 0.5e-3
"""Tolerance of the voltage check [V]: what the data leave uncertain in E_rev. The formation data
give ΔfG°(H2O, l) to ±0.04 kJ/mol (CODATA Key Values for Thermodynamics, 1989), ±0.2 mV at
n = 2, and the reference equations of state reproduce them to about 0.01 kJ/mol (design note
2.3a); 0.5 mV covers both with room. The review adds the rounding of the written voltage (and of
every other written number of the step) to it (:mod:`audit.review.rounding`)."""

VOLTAGE_BASIS = "uncertainty of E_rev from the formation data, 0.5 mV"
"""The make-up of the voltage allowance, in words."""

ARITHMETIC = 1e-9
"""Relative allowance of V × I × N against a claimed power: arithmetic, no property enters [-]."""

CellStep = Any
"""A cell step (:class:`audit.steps.cells.CellStep`; not imported here, to keep the import order)."""


def cell_findings(
    step: CellStep,
    ctx: StepContext,
    result: StepResult,
    driven: bool,
    n: int,
    xi: float,
    E_rev: float,
    E_tn: float,
    efficiency: float | None,
    stack: float | None,
    heat: list,
) -> list[Finding]:
    tol = ctx.tolerances
    found = []
    V = step.cell_voltage
    tol_V = VOLTAGE_ALLOWANCE
    T_cell = result.extra.get("reaction_T")
    where = (
        f"at {to_celsius(T_cell):.4g} °C, each species at its own pressure"
        if T_cell is not None
        else "each species at its own state"
    )
    if V is not None:
        result.checks["voltage-beyond-reversible"] = (E_rev - V) if driven else (V - E_rev)
    if V is not None and driven and V < E_rev - tol_V:
        found.append(
            Finding(
                ERROR,
                "voltage-beyond-reversible",
                step.id,
                f"the cell voltage {V:.5g} V is below the reversible voltage {E_rev:.5g} V "
                f"(ΔG_rxn / nF, {where}) by {(E_rev - V) * 1e3:.3g} mV: an electrolyser cannot "
                f"split at less (tolerance {tol_V * 1e3:.2g} mV)",
                claimed=V,
                bound=E_rev,
                margin=E_rev - V,
                margin_relative=relative(E_rev - V, E_rev),
                quantity="voltage",
                tolerance=tol_V,
                tolerance_rule=ROUNDING,
                tolerance_basis=VOLTAGE_BASIS,
            )
        )
    if V is not None and not driven and V > E_rev + tol_V:
        found.append(
            Finding(
                ERROR,
                "voltage-beyond-reversible",
                step.id,
                f"the cell voltage {V:.5g} V is above the reversible voltage {E_rev:.5g} V "
                f"(−ΔG_rxn / nF, {where}) by {(V - E_rev) * 1e3:.3g} mV: a fuel cell cannot "
                f"deliver more (tolerance {tol_V * 1e3:.2g} mV)",
                claimed=V,
                bound=E_rev,
                margin=V - E_rev,
                margin_relative=relative(V - E_rev, E_rev),
                quantity="voltage",
                tolerance=tol_V,
                tolerance_rule=ROUNDING,
                tolerance_basis=VOLTAGE_BASIS,
            )
        )
    if V is not None and driven and step.heat is not None and xi > 0.0:
        needed = faraday_current(n, xi) * (E_tn - V)
        shown = sum(q.Q for q in heat if q.claimed)
        tol_H, rule, basis = claim_rule(
            tol,
            faraday_current(n, xi) * VOLTAGE_ALLOWANCE,
            f"n F ξ̇ times the {VOLTAGE_BASIS} (of E_tn)",
            result.energy_tolerance,
        )
        result.checks["heat-needed-below-thermoneutral"] = needed - shown
        below = V < E_tn - tol.energy_relative * E_tn if rule == DECLARED else V < E_tn
        if below and shown < needed - tol_H:
            found.append(
                Finding(
                    ERROR,
                    "heat-needed-below-thermoneutral",
                    step.id,
                    f"the cells run at {V:.4g} V, below the thermoneutral voltage {E_tn:.4g} V "
                    f"(ΔH_rxn / nF), so they must take in at least {format_power(needed)} of heat "
                    f"(n F ξ̇ (E_tn − V)), but the balance shows {format_power(shown)} of heat in",
                    claimed=shown,
                    bound=needed,
                    margin=needed - shown,
                    margin_relative=relative(needed - shown, needed),
                    quantity="power",
                    tolerance=tol_H,
                    tolerance_rule=rule,
                    tolerance_basis=basis,
                )
            )
    if step.current is not None:
        charge = step.current * step.cells
        if xi <= 0.0:
            found.append(
                Finding(
                    ERROR,
                    "faraday-mismatch",
                    step.id,
                    f"a current of {step.current:.4g} A through {step.cells} cells is claimed, but "
                    f"the streams show the cell reaction at {xi:.4g} mol/s: no "
                    f"{'production' if driven else 'consumption'} for the charge to account for",
                    claimed=charge,
                    bound=0.0,
                    quantity="fraction",
                )
            )
        elif efficiency is not None:
            made = faraday_current(n, xi)
            if efficiency > 1.0 + tol.energy_relative:
                words = (
                    f"the streams show {xi:.4g} mol/s of reaction, which needs "
                    f"{made:.5g} A of charge (n F ξ̇), more than the {charge:.5g} A "
                    f"passed (I × cells)"
                    if driven
                    else f"the current {charge:.5g} A (I × cells) is more than the {made:.5g} A "
                    f"its fuel consumption of {xi:.4g} mol/s of reaction can carry (n F ξ̇)"
                )
                found.append(
                    Finding(
                        ERROR,
                        "faraday-mismatch",
                        step.id,
                        f"{words}: a faradaic efficiency of {efficiency:.4f}, above 1",
                        claimed=efficiency,
                        bound=1.0,
                        margin=efficiency - 1.0,
                        margin_relative=efficiency - 1.0,
                        quantity="fraction",
                        tolerance=tol.energy_relative,
                    )
                )
            elif (
                step.faradaic_efficiency is not None
                and abs(efficiency - step.faradaic_efficiency) > tol.energy_relative
            ):
                gap = efficiency - step.faradaic_efficiency
                found.append(
                    Finding(
                        ERROR,
                        "faraday-mismatch",
                        step.id,
                        f"the claimed faradaic efficiency {step.faradaic_efficiency:.4g} differs from "
                        f"the {efficiency:.4f} that the current ({charge:.5g} A through the cells) "
                        f"and the streams' {xi:.4g} mol/s of reaction give",
                        claimed=step.faradaic_efficiency,
                        bound=efficiency,
                        margin=abs(gap),
                        margin_relative=relative(abs(gap), efficiency),
                        quantity="fraction",
                        tolerance=tol.energy_relative,
                    )
                )
    if step.power is not None and stack is not None:
        gap = step.power - stack
        tol_P, rule, basis = claim_rule(
            tol,
            ARITHMETIC * abs(stack),
            "V × I × N is arithmetic: no property allowance",
            result.energy_tolerance,
        )
        result.checks["power-mismatch"] = stack - step.power
        if abs(gap) > tol_P:
            found.append(
                Finding(
                    ERROR,
                    "power-mismatch",
                    step.id,
                    f"the claimed power {format_power(step.power)} differs from voltage × current × "
                    f"cells = {V:.4g} V × {step.current:.5g} A × {step.cells} = "
                    f"{format_power(stack)}, by {format_power(abs(gap))} "
                    f"({tolerance_words(tol_P, False)})",
                    claimed=step.power,
                    bound=stack,
                    margin=abs(gap),
                    margin_relative=relative(abs(gap), stack),
                    quantity="power",
                    tolerance=tol_P,
                    tolerance_rule=rule,
                    tolerance_basis=basis,
                )
            )
    return found
