"""Two-phase mixtures: the quality of a saturated mixture from its enthalpy (the lever rule).

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, §3.5 (quality of a two-phase mixture).
"""

from __future__ import annotations


def lever_rule_quality(h: float, h_liquid: float, h_vapour: float) -> float:
    """The vapour mass fraction of a fluid of enthalpy ``h`` split into saturated liquid and vapour
    at one pressure (the lever rule), clipped to 0 (all liquid) and 1 (all vapour).

    Method [1, §3.5]::

        x = (h − h′) / (h″ − h′)

    Parameters
    ----------
    h : specific enthalpy of the mixture [J/kg]
    h_liquid : saturated-liquid specific enthalpy h′ at the pressure [J/kg]
    h_vapour : saturated-vapour specific enthalpy h″ at the pressure [J/kg]

    Returns
    -------
    x : quality [-], within 0 to 1
    """
    x = (h - h_liquid) / (h_vapour - h_liquid)
    return min(1.0, max(0.0, x))
