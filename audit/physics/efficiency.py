"""Efficiencies of machines: isentropic (first-law comparison with the ideal machine) and
second-law (comparison with the reversible work).

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 6 (isentropic efficiencies) and ch. 7 (exergetic
   efficiency).
"""

from __future__ import annotations


def isentropic_efficiency_expansion(h_in: float, h_out: float, h_out_s: float) -> float:
    """Isentropic efficiency of an adiabatic expansion (turbine, expander).

    Method: actual over isentropic enthalpy drop [1, ch. 6]::

        η_s = (h_in − h_out) / (h_in − h_out,s)

    Parameters
    ----------
    h_in : inlet specific enthalpy [J/kg]
    h_out : actual outlet specific enthalpy [J/kg]
    h_out_s : specific enthalpy at the outlet pressure and the inlet entropy [J/kg]

    Returns
    -------
    η_s : isentropic efficiency [-]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 6.
    """
    return (h_in - h_out) / (h_in - h_out_s)


def isentropic_efficiency_compression(h_in: float, h_out: float, h_out_s: float) -> float:
    """Isentropic efficiency of an adiabatic compression (compressor, pump).

    Method: isentropic over actual enthalpy rise [1, ch. 6]::

        η_s = (h_out,s − h_in) / (h_out − h_in)

    Parameters
    ----------
    h_in : inlet specific enthalpy [J/kg]
    h_out : actual outlet specific enthalpy [J/kg]
    h_out_s : specific enthalpy at the outlet pressure and the inlet entropy [J/kg]

    Returns
    -------
    η_s : isentropic efficiency [-]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 6.
    """
    return (h_out_s - h_in) / (h_out - h_in)


def isentropic_efficiency_cooled_compression(
    mass_flow: float, h_in: float, h_out_s: float, shaft_power: float
) -> float:
    """Isentropic efficiency of a compression whose heat loss (cooling) is known.

    Method: isentropic power over the shaft power absorbed [1, ch. 6]::

        η_s = ṁ (h_out,s − h_in) / Ẇ_shaft

    Parameters
    ----------
    mass_flow : mass flow through the machine [kg/s]
    h_in : inlet specific enthalpy [J/kg]
    h_out_s : specific enthalpy at the outlet pressure and the inlet entropy [J/kg]
    shaft_power : shaft power absorbed, positive [W]

    Returns
    -------
    η_s : isentropic efficiency [-]

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 6.
    """
    return mass_flow * (h_out_s - h_in) / shaft_power


def second_law_efficiency(W: float, W_rev: float) -> float | None:
    """Second-law (exergetic) efficiency of a work producer or consumer.

    Method: the work over its reversible bound, both as magnitudes [1, ch. 7]::

        ε = W / W_rev      for a producer (W > 0, W_rev > 0)
        ε = W_rev / W      for a consumer (W < 0, W_rev < 0)

    and None when W and W_rev differ in sign (no efficiency is defined).

    Parameters
    ----------
    W : work delivered [W] or [J] (negative when absorbed)
    W_rev : reversible work delivered between the same end states [W] or [J]

    Returns
    -------
    ε : second-law efficiency [-], or None

    References
    ----------
    .. [1] Moran, Shapiro et al., *Fundamentals of Engineering Thermodynamics*, 8th ed., ch. 7.
    """
    if W > 0 and W_rev > 0:
        return W / W_rev
    if W < 0 and W_rev < 0:
        return W_rev / W
    return None
