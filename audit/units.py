"""Units at the edge: quantity strings from the balance file to SI numbers.

A quantity is written as a number and a unit, ``"420 degC"``, ``"40 barg"``, ``"12 t/h"``,
``"2.5 MW"``. This module splits the number from the unit with a strict, cheap parse and converts
to SI with a converter (scale and offset) that is built once per distinct unit string; pint, through
one registry, stays the authority on what a unit means and on its dimension.

Spellings of our own, on top of pint's:

* gauge pressure: ``barg``, ``bar(g)``, ``kPag``, ``kPa(g)``, ``MPag``, ``MPa(g)``, ``psig``,
  ``psi(g)``, ``mbarg``, ``mbar(g)``: converted to absolute with the balance's declared
  ``site_pressure`` (atmospheric pressure at the site). Absolute spellings ``bara``, ``bar(a)``,
  ``psia``, ``kPa(a)``, ... are read as absolute, like plain ``bar``;
* ``°C``, ``°F`` for ``degC``, ``degF``; ``m3`` for ``m**3``;
* normal and standard volumetric flows: ``Nm3/h`` (0 °C, 101.325 kPa) and ``Sm3/h``
  (15 °C, 101.325 kPa, ISO 13443), also per second or per day.

All internal values are SI: K, Pa, kg/s, mol/s, W, J, kg, J/kg, J/(kg K), m, m/s, m**3, V, A.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache
from typing import TYPE_CHECKING

from audit import constants
from audit.errors import UnitError
from audit.plausible import FLOW_LIMITS, PLAUSIBLE
from audit.unit_table import KNOWN_UNITS, SI_DIMENSIONS

if TYPE_CHECKING:
    import pint


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """The one pint registry of plant-audit, built on first use (pint loads in about half a
    second; the usual units are converted without it, see :mod:`audit.unit_table`)."""
    import pint

    return pint.UnitRegistry()


# One standard atmosphere [Pa] and the reference conditions of volumetric gas flows [K, Pa]
# ("normal" cubic metre: 0 °C, 1 atm, DIN 1343; "standard": 15 °C, 1 atm, ISO 13443).
STANDARD_ATMOSPHERE = constants.STANDARD_ATMOSPHERE
NORMAL_CONDITIONS = constants.NORMAL_CONDITIONS
STANDARD_CONDITIONS = constants.STANDARD_CONDITIONS

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$", re.ASCII)
"""A number (ASCII digits only: ``1٠0`` with an Arabic-Indic zero is not 100) and its unit."""
_GAUGE = re.compile(r"^(mbar|bar|Pa|kPa|MPa|psi)(?:g|\(g\))$")
_ABSOLUTE = re.compile(r"^(mbar|bar|Pa|kPa|MPa|psi)(?:a|\(a\))$")
_NORMAL_FLOW = re.compile(r"^([NS])m(?:3|\^3|\*\*3|³)/(s|h|d)$")
_PER = {"s": 1.0, "h": 3600.0, "d": 86400.0}
MAX_QUANTITY_CHARS = 200
"""Longest quantity text read; longer text is refused before pint parses it."""


@dataclass(frozen=True)
class Kind:
    """A kind of quantity: its pint dimensionality, its SI unit and an example for messages."""

    name: str
    dimensionality: str
    si_unit: str
    example: str


KINDS: dict[str, Kind] = {
    k.name: k
    for k in [
        Kind("temperature", "[temperature]", "K", "'420 degC', '693.15 K' or '780 degF'"),
        Kind("temperature_difference", "[temperature]", "K", "'5 K' or '5 degC'"),
        Kind("pressure", "[mass] / [length] / [time] ** 2", "Pa", "'40 bar', '39 barg' or '4 MPa'"),
        Kind("mass_flow", "[mass] / [time]", "kg/s", "'12 t/h' or '3.3 kg/s'"),
        Kind("molar_flow", "[substance] / [time]", "mol/s", "'10 kmol/h'"),
        Kind("power", "[mass] * [length] ** 2 / [time] ** 3", "W", "'2.5 MW' or '800 kW'"),
        Kind("energy", "[mass] * [length] ** 2 / [time] ** 2", "J", "'150 MJ' or '40 kWh'"),
        Kind("mass", "[mass]", "kg", "'1200 kg' or '1.2 t'"),
        Kind("specific_enthalpy", "[length] ** 2 / [time] ** 2", "J/kg", "'2800 kJ/kg'"),
        Kind(
            "specific_entropy",
            "[length] ** 2 / [temperature] / [time] ** 2",
            "J/(kg K)",
            "'6.5 kJ/(kg K)'",
        ),
        Kind("density", "[mass] / [length] ** 3", "kg/m**3", "'890.3 kg/m3'"),
        Kind("specific_volume", "[length] ** 3 / [mass]", "m**3/kg", "'0.0012 m3/kg'"),
        Kind("velocity", "[length] / [time]", "m/s", "'35 m/s'"),
        Kind("length", "[length]", "m", "'12 m'"),
        Kind("volume", "[length] ** 3", "m**3", "'2.5 m3'"),
        Kind("voltage", "[mass] * [length] ** 2 / [current] / [time] ** 3", "V", "'1.9 V'"),
        Kind("current", "[current]", "A", "'2000 A'"),
        Kind(
            "specific_energy_molar",
            "[mass] * [length] ** 2 / [substance] / [time] ** 2",
            "J/mol",
            "'802 kJ/mol'",
        ),
        Kind("volumetric_energy", "[mass] / [length] / [time] ** 2", "J/m**3", "'35.8 MJ/m3'"),
    ]
}


@dataclass(frozen=True)
class Flow:
    """A stream flow as written: mass [kg/s], molar [mol/s] or volumetric [m**3/s].

    ``basis`` is ``"mass"``, ``"molar"``, ``"normal_volume"`` (with ``reference`` = (T [K], P [Pa]))
    or ``"actual_volume"`` (at the stream's own state).
    """

    basis: str
    value: float
    reference: tuple[float, float] | None = None


def _normalise(unit: str) -> str:
    unit = unit.strip().replace("°C", "degC").replace("°F", "degF").replace("°R", "degR")
    unit = unit.replace("℃", "degC").replace("℉", "degF").replace("³", "**3").replace("²", "**2")
    unit = re.sub(r"(?<![A-Za-z])m3(?![0-9])", "m**3", unit)
    unit = re.sub(r"(?<![A-Za-z])m2(?![0-9])", "m**2", unit)
    return unit


@lru_cache(maxsize=4096)
def _converter(unit: str) -> tuple[float, float, str]:
    """(scale, offset, dimensionality) such that SI = value * scale + offset. Cached per unit."""
    known = KNOWN_UNITS.get(unit)
    if known is not None:
        return known
    return _converter_of_pint(unit)


def _converter_of_pint(unit: str) -> tuple[float, float, str]:
    """:func:`_converter` as pint computes it."""
    ureg = registry()
    try:
        zero = ureg.Quantity(0.0, unit)
        one = ureg.Quantity(1.0, unit)
        base_zero = zero.to_base_units()
        base_one = one.to_base_units()
    except Exception as exc:
        # pint's parser evaluates the text: any failure of it (a PintError, but also
        # ZeroDivisionError for 'kg/s/0', tokenize.TokenError for 'degC)', RecursionError for very
        # long products) means the text is not a unit we know
        raise UnitError(f"unknown unit '{unit}'") from exc
    # pint's base unit of substance is the mole and of temperature the kelvin, as in SI.
    offset = float(base_zero.magnitude)
    scale = float(base_one.magnitude) - offset
    return scale, offset, str(one.dimensionality)


def split_number(text: object, kind: str) -> tuple[float, str]:
    """Split ``"420 degC"`` into ``(420.0, "degC")``; refuse bare numbers and non-finite values."""
    if type(text) is str and len(text) <= MAX_QUANTITY_CHARS:
        match = _NUMBER.match(text)
        if match is not None:  # the usual case, checked as below in fewer steps
            number, unit = float(match.group(1)), match.group(2)
            if unit and math.isfinite(number) and (text.isascii() or not unit[0].isdigit()):
                return number, unit
    expected = KINDS[kind].example if kind in KINDS else kind
    if isinstance(text, bool) or text is None:
        raise UnitError(f"expected a quantity with a unit, such as {expected}; got {text!r}")
    if isinstance(text, (int, float)):
        raise UnitError(
            f"a bare number ({text!r}) has no unit; write it with its unit, such as {expected}"
        )
    if not isinstance(text, str):
        raise UnitError(f"expected a quantity with a unit, such as {expected}; got {text!r}")
    if len(text) > MAX_QUANTITY_CHARS:
        raise UnitError(
            f"'{text[:40]}...' is {len(text):,} characters long, too long for a quantity such as "
            f"{expected}"
        )
    foreign = next((c for c in text if c.isdigit() and not c.isascii()), None)
    if foreign is not None:
        raise UnitError(
            f"'{text}' holds the digit {foreign!r} (U+{ord(foreign):04X}), which is not one of "
            "0-9; write numbers with the digits 0-9"
        )
    match = _NUMBER.match(text)
    if not match:
        lowered = text.strip().lower()
        if lowered.split(" ")[0] in {"nan", "inf", "-inf", "+inf", "infinity", ".nan", ".inf"}:
            raise UnitError(f"'{text}' is not a finite number")
        raise UnitError(f"'{text}' is not a number followed by a unit, such as {expected}")
    number = float(match.group(1))
    if not math.isfinite(number):
        raise UnitError(f"'{text}' is not a finite number")
    unit = match.group(2)
    if not unit:
        raise UnitError(f"'{text}' has no unit; write it with its unit, such as {expected}")
    return number, unit


def is_gauge(text: object) -> bool:
    """Whether a pressure is written in a gauge unit (``"10 barg"``, ``"5 psi(g)"``)."""
    try:
        _, unit = split_number(text, "pressure")
    except UnitError:
        return False
    unit = _normalise(unit)
    return bool(_GAUGE.match(unit)) or unit == "psig"


def to_si(text: object, kind: str, site_pressure: float | None = None) -> float:
    """Convert a quantity string to the SI unit of ``kind``.

    Parameters
    ----------
    text : the quantity as written, e.g. ``"40 barg"``
    kind : a key of :data:`KINDS`
    site_pressure : atmospheric pressure at the site [Pa], needed for gauge pressures

    Returns
    -------
    The value in the SI unit of the kind (see :data:`KINDS`).
    """
    number, unit = split_number(text, kind)
    rule = _RULES.get((kind, unit))
    if rule is None:
        rule = _unit_rule(text, kind, unit)
        if len(_RULES) < _MAX_RULES:
            _RULES[(kind, unit)] = rule
    scale, offset, gauge = rule
    if gauge:
        if site_pressure is None:
            raise UnitError(
                f"'{text}' is a gauge pressure, but the balance declares no site_pressure; "
                "add 'site_pressure' (the atmospheric pressure at the site, e.g. "
                "'1.013 bar') under 'balance', or write the pressure as absolute"
            )
        value = number * scale + site_pressure
    else:
        value = number * scale + offset
    if kind == "temperature" and value <= 0.0:
        raise UnitError(f"'{text}' is at or below absolute zero ({value:.6g} K)")
    if kind == "pressure" and value <= 0.0:
        raise UnitError(f"'{text}' is not a positive absolute pressure ({value:.6g} Pa)")
    check_plausible(text, kind, value)
    return value


def check_plausible(text: object, kind: str, value: float) -> None:
    """Refuse a value [SI] that is not finite, or outside the plausible range of its kind
    (:data:`PLAUSIBLE`), naming the text as written."""
    if not math.isfinite(value):
        raise UnitError(f"'{text}' is too large to compute with")
    limits = PLAUSIBLE.get(kind)
    if limits is not None and not limits[0] <= value <= limits[1]:
        unit = KINDS[kind].si_unit
        raise UnitError(
            f"'{text}' ({value:.6g} {unit}) is outside the plausible range of a "
            f"{kind.replace('_', ' ')}: {limits[2]}"
        )


_MAX_RULES = 4096
_RULES: dict[tuple[str, str], tuple[float, float, bool]] = {}
"""(kind, unit as written) -> its rule (:func:`_unit_rule`): each distinct unit is read once."""

_DIFFERENCE_UNITS = {
    "K": 1.0,
    "degC": 1.0,
    "delta_degC": 1.0,
    "degF": 5 / 9,
    "delta_degF": 5 / 9,
    "degR": 5 / 9,
    "mK": 1e-3,
}


def _unit_rule(text: object, kind: str, unit: str) -> tuple[float, float, bool]:
    """How ``unit`` converts to the SI unit of ``kind``: (scale, offset, gauge), with SI = number
    × scale + offset, or number × scale + the site pressure for a gauge pressure. Raises
    :class:`UnitError` naming ``text`` for a unit that is unknown or of another dimension."""
    unit = _normalise(unit)
    if kind == "pressure":
        gauge = _GAUGE.match(unit)
        if gauge or unit in ("psig",):
            base = "psi" if unit == "psig" else gauge.group(1)  # type: ignore[union-attr]
            scale, _, _ = _converter(base)
            return scale, 0.0, True
        absolute = _ABSOLUTE.match(unit)
        if absolute or unit == "psia":
            unit = "psi" if unit == "psia" else absolute.group(1)  # type: ignore[union-attr]
    if kind == "temperature_difference":
        # A temperature difference: degC and K are the same size; no offset applies.
        if unit in _DIFFERENCE_UNITS:
            return _DIFFERENCE_UNITS[unit], 0.0, False
        raise UnitError(
            f"'{text}': '{unit}' is not a unit of temperature difference; use K, degC or degF"
        )
    try:
        scale, offset, dimensionality = _converter(unit)
    except UnitError as exc:
        raise UnitError(f"'{text}': {exc.problem.message}") from None
    wanted = KINDS[kind]
    if dimensionality != _dimension_of(wanted.si_unit):
        raise UnitError(
            f"'{text}' is not {'an' if kind[0] in 'aeiou' else 'a'} {kind.replace('_', ' ')}: "
            f"'{unit}' has dimension "
            f"{dimensionality}; expected a unit such as {wanted.example}"
        )
    return scale, offset, False


@lru_cache(maxsize=64)
def _dimension_of(si_unit: str) -> str:
    known = SI_DIMENSIONS.get(si_unit)
    if known is not None:
        return known
    return str(registry().Quantity(1.0, si_unit).dimensionality)


def to_flow(text: object) -> Flow:
    """Read a stream flow: mass, molar, normal/standard volumetric or actual volumetric.

    ``"12 t/h"`` → mass [kg/s]; ``"10 kmol/h"`` → molar [mol/s]; ``"1500 Nm3/h"`` → normal volume
    [m**3/s at 0 °C, 101.325 kPa]; ``"1500 Sm3/h"`` → standard volume [m**3/s at 15 °C,
    101.325 kPa, ISO 13443]; ``"120 m3/h"`` → actual volume at the stream's own state.
    """
    number, unit = split_number(text, "mass_flow")
    rule = _FLOW_RULES.get(unit)
    if rule is None:
        rule = _flow_rule(text, unit)
        if len(_FLOW_RULES) < _MAX_RULES:
            _FLOW_RULES[unit] = rule
    basis, scale, offset, reference, unit, dimensionality = rule
    if basis == "normal_volume":
        value = number / scale  # scale: seconds per time unit of the flow
        _check_flow_sign(text, value, basis)
        return Flow("normal_volume", value, reference)
    value = number * scale + offset
    _check_flow_sign(text, value, basis)
    if basis is None:
        raise UnitError(
            f"'{text}' is not a flow: '{unit}' has dimension {dimensionality}; write it like "
            f"{_FLOW_EXAMPLE}"
        )
    return Flow(basis, value)


_FLOW_EXAMPLE = "'12 t/h', '3.3 kg/s', '10 kmol/h', '1500 Nm3/h' or '120 m3/h'"
_FLOW_RULES: dict[str, tuple] = {}
"""unit as written -> (basis or None, scale, offset, reference, normalised unit, dimensionality)."""


def _flow_rule(text: object, unit: str) -> tuple:
    """How a flow unit converts (see :data:`_FLOW_RULES`); raises :class:`UnitError` naming
    ``text`` for an unknown unit."""
    compact = unit.replace(" ", "")
    normal = _NORMAL_FLOW.match(compact)
    if normal:
        reference = NORMAL_CONDITIONS if normal.group(1) == "N" else STANDARD_CONDITIONS
        return "normal_volume", _PER[normal.group(2)], 0.0, reference, unit, ""
    unit = _normalise(unit)
    try:
        scale, offset, dimensionality = _converter(unit)
    except UnitError:
        raise UnitError(
            f"'{text}': unknown unit '{unit}'; a flow is written like {_FLOW_EXAMPLE}"
        ) from None
    basis = None
    if dimensionality == _dimension_of("kg/s"):
        basis = "mass"
    elif dimensionality == _dimension_of("mol/s"):
        basis = "molar"
    elif dimensionality == _dimension_of("m**3/s"):
        basis = "actual_volume"
    return basis, scale, offset, None, unit, dimensionality


def _check_flow_sign(text: object, value: float, basis: str | None) -> None:
    if value < 0.0:
        raise UnitError(f"'{text}' is a negative flow; a stream's flow is at least zero")
    if not math.isfinite(value):
        raise UnitError(f"'{text}' is too large to compute with")
    if basis in FLOW_LIMITS and value > FLOW_LIMITS[basis][0]:
        raise UnitError(
            f"'{text}' is larger than any plausible stream flow (at most "
            f"{FLOW_LIMITS[basis][1]}, common practice)"
        )
