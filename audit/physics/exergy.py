"""Exergy: of a flowing stream, of heat, and the exergy destroyed by entropy generation.

Plain functions on SI floats. The dead state is (T0, P0); its specific enthalpy and entropy
h0, s0 are those of the same fluid there.

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 7 (exergy analysis).
.. [2] A. Bejan, *Advanced Engineering Thermodynamics*, 4th ed., Wiley, 2016, ch. 3
   (the Gouy–Stodola theorem).
"""

from __future__ import annotations

import math


def flow_exergy(h: float, s: float, h0: float, s0: float, T0: float) -> float:
    """Specific flow exergy of a stream (kinetic and potential parts excluded).

    Method: physical flow exergy relative to the dead state [1, ch. 7]::

        ψ = (h − h0) − T0 (s − s0)

    Parameters
    ----------
    h : specific enthalpy of the stream [J/kg]
    s : specific entropy of the stream [J/(kg K)]
    h0 : specific enthalpy of the same fluid at the dead state [J/kg]
    s0 : specific entropy of the same fluid at the dead state [J/(kg K)]
    T0 : dead-state temperature [K]

    Returns
    -------
    ψ : specific flow exergy [J/kg]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 7.
    """
    return (h - h0) - T0 * (s - s0)


def carnot_factor(T: float, T0: float) -> float:
    """Carnot factor of heat crossing a boundary at temperature T.

    Method: the efficiency of a reversible engine between T and T0 [1, ch. 5]::

        θ = 1 − T0 / T          (θ = 1 for T = ∞, an infinitely hot source)

    Parameters
    ----------
    T : boundary temperature at which the heat crosses [K] (``math.inf`` allowed)
    T0 : dead-state (environment) temperature [K]

    Returns
    -------
    θ : Carnot factor [-]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 5
       (Carnot efficiency) and ch. 7 (exergy transfer accompanying heat).
    """
    return 1.0 if math.isinf(T) else 1.0 - T0 / T


def heat_exergy(Q: float, T: float, T0: float) -> float:
    """Exergy carried by heat Q crossing a boundary at temperature T.

    Method: exergy transfer accompanying heat [1, ch. 7]::

        X_Q = Q (1 − T0 / T)

    Parameters
    ----------
    Q : heat [J] or heat rate [W]
    T : boundary temperature [K] (``math.inf`` allowed)
    T0 : dead-state temperature [K]

    Returns
    -------
    X_Q : exergy of the heat [J] or [W]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 7.
    """
    return Q * carnot_factor(T, T0)


def entropy_of_heat(Q: float, T: float) -> float:
    """Entropy carried by heat Q crossing a boundary at temperature T.

    Method: entropy transfer accompanying heat [1, ch. 6]::

        S_Q = Q / T          (0 for T = ∞)

    Parameters
    ----------
    Q : heat [J] or heat rate [W]
    T : boundary temperature [K] (``math.inf`` allowed)

    Returns
    -------
    S_Q : entropy transfer [J/K] or [W/K]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 6.
    """
    return 0.0 if math.isinf(T) else Q / T


def exergy_destroyed(S_gen: float, T0: float) -> float:
    """Exergy destroyed by entropy generation.

    Method: the Gouy–Stodola theorem [2]::

        X_d = T0 S_gen

    Parameters
    ----------
    S_gen : entropy generated [J/K] or its rate [W/K]
    T0 : dead-state temperature [K]

    Returns
    -------
    X_d : exergy destroyed [J] or [W]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 7.
    .. [2] Bejan, *Advanced Engineering Thermodynamics*, 4th ed., 2016, ch. 3.
    """
    return T0 * S_gen
