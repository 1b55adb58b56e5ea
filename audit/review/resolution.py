"""The resolution of a written number: half a unit in its last written digit, in SI.

A design balance writes rounded values; the rounding of each is at most half a unit in the last
digit written (JCGM 100:2008 [1, §F.2.2.1]: the resolution of an indication δx gives a rectangular
distribution of half-width δx/2). The convention, for every number as written in the file:

* the last written digit counts, decimals or not: ``"400 degC"`` → ±0.5 K, ``"1148 kW"`` →
  ±0.5 kW, ``"1.148 MW"`` → ±0.0005 MW = ±0.5 kW, ``"10.8 t/h"`` → ±0.05 t/h. Trailing zeros of
  a whole number are taken as written digits (``"1500 Nm3/h"`` → ±0.5 Nm3/h): a writer who means
  fewer digits writes them in exponent form;
* a round figure — a whole number with fewer than three digits, written without a decimal point
  (``"1 bar"``, ``"8 MPa"``, ``"10 kg/s"``) — is a set-point, known to its third significant digit
  (±0.005 bar, ±0.005 MPa, ±0.05 kg/s; :func:`audit.model.digits.rounding_bound`);
* in exponent form, half a unit in the last digit of the mantissa: ``"1e3 kW"`` → ±0.5e3 kW,
  ``"1.50e3 kW"`` → ±0.005e3 kW;
* offsets and gauge pressures convert as differences (``"40 barg"`` → ±0.5 bar = ±50 kPa);
* a value from a stream table cell is read from its printed text when the cell holds text, else
  from the shortest text that gives the cell's number back (Python's ``repr``), which is what the
  table reader puts in the balance;
* a quality written as 0 or 1 (a saturated state) is exact: the state is named, not rounded;
* a value with no written text (a default) is exact.

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
   measurement* (GUM), §F.2.2.1.
"""

from __future__ import annotations

import re
from typing import Any

from audit.errors import InputError
from audit.model.digits import rounding_bound
from audit.units import split_number, to_flow, to_si

_MANTISSA = re.compile(r"^\s*[+-]?(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?")


def half_unit(number: str) -> float | None:
    """Half a unit in the last written digit of ``number`` (its own units), or None when it is
    not a number: ``"400"`` → 0.5, ``"1.148"`` → 0.0005, ``"1e3"`` → 500, ``"1.50e3"`` → 5; a
    round figure (a whole number, :mod:`audit.model.digits`) to its third significant digit at
    least: ``"1"`` → 0.005."""
    return rounding_bound(number)


def _number_text(text: str) -> str:
    return text.strip().split()[0] if text.strip() else text


def resolution(text: Any, kind: str, site_pressure: float | None = None) -> float:
    """Half a unit in the last written digit of ``text`` in the SI unit of ``kind`` (a key of
    :data:`audit.units.KINDS`, ``"flow"`` for a stream flow, ``"quality"`` for a bare number);
    0 when nothing was written or it cannot be read. ``site_pressure`` [Pa] reads gauge pressures.
    """
    if text is None or isinstance(text, bool):
        return 0.0
    if isinstance(text, (int, float)):
        if kind == "quality" and text in (0, 1):
            return 0.0
        return half_unit(repr(text)) or 0.0
    if not isinstance(text, str):
        return 0.0
    try:
        if kind == "quality":
            value = float(text)
            return 0.0 if value in (0.0, 1.0) else (half_unit(text) or 0.0)
        if kind == "flow":
            number, unit = split_number(text, "mass_flow")
        else:
            number, unit = split_number(text, kind)
        step = half_unit(_number_text(text))
        if step is None:
            return 0.0
        shifted = f"{number + step!r} {unit}"
        if kind == "flow":
            return abs(to_flow(shifted).value - to_flow(text).value)
        return abs(to_si(shifted, kind, site_pressure) - to_si(text, kind, site_pressure))
    except (InputError, ValueError):
        return 0.0


def written_text(document: Any, path: tuple[Any, ...]) -> Any:
    """The value at ``path`` as written in the balance file (text, or a number), or None."""
    node = document.data
    for part in path:
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            node = node[part]
        else:
            return None
    return node


def shown_half_unit(text: Any) -> str:
    """Half a unit in the last written digit of ``text`` in its own written unit (``"0.05 t/h"``)."""
    raw = repr(text) if isinstance(text, (int, float)) else str(text)
    number, _, unit = raw.strip().partition(" ")
    step = half_unit(number)
    return f"{step:g} {unit.strip()}".strip() if step is not None else "?"
