"""Gas mixtures and the species of reactions, for the property engine.

:class:`MixtureStates` is the part of :class:`audit.properties.engine.PropertyEngine` that
evaluates ideal-gas mixtures (:mod:`audit.properties.mixtures`) on the formation basis, relative to
the same mixture at the dead state, and the pure species of reactions.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING

from audit.constants import GAS_CONSTANT
from audit.errors import StateError
from audit.formation import lookup
from audit.properties import mixtures
from audit.properties.fluids import Fluid
from audit.properties.inversion import rising_root
from audit.properties.state import BASIS_MIXTURE, State
from audit.wording import to_bar, to_celsius


class MixtureStates:
    """Mixture and species methods of the engine (which supplies the attributes below)."""

    _mixtures: mixtures.IdealGasMixtures
    _cache: dict[tuple, State]
    _mixture_names: dict[str, tuple[mixtures.Component, ...]]
    dead_T: float
    dead_P: float

    if TYPE_CHECKING:

        def state(
            self, fluid: str, pair: str, a: float, b: float, table_basis: bool = True
        ) -> State: ...

        def fluid(self, name: str) -> Fluid: ...

    def mixture_components(
        self, fractions: Mapping[str, float], basis: str = "mole"
    ) -> tuple[mixtures.Component, ...]:
        """The species of a composition (formulas or CoolProp names; ``basis`` ``"mole"`` or
        ``"mass"``) as mole fractions [-] by formula; :class:`StateError` for a bad composition."""
        return self._mixtures.components(fractions, basis)

    def mixture_state(
        self, fractions: Mapping[str, float], T: float, P: float, basis: str = "mole"
    ) -> State:
        """An ideal-gas mixture at T [K] and P [Pa] on the formation basis
        (:mod:`audit.properties.mixtures`).

        ``fluid`` is a readable name such as ``mixture(N2 0.7809, O2 0.2094, ...)``, ``phase`` is
        ``"gas"``, ψ is relative to the same mixture (as an ideal gas) at the dead state, and
        ``condensing`` lists the species whose partial pressure exceeds their saturation pressure.

        Raises
        ------
        StateError : a bad composition, T outside the species' verified ranges, or a pressure at
            which the mixture is not an ideal gas
        """
        components = self.mixture_components(fractions, basis)
        key = ("mixture", components, T, P)
        cached = self._cache.get(key)
        if cached is not None:
            return cached
        values = self._mixtures.state(components, T, P)
        dead = self._mixtures.state(components, self.dead_T, self.dead_P, check_ideal=False)
        T0 = self.dead_T
        result = State(
            fluid=mixtures.mixture_name(components),
            T=T,
            P=P,
            rho=values.rho,
            h=values.h,
            s=values.s,
            u=values.u,
            phase="gas",
            quality=None,
            g=values.h - T * values.s,
            a=values.u - T * values.s,
            psi=(values.h - dead.h) - T0 * (values.s - dead.s),
            molar_mass=values.molar_mass,
            basis=BASIS_MIXTURE,
            composition=tuple((c.formula, c.x) for c in components),
            condensing=values.condensing,
        )
        self._cache[key] = result
        self._mixture_names[result.fluid] = components
        return result

    def _mixture_from_pair(
        self, components: tuple[mixtures.Component, ...], pair: str, a: float, b: float
    ) -> State:
        """A mixture (already evaluated once by name) from (T, P), (P, h) or (P, s); h [J/kg] and
        s [J/(kg K)] on the formation basis, T found by regula falsi (Illinois) on the verified
        range, where h and s rise monotonically with T."""
        fractions = {c.formula: c.x for c in components}
        if pair == "TP":
            return self.mixture_state(fractions, a, b)
        if pair not in ("Ph", "Ps"):
            raise StateError("a gas mixture has no quality: give it by (T, P), (P, h) or (P, s)")
        P, target = a, b

        def residual(T: float) -> float:
            values = self._mixtures.state(components, T, P, check_ideal=False)
            return (values.h if pair == "Ph" else values.s) - target

        low = max(mixtures.VERIFIED_RANGE[c.fluid][0] for c in components)
        high = min(mixtures.VERIFIED_RANGE[c.fluid][1] for c in components)
        f_low, f_high = residual(low), residual(high)
        if f_low > 0.0 or f_high < 0.0:
            name = "h" if pair == "Ph" else "s"
            raise StateError(
                f"no state of this gas mixture at {to_bar(P):.6g} bar has {name} = {target:.6g} "
                f"within its verified temperature range ({to_celsius(low):.6g} to "
                f"{to_celsius(high):.6g} °C)"
            )
        T = rising_root(residual, low, high, f_low, f_high, target)
        return self.mixture_state(fractions, T, P)

    def species_molar(self, name: str, phase: str, T: float, P: float) -> tuple[float, float]:
        """A pure species of a reaction at T [K] and P [Pa] on the formation basis:
        (h [J/mol], s [J/(mol K)]).

        ``phase`` ``"g"``: the ideal gas (:mod:`audit.properties.mixtures`); ``"l"``: the real
        liquid from the species' equation of state (IAPWS-95 for water), which must be liquid at (T, P).
        """
        data = lookup(name)
        if data is None:
            raise StateError(f"no formation data for '{name}'")
        if phase == "g":
            return self._mixtures.species_molar(data.fluid, T, P)
        state = self.state(data.fluid, "TP", T, P)
        if state.phase != "liquid":
            raise StateError(
                f"{data.formula}(l) is not liquid at {to_celsius(T):.6g} °C and {to_bar(P):.6g} bar "
                f"(it is {state.phase} there); write {data.formula}(g) or give other conditions"
            )
        return state.h * state.molar_mass, state.s * state.molar_mass

    def species_real_molar(
        self, name: str, phase: str, T: float, P: float
    ) -> tuple[float, float, float]:
        """A pure species of a cell reaction at its own state, T [K] and P [Pa], on the formation
        basis: (h [J/mol], s [J/(mol K)], φ [-]).

        ``phase`` ``"g"``: the real gas, the ideal gas of :meth:`species_molar` corrected by its
        residual enthalpy and fugacity coefficient φ from the reference equation of state, so that
        g = g_ig(T, P) + R T ln φ and s = s_ig + (h_res − R T ln φ)/T; ``"l"``: the real liquid
        (φ reported as 1).
        """
        h, s = self.species_molar(name, phase, T, P)
        if phase != "g":
            return h, s, 1.0
        data = lookup(name)
        assert data is not None  # species_molar has refused it otherwise
        h_res, phi = self._mixtures.departure(data.fluid, T, P)
        g_res = GAS_CONSTANT * T * math.log(phi)
        return h + h_res, s + (h_res - g_res) / T, phi

    def species_molar_mass(self, name: str) -> float:
        """Molar mass [kg/mol] of a species with formation data (formula or CoolProp name)."""
        data = lookup(name)
        if data is None:
            raise StateError(f"no formation data for '{name}'")
        return self._mixtures.molar_mass(data.fluid)
