"""The laws every step obeys, as findings: mass, first law, entropy generation, work bound.

The balances themselves (their equations, sign convention and sources) are computed in
:mod:`audit.steps.balances`; this module turns them into findings with their tolerances: the
property-method allowance of :mod:`audit.steps.allowances` by default (the review adds the rounding
of the written values), or the balance's written tolerances when it declares them.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from audit.findings import ERROR, Finding, relative
from audit.model.tolerances import Tolerances
from audit.results import Balance
from audit.steps.allowances import DECLARED, ROUNDING, Allowances


def energy_tolerance(balance: Balance, tol: Tolerances, batch: bool) -> float:
    """Allowed energy residual and work-bound margin [W] or [J]: the larger of the relative
    tolerance times the step's energy scale and the absolute floor (:func:`energy_floor`)."""
    return max(tol.energy_relative * balance.energy_scale, energy_floor(balance, tol, batch))


def energy_floor(balance: Balance, tol: Tolerances, batch: bool) -> float:
    """The absolute floor of the energy tolerance [W] or [J], never more than
    ``energy_floor_fraction`` of the step's own size, the larger of its work and its net heat, so
    that the floor cannot hide a small machine: min(absolute, fraction · max(|W|, |Q|)). A step
    with neither work nor heat (a valve, a splitter, a mixer) keeps the whole floor: its turnover
    is its residual itself."""
    absolute = tol.energy_absolute_batch if batch else tol.energy_absolute
    size = max(abs(balance.W), abs(balance.Q))
    return absolute if size == 0.0 else min(absolute, tol.energy_floor_fraction * size)


def floor_note(balance: Balance, tol: Tolerances, batch: bool) -> str:
    """Words for a finding whose tolerance the absolute floor set (empty otherwise)."""
    floor = energy_floor(balance, tol, batch)
    if floor <= tol.energy_relative * balance.energy_scale:
        return ""
    absolute = tol.energy_absolute_batch if batch else tol.energy_absolute
    if floor < absolute:
        return (
            f"; the tolerance is the absolute floor, capped at "
            f"{tol.energy_floor_fraction:.0%} of the step's "
            f"{_kw(max(abs(balance.W), abs(balance.Q)), batch)} of work or heat"
        )
    return f"; the tolerance is the absolute floor of {_kw(absolute, batch)}"


