"""The balances of a step: its totals, first-law residual, entropy generation and reversible work.

The findings these laws give are :mod:`audit.steps.laws`'.

Sign convention: Q is heat INTO the step, W is work DELIVERED BY the step.

Steady flow, inlets i, outlets e, heat flows Q_j at boundary temperatures T_j [1, ch. 4, 6, 7]:

* first law:  residual = Σ Q_j − W − (Σ ṁ_e e_e − Σ ṁ_i e_i),  e = h + V²/2 + g z
* entropy generation:  Ṡ_gen = Σ ṁ_e s_e − Σ ṁ_i s_i − Σ Q_j / T_j  ≥ 0
* reversible work:  Ẇ_rev = −(ΔĖ − T0 ΔṠ) + Σ Q_j (1 − T0 / T_j)
  which equals Σ ṁ_i ψ_i − Σ ṁ_e ψ_e + Σ Q_j (1 − T0/T_j) whenever each fluid is conserved (the
  dead-state terms of ψ cancel) and stays valid for reacting steps on the formation basis;
* exergy destroyed (Gouy–Stodola):  Ẋ_d = T0 Ṡ_gen, and Ẇ_rev − W = Ẋ_d + residual.

Closed (batch) step from state 1 to state 2 with mass m:

* Q − W = m (u2 − u1);  S_gen = m (s2 − s1) − Σ Q_j / T_j;
* W_rev = −(ΔU − T0 ΔS) + Σ Q_j (1 − T0 / T_j)  (total work; the useful work bound is this minus
  P0 ΔV), which reduces to −ΔA for an isothermal step exchanging heat at its own temperature.

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014.
.. [2] A. Bejan, *Advanced Engineering Thermodynamics*, 4th ed., Wiley, 2016, ch. 3 (Gouy–Stodola).
"""

from __future__ import annotations

from collections.abc import Sequence

from audit.physics.bounds import energy_residual, entropy_generation, reversible_work
from audit.physics.exergy import carnot_factor, exergy_destroyed, heat_exergy
from audit.physics.exergy import entropy_of_heat as heat_entropy
from audit.properties.humid_air import HUMID_AIR
from audit.results import Balance, HeatFlow, StreamResult


def heat_exergy_factor(T_boundary: float, T0: float) -> float:
    """Carnot factor 1 − T0/T_j of heat crossing the boundary at T_j [K]; 1 for T_j = ∞
    (:func:`audit.physics.exergy.carnot_factor`)."""
    return carnot_factor(T_boundary, T0)


def entropy_of_heat(heat_flows: Sequence[HeatFlow]) -> float:
    """Σ Q_j / T_j [W/K] (0 for heat from an infinitely hot source)."""
    return sum(heat_entropy(q.Q, q.temperature) for q in heat_flows)


def exergy_of_heat(heat_flows: Sequence[HeatFlow], T0: float) -> float:
    """Σ Q_j (1 − T0/T_j) [W] over the heat flows into the step."""
    return sum(heat_exergy(q.Q, q.temperature, T0) for q in heat_flows)


def flow_balance(
    inlets: Sequence[StreamResult],
    outlets: Sequence[StreamResult],
    heat_flows: Sequence[HeatFlow],
    W: float,
    T0: float,
) -> Balance:
    """Steady-flow balances of a step; see the module docstring for the equations.

    Parameters
    ----------
    inlets, outlets : evaluated streams
    heat_flows : heat into the step [W] with boundary temperatures [K]
    W : work delivered by the step [W]
    T0 : dead-state temperature [K]
    """
    (H_in, U_in, S_in, G_in, A_in, KE_in), (H_out, U_out, S_out, G_out, A_out, KE_out) = (
        _flow_totals(inlets),
        _flow_totals(outlets),
    )
    dH = H_out - H_in
    dU = U_out - U_in
    dS = S_out - S_in
    dG = G_out - G_in
    dA = A_out - A_in
    Q = sum(q.Q for q in heat_flows) if heat_flows else 0  # as sum() of nothing
    dE = dH + KE_out - KE_in
    residual = energy_residual(Q, W, dE)
    mass: dict[str, float] = {}
    for s in inlets:
        state = s.state
        if state.composition is not None and state.fluid == HUMID_AIR:
            for name, m in s.conserved_parts():
                mass[name] = mass.get(name, 0.0) + m
        else:
            mass[state.fluid] = mass.get(state.fluid, 0.0) + s.mass_flow
    for s in outlets:
        state = s.state
        if state.composition is not None and state.fluid == HUMID_AIR:
            for name, m in s.conserved_parts():
                mass[name] = mass.get(name, 0.0) - m
        else:
            mass[state.fluid] = mass.get(state.fluid, 0.0) - s.mass_flow
    if heat_flows:
        S_gen = entropy_generation(dS, entropy_of_heat(heat_flows))
        W_rev = reversible_work(dE, dS, T0, exergy_of_heat(heat_flows, T0))
        heat_scale = sum(abs(q.Q) for q in heat_flows)
    else:  # the same values, without summing nothing three times
        S_gen = entropy_generation(dS, 0)
        W_rev = reversible_work(dE, dS, T0, 0)
        heat_scale = 0
    scale = max(abs(W), heat_scale, energy_turnover(inlets, outlets))
    return Balance(
        H_in=H_in,
        H_out=H_out,
        KE_PE_in=KE_in,
        KE_PE_out=KE_out,
        dH=dH,
        dU=dU,
        dS=dS,
        dG=dG,
        dA=dA,
        Q=Q,
        W=W,
        energy_residual=residual,
        mass_residual=mass,
        S_gen=S_gen,
        W_rev=W_rev,
        exergy_destroyed=exergy_destroyed(S_gen, T0),
        energy_scale=scale,
        W_rev_exergy=W_rev,
    )


