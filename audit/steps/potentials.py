"""Which potential governs a step's work (design note 2.5), computed as named.

A step is isothermal when every stream (a vessel: its initial and final contents) and every declared
heat temperature lies within ``isothermal_band`` of one temperature T (the middle of their span).
Its heat is then exchanged at T: a heat flow whose boundary temperature was not declared is placed
at T (the premise of the classical bounds), and

* a flow step's reversible work is −ΔG = −(ΔE − T ΔS) of its streams at that one T (never each
  stream's own g = h − T_stream s), so W_rev − W = T S_gen + residual;
* a closed step's total work is bounded by −ΔA = −(ΔU − T ΔS), its useful work by −ΔA − P0 ΔV, and,
  at constant pressure P, its work other than expansion work by −ΔG = −ΔA − P ΔV.

Otherwise the bound is the exergy drop with each heat flow at its boundary temperature (declared,
or the conservative choice). The step's ``W_rev`` is the governing bound, the one the work check
uses and ``bound_basis`` names; every bound computed is kept under its own name in the
:class:`~audit.results.Balance` (``W_rev_exergy``, ``minus_dG_isothermal``, ``minus_dA_isothermal``,
``useful_work_bound``).

References
----------
.. [1] A. Bejan, *Advanced Engineering Thermodynamics*, 4th ed., Wiley, 2016, ch. 3.
.. [2] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 7, 11, 14.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from audit.physics.bounds import (
    gibbs_change_at,
    helmholtz_change_at,
    isothermal_closed_work_bound,
    isothermal_flow_work_bound,
    useful_work_bound,
)
from audit.results import Balance, BoundaryChoice, HeatFlow

FLOW_GIBBS = "-ΔG (isothermal flow)"
CLOSED_HELMHOLTZ = "-ΔA (isothermal closed)"
FLOW_EXERGY = "exergy drop"
CLOSED_EXERGY = "exergy drop (closed)"

STEP_TEMPERATURE_WORDS = "at the step's own temperature (isothermal step)"
"""What the note of a heat flow says when it was placed at the isothermal step's temperature."""


def isothermal_temperature(
    temperatures: Sequence[float], heat_flows: Sequence[HeatFlow], band: float
) -> float | None:
    """The step's one temperature [K] (the middle of the span of ``temperatures`` [K] and the
    declared finite heat temperatures) when that span is at most ``band`` [K]; else None."""
    values = list(temperatures) + [
        q.temperature
        for q in heat_flows
        if q.boundary is BoundaryChoice.DECLARED and math.isfinite(q.temperature)
    ]
    if not values or max(values) - min(values) > band:
        return None
    return 0.5 * (max(values) + min(values))


def exchange_at(heat_flows: Sequence[HeatFlow], T: float) -> None:
    """Place every heat flow whose boundary temperature was not declared at the isothermal step's
    temperature T [K] (in place, so the step kind's own list sees it)."""
    for q in heat_flows:
        if q.boundary is BoundaryChoice.CONSERVATIVE:
            q.temperature = T
            q.boundary = BoundaryChoice.STEP
            label = q.note.split(", ")[0] if q.note and not q.note.startswith("conservative") else ""
            q.note = f"{label}, {STEP_TEMPERATURE_WORDS}" if label else STEP_TEMPERATURE_WORDS


def govern_flow(balance: Balance, T: float | None) -> tuple[str, float | None]:
    """Set the flow step's governing bound in ``balance`` (its ``W_rev``); return the basis and
    the classical bound [W] (None when the exergy drop governs)."""
    if T is None:
        return FLOW_EXERGY, None
    dE = balance.dH + balance.KE_PE_out - balance.KE_PE_in
    bound = isothermal_flow_work_bound(gibbs_change_at(dE, balance.dS, T))
    balance.T_isothermal = T
    balance.minus_dG_isothermal = bound
    balance.W_rev = bound
    return FLOW_GIBBS, bound


def govern_closed(
    balance: Balance, T: float | None, P: float | None, P0: float, dV: float
) -> tuple[str, float | None]:
    """Set the closed step's governing bound in ``balance`` (its ``W_rev``, the total work) and
    its useful-work bound; ``P`` [Pa] is the contents' one pressure when isobaric (then −ΔG of
    other work is kept too), P0 [Pa] the dead-state pressure, dV [m**3] the volume change.
    Return the basis and the classical bound [J] (None when the exergy drop governs)."""
    if T is None:
        balance.useful_work_bound = useful_work_bound(balance.W_rev, P0, dV)
        return CLOSED_EXERGY, None
    bound = isothermal_closed_work_bound(helmholtz_change_at(balance.dU, balance.dS, T))
    balance.T_isothermal = T
    balance.minus_dA_isothermal = bound
    balance.W_rev = bound
    balance.useful_work_bound = useful_work_bound(bound, P0, dV)
    if P is not None:
        balance.minus_dG_isothermal = bound - P * dV
    return CLOSED_HELMHOLTZ, bound
