"""SI values → engineering text for messages and reports, in one place.

Messages and reports never divide by 1e5 or subtract 273.15 themselves: they call these, so a
pressure reads the same (``12.5 bar a``) in every message, sheet and console line.
"""

from __future__ import annotations

import math

from audit.constants import ZERO_CELSIUS
from audit.printable import escaped


def celsius(T: float, digits: int = 2) -> str:
    """A temperature [K] as ``'400.00 °C'`` (``digits`` after the point)."""
    return f"{T - ZERO_CELSIUS:.{digits}f} °C"


def bar(P: float, significant: int = 4) -> str:
    """An absolute pressure [Pa] as ``'40 bar'`` (``significant`` digits)."""
    return f"{P / 1e5:.{significant}g} bar"


def kilowatts(value: float, significant: int = 4) -> str:
    """A power [W] as ``'1148 kW'``."""
    return f"{value / 1e3:.{significant}g} kW"


def percent(fraction: float, significant: int = 3) -> str:
    """A fraction as a percentage with the digits that carry information: 2e-7 → "2e-05 %",
    0.9999998 → "99.99998 %" (never "0.0 %" or "100.0 %" for a figure that is not)."""
    value = 100.0 * fraction
    if value == 0.0:
        return "0 %"
    text = f"{value:.{significant}g}"
    # a figure near a round one keeps the digits that tell it apart (99.99998, not 100)
    digits = significant
    while (
        float(text) != value
        and abs(float(text) - value) / abs(value) > 1e-12
        and (text in ("100", "-100") or float(text) == round(float(text)))
        and digits < 12
    ):
        digits += 1
        text = f"{value:.{digits}g}"
    return f"{text} %"


def kelvin_difference(dT: float, digits: int = 2) -> str:
    """A temperature difference [K] as ``'3.20 K'``."""
    return f"{dT:.{digits}f} K"


def to_celsius(T: float) -> float:
    """A temperature [K] as a number in °C (for report columns)."""
    return T - ZERO_CELSIUS


def to_bar(P: float) -> float:
    """A pressure [Pa] as a number in bar (for report columns)."""
    return P / 1e5


def finite_or_none(value: float | None) -> float | None:
    """``value`` unless it is None or not finite (reports write an empty cell then)."""
    return value if value is not None and math.isfinite(value) else None


def safe_text(text: object) -> str:
    """Text written in a balance (a name, an id, a description), safe to show on a terminal:
    line breaks and tabs as spaces (so a console table can wrap it), every other control or
    format character (the escape that starts a terminal sequence, bidirectional overrides) shown
    as a ``\\x1b``-style escape by :func:`audit.printable.escaped`."""
    return escaped(str(text).replace("\r\n", " ").replace("\n", " ").replace("\t", " "))
