"""Engineering display units for reports: SI values in, (value, unit) out.

One table, shared by the console, CSV and workbook reports, so a quantity is shown in the same unit
everywhere: °C, bar, kg/s, kW, kJ/kg, kJ/(kg·K).
"""

from __future__ import annotations

import math

from audit.constants import ZERO_CELSIUS

# quantity kind -> (unit label, scale, offset): shown = SI * scale + offset
DISPLAY: dict[str, tuple[str, float, float]] = {
    "temperature": ("°C", 1.0, -ZERO_CELSIUS),
    "temperature_difference": ("K", 1.0, 0.0),
    "pressure": ("bar", 1e-5, 0.0),
    "mass_flow": ("kg/s", 1.0, 0.0),
    "molar_flow": ("mol/s", 1.0, 0.0),
    "power": ("kW", 1e-3, 0.0),
    "energy": ("kJ", 1e-3, 0.0),
    "entropy_rate": ("kW/K", 1e-3, 0.0),
    "entropy": ("kJ/K", 1e-3, 0.0),
    "specific_energy": ("kJ/kg", 1e-3, 0.0),
    "specific_entropy": ("kJ/(kg·K)", 1e-3, 0.0),
    "density": ("kg/m³", 1.0, 0.0),
    "specific_volume": ("m³/kg", 1.0, 0.0),
    "fraction": ("-", 1.0, 0.0),
    "voltage": ("V", 1.0, 0.0),
    "current": ("A", 1.0, 0.0),
    "mass": ("kg", 1.0, 0.0),
}


def shown(value: float | None, quantity: str | None, difference: bool = False) -> float | None:
    """``value`` [SI] in the display unit of ``quantity``; None stays None, non-finite → None.

    ``difference`` drops the offset (a temperature margin is in K, not °C)."""
    if value is None or not math.isfinite(value):
        return None
    if quantity is None or quantity not in DISPLAY:
        return value
    _, scale, offset = DISPLAY[quantity]
    return value * scale + (0.0 if difference else offset)


def in_si(quantity: str) -> bool:
    """True when ``quantity`` is shown in its SI unit (kg/s, kg/m³, -, ...): reports write such
    values as they are."""
    _, scale, offset = DISPLAY.get(quantity, ("", 1.0, 0.0))
    return scale == 1.0 and offset == 0.0


def unit(quantity: str | None, difference: bool = False) -> str:
    """The display unit label of ``quantity``."""
    if quantity is None or quantity not in DISPLAY:
        return ""
    if quantity == "temperature" and difference:
        return "K"
    return DISPLAY[quantity][0]
