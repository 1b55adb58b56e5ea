"""Compositions of gas mixtures as a balance file writes them: checks that need no property
engine (the model layer uses them while validating a stream).

A composition maps species (formula such as ``"CO2"`` or CoolProp name such as ``"CarbonDioxide"``)
to mole fractions, or to mass fractions with ``composition_basis: mass``; or it names a composition of
:data:`audit.formation.NAMED_COMPOSITIONS` (``air``).
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from audit.formation import NAMED_COMPOSITIONS, SPECIES, lookup

SUM_TOLERANCE = 1e-6
"""How far the fractions of a composition may sum away from 1."""


def check_fractions(fractions: Mapping[str, float], basis: str = "mole") -> None:
    """Raise ValueError unless every fraction lies in [0, 1], every species has formation data and
    the fractions sum to 1 within :data:`SUM_TOLERANCE` (the message says by how much)."""
    if not fractions:
        raise ValueError("a composition needs at least one species")
    unknown = [name for name in fractions if lookup(name) is None]
    if unknown:
        known = ", ".join(sorted(s.formula for s in SPECIES.values()))
        raise ValueError(
            f"no formation data for {', '.join(repr(u) for u in unknown)} in the composition; "
            f"the species known are {known} (DEVELOPERS.md says how to add one)"
        )
    formulas = [lookup(name).formula for name in fractions]  # type: ignore[union-attr]
    if len(set(formulas)) != len(formulas):
        raise ValueError("a species is named twice in the composition")
    for name, value in fractions.items():
        if not (isinstance(value, (int, float)) and not isinstance(value, bool)) or not (
            0.0 <= value <= 1.0
        ):
            raise ValueError(f"the fraction of {name} is {value!r}; write a number from 0 to 1")
    total = math.fsum(fractions.values())
    if abs(total - 1.0) > SUM_TOLERANCE:
        word = "mass" if basis == "mass" else "mole"
        side = "short of" if total < 1.0 else "over"
        raise ValueError(
            f"the {word} fractions sum to {total:.8g}, {abs(total - 1.0):.3g} {side} 1 "
            f"(allowed: {SUM_TOLERANCE:g})"
        )


def named_composition(name: str) -> dict[str, float]:
    """The mole fractions of a named composition (``air``); ValueError for an unknown name."""
    try:
        return dict(NAMED_COMPOSITIONS[name.lower()])
    except KeyError:
        known = ", ".join(sorted(NAMED_COMPOSITIONS))
        raise ValueError(
            f"unknown named composition '{name}'; the named ones are: {known} (or give mole "
            "fractions, e.g. {N2: 0.79, O2: 0.21})"
        ) from None
