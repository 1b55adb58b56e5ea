"""A stream's result: its state (composed) and flows."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from audit.properties.humid_air import DRY_AIR_PART, HUMID_AIR, WATER_MOLAR_MASS
from audit.properties.state import State
from audit.results.delegated import Delegated

STANDARD_GRAVITY = 9.806_65  # m/s**2, exact by definition (3rd CGPM, 1901)


@dataclass(slots=True)  # one per stream or step: no per-instance dict
class StreamResult:
    """A stream's evaluated state and flow: its :class:`~audit.properties.state.State`, whose
    values read as the stream's own (T [K], P [Pa], rho [kg/m**3], h, u, g, a, psi [J/kg],
    s [J/(kg K)]), mass_flow [kg/s], molar_flow [mol/s], velocity [m/s], elevation [m]; a gas
    mixture's ``composition`` is its mole fractions [-] by species formula (None for a pure
    fluid). :data:`STREAM_FIELDS` lists the published fields in order."""

    id: str
    state: State
    mass_flow: float
    molar_flow: float
    flow_as_written: str
    velocity: float = 0.0
    elevation: float = 0.0
    declared_phase: str | None = None
    description: str | None = None
    line: int | None = None
    # Printed properties beyond the fixing pair, each beside the computed value (audit.printed):
    # property -> Printed record; None when the stream prints only its two fixing properties.
    printed: dict[str, Any] | None = None

    fluid = Delegated[str]("state", "fluid", "The fluid's name.")
    T = Delegated[float]("state", "T", "Temperature [K].")
    P = Delegated[float]("state", "P", "Pressure [Pa].")
    rho = Delegated[float]("state", "rho", "Density [kg/m**3].")
    h = Delegated[float]("state", "h", "Specific enthalpy [J/kg].")
    s = Delegated[float]("state", "s", "Specific entropy [J/(kg K)].")
    u = Delegated[float]("state", "u", "Specific internal energy [J/kg].")
    g = Delegated[float]("state", "g", "Specific Gibbs function h - T s [J/kg].")
    a = Delegated[float]("state", "a", "Specific Helmholtz function u - T s [J/kg].")
    psi = Delegated[float]("state", "psi", "Flow exergy [J/kg].")
    phase = Delegated[str]("state", "phase", "Phase name.")
    quality = Delegated[float | None]("state", "quality", "Vapour quality [-], None outside two-phase.")
    basis = Delegated[str]("state", "basis", "Reference basis of h, s, u, g and a.")

    @property
    def composition(self) -> dict[str, float] | None:
        """A gas mixture's mole fractions [-] by formula; None for a pure fluid."""
        pairs = self.state.composition
        return dict(pairs) if pairs is not None else None

    def conserved_parts(self) -> tuple[tuple[str, float], ...]:
        """(substance, mass flow [kg/s]) pairs that a step conserves: the stream's own fluid, or for
        humid air its dry air and its water (which evaporates from and condenses to "Water")."""
        if self.state.fluid != HUMID_AIR:
            return ((self.state.fluid, self.mass_flow),)
        x_w = dict(self.state.composition or ()).get("H2O", 0.0)
        y_w = x_w * WATER_MOLAR_MASS / self.state.molar_mass
        return ((DRY_AIR_PART, self.mass_flow * (1.0 - y_w)), ("Water", self.mass_flow * y_w))

    @property
    def kinetic_potential(self) -> float:
        """Kinetic plus potential energy per kg [J/kg]."""
        return 0.5 * self.velocity**2 + STANDARD_GRAVITY * self.elevation


STREAM_FIELDS = (
    "id", "fluid", "T", "P", "rho", "h", "s", "u", "g", "a", "psi", "phase", "quality", "basis",
    "mass_flow", "molar_flow", "flow_as_written", "velocity", "elevation", "declared_phase",
    "description", "line", "composition", "printed",
)  # fmt: skip
"""The published fields of a stream (JSON, CSV and workbook columns), in order."""
