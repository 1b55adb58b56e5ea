"""Plausible ranges of the quantities a balance states, as data with the rule in words.

Read by :mod:`audit.units` when a written quantity is converted to SI; a value outside its range
is an input error naming the field, before any arithmetic can overflow.
"""

from __future__ import annotations

PLAUSIBLE: dict[str, tuple[float, float, str]] = {
    "temperature": (1.0, 6000.0, "1 K to 6000 K (from liquid-helium service to flames and arcs)"),
    "pressure": (
        1.0,
        1e10,
        "1 Pa to 10 GPa (deep vacuum to far beyond high-pressure polymer reactors, at 0.3 GPa)",
    ),
    "velocity": (
        -3000.0,
        3000.0,
        "at most 3000 m/s (above the speed of sound of any process gas "
        "but hydrogen and helium at high temperature)",
    ),
    "length": (-20_000.0, 20_000.0, "within 20 km of the datum (deep mines to high mountains)"),
    "mass": (0.0, 1e12, "at most 1e12 kg"),
}
"""Plausible range [SI] of the quantities a balance states, with the rule in words. These are
common practice (generous engineering limits, an order of magnitude or more beyond any plant),
not published values: a value outside is a typing slip or a hostile file, and is refused as an
input error before any arithmetic can overflow."""

FLOW_LIMITS: dict[str, tuple[float, str]] = {
    "mass": (1e7, "10 000 t/s"),
    "molar": (1e9, "1e9 mol/s"),
    "normal_volume": (1e7, "1e7 m³/s"),
    "actual_volume": (1e7, "1e7 m³/s"),
}
"""Largest plausible stream flow by basis, with its spelling for messages (common practice: the
largest flows in industry, through hydroelectric turbines, are about 1e6 kg/s)."""
