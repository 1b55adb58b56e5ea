"""Unit conversions known without pint: what pint answers for the units balances usually use.

Loading pint and building its registry costs about half a second, more than a small audit; the
converters of the common unit strings are therefore written out here, exactly as
:func:`audit.units._converter` computes them with pint (scale, offset, dimensionality: SI = value ×
scale + offset), and pint is loaded only for a unit not listed. ``tests/test_units.py`` checks
every entry against pint, bit for bit.
"""

from __future__ import annotations

__all__ = ["KNOWN_UNITS", "SI_DIMENSIONS"]

_P = "[mass] / [length] / [time] ** 2"
_POWER = "[mass] * [length] ** 2 / [time] ** 3"
_ENERGY = "[mass] * [length] ** 2 / [time] ** 2"
_VOLTAGE = "[mass] * [length] ** 2 / [time] ** 3 / [current]"
_MOLAR_ENERGY = "[mass] * [length] ** 2 / [time] ** 2 / [substance]"
_ENTROPY = "[length] ** 2 / [time] ** 2 / [temperature]"

KNOWN_UNITS: dict[str, tuple[float, float, str]] = {
    "K": (1.0, 0.0, "[temperature]"),
    "degC": (1.0, 273.15, "[temperature]"),
    "degF": (0.5555555555555429, 255.37222222222223, "[temperature]"),
    "Pa": (1.0, 0.0, _P),
    "kPa": (1000.0, 0.0, _P),
    "MPa": (1000000.0, 0.0, _P),
    "bar": (100000.0, 0.0, _P),
    "mbar": (100.0, 0.0, _P),
    "psi": (6894.7572931683635, 0.0, _P),
    "kg/s": (1.0, 0.0, "[mass] / [time]"),
    "kg/h": (0.0002777777777777778, 0.0, "[mass] / [time]"),
    "t/h": (0.2777777777777778, 0.0, "[mass] / [time]"),
    "t/d": (0.011574074074074073, 0.0, "[mass] / [time]"),
    "g/s": (0.001, 0.0, "[mass] / [time]"),
    "mol/s": (1.0, 0.0, "[substance] / [time]"),
    "kmol/s": (1000.0, 0.0, "[substance] / [time]"),
    "kmol/h": (0.2777777777777778, 0.0, "[substance] / [time]"),
    "W": (1.0, 0.0, _POWER),
    "kW": (1000.0, 0.0, _POWER),
    "MW": (1000000.0, 0.0, _POWER),
    "GW": (1000000000.0, 0.0, _POWER),
    "J": (1.0, 0.0, _ENERGY),
    "kJ": (1000.0, 0.0, _ENERGY),
    "MJ": (1000000.0, 0.0, _ENERGY),
    "GJ": (1000000000.0, 0.0, _ENERGY),
    "kWh": (3600000.0, 0.0, _ENERGY),
    "MWh": (3600000000.0, 0.0, _ENERGY),
    "kg": (1.0, 0.0, "[mass]"),
    "t": (1000.0, 0.0, "[mass]"),
    "J/kg": (1.0, 0.0, "[length] ** 2 / [time] ** 2"),
    "kJ/kg": (1000.0, 0.0, "[length] ** 2 / [time] ** 2"),
    "MJ/kg": (1000000.0, 0.0, "[length] ** 2 / [time] ** 2"),
    "J/(kg K)": (1.0, 0.0, _ENTROPY),
    "kJ/(kg K)": (1000.0, 0.0, _ENTROPY),
    "kJ/(kg*K)": (1000.0, 0.0, _ENTROPY),
    "m/s": (1.0, 0.0, "[length] / [time]"),
    "m": (1.0, 0.0, "[length]"),
    "mm": (0.001, 0.0, "[length]"),
    "km": (1000.0, 0.0, "[length]"),
    "m**3": (1.0, 0.0, "[length] ** 3"),
    "m**3/s": (1.0, 0.0, "[length] ** 3 / [time]"),
    "m**3/h": (0.0002777777777777778, 0.0, "[length] ** 3 / [time]"),
    "V": (1.0, 0.0, _VOLTAGE),
    "mV": (0.001, 0.0, _VOLTAGE),
    "A": (1.0, 0.0, "[current]"),
    "kA": (1000.0, 0.0, "[current]"),
    "J/mol": (1.0, 0.0, _MOLAR_ENERGY),
    "kJ/mol": (1000.0, 0.0, _MOLAR_ENERGY),
    "J/m**3": (1.0, 0.0, _P),
    "MJ/m**3": (1000000.0, 0.0, _P),
}
"""Normalised unit text -> (scale, offset, dimensionality), as pint converts it."""

SI_DIMENSIONS: dict[str, str] = {
    "A": "[current]",
    "J": _ENERGY,
    "J/(kg K)": _ENTROPY,
    "J/kg": "[length] ** 2 / [time] ** 2",
    "J/m**3": _P,
    "J/mol": _MOLAR_ENERGY,
    "K": "[temperature]",
    "Pa": _P,
    "V": _VOLTAGE,
    "W": _POWER,
    "kg": "[mass]",
    "kg/s": "[mass] / [time]",
    "m": "[length]",
    "m**3": "[length] ** 3",
    "m**3/s": "[length] ** 3 / [time]",
    "m/s": "[length] / [time]",
    "mol/s": "[substance] / [time]",
}
"""SI unit text -> its dimensionality, as pint writes it."""
