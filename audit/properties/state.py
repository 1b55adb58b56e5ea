"""The record of an evaluated state (:class:`State`) and the names of its property bases."""

from __future__ import annotations

from dataclasses import dataclass

from audit.properties.mixtures import MODEL_NAME

BASIS_FORMATION = "formation"
"""h and s shifted so that the ideal gas at 298.15 K and 1 bar has h = ΔfH° and s = S°."""
BASIS_FLUID = "fluid reference"
"""h and s on the fluid's own reference (CoolProp's default for it)."""
BASIS_MIXTURE = f"formation ({MODEL_NAME})"
"""An ideal-gas mixture of species on the formation basis."""


@dataclass(frozen=True, slots=True)
class State:
    """A fluid's intensive state, SI units.

    T [K], P [Pa], rho [kg/m**3], h, u, g, a, psi [J/kg], s [J/(kg K)], quality [-] (None outside
    the two-phase region), molar_mass [kg/mol]; ``basis`` says whether h, s, u, g, a are on the
    formation basis or the fluid's own reference. A gas mixture also carries its ``composition``
    (mole fractions by formula) and the species that would condense at its state, as (formula,
    partial pressure [Pa], saturation pressure [Pa]). A liquid of the incompressible library
    below its freezing point carries that point [K] in ``below_freezing``
    (:mod:`audit.properties.liquids`).
    """

    fluid: str
    T: float
    P: float
    rho: float
    h: float
    s: float
    u: float
    phase: str
    quality: float | None
    g: float
    a: float
    psi: float
    molar_mass: float
    basis: str
    composition: tuple[tuple[str, float], ...] | None = None
    condensing: tuple[tuple[str, float, float], ...] = ()
    below_freezing: float | None = None
