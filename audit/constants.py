"""Physical constants and reference conditions, each with its source. SI units throughout.

References
----------
.. [1] BIPM, *The International System of Units (SI)*, 9th ed., 2019: the defining constants
   N_A, e and k are exact, so R = N_A·k and F = N_A·e are exact too (CODATA 2018).
.. [2] IUPAC, *Quantities, Units and Symbols in Physical Chemistry* ("Green Book"), 3rd ed.,
   2007: standard-state pressure p° = 1 bar; thermochemical reference temperature 298.15 K.
.. [3] ISO 13443:1996, *Natural gas — Standard reference conditions* (15 °C, 101.325 kPa);
   DIN 1343:1990, *Reference conditions, normal conditions, normal volume* (0 °C, 101.325 kPa).
"""

from __future__ import annotations

AVOGADRO = 6.022_140_76e23
"""Avogadro constant N_A [1/mol], exact [1]."""
ELEMENTARY_CHARGE = 1.602_176_634e-19
"""Elementary charge e [C], exact [1]."""
BOLTZMANN = 1.380_649e-23
"""Boltzmann constant k [J/K], exact [1]."""
GAS_CONSTANT = AVOGADRO * BOLTZMANN
"""Molar gas constant R = N_A·k = 8.314 462 618 153 24 J/(mol·K), exact [1]."""
FARADAY = AVOGADRO * ELEMENTARY_CHARGE
"""Faraday constant F = N_A·e = 96 485.332 123 310 0… C/mol, exact [1]."""

ZERO_CELSIUS = 273.15
"""0 °C in kelvin [K], exact by the definition of the Celsius scale [1]."""
STANDARD_ATMOSPHERE = 101_325.0
"""One standard atmosphere [Pa], exact by definition (10th CGPM, 1954)."""
T_STANDARD = 298.15
"""Thermochemical reference temperature [K] [2]."""
P_STANDARD = 1.0e5
"""Standard-state pressure p° = 1 bar [Pa] [2]."""
NORMAL_CONDITIONS = (ZERO_CELSIUS, STANDARD_ATMOSPHERE)
"""(T [K], P [Pa]) of a "normal" cubic metre: 0 °C and 1 atm [3] (DIN 1343)."""
STANDARD_CONDITIONS = (ZERO_CELSIUS + 15.0, STANDARD_ATMOSPHERE)
"""(T [K], P [Pa]) of a "standard" cubic metre: 15 °C and 1 atm [3] (ISO 13443)."""
