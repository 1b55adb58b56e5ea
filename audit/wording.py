"""SI values → engineering text for messages and reports, in one place.

Messages and reports never divide by 1e5 or subtract 273.15 themselves: they call these, so a
pressure reads the same (``12.5 bar a``) in every message, sheet and console line.
"""

from __future__ import annotations

import math
import re

from audit.constants import ZERO_CELSIUS


def celsius(T: float, digits: int = 2) -> str:
    """A temperature [K] as ``'400.00 °C'`` (``digits`` after the point)."""
    return f"{T - ZERO_CELSIUS:.{digits}f} °C"


def bar(P: float, significant: int = 4) -> str:
    """An absolute pressure [Pa] as ``'40 bar'`` (``significant`` digits)."""
    return f"{P / 1e5:.{significant}g} bar"


def kilowatts(value: float, significant: int = 4) -> str:
    """A power [W] as ``'1148 kW'``."""
    return f"{value / 1e3:.{significant}g} kW"


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


_UNSAFE_CHARACTERS = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def safe_text(text: object) -> str:
    """Text written in a balance (a name, an id, a description), safe to show on a terminal:
    control characters (the escape that starts a terminal sequence, bidirectional overrides) are
    shown as ``\\x1b``-style escapes, line breaks and tabs as spaces."""
    value = str(text).replace("\r\n", " ").replace("\n", " ").replace("\t", " ")
    return _UNSAFE_CHARACTERS.sub(
        lambda m: f"\\x{ord(m.group()):02x}" if ord(m.group()) < 256 else f"\\u{ord(m.group()):04x}",
        value,
    )