def law_findings(
    step_id: str,
    balance: Balance,
    tol: Tolerances,
    T0: float,
    batch: bool,
    inlet_mass: float,
    conservative_note: str = "",
    check_energy: bool = True,
    energy_finding: str = "energy-imbalance",
    check_mass: bool = True,
    allowance: Allowances | None = None,
    shift: tuple[float, float] = (0.0, 0.0),
) -> list[Finding]:
    """The law checks shared by every step: mass, first law, work bound, entropy generation.

    With ``allowance`` (the default rule, :mod:`audit.steps.allowances`) a law finding is raised
    when its margin exceeds the property-method allowance, marked ``tolerance_rule="rounding"``:
    the review adds the rounding bound of the written values (:mod:`audit.review.rounding`) and
    keeps it only beyond both. Without, the balance's written tolerances apply
    (:func:`energy_tolerance`).
    ``shift`` is :func:`audit.steps.allowances.reference_shift` of the step's streams: the energy,
    work and entropy margins are read with each conserved fluid's enthalpy and entropy from its
    mean outlet state (zero when the mass balances exactly)."""
    findings: list[Finding] = []
    energy_q = "energy" if batch else "power"
    entropy_q = "entropy" if batch else "entropy_rate"
    if allowance is None:
        tol_E = tol_W = energy_tolerance(balance, tol, batch)
        rule = DECLARED
        absolute = tol.energy_absolute_batch if batch else tol.energy_absolute
        basis_E = basis_W = (
            f"{tol.energy_relative:.3g} of the step's energy scale {_kw(balance.energy_scale, batch)}, "
            f"at least {_kw(absolute, batch)} (the balance's tolerances)"
        )
    else:
        tol_E, tol_W, rule = allowance.energy, allowance.exergy, ROUNDING
        basis_E = basis_W = ""  # worded below, only for a finding (most steps have none)
    dH_shift, dS_shift = shift
    note = f" {conservative_note}" if conservative_note else ""

    mass_tol = max(tol.mass_relative * inlet_mass, tol.mass_absolute)
    for fluid, residual in sorted(balance.mass_residual.items()):
        if not check_mass:
            break
        if abs(residual) > mass_tol and not batch:
            direction = "vanishes" if residual > 0 else "appears"
            findings.append(
                Finding(
                    ERROR,
                    "mass-imbalance",
                    step_id,
                    f"{abs(residual):.4g} kg/s of {fluid} {direction} in the step: inlets carry "
                    f"{abs(residual):.4g} kg/s {'more' if residual > 0 else 'less'} than outlets",
                    claimed=residual,
                    bound=0.0,
                    margin=abs(residual),
                    margin_relative=relative(abs(residual), inlet_mass),
                    quantity="mass_flow",
                    tolerance=mass_tol,
                )
            )
        elif batch and abs(residual) > 0:
            findings.append(
                Finding(
                    ERROR,
                    "mass-imbalance",
                    step_id,
                    f"the vessel's contents change fluid ({fluid}); a closed step keeps its fluid",
                    quantity="mass",
                    claimed=residual,
                    bound=0.0,
                    margin=abs(residual),
                )
            )

    if findings:
        # Mass does not balance: the energy and entropy sums compare different amounts of matter
        # (and, on the formation basis, absolute enthalpies), so their residuals say nothing more.
        return findings

    r = balance.energy_residual - dH_shift
    if check_energy and abs(r) > tol_E:
        change = balance.dU if batch else balance.dH + balance.KE_PE_out - balance.KE_PE_in
        change += dH_shift
        findings.append(
            Finding(
                ERROR,
                energy_finding,
                step_id,
                f"the first law does not close: heat in minus work out is "
                f"{_kw(balance.Q - balance.W, batch)}, but the "
                f"{'contents' if batch else 'streams'}' energy changes by {_kw(change, batch)}, a "
                f"residual of {_kw(r, batch)} ({tolerance_words(tol_E, batch)}"
                f"{floor_note(balance, tol, batch) if rule == DECLARED else ''})",
                claimed=balance.Q - balance.W,
                bound=change,
                margin=abs(r),
                margin_relative=relative(abs(r), balance.energy_scale),
                quantity=energy_q,
                tolerance=tol_E,
                tolerance_rule=rule,
                tolerance_basis=allowance.energy_basis if allowance is not None else basis_E,
            )
        )

    excess = balance.W - balance.W_rev + dH_shift - T0 * dS_shift
    if excess > tol_W:
        if balance.W > 0:
            name = "work-above-bound"
            message = (
                f"claims {_kw(balance.W, batch)} of work delivered, more than the "
                f"{_kw(balance.W_rev, batch)} its exergy drop allows, by "
                f"{_kw(excess, batch)}"
            )
        else:
            name = "input-below-minimum"
            message = (
                f"claims {_kw(-balance.W, batch)} of work absorbed, less than the "
                f"reversible minimum of {_kw(-balance.W_rev, batch)}, by "
                f"{_kw(excess, batch)}"
            )
        findings.append(
            Finding(
                ERROR,
                name,
                step_id,
                message + f"; {tolerance_words(tol_W, batch)}.{note}",
                claimed=balance.W,
                bound=balance.W - excess,
                margin=excess,
                margin_relative=relative(excess, balance.W_rev or balance.W),
                quantity=energy_q,
                tolerance=tol_W,
                tolerance_rule=rule,
                tolerance_basis=allowance.exergy_basis if allowance is not None else basis_W,
            )
        )

    tol_S = tol_W / T0
    S_gen = balance.S_gen + dS_shift
    if S_gen < -tol_S:
        unit = "kJ/K" if batch else "kW/K"
        findings.append(
            Finding(
                ERROR,
                "negative-entropy-generation",
                step_id,
                f"entropy generation is {S_gen / 1e3:.4g} {unit} (T0·S_gen = "
                f"{_kw(T0 * S_gen, batch)} of exergy created), below zero: the step as written "
                f"would destroy entropy ({entropy_tolerance_words(tol_S, batch, T0)}).{note}",
                claimed=S_gen,
                bound=0.0,
                margin=-S_gen,
                margin_relative=relative(-S_gen, balance.dS),
                quantity=entropy_q,
                tolerance=tol_S,
                tolerance_rule=rule,
                tolerance_basis=allowance.exergy_basis if allowance is not None else basis_W,
            )
        )
    return findings


def tolerance_words(tolerance: float, batch: bool) -> str:
    """How a law message states its energy tolerance [W or J] (the review rewrites it)."""
    return f"tolerance {_kw(tolerance, batch)}"


def entropy_tolerance_words(tolerance: float, batch: bool, T0: float) -> str:
    """How a law message states its entropy tolerance [W/K or J/K] and its power T0·tolerance."""
    unit = "kJ/K" if batch else "kW/K"
    return f"tolerance {tolerance / 1e3:.3g} {unit}, {_kw(T0 * tolerance, batch)} at T0"


def _kw(value: float, batch: bool) -> str:
    value = value + 0.0  # a negative zero (minus no work) is written "0"
    if batch:
        return f"{value / 1e3:,.4g} kJ" if abs(value) < 1e6 else f"{value / 1e6:,.4g} MJ"
    return f"{value / 1e3:,.4g} kW" if abs(value) < 1e6 else f"{value / 1e6:,.4g} MW"


def format_power(value: float, batch: bool = False) -> str:
    """A power [W] (or an energy [J] for a vessel) in kW/MW (kJ/MJ) for messages."""
    return _kw(value, batch)


def side_mass_finding(
    step_id: str, name: str, inlet: Any, outlets: Sequence[Any], tol: Tolerances
) -> Finding | None:
    """``mass-imbalance`` of one side of a step (an exchanger's or a machine's side, a boiler's
    heated side): the inlet's mass flow against the outlets' together [kg/s], within the larger of
    the relative and the absolute mass tolerance; None when it balances."""
    leaving = sum(s.mass_flow for s in outlets)
    residual = inlet.mass_flow - leaving
    mass_tol = max(tol.mass_relative * inlet.mass_flow, tol.mass_absolute)
    if abs(residual) <= mass_tol:
        return None
    return Finding(
        ERROR,
        "mass-imbalance",
        step_id,
        f"the {name} side enters with {inlet.mass_flow:.4g} kg/s ({inlet.id}) and leaves with "
        f"{leaving:.4g} kg/s ({', '.join(s.id for s in outlets)})",
        claimed=residual,
        bound=0.0,
        margin=abs(residual),
        margin_relative=relative(abs(residual), inlet.mass_flow),
        quantity="mass_flow",
        tolerance=mass_tol,
    )
