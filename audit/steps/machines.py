"""Helpers shared by the work machines (turbine, compressor, pump): heat loss and the isentropic
outlet. Not a step kind itself."""

from __future__ import annotations

import math

from audit.errors import StateError
from audit.findings import ERROR, WARNING, Finding
from audit.physics.efficiency import (
    isentropic_efficiency_compression,
    isentropic_efficiency_cooled_compression,
)
from audit.results import HeatFlow, StreamResult
from audit.steps.allowances import DECLARED, PROPERTY_SPREAD, ROUNDING
from audit.steps.base import StepContext, heat_flow
from audit.wording import to_bar

EFFICIENCY_MATCH = 0.01
"""A claimed isentropic efficiency may differ from the computed one by this much [-]."""


def heat_loss_flow(
    loss: float | None, temperature: float | None, T0: float, coldest: float | None = None
) -> list[HeatFlow]:
    """A machine's claimed heat loss [W], at the declared temperature or, conservatively, at T0
    (or the coldest stream, when that is colder)."""
    if loss is None:
        return []
    return [heat_flow(-loss, temperature, T0, claimed=True, label="heat loss", coldest=coldest)]


def isentropic_outlet_enthalpy(
    step_id: str, inlet: StreamResult, outlet: StreamResult, ctx: StepContext
) -> float | None:
    """h [J/kg] at the outlet pressure and the inlet entropy, or None (with a finding) when the
    equation of state cannot give it. Method: one (P, s) flash, CoolProp HEOS."""
    if inlet.fluid != outlet.fluid:
        return None
    try:
        state = ctx.engine.state(inlet.fluid, "Ps", outlet.P, inlet.s, table_basis=False)
    except StateError as exc:
        ctx.add(
            Finding(
                WARNING,
                "step-not-evaluated",
                step_id,
                f"the isentropic outlet state could not be evaluated, so the isentropic efficiency "
                f"is not checked: {exc.problem.message}",
            )
        )
        return None
    return state.h


def evaluate_work_absorber(step, kind: str, ctx: StepContext, noun: str):
    """Laws and efficiency checks of a machine that absorbs shaft power (compressor, pump).

    η_s = (h_out,s − h_in) / (h_out − h_in) ≤ 1 for an adiabatic machine, and
    η_s = ṁ (h_out,s − h_in) / W_shaft for one whose heat loss (cooling) is claimed; the outlet
    pressure must exceed the inlet's.
    Returns the :class:`StepResult`.
    """
    from audit.steps.base import finish_flow_step

    inlet, outlet = ctx.stream(step.inlet), ctx.stream(step.outlet)
    heat = heat_loss_flow(step.heat_loss, step.heat_loss_temperature, ctx.T0, min(inlet.T, outlet.T))
    claimed, inferred = [], []
    if step.shaft_power is not None:
        W = -step.shaft_power
        claimed.append("shaft_power")
    else:
        Q = sum(q.Q for q in heat)
        W = Q - (
            outlet.mass_flow * (outlet.h + outlet.kinetic_potential)
            - inlet.mass_flow * (inlet.h + inlet.kinetic_potential)
        )
        inferred.append("shaft_power")
    claimed.append("heat_loss" if step.heat_loss is not None else "adiabatic")
    result, _ = finish_flow_step(step, kind, ctx, [inlet], [outlet], heat, W, claimed, inferred)
    if outlet.P <= inlet.P:
        ctx.add(
            Finding(
                ERROR,
                "pressure-wrong-way",
                step.id,
                f"the outlet pressure ({to_bar(outlet.P):.4g} bar) is not above the inlet pressure "
                f"({to_bar(inlet.P):.4g} bar); a {noun} raises the pressure (inlet and outlet swapped?)",
                claimed=outlet.P,
                bound=inlet.P,
                margin=inlet.P - outlet.P,
                quantity="pressure",
            )
        )
        return result
    h_s = isentropic_outlet_enthalpy(step.id, inlet, outlet, ctx)
    cooled = step.heat_loss is not None and step.shaft_power is not None
    if h_s is not None and cooled and W < 0:
        # A cooled machine: the efficiency is the isentropic power over the shaft power.
        eta = isentropic_efficiency_cooled_compression(inlet.mass_flow, inlet.h, h_s, -W)
    elif h_s is not None and outlet.h - inlet.h > 0:
        eta = isentropic_efficiency_compression(inlet.h, outlet.h, h_s)
    else:
        eta = None
    if eta is not None and h_s is not None:
        efficiency_findings(
            step, result, ctx, eta, h_s, noun, "from the shaft power" if cooled else "from the streams"
        )
    return result


