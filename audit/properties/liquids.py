"""Liquids of the incompressible library: aqueous solutions (glycols, alcohols, brines) and pure
heat-transfer liquids, named in the trade's words from an allow-list.

A balance names a liquid by its plain name (``propylene glycol``, ``calcium chloride``,
``diethylbenzene``); a solution adds the solute's fraction and says whether it is by mass or by
volume. Only the names of :data:`SOLUTIONS` and :data:`PURE_LIQUIDS` are accepted: no other back
end of the property library can be reached from a balance file.

Correlations: the aqueous solutions are Melinder's polynomial fits [1] (CoolProp's ``INCOMP``
back end, mass-fraction based; CoolProp documents the fits [2]); the pure liquids are CoolProp's
fits to their published data. A correlation is used only within its temperature and fraction
range: outside it the state is refused, never extrapolated.

Volume fractions. The solutions are correlated by mass fraction; a fraction by volume is the
volume of pure solute over the volumes of pure solute and pure water before mixing, both at 20 °C
(the usual way a loop is filled), and is converted to the mass fraction

    x = φ ρ_solute / (φ ρ_solute + (1 − φ) ρ_water)

with the pure densities at 20 °C of :data:`SOLUTE_DENSITY_20C` and water's from IAPWS-95
(998.21 kg/m³). Volume fractions are offered for the solutes that are liquids when pure (the
glycols and glycerol); a salt brine is given by mass.

Freezing. Below the solution's freezing point (Melinder's freezing curve) the property library
raises; the engine instead reports it (:attr:`LiquidValues.below_freezing`, turned into a finding
by the solver) and carries the state from the freezing point at constant heat capacity
(h = h_f + c_p (T − T_f), s = s_f + c_p ln(T / T_f), ρ = ρ_f), a supercooled liquid, so that the
step checks can still run; the finding says that the stream cannot exist as written.

Basis: h and s are relative to the same liquid (same fraction) at the dead state, so the flow
exergy is ψ = h − T0 s (states say ``basis = "same liquid at the dead state"``).

References
----------
.. [1] Å. Melinder, *Properties of Secondary Working Fluids for Indirect Systems*, 2nd ed.,
   International Institute of Refrigeration, Paris, 2010.
.. [2] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid thermophysical
   property evaluation and the open-source thermophysical property library CoolProp",
   Ind. Eng. Chem. Res. 53 (2014) 2498–2508 (the incompressible fluids: CoolProp documentation,
   "Incompressible Fluids").
.. [3] D. W. Green, R. H. Perry (eds.), *Perry's Chemical Engineers' Handbook*, 8th ed.,
   McGraw-Hill, 2008, Table 2-32 (densities of pure liquids, DIPPR equation 105).
.. [4] J. A. Dean (ed.), *Lange's Handbook of Chemistry*, 15th ed., McGraw-Hill, 1999,
   Table 5.13 (glycerol, specific gravity 20/20 °C of 1.26362).
.. [5] IUPAC/CIAAW, *Standard atomic weights* (2021), abridged values, for the molar masses.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from audit.errors import StateError
from audit.properties.library import CP
from audit.wording import to_celsius

WATER_DENSITY_20C = 998.21
"""Density of pure water at 20 °C and 1 atm [kg/m³] (IAPWS-95: 998.207)."""


@dataclass(frozen=True)
class Solute:
    """An aqueous solution of the allow-list: its CoolProp code (mass-fraction based), the
    solute's molar mass [kg/mol] and, where a fraction by volume is offered, the pure solute's
    density at 20 °C [kg/m³]."""

    code: str
    molar_mass: float
    density_20C: float | None = None


SOLUTIONS: dict[str, Solute] = {
    "ethylene glycol": Solute("MEG", 62.068e-3, 1113.7),  # density: Perry's 8th ed. [3]
    "propylene glycol": Solute("MPG", 76.095e-3, 1036.3),  # density: Perry's 8th ed. [3]
    "glycerol": Solute("MGL", 92.094e-3, 1261.3),  # density: Lange's 15th ed. [4] × water
    "ethanol": Solute("MEA", 46.069e-3),
    "methanol": Solute("MMA", 32.042e-3),
    "ammonia": Solute("MAM", 17.031e-3),
    "calcium chloride": Solute("MCA", 110.98e-3),
    "magnesium chloride": Solute("MMG", 95.21e-3),
    "sodium chloride": Solute("MNA", 58.44e-3),
    "lithium chloride": Solute("MLI", 42.39e-3),
    "potassium carbonate": Solute("MKC", 138.204e-3),
    "potassium acetate": Solute("MKA", 98.142e-3),
    "potassium formate": Solute("MKF", 84.115e-3),
}
"""Aqueous solutions by plain name (Melinder's fits [1]); molar masses from [5]."""

SOLUTE_DENSITY_20C = {name: s.density_20C for name, s in SOLUTIONS.items() if s.density_20C}
"""Pure-solute densities at 20 °C [kg/m³] used to convert a fraction by volume (module docstring)."""

PURE_LIQUIDS: dict[str, tuple[str, float]] = {
    "diethylbenzene": ("DEB", 134.222e-3),  # C10H14
    "d-limonene": ("TCO", 136.238e-3),  # C10H16
}
"""Pure heat-transfer liquids by plain name (Melinder's fits [1], -80 to 100 °C): (CoolProp code,
molar mass [kg/mol] [5]). Liquids whose fits do not reach the dead state (molten salts, liquid
metals) are left out: their exergy would have no reference."""

WATER_MOLAR_MASS = 18.015e-3
"""Molar mass of water [kg/mol] [5]."""

BASIS_LIQUID = "same liquid at the dead state"
"""The basis of a liquid's h and s: zero for the same liquid at the dead state."""


def known_names() -> str:
    """The accepted names, for messages."""
    return (
        "solutions (give 'fraction' and 'fraction_basis'): "
        + ", ".join(SOLUTIONS)
        + "; pure liquids: "
        + ", ".join(PURE_LIQUIDS)
    )


def is_pure_liquid(name: str) -> bool:
    """Whether ``name`` is one of :data:`PURE_LIQUIDS` (as written, any case)."""
    return name.strip().lower() in PURE_LIQUIDS


@dataclass(frozen=True)
class Liquid:
    """A liquid resolved from its written name and fraction: ``name`` is the readable fluid name
    its states carry (with the fraction as written and, for a volume fraction, the mass fraction
    it converts to); ``code`` the CoolProp name; ``mass_fraction`` [-] (None for a pure liquid);
    the correlation's range T_min, T_max [K]; molar mass [kg/mol]."""

    name: str
    code: str
    mass_fraction: float | None
    T_min: float
    T_max: float
    molar_mass: float


def to_mass_fraction(solute: str, volume_fraction: float) -> float:
    """Mass fraction [-] of a solution mixed from a ``volume_fraction`` [-] of pure ``solute``
    and pure water at 20 °C: x = φ ρ_s / (φ ρ_s + (1 − φ) ρ_w) (module docstring)."""
    rho_s = SOLUTE_DENSITY_20C[solute]
    part = volume_fraction * rho_s
    return part / (part + (1.0 - volume_fraction) * WATER_DENSITY_20C)


def resolve(name: str, fraction: float | None, basis: str | None) -> Liquid:
    """The liquid a stream names, checked against the allow-list and the fit's fraction range.

    Parameters
    ----------
    name : the plain name as written
    fraction : the solute's fraction [-] (None for a pure liquid)
    basis : ``"mass"`` or ``"volume"`` (None for a pure liquid)

    Raises
    ------
    StateError : an unknown name, a missing or superfluous fraction, a volume fraction of a salt,
        a fraction outside the correlation's range
    """
    key = name.strip().lower()
    if fraction is None:
        if key in SOLUTIONS:
            raise StateError(
                f"'{name}' is an aqueous solution: give its 'fraction' and 'fraction_basis' "
                "(mass or volume)"
            )
        if key not in PURE_LIQUIDS:
            raise StateError(f"unknown liquid '{name}'; the liquids are {known_names()}")
        code, molar_mass = PURE_LIQUIDS[key]
        state = CP.AbstractState("INCOMP", code)
        return Liquid(key, code, None, state.Tmin(), state.Tmax(), molar_mass)
    if key not in SOLUTIONS:
        if key in PURE_LIQUIDS:
            raise StateError(f"'{name}' is a pure liquid: drop 'fraction' and 'fraction_basis'")
        raise StateError(f"unknown solution '{name}'; the liquids are {known_names()}")
    solute = SOLUTIONS[key]
    written = f"{fraction * 100:.6g} % by {basis}"
    if basis == "volume":
        if solute.density_20C is None:
            raise StateError(
                f"a {key} solution is given by mass fraction; a fraction by volume is offered "
                f"for {', '.join(SOLUTE_DENSITY_20C)}"
            )
        x = to_mass_fraction(key, fraction)
        label = f"{key} {written} ({x * 100:.4g} % by mass)"
    else:
        x, label = fraction, f"{key} {written}"
    state = CP.AbstractState("INCOMP", solute.code)
    x_min = CP.PropsSI("fraction_min", f"INCOMP::{solute.code}")
    x_max = CP.PropsSI("fraction_max", f"INCOMP::{solute.code}")
    if not x_min <= x <= x_max:
        shown = f"{x * 100:.4g} % by mass" if basis == "volume" else written
        raise StateError(
            f"the {key} fraction {shown} is outside the range of its correlation "
            f"({x_min * 100:g} to {x_max * 100:g} % by mass, Melinder 2010); it is not extrapolated"
        )
    M = 1.0 / (x / solute.molar_mass + (1.0 - x) / WATER_MOLAR_MASS)
    return Liquid(label, solute.code, x, state.Tmin(), state.Tmax(), M)


@dataclass(frozen=True)
class LiquidValues:
    """A liquid's values at (T, P) on the library's own reference: ρ [kg/m³], h, u [J/kg],
    s, c_p [J/(kg K)]; ``below_freezing`` is the freezing point [K] when T lies below it (the
    values are then carried from it, module docstring), else None."""

    rho: float
    h: float
    s: float
    u: float
    cp: float
    below_freezing: float | None = None


class LiquidLibrary:
    """Evaluates liquids (one state object per liquid, reused)."""

    def __init__(self) -> None:
        self._states: dict[str, CP.AbstractState] = {}
        self.flash_count = 0

    def _state(self, liquid: Liquid) -> CP.AbstractState:
        state = self._states.get(liquid.name)
        if state is None:
            state = CP.AbstractState("INCOMP", liquid.code)
            if liquid.mass_fraction is not None:
                state.set_mass_fractions([liquid.mass_fraction])
            self._states[liquid.name] = state
        return state

    def freezing_point(self, liquid: Liquid) -> float | None:
        """The solution's freezing point [K] (Melinder's freezing curve), None for a pure liquid."""
        if liquid.mass_fraction is None:
            return None
        return float(self._state(liquid).keyed_output(CP.iT_freeze))

    def values(self, liquid: Liquid, T: float, P: float) -> LiquidValues:
        """ρ, h, s, u at T [K] and P [Pa] (:class:`LiquidValues`); :class:`StateError` outside
        the correlation's range."""
        if not (math.isfinite(T) and math.isfinite(P)) or P <= 0.0:
            raise StateError(f"a state input is not a finite positive number (T {T}, P {P})")
        if not liquid.T_min <= T <= liquid.T_max:
            raise StateError(
                f"temperature {to_celsius(T):.6g} °C is outside the range of the correlation of "
                f"{liquid.name} ({to_celsius(liquid.T_min):.6g} to "
                f"{to_celsius(liquid.T_max):.6g} °C); it is not extrapolated"
            )
        frozen = self.freezing_point(liquid)
        if frozen is not None and T < frozen:
            at = self._update(liquid, frozen, P)
            h = at.h + at.cp * (T - frozen)
            s = at.s + at.cp * math.log(T / frozen)
            return LiquidValues(at.rho, h, s, h - P / at.rho, at.cp, below_freezing=frozen)
        return self._update(liquid, T, P)

    def _update(self, liquid: Liquid, T: float, P: float) -> LiquidValues:
        state = self._state(liquid)
        try:
            state.update(CP.PT_INPUTS, P, T)
            self.flash_count += 1
            values = LiquidValues(
                state.rhomass(), state.hmass(), state.smass(), state.umass(), state.cpmass()
            )
        except ValueError as exc:
            raise StateError(
                f"the correlation of {liquid.name} cannot evaluate T = {to_celsius(T):.6g} °C: "
                f"{str(exc).strip().splitlines()[0][:200]}"
            ) from None
        if not all(math.isfinite(v) for v in (values.rho, values.h, values.s, values.u)):
            raise StateError(f"the correlation of {liquid.name} returned a non-finite value")
        return values
