"""The reference and the formulation a balance declares, for the property engine.

:class:`DeclaredBases` is the part of :class:`audit.properties.engine.PropertyEngine` that shifts
printed h and s from a declared reference (:mod:`audit.model.references`) to the tool's table basis
(CoolProp's default reference of the fluid) and names the equation of state each fluid is evaluated
on (:mod:`audit.properties.formulations`).

A reference is a constant Δh and a constant Δs per fluid: evaluated at the reference's state on the
tool's table basis, minus the values the reference gives there (h = 200 kJ/kg and s = 1 kJ/(kg·K)
for IIR at 0 °C saturated liquid; 0 and 0 for ASHRAE at −40 °C and NBP at 101.325 kPa; u = 0 and
s = 0 for IAPWS at the triple point). A printed h becomes h + Δh on the tool's basis.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from audit.constants import STANDARD_ATMOSPHERE, ZERO_CELSIUS
from audit.errors import StateError
from audit.model.references import FORMULATION_FLUIDS, ExplicitReference, for_fluid
from audit.properties.fluids import Fluid
from audit.properties.formulations import citation
from audit.properties.mixtures import IdealGasMixtures
from audit.properties.state import State

_NAMED = {
    "IIR": ("TQ", ZERO_CELSIUS, 200e3, 1e3),
    "ASHRAE": ("TQ", ZERO_CELSIUS - 40.0, 0.0, 0.0),
    "NBP": ("PQ", STANDARD_ATMOSPHERE, 0.0, 0.0),
}


class DeclaredBases:
    """Reference and formulation methods of the engine (which supplies the attributes below)."""

    reference: object
    formulation: object
    _fluids: dict[str, Fluid]
    _offsets: dict[str, tuple[float, float]]
    _mixtures: IdealGasMixtures

    if TYPE_CHECKING:

        def state(
            self, fluid: str, pair: str, a: float, b: float, table_basis: bool = True
        ) -> State: ...

        def fluid(self, name: str) -> Fluid: ...

    def formulation_of(self, name: str) -> str:
        """The formulation a fluid is evaluated on: ``"reference"`` or ``"IF97"``."""
        declared = for_fluid(self.formulation, name)
        if declared is None:
            return "reference"
        if isinstance(self.formulation, str) and name not in FORMULATION_FLUIDS.get(str(declared), ()):
            return "reference"  # one word for the balance: the fluids it exists for
        return str(declared)

    def printed_offset(self, fluid: str) -> tuple[float, float]:
        """(Δh [J/kg], Δs [J/(kg K)]) to add to a printed h and s to reach the tool's table basis
        (0, 0 when the balance declares no reference for the fluid)."""
        info = self.fluid(fluid)
        cached = self._offsets.get(info.name)
        if cached is not None:
            return cached
        declared = for_fluid(self.reference, info.name, (fluid,))
        offset = (0.0, 0.0) if declared is None else self._offset(info, declared)
        self._offsets[info.name] = offset
        return offset

    def _offset(self, info: Fluid, declared: object) -> tuple[float, float]:
        if isinstance(declared, ExplicitReference):
            pair, a, b = declared.inputs()
            h_ref, s_ref, use_u = declared.h, declared.s, False
        elif declared == "IAPWS":
            if info.name != "Water":
                raise StateError(f"the IAPWS reference is water's; {info.name} has another")
            pair, a, b, h_ref, s_ref, use_u = "TQ", info.T_triple, 0.0, 0.0, 0.0, True
        else:
            pair, a, h_ref, s_ref = _NAMED[str(declared)]
            b, use_u = 0.0, False
        try:
            state = self.state(info.name, pair, a, b)
        except StateError as exc:
            raise StateError(
                f"the reference {declared if isinstance(declared, str) else 'state'} of "
                f"{info.name} cannot be evaluated: {exc.problem.message}"
            ) from None
        h = (state.u if use_u else state.h) - info.h_shift
        return h - h_ref, state.s - info.s_shift - s_ref

    def to_tool_basis(self, fluid: str, pair: str, b: float) -> float:
        """The second input of a pair, shifted from the printed reference to the tool's basis."""
        if pair not in ("Ph", "Ps") or self.reference is None:
            return b
        dh, ds = self.printed_offset(fluid)
        return b + (dh if pair == "Ph" else ds)

    def equations_of_state(self) -> dict[str, str]:
        """Each pure fluid evaluated so far, and each species of a gas mixture (its ideal-gas part
        and real-gas corrections are its reference equation's) → its equation of state with its
        citation."""
        found = {info.name: self.formulation_of(info.name) for info in self._fluids.values()}
        for name in self._mixtures.species_opened():
            found.setdefault(name, "reference")
        return {name: citation(name, found[name]) for name in sorted(found)}
