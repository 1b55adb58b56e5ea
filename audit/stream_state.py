"""One stream's state and flows from its written spec, through the property engine: a pure fluid or
a formulation's water (on the declared table reference), a gas mixture, a liquid of the
incompressible library (a brine, glycol or heat-transfer liquid) or humid air; the flow as written
(mass, molar, normal/standard or actual volume) turned into a mass flow.

The solver (:mod:`audit.solve`) evaluates every stream through :func:`evaluate_stream`; the review and
the reconciliation re-evaluate a stream through the same function.
"""

from __future__ import annotations

from typing import cast

from audit.errors import StateError
from audit.model.humid_air import HUMIDITIES, is_humid_air
from audit.model.streams import StreamSpec
from audit.properties.engine import GAS_CONSTANT, PropertyEngine, State
from audit.results import StreamResult
from audit.units import Flow
from audit.wording import to_celsius

__all__ = ["evaluate_stream"]


def evaluate_stream(
    stream_id: str, spec: StreamSpec, engine: PropertyEngine, line: int | None
) -> StreamResult:
    """A stream's state and flows from its written spec, through the property engine."""
    pair, a, b = spec.inputs()
    if is_humid_air(spec.fluid):
        state, mass_flow = _humid_air(spec, engine)
    elif isinstance(spec.composition, dict):  # a named composition is expanded on validation
        # A gas mixture (audit.properties.mixtures); a normal or standard volume of it is converted
        # with the ideal-gas molar volume at its reference conditions, as combustion practice does.
        state = engine.mixture_state(spec.composition, a, b, spec.composition_basis)
        if spec.flow.basis == "normal_volume":
            T_ref, P_ref = spec.flow.reference  # type: ignore[misc]
            mass_flow = spec.flow.value * P_ref * state.molar_mass / (GAS_CONSTANT * T_ref)
        else:
            mass_flow = _mass_flow(spec.flow, state.fluid, state.rho, state.molar_mass, engine)
    elif spec.fraction is not None or engine.is_liquid(cast(str, spec.fluid)):
        state = _liquid_state(spec, engine)
        mass_flow = _mass_flow(spec.flow, state.fluid, state.rho, state.molar_mass, engine)
    else:
        fluid = cast(str, spec.fluid)  # validated: a stream without a composition names its fluid
        state = engine.state(fluid, pair, a, engine.to_tool_basis(fluid, pair, b))
        mass_flow = _mass_flow(spec.flow, fluid, state.rho, state.molar_mass, engine)
    return StreamResult(
        id=stream_id,
        state=state,
        mass_flow=mass_flow,
        molar_flow=mass_flow / state.molar_mass,
        flow_as_written=spec.flow.basis,
        velocity=spec.velocity or 0.0,
        elevation=spec.elevation or 0.0,
        declared_phase=spec.phase,
        description=spec.description,
        line=line,
    )


def _liquid_state(spec: StreamSpec, engine: PropertyEngine) -> State:
    """A brine, glycol or heat-transfer liquid (:mod:`audit.properties.liquids`), from T and P."""
    if spec.pair != "TP" or spec.claims() or spec.state_from is not None:
        raise StateError(f"{spec.fluid} is a liquid of the incompressible library: give T and P only")
    if spec.flow.basis == "normal_volume":
        raise StateError(
            f"a normal or standard volumetric flow is for gases; give the flow of {spec.fluid} "
            "as a mass, molar or actual volumetric flow"
        )
    return engine.liquid_state(
        cast(str, spec.fluid),
        spec.fraction,
        spec.fraction_basis,
        cast(float, spec.T),
        cast(float, spec.P),
    )


def _humid_air(spec: StreamSpec, engine: PropertyEngine) -> tuple[State, float]:
    """A humid-air stream's state and mass flow of humid air [kg/s] (:mod:`audit.model.humid_air`):
    a dry-air mass flow is multiplied by 1 + W; a normal volume is converted with the ideal-gas
    molar volume at its reference conditions, as for gas mixtures."""
    how = next(name for name in HUMIDITIES if getattr(spec, name) is not None)
    T, P = cast(float, spec.T), cast(float, spec.P)
    state = engine.humid_air_state(T, P, how, float(getattr(spec, how)))
    flow = spec.flow
    if spec.flow_of == "dry air":
        return state, flow.value * (1.0 + engine.humidity_ratio_of_state(state))
    if flow.basis == "normal_volume":
        T_ref, P_ref = flow.reference  # type: ignore[misc]
        return state, flow.value * P_ref * state.molar_mass / (GAS_CONSTANT * T_ref)
    if flow.basis == "actual_volume":
        return state, flow.value * state.rho
    if flow.basis == "molar":
        return state, flow.value * state.molar_mass
    return state, flow.value


def _mass_flow(flow: Flow, fluid: str, rho: float, molar_mass: float, engine: PropertyEngine) -> float:
    """Mass flow [kg/s] from a flow as written (mass, molar, normal/standard or actual volume)."""
    if flow.basis == "mass":
        return flow.value
    if flow.basis == "molar":
        return flow.value * molar_mass
    if flow.basis == "actual_volume":
        return flow.value * rho
    T_ref, P_ref = flow.reference  # type: ignore[misc]
    try:
        reference = engine.state(fluid, "TP", T_ref, P_ref)
    except StateError as exc:  # e.g. water at 0 °C is below its equation's range
        raise StateError(
            f"a normal or standard volumetric flow needs a gas at its reference conditions "
            f"({to_celsius(T_ref):g} °C, {P_ref / 1e3:g} kPa), but {fluid} cannot be evaluated "
            f"there ({exc.problem.message}); give a mass or molar flow"
        ) from None
    if reference.phase not in ("vapour", "gas", "supercritical"):
        raise StateError(
            f"a normal or standard volumetric flow needs a gas at its reference conditions "
            f"({to_celsius(T_ref):g} °C, {P_ref / 1e3:g} kPa), but {reference.fluid} is "
            f"{reference.phase} there; give a mass or molar flow"
        )
    return flow.value * reference.rho