def _flow_totals(streams: Sequence[StreamResult]) -> tuple[float, float, float, float, float, float]:
    """Σ ṁ h, Σ ṁ u, Σ ṁ s, Σ ṁ g, Σ ṁ a [W, W/K] and Σ ṁ (V²/2 + g z) [W] of ``streams``, in one
    pass (summed in the order given, as ``sum`` would)."""
    H = U = S = G = A = KE = 0.0
    for stream in streams:
        m, s = stream.mass_flow, stream.state
        H += m * s.h
        U += m * s.u
        S += m * s.s
        G += m * s.g
        A += m * s.a
        KE += m * stream.kinetic_potential
    return H, U, S, G, A, KE


def energy_turnover(inlets: Sequence[StreamResult], outlets: Sequence[StreamResult]) -> float:
    """The enthalpy a step moves between its streams [W]: Σ_i ṁ_i |e_i − ē_out| per fluid.

    ē_out is the mass-weighted mean outlet energy of the same fluid (the inlet's own when the fluid
    has no outlet). For a one-inlet, one-outlet step it is ṁ |Δe|; it is the scale of the relative
    energy tolerance (absolute enthalpies, which depend on the reference, are never a scale).
    """
    flows: dict[str, list[float]] = {}
    for s in outlets:
        entry = flows.get(s.fluid)
        if entry is None:
            entry = flows[s.fluid] = [0.0, 0.0]
        entry[0] += s.mass_flow
        entry[1] += s.mass_flow * (s.h + s.kinetic_potential)
    turnover = 0.0
    for s in inlets:
        m_out, e_out = flows.get(s.fluid, (0.0, 0.0))
        e_mean = e_out / m_out if m_out > 0 else s.h + s.kinetic_potential
        turnover += s.mass_flow * abs(s.h + s.kinetic_potential - e_mean)
    return turnover


def closed_balance(
    mass: float,
    initial: StreamResult,
    final: StreamResult,
    heat_flows: Sequence[HeatFlow],
    W: float,
    T0: float,
) -> Balance:
    """Balances of a closed step from ``initial`` to ``final`` of ``mass`` [kg]; totals [J], [J/K].

    W is the total work delivered by the contents [J] (boundary and shaft work).
    """
    dU = mass * (final.u - initial.u)
    dH = mass * (final.h - initial.h)
    dS = mass * (final.s - initial.s)
    dG = mass * (final.g - initial.g)
    dA = mass * (final.a - initial.a)
    Q = sum(q.Q for q in heat_flows)
    residual = energy_residual(Q, W, dU)
    S_gen = entropy_generation(dS, entropy_of_heat(heat_flows))
    W_rev = reversible_work(dU, dS, T0, exergy_of_heat(heat_flows, T0))
    scale = max(abs(W), sum(abs(q.Q) for q in heat_flows), abs(dU))
    mass_residual = (
        {initial.fluid: 0.0}
        if initial.fluid == final.fluid
        else {initial.fluid: mass, final.fluid: -mass}
    )
    return Balance(
        H_in=mass * initial.u,
        H_out=mass * final.u,
        KE_PE_in=0.0,
        KE_PE_out=0.0,
        dH=dH,
        dU=dU,
        dS=dS,
        dG=dG,
        dA=dA,
        Q=Q,
        W=W,
        energy_residual=residual,
        mass_residual=mass_residual,
        S_gen=S_gen,
        W_rev=W_rev,
        exergy_destroyed=exergy_destroyed(S_gen, T0),
        energy_scale=scale,
        W_rev_exergy=W_rev,
    )
