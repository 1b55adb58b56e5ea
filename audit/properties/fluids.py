"""Pure fluids: their constants and limits from the equation of state, the shift of h and s onto
the formation basis, the range checks every state passes, and the text of state inputs in
messages.

Formation basis: for a species of :mod:`audit.formation`, h and s are shifted by a constant per
fluid so that the ideal gas at 298.15 K and 1 bar has h = ΔfH° and s = S° (CoolProp's ideal-gas
part, read at a low density and moved to 1 bar with the exact ideal-gas term −R ln(ρ°/ρ)).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from audit.constants import GAS_CONSTANT, P_STANDARD, T_STANDARD
from audit.errors import StateError
from audit.formation import species
from audit.properties.formulations import open_state
from audit.properties.library import CP, new_state
from audit.properties.state import BASIS_FLUID, BASIS_FORMATION
from audit.wording import to_bar, to_celsius

BACKEND = "HEOS"
"""CoolProp back end: Helmholtz-energy equations of state (IAPWS-95 for water)."""

PAIRS: dict[str, CP.input_pairs] = {}
"""The input pairs a state may be given by, and CoolProp's code for each (filled when the first
fluid is opened: reading CoolProp's codes loads the library)."""

PHASE_NAMES: dict[int, str] = {}
"""CoolProp's phase codes by the names states carry (filled with :data:`PAIRS`)."""


def _fill_codes() -> None:
    """Fill :data:`PAIRS` and :data:`PHASE_NAMES` in place from CoolProp's constants."""
    PAIRS.update(
        TP=CP.PT_INPUTS,
        PQ=CP.PQ_INPUTS,
        TQ=CP.QT_INPUTS,
        Ph=CP.HmassP_INPUTS,
        Ps=CP.PSmass_INPUTS,
    )
    PHASE_NAMES.update(
        {
            CP.iphase_liquid: "liquid",
            CP.iphase_gas: "vapour",
            CP.iphase_twophase: "two-phase",
            CP.iphase_supercritical: "supercritical",
            CP.iphase_supercritical_gas: "gas",  # above T_crit, below P_crit: a superheated gas
            CP.iphase_supercritical_liquid: "supercritical liquid",
            CP.iphase_critical_point: "critical point",
        }
    )


@dataclass(frozen=True)
class Fluid:
    """A pure fluid's constants: its CoolProp name, the range of its equation of state (T [K],
    P [Pa]), critical point, molar mass [kg/mol] and the shifts onto the basis of its states."""

    name: str
    T_min: float
    T_max: float
    P_max: float
    T_crit: float
    P_crit: float
    molar_mass: float
    h_shift: float  # J/kg added to CoolProp's h (and u) to reach the formation basis
    s_shift: float  # J/(kg K) added to CoolProp's s
    basis: str
    T_triple: float = 0.0  # K, the triple-point temperature (the IAPWS reference's state)
    formulation: str = "reference"  # the equation of state (audit.properties.formulations)


WATER_NAMES = {"steam", "vapour", "vapor", "ice", "h2o(g)", "h2o(l)", "liquid water", "condensate"}
"""Names a balance may give water in one of its phases; the fluid is 'Water' in every phase."""


