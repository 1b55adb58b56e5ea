"""The resolution of a written number: the unit of its last written digit.

A value printed as ``183.36`` is known to lie within half a unit of its last written digit,
183.36 ± 0.005: the rounding bound of a printed value, treated as the half-width of a rectangular
distribution (JCGM 100:2008, GUM, §F.2.2.1). Every written digit counts as significant, trailing
zeros included (``1500`` → resolution 1, ``1.50e3`` → resolution 10).

Round figures. A whole number written without a decimal point or an exponent (``1 bar``,
``8 MPa``, ``10 kg/s``) is a round figure: a set-point or a design basis, not a rounded result. Its
rounding bound is half a unit in its last digit or half a unit in its third significant digit,
whichever is smaller (``1 bar`` → ±0.005 bar, ``8 MPa`` → ±0.005 MPa, ``400 degC`` → ±0.5 K,
``1148 kW`` → ±0.5 kW); common practice of this project, stated here so that a balance writer who
means fewer digits writes them with a decimal point (``1. bar`` → ±0.5 bar) or in exponent form.

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
   measurement* (GUM), §F.2.2.1 (resolution of a digital indication) and §4.3.7.
"""

from __future__ import annotations

import math
import re

_NUMBER = re.compile(r"^\s*[-+]?(?P<whole>\d*)(?:\.(?P<fraction>\d*))?(?:[eE](?P<exponent>[-+]?\d+))?")


def written_resolution(text: object) -> float | None:
    """The unit of the last written digit of the number that ``text`` begins with, in the
    number's own unit: ``"183.36 kJ/kg"`` → 0.01, ``"8.0 MPa"`` → 0.1, ``"1.2e3 kW"`` → 100.

    A float (a number the YAML reader or a spreadsheet cell already parsed) is read as its
    shortest text (``0.95`` → 0.01); None when ``text`` does not begin with a number.
    """
    if isinstance(text, bool) or text is None:
        return None
    if isinstance(text, (int, float)):
        text = repr(text)
    if not isinstance(text, str):
        return None
    match = _NUMBER.match(text)
    if match is None or not (match.group("whole") or match.group("fraction")):
        return None
    decimals = len(match.group("fraction") or "")
    exponent = int(match.group("exponent") or 0)
    return 10.0 ** (exponent - decimals)


def rounding_bound(text: object) -> float | None:
    """Half a unit of the last written digit of ``text`` (see :func:`written_resolution`), in the
    number's own unit [GUM §F.2.2.1]; None when ``text`` does not begin with a number."""
    resolution = written_resolution(text)
    if resolution is None:
        return None
    if isinstance(text, str) and _is_round_figure(text):
        value = abs(float(_NUMBER.match(text).group(0)))  # type: ignore[union-attr]
        if value > 0:
            third = 10.0 ** (math.floor(math.log10(value)) - 2)
            return 0.5 * min(resolution, third)
    return 0.5 * resolution


def _is_round_figure(text: str) -> bool:
    """A whole number written without a decimal point or an exponent."""
    match = _NUMBER.match(text)
    return bool(
        match
        and match.group("whole")
        and match.group("fraction") is None
        and match.group("exponent") is None
        and "." not in match.group(0)
    )