def _beyond_one(eta: float) -> str:
    """η with the digits that show how far it lies above 1 (1.0004, not 1.000)."""
    excess = abs(eta - 1.0)
    decimals = 3 if excess >= 1e-3 or excess == 0 else min(12, 2 - math.floor(math.log10(excess)))
    return f"{eta:.{decimals}f}"


def efficiency_allowance(result, ctx: StepContext, h_s: float) -> tuple[float, str, str]:
    """(allowance above 1 [-], tolerance rule, its make-up) of an isentropic efficiency: the
    balance's written ``efficiency`` tolerance when it writes one, else the property-method
    allowance PROPERTY_SPREAD (|h1 − h0| + |h2 − h0| + |h2s − h0|) / |h2 − h1|
    (:mod:`audit.steps.allowances`; the review adds the rounding bound of the written values)."""
    tol = ctx.tolerances
    if "efficiency" in tol.model_fields_set:
        return tol.efficiency, DECLARED, f"{tol.efficiency:g} (the balance's tolerances)"
    inlet, outlet = ctx.streams[result.inlets[0]], ctx.streams[result.outlets[0]]
    h0, _ = ctx.engine.dead_state(inlet.fluid)
    rise = abs(outlet.h - inlet.h)
    spread = abs(inlet.h - h0) + abs(outlet.h - h0) + abs(h_s - h0)
    allowed = PROPERTY_SPREAD * spread / rise if rise > 0 else 0.0
    return (
        allowed,
        ROUNDING,
        f"property-method allowance {allowed:.2g} ({PROPERTY_SPREAD:g} of the enthalpies "
        "from the dead state over the enthalpy change)",
    )


def efficiency_findings(
    step, result, ctx: StepContext, eta: float, h_s: float, noun: str, basis: str = "from the streams"
) -> None:
    """Record the isentropic efficiency ``eta`` [-] of a machine (with its isentropic outlet
    enthalpy ``h_s`` [J/kg]) and flag it above 1 (``efficiency-above-one``) or unlike a claimed
    value by more than 0.01 (``efficiency-mismatch``)."""
    result.isentropic_efficiency = eta
    result.extra["h_out_isentropic"] = h_s
    allowed, rule, allowance_basis = efficiency_allowance(result, ctx, h_s)
    # enthalpies printed as changes from the inlet: absolute ones may sit on the formation basis
    h_in, h_out = ctx.streams[result.inlets[0]].h, ctx.streams[result.outlets[0]].h
    if eta > 1.0 + allowed:
        ctx.add(
            Finding(
                ERROR,
                "efficiency-above-one",
                step.id,
                f"the isentropic efficiency {basis} is {_beyond_one(eta)} (isentropic enthalpy "
                f"change {(h_s - h_in) / 1e3:.4g} kJ/kg, actual {(h_out - h_in) / 1e3:.4g} kJ/kg), "
                f"above 1, which no real {noun} reaches",
                claimed=eta,
                bound=1.0,
                margin=eta - 1.0,
                margin_relative=eta - 1.0,
                quantity="fraction",
                tolerance=allowed,
                tolerance_rule=rule,
                tolerance_basis=allowance_basis,
            )
        )
    claimed_eta = getattr(step, "isentropic_efficiency", None)
    if claimed_eta is not None and abs(claimed_eta - eta) > EFFICIENCY_MATCH:
        ctx.add(
            Finding(
                WARNING,
                "efficiency-mismatch",
                step.id,
                f"the claimed isentropic efficiency {claimed_eta:.3f} differs from the {eta:.3f} "
                f"computed {basis}",
                claimed=claimed_eta,
                bound=eta,
                margin=claimed_eta - eta,
                margin_relative=(claimed_eta - eta) / eta,
                quantity="fraction",
                tolerance=EFFICIENCY_MATCH,
            )
        )
