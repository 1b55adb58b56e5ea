"""Refrigerating machines and heat pumps between two streams: the reversible coefficient of
performance from the entropy balance over the streams.

A machine driven by power P takes heat Q_e from one stream (the chilled side, from state 1 to
state 2) and rejects Q_c = Q_e + P to another (the condenser side, from state 3 to state 4),
exchanging no other heat. Each side's heat is Q = ṁ Δh and its entropy change ṁ Δs; their ratio is
the side's entropic (thermodynamic) mean temperature T̄ = Δh / Δs [1, §3.4; 2]. The entropy
balance of the machine over its four streams,

    Ṡ_gen = Q_c / T̄_c − Q_e / T̄_e ≥ 0,

with Q_c = Q_e + P gives the reversible limits

    COP_cooling ≤ T̄_e / (T̄_c − T̄_e),    COP_heating ≤ T̄_c / (T̄_c − T̄_e).

They are the Carnot figures between the two entropic mean temperatures, not between the inlet
temperatures (which would overstate the limit) nor between the coldest and hottest terminals
(which would understate it).

References
----------
.. [1] T. J. Kotas, *The Exergy Method of Thermal Plant Analysis*, Butterworths, 1985, §3.4
   (thermodynamic mean temperature).
.. [2] A. Bejan, *Advanced Engineering Thermodynamics*, 4th ed., Wiley, 2016, ch. 3 and 9
   (refrigeration: reversible limits).
"""

from __future__ import annotations

import math


def entropic_mean_temperature(dh: float, ds: float, T_in: float, T_out: float) -> float:
    """The entropic (thermodynamic) mean temperature of a stream's heat exchange [K].

    Method [1, §3.4]: T̄ = Δh / Δs, the temperature at which the same heat would carry the same
    entropy; for a liquid of constant specific heat it is the log mean (T_out − T_in)/ln(T_out/T_in).
    With no change (Δs = 0) it is the mean of the terminal temperatures.

    Parameters
    ----------
    dh : specific enthalpy change of the stream, outlet minus inlet [J/kg]
    ds : specific entropy change of the stream, outlet minus inlet [J/(kg K)]
    T_in, T_out : inlet and outlet temperatures [K]

    Returns
    -------
    T̄ : entropic mean temperature [K]

    References
    ----------
    .. [1] Kotas, *The Exergy Method of Thermal Plant Analysis*, 1985, §3.4.
    """
    if ds == 0.0 or dh == 0.0 or (dh > 0) != (ds > 0):
        return 0.5 * (T_in + T_out)
    return dh / ds


def reversible_cop_cooling(T_cold: float, T_hot: float) -> float:
    """Reversible coefficient of performance of a refrigerating machine [-].

    Method [1, ch. 9]: COP_rev = T̄_e / (T̄_c − T̄_e), with T̄_e and T̄_c the entropic mean
    temperatures of the chilled and the condenser streams (:func:`entropic_mean_temperature`);
    infinite when the condenser side is not warmer than the chilled side (no lift).

    Parameters
    ----------
    T_cold : entropic mean temperature of the chilled stream T̄_e [K]
    T_hot : entropic mean temperature of the condenser stream T̄_c [K]

    Returns
    -------
    COP_rev : the largest cooling duty per unit of power [-]

    References
    ----------
    .. [1] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 9.
    """
    if T_hot <= T_cold:
        return math.inf
    return T_cold / (T_hot - T_cold)


def reversible_cop_heating(T_cold: float, T_hot: float) -> float:
    """Reversible coefficient of performance of a heat pump [-].

    Method [1, ch. 9]: COP_rev = T̄_c / (T̄_c − T̄_e) = 1 + the cooling figure of
    :func:`reversible_cop_cooling`; infinite with no lift.

    Parameters
    ----------
    T_cold : entropic mean temperature of the source stream (evaporator side) [K]
    T_hot : entropic mean temperature of the heated stream (condenser side) [K]

    Returns
    -------
    COP_rev : the largest heating duty per unit of power [-]

    References
    ----------
    .. [1] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 9.
    """
    if T_hot <= T_cold:
        return math.inf
    return T_hot / (T_hot - T_cold)
