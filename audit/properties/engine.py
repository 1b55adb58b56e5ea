"""The property engine: the one module of plant-audit that calls CoolProp.

A stream state is a fluid and two independent intensive properties, (T, P), (P, quality),
(T, quality), (P, h) or (P, s). The engine evaluates it with CoolProp's low-level ``AbstractState``
on the HEOS back end (Helmholtz-energy equations of state: IAPWS-95 for water [1]) and returns a
:class:`State` with T, P, ρ, h, s, u, phase, quality, g = h − Ts, a = u − Ts and the flow exergy
ψ = (h − h0) − T0 (s − s0) relative to the same fluid at the dead state (T0, P0) [2].

Rules the engine keeps (they come from measurements of CoolProp's behaviour, see DEVELOPERS.md):

* (T, P) within ``saturation_band`` of the saturation line of a pure fluid is ambiguous: the engine
  raises a :class:`StateError` naming the saturation temperature and asking for a quality; it never
  guesses. Away from the band it decides the phase from T_sat(P) itself and only then imposes it.
* T must lie within the equation's range [T_min, T_max] and 0 < P ≤ P_max: CoolProp returns numbers
  beyond its limits, the engine refuses them. Every returned value must be finite.
* Identical inputs are evaluated once (a cache keyed by fluid, input pair and values).

Formation basis. For the species in :mod:`audit.formation`, h and s are shifted by a constant per
fluid so that the ideal gas at 298.15 K and 1 bar has h = ΔfH° and s = S°; the other fluids keep
CoolProp's own reference and their states say ``basis = "fluid reference"``. Values of h and s that a
balance file gives as inputs are read on the fluid's usual table reference (CoolProp's default: the
IAPWS convention for water, the IIR convention for refrigerants), as printed in steam and refrigerant
tables.

Gas mixtures (a stream written with ``composition:``) are ideal-gas mixtures of the pure species on
the same formation basis, built from CoolProp's ideal-gas parts in :mod:`audit.properties.mixtures`
(which documents the model, its verified temperature ranges and its pressure limit); their states
say ``basis = "formation (ideal-gas mixture)"`` and carry their composition. Pure species in a
reaction (:meth:`PropertyEngine.species_molar`) are ideal gases, or the real liquid for a species
written ``(l)``.

References
----------
.. [1] W. Wagner, A. Pruß, "The IAPWS formulation 1995 for the thermodynamic properties of ordinary
   water substance for general and scientific use", J. Phys. Chem. Ref. Data 31 (2002) 387–535.
.. [2] A. Bejan, G. Tsatsaronis, M. Moran, *Thermal Design and Optimization*, Wiley, 1996, ch. 3.
.. [3] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid thermophysical
   property evaluation and the open-source thermophysical property library CoolProp",
   Ind. Eng. Chem. Res. 53 (2014) 2498–2508.
"""

from __future__ import annotations

import math

from audit.constants import GAS_CONSTANT
from audit.errors import StateError
from audit.properties import mixtures
from audit.properties.declared import DeclaredBases
from audit.properties.fluids import (
    BACKEND,
    PAIRS,
    PHASE_NAMES,
    Fluid,
    check_pressure,
    check_temperature,
    inputs_text,
    open_fluid,
    short_reason,
)
from audit.properties.formulations import refine
from audit.properties.humid_air import HUMID_AIR, HumidAirStates
from audit.properties.library import CP, coolprop_version
from audit.properties.liquid_states import LiquidStates
from audit.properties.liquids import LiquidLibrary
from audit.properties.mixture_states import MixtureStates
from audit.properties.state import BASIS_FLUID, BASIS_FORMATION, BASIS_MIXTURE, State
from audit.wording import to_bar, to_celsius

__all__ = [
    "BACKEND",
    "BASIS_FLUID",
    "BASIS_FORMATION",
    "BASIS_MIXTURE",
    "coolprop_version",
    "GAS_CONSTANT",
    "PropertyEngine",
    "State",
]


