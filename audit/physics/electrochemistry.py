"""Electrochemical cells: reversible and thermoneutral voltages, Faraday's law.

ΔG and ΔH are per mole of the cell reaction written in the direction considered, n the electrons
transferred per mole of that reaction, F the Faraday constant (:data:`audit.constants.FARADAY`).

References
----------
.. [1] J. Larminie, A. Dicks, *Fuel Cell Systems Explained*, 2nd ed., Wiley, 2003, ch. 2.
.. [2] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 13–14.
"""

from __future__ import annotations

from audit.constants import FARADAY


def reversible_voltage(dG: float, n: float) -> float:
    """Reversible (open-circuit, Nernst) voltage of a cell reaction.

    Method: the electrical work of a reversible cell equals −ΔG [1, ch. 2]::

        E_rev = −ΔG / (n F)

    Positive for a spontaneous (galvanic) reaction; for an electrolysis reaction, pass ΔG of the
    reverse (galvanic) reaction to get the positive voltage it needs.

    Parameters
    ----------
    dG : Gibbs energy of reaction [J/mol]
    n : electrons transferred per mole of reaction [-]

    Returns
    -------
    E_rev : reversible voltage [V]

    References
    ----------
    .. [1] Larminie & Dicks, *Fuel Cell Systems Explained*, 2nd ed., 2003, ch. 2.
    """
    return -dG / (n * FARADAY)


def thermoneutral_voltage(dH: float, n: float) -> float:
    """Thermoneutral voltage of a cell reaction: the voltage at which an adiabatic cell neither
    takes in nor rejects heat.

    Method: the enthalpy of reaction expressed as a voltage [1, ch. 2]::

        E_tn = −ΔH / (n F)

    Parameters
    ----------
    dH : enthalpy of reaction [J/mol]
    n : electrons transferred per mole of reaction [-]

    Returns
    -------
    E_tn : thermoneutral voltage [V]

    References
    ----------
    .. [1] Larminie & Dicks, *Fuel Cell Systems Explained*, 2nd ed., 2003, ch. 2.
    """
    return -dH / (n * FARADAY)


def faraday_current(n: float, extent_rate: float) -> float:
    """Current that a reaction rate carries.

    Method: Faraday's law of electrolysis [1, ch. 2]::

        I = n F ξ̇

    Parameters
    ----------
    n : electrons transferred per mole of reaction [-]
    extent_rate : reaction rate ξ̇ [mol/s]

    Returns
    -------
    I : current [A]

    References
    ----------
    .. [1] Larminie & Dicks, *Fuel Cell Systems Explained*, 2nd ed., 2003, ch. 2.
    """
    return n * FARADAY * extent_rate


def faradaic_efficiency(n: float, extent_rate: float, charge_rate: float, electrolytic: bool) -> float:
    """Faradaic (current) efficiency of a cell.

    Method: Faraday's law [1, ch. 2]. An electrolyser makes at most n F per mole, a fuel cell
    delivers at most n F times the fuel it consumes::

        η_F = n F ξ̇ / I       (electrolytic cell)
        η_F = I / (n F ξ̇)     (galvanic cell)

    Parameters
    ----------
    n : electrons transferred per mole of reaction [-]
    extent_rate : reaction rate ξ̇ [mol/s]
    charge_rate : current through the cells times their number, I N [A]
    electrolytic : True for a cell driven by the current (electrolyser) [-]

    Returns
    -------
    η_F : faradaic efficiency [-]

    References
    ----------
    .. [1] Larminie & Dicks, *Fuel Cell Systems Explained*, 2nd ed., 2003, ch. 2.
    """
    if electrolytic:
        return n * FARADAY * extent_rate / charge_rate
    return charge_rate / (n * FARADAY * extent_rate)
