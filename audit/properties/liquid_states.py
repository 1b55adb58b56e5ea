"""Liquids of the incompressible library, for the property engine.

:class:`LiquidStates` is the part of :class:`audit.properties.engine.PropertyEngine` that
evaluates the brines, glycols and heat-transfer liquids of :mod:`audit.properties.liquids`: states
from (T, P), and from (P, h) or (P, s) by inverting T (the Illinois regula falsi of
:mod:`audit.properties.inversion`), with h and s relative to the same liquid at the dead state.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from audit.errors import StateError
from audit.properties.inversion import rising_root
from audit.properties.liquids import (
    BASIS_LIQUID,
    Liquid,
    LiquidLibrary,
    LiquidValues,
    is_pure_liquid,
    resolve,
)
from audit.properties.state import State
from audit.wording import to_celsius


class LiquidStates:
    """Liquid methods of the engine (which supplies the attributes below)."""

    _cache: dict[tuple, State]
    _liquids: LiquidLibrary
    _liquid_names: dict[str, Liquid]
    _liquid_dead: dict[str, tuple[float, float]]
    dead_T: float
    dead_P: float

    if TYPE_CHECKING:

        def state(
            self, fluid: str, pair: str, a: float, b: float, table_basis: bool = True
        ) -> State: ...

    def is_liquid(self, name: str) -> bool:
        """Whether ``name`` is a pure liquid of the allow-list or a liquid already evaluated."""
        return name in self._liquid_names or is_pure_liquid(name)

    def liquid_state(
        self, name: str, fraction: float | None, basis: str | None, T: float, P: float
    ) -> State:
        """A liquid of :mod:`audit.properties.liquids` at T [K] and P [Pa]: ``name`` as written,
        ``fraction`` [-] of the solute by ``basis`` (``"mass"`` or ``"volume"``; None for a pure
        liquid). The state's ``fluid`` is the liquid's readable name (it names the liquid in later
        calls of :meth:`state`); ``below_freezing`` is set when T lies below the freezing point.

        Raises
        ------
        StateError : a name outside the allow-list, a fraction or T outside the correlation's range
        """
        liquid = resolve(name, fraction, basis)
        self._liquid_names[liquid.name] = liquid
        return self.state(liquid.name, "TP", T, P)

    def _liquid_from_pair(
        self, liquid: Liquid, pair: str, a: float, b: float, table_basis: bool
    ) -> State:
        h0, s0 = self._liquid_dead_state(liquid)
        if pair == "TP":
            return self._liquid_record(liquid, a, b, self._liquids.values(liquid, a, b))
        if pair not in ("Ph", "Ps"):
            raise StateError(
                f"{liquid.name} is a liquid of the incompressible library: it has no two-phase "
                "states; give it with T and P"
            )
        P = a
        use_h = pair == "Ph"
        target = b + (0.0 if table_basis else (h0 if use_h else s0))

        def residual(T: float) -> float:
            values = self._liquids.values(liquid, T, P)
            return (values.h if use_h else values.s) - target

        low, high = liquid.T_min, liquid.T_max
        f_low, f_high = residual(low), residual(high)
        if not f_low <= 0.0 <= f_high:
            what = "h" if use_h else "s"
            raise StateError(
                f"no temperature of {liquid.name} within its correlation's range "
                f"({to_celsius(low):.6g} to {to_celsius(high):.6g} °C) has this {what}; "
                "it is not extrapolated"
            )
        T = rising_root(residual, low, high, f_low, f_high, target)
        return self._liquid_record(liquid, T, P, self._liquids.values(liquid, T, P))

    def _liquid_record(self, liquid: Liquid, T: float, P: float, values: LiquidValues) -> State:
        h0, s0 = self._liquid_dead_state(liquid)
        h, s, u = values.h - h0, values.s - s0, values.u - h0
        return State(
            fluid=liquid.name,
            T=T,
            P=P,
            rho=values.rho,
            h=h,
            s=s,
            u=u,
            phase="liquid",
            quality=None,
            g=h - T * s,
            a=u - T * s,
            psi=h - self.dead_T * s,
            molar_mass=liquid.molar_mass,
            basis=BASIS_LIQUID,
            below_freezing=values.below_freezing,
        )

    def _liquid_dead_state(self, liquid: Liquid) -> tuple[float, float]:
        """(h0 [J/kg], s0 [J/(kg K)]) of the liquid at the dead state, on the library's reference."""
        cached = self._liquid_dead.get(liquid.name)
        if cached is not None:
            return cached
        try:
            values = self._liquids.values(liquid, self.dead_T, self.dead_P)
        except StateError as exc:
            raise StateError(
                f"the dead state ({to_celsius(self.dead_T):.6g} °C) is outside what the "
                f"correlation of {liquid.name} covers, so its exergy has no reference: "
                f"{exc.problem.message}"
            ) from None
        self._liquid_dead[liquid.name] = (values.h, values.s)
        return values.h, values.s

    def liquid_dead_state(self, fluid: str) -> tuple[float, float]:
        """(h0, s0) of an evaluated liquid on the basis of its states: (0, 0) by construction."""
        self._liquid_dead_state(self._liquid_names[fluid])
        return 0.0, 0.0

    def liquid_correlations(self) -> dict[str, str]:
        """Each liquid evaluated so far → the correlation it is evaluated with."""
        return {
            name: f"Melinder (2010) fit, CoolProp incompressible '{liquid.code}'"
            for name, liquid in sorted(self._liquid_names.items())
        }