def open_fluid(
    name: str, formulation_of: Callable[[str], str] = lambda _: "reference"
) -> tuple[Fluid, CP.AbstractState]:
    """A fluid's constants and a CoolProp state object for it, by CoolProp name or alias, on the
    formulation ``formulation_of(canonical name)`` gives; :class:`StateError` for an unknown fluid.
    The formation-basis shift is always taken from the reference equation (HEOS)."""
    if not PAIRS:
        _fill_codes()
    try:
        state = new_state(BACKEND, name)
    except ValueError:
        if name.strip().lower() in WATER_NAMES:
            raise StateError(
                f"unknown fluid '{name}': write 'Water' (steam, water and ice are all 'Water'; "
                "the phase follows from the state)"
            ) from None
        raise StateError(
            f"unknown fluid '{name}': not a CoolProp fluid name (for example 'Water', "
            "'Ammonia', 'Nitrogen', 'Air', 'CarbonDioxide', 'R134a')"
        ) from None
    canonical = state.fluid_names()[0]
    if len(state.fluid_names()) != 1:
        raise StateError(f"'{name}' is a mixture; give one pure fluid")  # pragma: no cover
    M = state.molar_mass()
    h_shift = s_shift = 0.0
    basis = BASIS_FLUID
    data = species(canonical)
    if data is not None:
        h_ig, s_ig = ideal_gas_standard(state)
        h_shift = (data.enthalpy_of_formation - h_ig) / M
        s_shift = (data.standard_entropy - s_ig) / M
        basis = BASIS_FORMATION
    T_triple = state.Ttriple()
    formulation = formulation_of(canonical)
    if formulation != "reference":
        state = open_state(canonical, formulation)
    info = Fluid(
        name=canonical,
        T_min=state.Tmin(),
        T_max=state.Tmax(),
        P_max=state.pmax(),
        T_crit=state.T_critical(),
        P_crit=state.p_critical(),
        molar_mass=M,
        h_shift=h_shift,
        s_shift=s_shift,
        basis=basis,
        T_triple=T_triple,
        formulation=formulation,
    )
    return info, state


def ideal_gas_standard(state: CP.AbstractState) -> tuple[float, float]:
    """CoolProp's ideal-gas h [J/mol] and s [J/(mol K)] at 298.15 K and 1 bar.

    ``smolar_idealgas`` is evaluated at the state's own density, so it is read at a low density in
    the vapour and moved to the standard pressure with the exact ideal-gas term −R ln(ρ°/ρ).
    """
    rho_low = 1.0e-3  # mol/m**3, far below any saturation density at 298.15 K
    state.update(CP.DmolarT_INPUTS, rho_low, T_STANDARD)
    h_ig = state.hmolar_idealgas()
    rho_standard = P_STANDARD / (GAS_CONSTANT * T_STANDARD)
    s_ig = state.smolar_idealgas() - GAS_CONSTANT * math.log(rho_standard / rho_low)
    return h_ig, s_ig


# -- range checks ---------------------------------------------------------------------------------
def check_temperature(info: Fluid, T: float) -> None:
    """:class:`StateError` unless 0 < T [K] and T lies within the equation of state's range."""
    if not T > 0.0:
        raise StateError(f"temperature {T:.6g} K is not a positive absolute temperature")
    if T < info.T_min or T > info.T_max:
        raise StateError(
            f"temperature {to_celsius(T):.6g} °C is outside the range of the equation of state "
            f"of {info.name} ({to_celsius(info.T_min):.6g} to {to_celsius(info.T_max):.6g} °C)"
        )


def check_pressure(info: Fluid, P: float) -> None:
    """:class:`StateError` unless 0 < P [Pa] ≤ the equation of state's maximum pressure."""
    if not P > 0.0:
        raise StateError(f"pressure {P:.6g} Pa is not a positive absolute pressure")
    if P > info.P_max:
        raise StateError(
            f"pressure {to_bar(P):.6g} bar is above the range of the equation of state of "
            f"{info.name} (up to {to_bar(info.P_max):.6g} bar)"
        )


# -- message text -----------------------------------------------------------------------------
def inputs_text(pair: str, a: float, b: float) -> str:
    """A state's two inputs in engineering units, for messages: 'P = 1 bar, h = 1e+05 kJ/kg'."""
    shown = {
        "T": lambda v: f"T = {to_celsius(v):.6g} °C",
        "P": lambda v: f"P = {to_bar(v):.6g} bar",
        "Q": lambda v: f"quality = {v:.6g}",
        "h": lambda v: f"h = {v / 1e3:.6g} kJ/kg",
        "s": lambda v: f"s = {v / 1e3:.6g} kJ/(kg K)",
    }
    first, second = pair[:1], pair[1:]
    if first not in shown or second not in shown:
        return f"{pair}: {a:.6g}, {b:.6g}"
    return f"{shown[first](a)}, {shown[second](b)}"


def short_reason(exc: Exception) -> str:
    """The first line of a CoolProp error, at most 200 characters."""
    text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return text[:200]
