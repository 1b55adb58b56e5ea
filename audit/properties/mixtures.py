"""Ideal-gas mixtures on the formation basis. This module calls CoolProp on behalf of
:mod:`audit.properties.engine`, which stays the property engine's entry point; nothing else calls it.

Model. A gas mixture of mole fractions x_i at (T, P) is an ideal-gas mixture of the pure species
[1, ch. 12]; per mole of mixture

    h = Σ x_i h_i°(T),    s = Σ x_i [s_i°(T) − R ln(x_i P / P°)],

where h_i°(T) and s_i°(T) are species i as an ideal gas at T and P° = 1 bar on the formation basis:
CoolProp's ideal-gas part of the species' Helmholtz-energy equation (``hmolar_idealgas``,
``smolar_idealgas``) shifted by the two constants of :mod:`audit.formation` (so that h_i°(298.15 K) =
ΔfH° and s_i°(298.15 K) = S°), exactly as the engine shifts the pure fluids. −R Σ x_i ln x_i is the
entropy of mixing. ``smolar_idealgas()`` is evaluated at the state's current (T, ρ), so each species is
updated at a low molar density and moved to P° with the exact ideal-gas term −R ln(ρ°/ρ).

Range. CoolProp evaluates the ideal-gas parts above an equation's upper temperature (methane's
equation ends at 625 K, carbon monoxide's at 500 K), and the ideal-gas part of most species holds far
beyond it, but not of all: methane's departs from NIST-JANAF by 77 J/mol at 700 K and 1.1 kJ/mol at
1 500 K. :data:`VERIFIED_RANGE` holds, per species, the temperatures over which h_i°(T) − h_i°(298.15 K)
and s_i°(T) were checked against NIST-JANAF [2] (through the ``chemicals`` library) within 50 J/mol and
0.1 J/(mol K) (tests/test_mixtures.py); a state outside it is refused. Above 2 000 K dissociation
(CO2 ⇌ CO + ½O2, H2O ⇌ H2 + ½O2), which an ideal-gas mixture of fixed composition ignores, matters
anyway.

Validity in pressure. The model ignores the gas's non-ideality. Its size is estimated from the
second virial coefficients of the pure species (CoolProp ``Bvirial``), B_mix ≈ Σ x_i B_i, as
Z − 1 ≈ B_mix P / (R T) [3, ch. 5]; where |Z − 1| exceeds :data:`IDEAL_GAS_Z_LIMIT` the state is
refused (real-fluid mixtures are not supported: the measured cost of CoolProp's HEOS mixture flash,
about 50 ms per flue-gas state and 1 s near a dew point, and its failures to converge near one,
are noted in DEVELOPERS.md). The linear mixing rule overstates the effect of a polar species such as
water, which keeps the estimate on the safe side.

Condensation. The ideal-gas mixture does not condense. A species whose partial pressure x_i P
exceeds its saturation pressure at T (below its critical temperature) would condense; the engine
reports it (the solver turns it into a ``below-dew-point`` finding) and leaves the values as the
all-gas mixture would have them.

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 12 (ideal-gas mixtures).
.. [2] M. W. Chase, Jr., *NIST-JANAF Thermochemical Tables*, 4th ed., J. Phys. Chem. Ref. Data,
   Monograph 9, 1998.
.. [3] J. M. Prausnitz, R. N. Lichtenthaler, E. G. de Azevedo, *Molecular Thermodynamics of
   Fluid-Phase Equilibria*, 3rd ed., Prentice Hall, 1999, ch. 5 (virial equation of mixtures).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

from audit.constants import GAS_CONSTANT, P_STANDARD, T_STANDARD
from audit.errors import StateError
from audit.formation import SPECIES, lookup
from audit.model.composition import check_fractions
from audit.properties.library import CP, new_state
from audit.wording import to_bar, to_celsius

BACKEND = "HEOS"

# Temperatures [K] over which CoolProp's ideal-gas part of each species was checked against
# NIST-JANAF (h within 50 J/mol, s within 0.1 J/(mol K)); see the module docstring and
# tests/test_mixtures.py. Lower ends: the reference data's own (JANAF Cp tables from 100 K; the
# hydrogen check below 298 K uses the Poling et al. polynomial, so it starts at 250 K).
VERIFIED_RANGE: dict[str, tuple[float, float]] = {
    "Nitrogen": (200.0, 2000.0),
    "Oxygen": (200.0, 2000.0),
    "Argon": (200.0, 2000.0),
    "CarbonDioxide": (200.0, 2000.0),
    "Water": (200.0, 2000.0),
    "CarbonMonoxide": (200.0, 2000.0),
    "Hydrogen": (250.0, 2000.0),
    "Methane": (200.0, 600.0),
    "Ammonia": (200.0, 600.0),
}

IDEAL_GAS_Z_LIMIT = 0.01
"""Largest estimated |Z − 1| at which a mixture is treated as an ideal gas (1 %, the default
relative energy tolerance; common practice, no published source)."""

MODEL_NAME = "ideal-gas mixture"
ABOVE_CRITICAL = 1.0
"""K above a species' critical temperature from which its (T, P) flashes need no saturation search
(no state there can condense)."""
_RHO_LOW = 1.0e-3  # mol/m**3: far below any saturation density, where the ideal-gas part is read


@dataclass(frozen=True)
class Component:
    """One species of a mixture: formula, CoolProp fluid, mole fraction [-], molar mass [kg/mol]."""

    formula: str
    fluid: str
    x: float
    molar_mass: float


@dataclass(frozen=True)
class MixtureValues:
    """An ideal-gas mixture state, per kg: h [J/kg], s [J/(kg K)], u [J/kg], rho [kg/m**3],
    molar_mass [kg/mol], z_estimate [-], and the species that would condense as
    (formula, partial pressure [Pa], saturation pressure [Pa])."""

    T: float
    P: float
    h: float
    s: float
    u: float
    rho: float
    molar_mass: float
    z_estimate: float
    condensing: tuple[tuple[str, float, float], ...]


def mixture_name(components: tuple[Component, ...]) -> str:
    """A readable name: ``mixture(N2 0.7809, O2 0.2094, Ar 0.009332, CO2 0.0004)`` (mole
    fractions)."""
    return "mixture(" + ", ".join(f"{c.formula} {c.x:.4g}" for c in components) + ")"


class IdealGasMixtures:
    """Evaluates ideal-gas mixtures and pure ideal-gas species on the formation basis.

    Holds one CoolProp ``AbstractState`` per species (not shared with the pure-fluid engine, not
    safe to share between threads) and caches h°(T), s°(T) and B(T) per species and temperature.
    """

    def __init__(self) -> None:
        self._states: dict[str, CP.AbstractState] = {}
        self._gas_states: dict[str, CP.AbstractState] = {}
        self._anchor: dict[str, tuple[float, float, float]] = {}  # fluid -> (dh, ds, M)
        self._ideal: dict[tuple[str, float], tuple[float, float]] = {}
        self._virial: dict[tuple[str, float], float] = {}
        self._psat: dict[tuple[str, float], float | None] = {}
        self.flash_count = 0

    # -- composition ----------------------------------------------------------------------------
    def components(self, fractions: Mapping[str, float], basis: str = "mole") -> tuple[Component, ...]:
        """Species of a composition as written (formulas or CoolProp names, mole or mass
        fractions), as mole fractions by formula; zero fractions are dropped."""
        try:
            check_fractions(fractions, basis)
        except ValueError as exc:
            raise StateError(str(exc)) from None
        rows = []
        for name, value in fractions.items():
            data = lookup(name)
            assert data is not None  # checked above
            M = self._constants(data.fluid)[2]
            rows.append((data.formula, data.fluid, float(value), M))
        total = math.fsum(v for _, _, v, _ in rows)
        if basis == "mass":
            moles = [(f, fl, w / M, M) for f, fl, w, M in rows]
            total = math.fsum(n for _, _, n, _ in moles)
            rows = moles
        return tuple(Component(f, fl, v / total, M) for f, fl, v, M in rows if v > 0.0)

    # -- pure species -----------------------------------------------------------------------------
    def species_molar(self, fluid: str, T: float, P: float) -> tuple[float, float]:
        """Pure species ``fluid`` as an ideal gas at T [K] and P [Pa] on the formation basis:
        (h [J/mol], s [J/(mol K)]). Refuses T outside :data:`VERIFIED_RANGE`."""
        self._check_range(fluid, T)
        h, s0 = self._standard(fluid, T)
        return h, s0 - GAS_CONSTANT * math.log(P / P_STANDARD)

    def departure(self, fluid: str, T: float, P: float) -> tuple[float, float]:
        """The real pure gas ``fluid`` at T [K], P [Pa] against the ideal gas: its residual
        enthalpy h − h_ig [J/mol] and its fugacity coefficient φ = f/P [-], from the reference
        equation of state (ln φ = (g − g_ig)/(R T), CoolProp HEOS). (0, 1) where the real fluid
        would not be a gas (at or above its vapour pressure): the written gas is then a
        hypothetical ideal-gas state, as in the standard state; (0, 1) too above the equation's
        upper temperature or pressure, where it is not valid (and a gas at cell pressures is ideal
        to well within the property allowance)."""
        self._check_range(fluid, T)
        p_sat = self.saturation_pressure(fluid, T)
        if p_sat is not None and P >= p_sat:
            return 0.0, 1.0
        state = self._state_at(fluid, T)
        if T > state.Tmax() or P > state.pmax():
            return 0.0, 1.0
        try:
            state.update(CP.PT_INPUTS, P, T)
            self.flash_count += 1
            h_res = state.hmolar() - state.hmolar_idealgas()
            phi = state.fugacity_coefficient(0)
        except ValueError as exc:
            raise StateError(
                f"the real-gas state of {SPECIES[fluid].formula} at {to_celsius(T):.6g} °C and "
                f"{to_bar(P):.6g} bar cannot be evaluated: {str(exc)[:160]}"
            ) from None
        if not (math.isfinite(h_res) and math.isfinite(phi) and phi > 0.0):  # pragma: no cover
            raise StateError(f"CoolProp returned a non-finite real-gas value for {fluid}")
        return h_res, phi

    # -- mixtures ---------------------------------------------------------------------------------
    def state(
        self, components: tuple[Component, ...], T: float, P: float, check_ideal: bool = True
    ) -> MixtureValues:
        """The mixture at T [K], P [Pa]; see the module docstring for the model and its limits
        (``check_ideal=False`` skips the pressure limit, for the trial states of an iteration)."""
        if not (math.isfinite(T) and math.isfinite(P)):
            raise StateError("a state input is not a finite number")
        if not T > 0.0:
            raise StateError(f"temperature {T:.6g} K is not a positive absolute temperature")
        if not P > 0.0:
            raise StateError(f"pressure {P:.6g} Pa is not a positive absolute pressure")
        for c in components:
            self._check_range(c.fluid, T)
        z = self.z_estimate(components, T, P)
        if check_ideal and abs(z - 1.0) > IDEAL_GAS_Z_LIMIT:
            raise StateError(
                f"at {to_celsius(T):.6g} °C and {to_bar(P):.6g} bar this gas mixture is not an "
                f"ideal gas (compressibility Z ≈ {z:.4f} by its second virial coefficient; the "
                f"ideal-gas mixture model is used only while |Z − 1| ≤ {IDEAL_GAS_Z_LIMIT:g}); "
                "real-fluid mixtures are not supported: give the stream at a lower pressure or as "
                "a pure fluid"
            )
        h = s = 0.0
        for c in components:
            h_i, s_i = self._standard(c.fluid, T)
            h += c.x * h_i
            s += c.x * (s_i - GAS_CONSTANT * math.log(c.x * P / P_STANDARD))
        M = math.fsum(c.x * c.molar_mass for c in components)
        condensing = (
            tuple(
                (c.formula, c.x * P, p_sat)
                for c in components
                if (p_sat := self.saturation_pressure(c.fluid, T)) is not None and c.x * P > p_sat
            )
            if check_ideal
            else ()
        )
        rho = P * M / (GAS_CONSTANT * T)
        return MixtureValues(
            T=T,
            P=P,
            h=h / M,
            s=s / M,
            u=(h - GAS_CONSTANT * T) / M,
            rho=rho,
            molar_mass=M,
            z_estimate=z,
            condensing=condensing,
        )

    def z_estimate(self, components: tuple[Component, ...], T: float, P: float) -> float:
        """Z ≈ 1 + B_mix P / (R T) with B_mix = Σ x_i B_i(T) [-] (an estimate of non-ideality)."""
        B = math.fsum(c.x * self._second_virial(c.fluid, T) for c in components)
        return 1.0 + B * P / (GAS_CONSTANT * T)

    def saturation_pressure(self, fluid: str, T: float) -> float | None:
        """p_sat(T) [Pa] of a pure species below its critical temperature, else None. Below the
        equation's lowest temperature (the triple point for water) the triple-point pressure is
        returned: the sublimation pressure is lower still, so a partial pressure above it surely
        condenses (as frost)."""
        key = (fluid, T)
        if key in self._psat:
            return self._psat[key]
        value: float | None = None
        if self._far_above_critical(fluid, T):
            self._psat[key] = value
            return value
        state = self._state(fluid)
        if T < state.T_critical():
            try:
                state.update(CP.QT_INPUTS, 0.0, max(T, state.Ttriple(), state.Tmin()))
                self.flash_count += 1
                value = state.p()
            except ValueError:
                value = None
        self._psat[key] = value
        return value

    def species_opened(self) -> set[str]:
        """The CoolProp names of the species evaluated so far."""
        return set(self._states) | set(self._gas_states)

    def molar_mass(self, fluid: str) -> float:
        """M [kg/mol] of the species ``fluid`` (CoolProp name), without opening it for flashes."""
        return float(self._gas_state(fluid).molar_mass())

    # -- internals ---------------------------------------------------------------------------------
    def _state(self, fluid: str) -> CP.AbstractState:
        """The state object of ``fluid`` for flashes ((T, P), saturation)."""
        state = self._states.get(fluid)
        if state is None:
            state = new_state(BACKEND, fluid)
            self._states[fluid] = state
        return state

    def _gas_state(self, fluid: str) -> CP.AbstractState:
        """The state object of ``fluid`` for what no saturation search reaches: constants such as
        the molar mass, and updates at least :data:`ABOVE_CRITICAL` above the critical temperature
        ((ρ, T) for the ideal-gas part and the virial coefficient, (T, P) for the real gas); below
        that, even a (ρ, T) update looks for the saturation line to name the phase. It is made
        without the fluid's saturation expansions (:func:`audit.properties.library.new_state`),
        so a species that is only ever a gas well above its critical point (nitrogen, argon,
        methane in a flue gas) never costs them; every value is the fully loaded library's, bit
        for bit (``tests/test_start_up.py``)."""
        state = self._gas_states.get(fluid)
        if state is None:
            state = new_state(BACKEND, fluid, saturation=False)
            self._gas_states[fluid] = state
        return state

    def _state_at(self, fluid: str, T: float) -> CP.AbstractState:
        """The state object for an update of ``fluid`` at T [K]: without the saturation expansions
        far above the critical temperature (:meth:`_gas_state`), with them below."""
        return self._gas_state(fluid) if self._far_above_critical(fluid, T) else self._state(fluid)

    def _far_above_critical(self, fluid: str, T: float) -> bool:
        """Whether T [K] lies :data:`ABOVE_CRITICAL` or more above the critical temperature of
        ``fluid``, read from the equation of state itself: the saturation expansions move the
        library's critical point by 0.018 K for oxygen, the most of the species of
        :mod:`audit.formation` (``tests/test_start_up.py``), far less than the margin."""
        return T >= self._gas_state(fluid).T_critical() + ABOVE_CRITICAL

    def _constants(self, fluid: str) -> tuple[float, float, float]:
        """(h shift [J/mol], s shift [J/(mol K)], M [kg/mol]) that put CoolProp's ideal-gas part of
        ``fluid`` on the formation basis."""
        known = self._anchor.get(fluid)
        if known is not None:
            return known
        data = SPECIES[fluid]
        h_ig, s_ig = self._coolprop_ideal(fluid, T_STANDARD)
        anchor = (
            data.enthalpy_of_formation - h_ig,
            data.standard_entropy - s_ig,
            self._gas_state(fluid).molar_mass(),
        )
        self._anchor[fluid] = anchor
        return anchor

    def _coolprop_ideal(self, fluid: str, T: float) -> tuple[float, float]:
        """CoolProp's ideal-gas h [J/mol] and s at P° [J/(mol K)] of ``fluid`` at T [K]."""
        state = self._state_at(fluid, T)
        try:
            state.update(CP.DmolarT_INPUTS, _RHO_LOW, T)
            self.flash_count += 1
            h = state.hmolar_idealgas()
            s = state.smolar_idealgas()
        except ValueError as exc:  # pragma: no cover - inside the verified range it evaluates
            raise StateError(
                f"CoolProp cannot evaluate the ideal-gas part of {fluid} at {T:.6g} K: {str(exc)[:160]}"
            ) from None
        try:  # the second virial coefficient at the same update (for the Z estimate)
            B = state.Bvirial()
        except ValueError:  # pragma: no cover - an estimate only
            B = 0.0
        self._virial[(fluid, T)] = B if math.isfinite(B) else 0.0
        rho_standard = P_STANDARD / (GAS_CONSTANT * T)
        s -= GAS_CONSTANT * math.log(rho_standard / _RHO_LOW)
        if not (math.isfinite(h) and math.isfinite(s)):  # pragma: no cover
            raise StateError(f"CoolProp returned a non-finite ideal-gas value for {fluid}")
        return h, s

    def _standard(self, fluid: str, T: float) -> tuple[float, float]:
        """h°(T) [J/mol] and s°(T) at P° [J/(mol K)] on the formation basis (cached)."""
        key = (fluid, T)
        known = self._ideal.get(key)
        if known is not None:
            return known
        dh, ds, _ = self._constants(fluid)
        h, s = self._coolprop_ideal(fluid, T)
        value = (h + dh, s + ds)
        self._ideal[key] = value
        return value

    def _second_virial(self, fluid: str, T: float) -> float:
        """B(T) [m**3/mol] of the pure species, read with its ideal-gas part (cached)."""
        key = (fluid, T)
        if key not in self._virial:
            self._coolprop_ideal(fluid, T)
        return self._virial[key]

    def _check_range(self, fluid: str, T: float) -> None:
        low, high = VERIFIED_RANGE.get(fluid, (math.nan, math.nan))
        formula = SPECIES[fluid].formula
        if math.isnan(low):  # pragma: no cover - every species in SPECIES has a range
            raise StateError(
                f"{formula} has no verified ideal-gas range; it cannot be used in a gas mixture"
            )
        if not low <= T <= high:
            raise StateError(
                f"temperature {to_celsius(T):.6g} °C is outside the range over which the ideal-gas "
                f"properties of {formula} were verified ({to_celsius(low):.6g} to "
                f"{to_celsius(high):.6g} °C, against NIST-JANAF)"
            )
