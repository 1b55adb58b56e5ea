"""Work bounds and the balances they come from: first-law residual, entropy generation,
reversible work (exergy drop) and its isothermal forms −ΔG and −ΔA.

Sign convention: Q is heat INTO the system, W is work DELIVERED BY it.

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 4, 6, 7.
.. [2] A. Bejan, *Advanced Engineering Thermodynamics*, 4th ed., Wiley, 2016, ch. 3.
"""

from __future__ import annotations


def energy_residual(Q: float, W: float, dE: float) -> float:
    """What the first law leaves unexplained.

    Method: energy balance of a control volume (steady flow) or closed system [1, ch. 4]::

        residual = Q − W − ΔE

    Parameters
    ----------
    Q : heat into the system [W] or [J]
    W : work delivered by the system [W] or [J]
    dE : change of the energy carried (Σ ṁ_e e_e − Σ ṁ_i e_i, or ΔU) [W] or [J]

    Returns
    -------
    residual : zero when the first law closes [W] or [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 4.
    """
    return Q - W - dE


def entropy_generation(dS: float, entropy_of_heat: float) -> float:
    """Entropy generated, from the entropy balance [1, ch. 6]::

        S_gen = ΔS − Σ Q_j / T_j ≥ 0

    Parameters
    ----------
    dS : entropy change carried (Σ ṁ_e s_e − Σ ṁ_i s_i, or m Δs) [W/K] or [J/K]
    entropy_of_heat : Σ Q_j / T_j over the heat flows into the system [W/K] or [J/K]

    Returns
    -------
    S_gen : entropy generated [W/K] or [J/K]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 6.
    """
    return dS - entropy_of_heat


def reversible_work(dE: float, dS: float, T0: float, heat_exergy: float) -> float:
    """The most work a system can deliver between its end states: the exergy drop.

    Method: exergy balance with no destruction [1, ch. 7]::

        W_rev = −(ΔE − T0 ΔS) + Σ Q_j (1 − T0 / T_j)

    For streams that each conserve their fluid this equals Σ ṁ_i ψ_i − Σ ṁ_e ψ_e plus the
    heat's exergy (the dead-state terms cancel); for a closed system ΔE is ΔU and W_rev is the
    total work (the useful work is W_rev − P0 ΔV).

    Parameters
    ----------
    dE : change of the energy carried (enthalpy plus kinetic and potential, or ΔU) [W] or [J]
    dS : change of the entropy carried [W/K] or [J/K]
    T0 : dead-state temperature [K]
    heat_exergy : Σ Q_j (1 − T0 / T_j) over the heat flows into the system [W] or [J]

    Returns
    -------
    W_rev : reversible work delivered [W] or [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 7.
    """
    return -(dE - T0 * dS) + heat_exergy


def isothermal_flow_work_bound(dG: float) -> float:
    """Reversible work of a steady-flow system exchanging heat at its own, uniform temperature.

    Method: the exergy drop with T_j = T and ΔH − T ΔS = ΔG [2, ch. 3]::

        W_rev = −ΔG

    The same −ΔG bounds the work other than expansion work of a closed system at constant,
    uniform temperature and pressure.

    Parameters
    ----------
    dG : change of the Gibbs function carried by the streams [W] or [J]

    Returns
    -------
    W_rev : reversible work delivered [W] or [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 14.
    .. [2] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 3.
    """
    return -dG


def isothermal_closed_work_bound(dA: float) -> float:
    """Reversible work of a closed system at constant, uniform temperature.

    Method: ΔU − T ΔS = ΔA (Helmholtz function) [2, ch. 3]::

        W_rev = −ΔA

    Parameters
    ----------
    dA : change of the Helmholtz function of the contents [J]

    Returns
    -------
    W_rev : reversible (total) work delivered [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 11.
    .. [2] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 3.
    """
    return -dA


def gibbs_change_at(dH: float, dS: float, T: float) -> float:
    """Change of the Gibbs function of what a step carries, at one temperature.

    Method: G = H − T S at the step's one temperature T, so that for the same T at both ends [1,
    ch. 14], [2, ch. 3]::

        ΔG = ΔH − T ΔS

    The enthalpy and entropy changes are the streams' own (reference-independent for a conserved
    fluid); each stream's own g = h − T_stream s is never used, since within an isothermal band
    its T_stream·s term mixes a small temperature difference with an absolute entropy.

    Parameters
    ----------
    dH : enthalpy change carried (plus kinetic and potential energy for a flow) [W] or [J]
    dS : entropy change carried [W/K] or [J/K]
    T : the step's temperature [K]

    Returns
    -------
    dG : Gibbs-function change at T [W] or [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 14.
    .. [2] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 3.
    """
    return dH - T * dS


def helmholtz_change_at(dU: float, dS: float, T: float) -> float:
    """Change of the Helmholtz function of a closed system's contents, at one temperature.

    Method: A = U − T S at the system's one temperature T [1, ch. 11], [2, ch. 3]::

        ΔA = ΔU − T ΔS

    Parameters
    ----------
    dU : internal-energy change of the contents [J]
    dS : entropy change of the contents [J/K]
    T : the system's temperature [K]

    Returns
    -------
    dA : Helmholtz-function change at T [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 11.
    .. [2] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 3.
    """
    return dU - T * dS


def useful_work_bound(W_total: float, P0: float, dV: float) -> float:
    """The most useful work a closed system can deliver: its total-work bound less the work done
    pushing back the surroundings.

    Method: boundary work against the surroundings at P0 is not useful [1, ch. 7]::

        W_useful,max = W_total,max − P0 ΔV

    (for an isothermal system W_total,max = −ΔA, so this is −ΔA − P0 ΔV).

    Parameters
    ----------
    W_total : bound on the total work delivered (−ΔA or the exergy drop) [J]
    P0 : pressure of the surroundings (dead state) [Pa]
    dV : volume change of the contents, final minus initial [m**3]

    Returns
    -------
    W_useful : bound on the useful work delivered [J]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 7.
    """
    return W_total - P0 * dV