class PropertyEngine(MixtureStates, LiquidStates, DeclaredBases, HumidAirStates):
    """Evaluates and caches stream states for one balance (one dead state, one saturation band).

    Parameters
    ----------
    dead_T : dead-state temperature T0 [K]
    dead_P : dead-state pressure P0 [Pa]
    saturation_band : half-width of the band around T_sat(P) in which a (T, P) state is
        ambiguous [K]
    reference : the reference printed h and s are on (``balance: reference:``; None: the fluid's own)
    formulation : the declared formulation (``balance: formulation:``; None: reference equations)
    dead_relative_humidity : the dead state's relative humidity φ0 [-] (humid air's exergy,
        :mod:`audit.properties.humid_air`)
    """

    def __init__(
        self,
        dead_T: float,
        dead_P: float,
        saturation_band: float = 0.1,
        reference: object = None,
        formulation: object = None,
        dead_relative_humidity: float = 1.0,
    ) -> None:
        self.reference = reference
        self.dead_relative_humidity = dead_relative_humidity
        self.formulation = formulation
        self._offsets: dict[str, tuple[float, float]] = {}
        self.dead_T = dead_T
        self.dead_P = dead_P
        self.saturation_band = saturation_band
        self._states: dict[str, CP.AbstractState] = {}
        self._fluids: dict[str, Fluid] = {}
        self._cache: dict[tuple, State] = {}
        self._dead: dict[str, tuple[float, float]] = {}
        self._dead_named: dict[str, tuple[float, float]] = {}
        self._tsat: dict[tuple[str, float], float] = {}
        self._mixtures = mixtures.IdealGasMixtures()
        self._mixture_names: dict[str, tuple[mixtures.Component, ...]] = {}
        self._liquids = LiquidLibrary()
        self._liquid_names = {}
        self._liquid_dead = {}
        self._flashes = 0

    @property
    def flash_count(self) -> int:
        """Number of CoolProp evaluations so far (pure fluids and mixture species)."""
        return self._flashes + self._mixtures.flash_count + self._liquids.flash_count

    @flash_count.setter
    def flash_count(self, value: int) -> None:
        self._flashes = value - self._mixtures.flash_count - self._liquids.flash_count

    # -- fluids -------------------------------------------------------------------------------
    def variant(self, *, reference: object = None, formulation: object = None) -> PropertyEngine:
        """A fresh engine with this one's dead state (temperature, pressure and humidity) and
        saturation band, on another table ``reference`` and ``formulation`` (its own cache)."""
        return PropertyEngine(
            self.dead_T,
            self.dead_P,
            self.saturation_band,
            reference=reference,
            formulation=formulation,
            dead_relative_humidity=self.dead_relative_humidity,
        )

    def fluid(self, name: str) -> Fluid:
        """Fluid constants by CoolProp name or alias; :class:`StateError` for an unknown fluid."""
        known = self._fluids.get(name)
        if known is not None:
            return known
        info, state = open_fluid(name, self.formulation_of)
        self._states[info.name] = state
        self._fluids[name] = info
        self._fluids[info.name] = info
        return info

    def canonical_name(self, name: str) -> str:
        return self.fluid(name).name

    # -- saturation -----------------------------------------------------------------------------
    def saturation_temperature(self, fluid: str, P: float) -> float | None:
        """T_sat(P) [K] of a pure fluid, or None above the critical pressure (and for a gas
        mixture, which the engine does not condense)."""
        if fluid in self._mixture_names or fluid in self._liquid_names:
            return None
        info = self.fluid(fluid)
        if P >= info.P_crit:
            return None
        key = (info.name, P)
        if key not in self._tsat:
            state = self._states[info.name]
            try:
                state.update(CP.PQ_INPUTS, P, 0.0)
                self._flashes += 1
                self._tsat[key] = state.T()
            except ValueError:
                self._tsat[key] = math.nan
        value = self._tsat[key]
        return None if math.isnan(value) else value

    # -- states --------------------------------------------------------------------------------
    def state(self, fluid: str, pair: str, a: float, b: float, table_basis: bool = True) -> State:
        """Evaluate a state from an input pair.

        Parameters
        ----------
        fluid : CoolProp fluid name
        pair : ``"TP"`` (T [K], P [Pa]), ``"PQ"`` (P [Pa], quality [-]), ``"TQ"`` (T [K],
            quality [-]), ``"Ph"`` (P [Pa], h [J/kg]) or ``"Ps"`` (P [Pa], s [J/(kg K)])
        a, b : the two values, in the order of ``pair``
        table_basis : for ``"Ph"`` and ``"Ps"``, whether h or s is on the fluid's table reference
            (as written in a balance file) rather than on the basis of the returned states

        Raises
        ------
        StateError : unknown fluid, out-of-range or non-finite input or result, ambiguous phase
        """
        key = (fluid, pair, a, b, table_basis)
        cached = self._cache.get(key)
        if cached is not None:
            return cached
        components = self._mixture_names.get(fluid)
        if fluid == HUMID_AIR:
            raise StateError(
                "humid air is evaluated from T, P and its humidity only; its states along a "
                "temperature profile or at an isentropic outlet are not computed"
            )
        liquid = self._liquid_names.get(fluid)
        if components is not None:
            result = self._mixture_from_pair(components, pair, a, b)
        elif liquid is not None:
            result = self._liquid_from_pair(liquid, pair, a, b, table_basis)
        else:
            result = self._evaluate(fluid, pair, a, b, table_basis)
        self._cache[key] = result
        return result

    def _evaluate(self, fluid: str, pair: str, a: float, b: float, table_basis: bool) -> State:
        info = self.fluid(fluid)
        if pair not in PAIRS:
            raise StateError(f"unsupported input pair '{pair}'")  # pragma: no cover
        for value in (a, b):
            if not math.isfinite(value):
                raise StateError(f"a state input is not a finite number ({value})")
        if pair in ("PQ", "TQ") and not 0.0 <= b <= 1.0:
            raise StateError(f"quality {b:g} is outside 0 to 1")
        T_in = a if pair in ("TP", "TQ") else None
        P_in = a if pair in ("PQ", "Ph", "Ps") else (b if pair == "TP" else None)
        if T_in is not None:
            check_temperature(info, T_in)
        if P_in is not None:
            check_pressure(info, P_in)
        if pair in ("Ph", "Ps") and not table_basis:
            b = b - (info.h_shift if pair == "Ph" else info.s_shift)
        state = self._states[info.name]
        imposed = None
        if pair == "TP":
            imposed = self._phase_for_TP(info, a, b)
        elif pair == "PQ" and a >= info.P_crit:
            raise StateError(
                f"a quality is given at {to_bar(a):.6g} bar, above the critical pressure "
                f"({to_bar(info.P_crit):.6g} bar) of {info.name}, where there is no two-phase state"
            )
        elif pair == "TQ" and a >= info.T_crit:
            raise StateError(
                f"a quality is given at {a:.6g} K, above the critical temperature "
                f"({info.T_crit:.6g} K) of {info.name}, where there is no two-phase state"
            )
        try:
            if imposed is not None:
                state.specify_phase(imposed)
            if pair == "TP":
                state.update(CP.PT_INPUTS, b, a)
            elif pair == "TQ":
                state.update(CP.QT_INPUTS, b, a)
            elif pair == "Ph":
                state.update(CP.HmassP_INPUTS, b, a)
            else:
                state.update(PAIRS[pair], a, b)
            if info.formulation == "IF97" and pair in ("Ph", "Ps"):
                refine(state, pair, a, b)
            self._flashes += 1
            T, P = state.T(), state.p()
            rho, h, s, u = state.rhomass(), state.hmass(), state.smass(), state.umass()
            phase_index = state.phase()
            Q = state.Q()
        except ValueError as exc:
            raise StateError(
                f"the equation of state of {info.name} cannot evaluate this state "
                f"({inputs_text(pair, a, b)}): {short_reason(exc)}"
            ) from None
        finally:
            if imposed is not None:
                state.unspecify_phase()
        isfinite = math.isfinite
        if not (
            isfinite(T) and isfinite(P) and isfinite(rho) and isfinite(h) and isfinite(s) and isfinite(u)
        ):
            raise StateError(f"the equation of state of {info.name} returned a non-finite value")
        check_temperature(info, T)
        check_pressure(info, P)
        phase = PHASE_NAMES.get(phase_index, "unknown")
        quality = Q if phase == "two-phase" and 0.0 <= Q <= 1.0 else None
        if pair in ("PQ", "TQ"):
            phase, quality = "two-phase", b
        h += info.h_shift
        u += info.h_shift
        s += info.s_shift
        h0, s0 = self._dead_state(info)
        return State(
            fluid=info.name,
            T=T,
            P=P,
            rho=rho,
            h=h,
            s=s,
            u=u,
            phase=phase,
            quality=quality,
            g=h - T * s,
            a=u - T * s,
            psi=(h - h0) - self.dead_T * (s - s0) + self._chemical(info.name),
            molar_mass=info.molar_mass,
            basis=info.basis,
        )

    def _chemical(self, fluid: str) -> float:
        """The chemical exergy [J/kg] of liquid water at the dead state against the dead-state
        atmosphere, added to every "Water" state's ψ when the dead state is not saturated
        (:meth:`water_chemical_exergy`); 0 otherwise and for other fluids."""
        if self.dead_relative_humidity == 1.0 or fluid != "Water":
            return 0.0
        return self.water_chemical_exergy()

    def _phase_for_TP(self, info: Fluid, T: float, P: float) -> CP.phases | None:
        """Decide the phase of a (T, P) input from T_sat(P); refuse states in the band."""
        if T >= info.T_crit or P >= info.P_crit:
            return None
        T_sat = self.saturation_temperature(info.name, P)
        if T_sat is None:
            return None
        if abs(T - T_sat) <= self.saturation_band:
            raise StateError(
                f"(T, P) = ({to_celsius(T):.3f} °C, {to_bar(P):.6g} bar) lies within "
                f"{self.saturation_band:g} K of the saturation temperature "
                f"{to_celsius(T_sat):.3f} °C of {info.name} at this pressure, so its phase is "
                "ambiguous; give a quality (0 = saturated liquid, 1 = saturated vapour) with "
                "T or P instead"
            )
        return CP.iphase_liquid if T < T_sat else CP.iphase_gas

    def _dead_state(self, info: Fluid) -> tuple[float, float]:
        """h0 [J/kg] and s0 [J/(kg K)] of the fluid at the dead state, on the returned basis."""
        cached = self._dead.get(info.name)
        if cached is not None:
            return cached
        state = self._states[info.name]
        T0, P0 = self.dead_T, self.dead_P
        try:
            imposed = self._phase_for_TP(info, T0, P0)
        except StateError:
            imposed = None  # the dead state on the saturation line: either phase gives the same g
        try:
            if imposed is not None:
                state.specify_phase(imposed)
            state.update(CP.PT_INPUTS, P0, T0)
            self._flashes += 1
            value = (state.hmass() + info.h_shift, state.smass() + info.s_shift)
        except ValueError:
            value = (math.nan, math.nan)
        finally:
            if imposed is not None:
                state.unspecify_phase()
        self._dead[info.name] = value
        return value

    def dead_state(self, fluid: str) -> tuple[float, float]:
        """(h0 [J/kg], s0 [J/(kg K)]) of ``fluid`` at the engine's dead state."""
        known = self._dead_named.get(fluid)  # a pure fluid's, by the name asked (every step asks)
        if known is not None:
            return known
        components = self._mixture_names.get(fluid)
        if components is not None:
            dead = self._mixtures.state(components, self.dead_T, self.dead_P, check_ideal=False)
            return dead.h, dead.s
        if fluid in self._liquid_names:
            return self.liquid_dead_state(fluid)
        value = self._dead_state(self.fluid(fluid))
        self._dead_named[fluid] = value
        return value

    def saturation_pressure(self, fluid: str, T: float) -> float | None:
        """p_sat(T) [Pa] of a pure fluid below its critical temperature, else None."""
        return self._mixtures.saturation_pressure(self.canonical_name(fluid), T)
