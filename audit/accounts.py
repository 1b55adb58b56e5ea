"""The plant's exergy account: what enters, what leaves, what each step destroys [W].

Read from the results (no property calls), for the flow steps (vessels hold batch totals in J, not
rates, and are left out). Each flow step's exergy balance [1, ch. 7; 2, ch. 3]::

    Σ ṁ_i ψ_i − Σ ṁ_e ψ_e + Σ X_Q + X_chem = W + X_d + X_res

with ψ the streams' physical flow exergy (plus kinetic and potential energy), X_Q = Q (1 − T0/T)
the exergy of each heat flow into the step, W the work delivered, X_d = T0 Ṡ_gen the exergy
destroyed, X_chem = W_rev − Σ X_Q − (Σ ṁ_i ψ_i − Σ ṁ_e ψ_e) the chemical exergy the step releases
(reactions, mixing of different fluids: zero for a step whose streams each keep their fluid), and
X_res = W_rev − W − X_d what the step's first-law residual leaves unaccounted (when the step's
mass does not balance, the dead-state terms do not cancel and its X_chem is counted in X_res).
Residuals within the step's energy tolerance are not listed. Summed over the steps the internal
streams cancel, leaving the plant's account: exergy entering with feeds and
fuels (boundary inlets and chemical exergy released), power and heat, and leaving with products,
power, heat, destruction and the residual.

References
----------
.. [1] T. J. Kotas, *The Exergy Method of Thermal Plant Analysis*, Butterworths, 1985, ch. 2
   (exergy balances) and ch. 3 (Grassmann diagrams).
.. [2] J. Szargut, D. R. Morris, F. R. Steward, *Exergy Analysis of Thermal, Chemical, and
   Metallurgical Processes*, Hemisphere, 1988, ch. 3.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from audit.physics.exergy import heat_exergy
from audit.results import AuditResult, StepResult, StreamResult

STREAM, POWER, HEAT, CHEMICAL, DESTROYED, UNACCOUNTED = (
    "stream",
    "power",
    "heat",
    "chemical",
    "destroyed",
    "unaccounted",
)
"""The kinds of an :class:`ExergyItem`."""


@dataclass(frozen=True)
class ExergyItem:
    """One flow of the account: ``value`` [W] (positive), its ``kind``, a ``label``, and the step
    or stream it belongs to."""

    label: str
    value: float
    kind: str
    step: str | None = None
    stream: str | None = None


@dataclass
class ExergyAccount:
    """The plant's exergy account [W]: ``entering``, ``leaving`` (products, power, heat, the
    residual) and ``destroyed`` per flow step, largest first; ``vessels`` lists the steps left
    out."""

    entering: list[ExergyItem] = field(default_factory=list)
    leaving: list[ExergyItem] = field(default_factory=list)
    destroyed: list[ExergyItem] = field(default_factory=list)
    vessels: list[str] = field(default_factory=list)

    @property
    def total_in(self) -> float:
        """Exergy entering [W]."""
        return sum(i.value for i in self.entering)


def stream_exergy(stream: StreamResult) -> float:
    """Physical exergy flow of a stream, kinetic and potential energy included [W]."""
    return stream.mass_flow * (stream.psi + stream.kinetic_potential)


def exergy_account(result: AuditResult) -> ExergyAccount:
    """The plant's exergy account (see the module docstring)."""
    account = ExergyAccount(vessels=[s.id for s in result.steps if s.batch])
    streams = {s.id: s for s in result.streams}
    flow = [s for s in result.steps if not s.batch]
    T0 = result.dead_T

    def add(value: float, kind: str, into: str, out_of: str, **where: str) -> None:
        if value > 0:
            account.entering.append(ExergyItem(into, value, kind, **where))
        elif value < 0:
            account.leaving.append(ExergyItem(out_of, -value, kind, **where))

    for stream_id in result.plant.boundary_inlets:
        x = stream_exergy(streams[stream_id])
        add(x, STREAM, f"{stream_id} feed", f"{stream_id} feed (negative)", stream=stream_id)
    for step in flow:
        x_heat = sum(heat_exergy(q.Q, q.temperature, T0) for q in step.heat_flows)
        add(x_heat, HEAT, f"heat into {step.id}", f"heat from {step.id}", step=step.id)
        add(-step.W, POWER, f"power into {step.id}", f"power from {step.id}", step=step.id)
        chemical = step.W_rev - x_heat - _stream_drop(step, streams)
        unaccounted = step.W_rev - step.W - step.exergy_destroyed
        if not _mass_closes(
            step, streams, result.tolerances
        ):  # the dead-state terms do not cancel: not chemical
            unaccounted, chemical = unaccounted - chemical, 0.0
        if abs(chemical) > step.energy_tolerance:
            add(
                chemical,
                CHEMICAL,
                f"chemical, released in {step.id}",
                f"chemical, stored in {step.id}",
                step=step.id,
            )
        if step.exergy_destroyed >= 0:
            account.destroyed.append(
                ExergyItem(f"destroyed in {step.id}", step.exergy_destroyed, DESTROYED, step=step.id)
            )
        else:
            account.entering.append(
                ExergyItem(
                    f"created in {step.id} (impossible)",
                    -step.exergy_destroyed,
                    DESTROYED,
                    step=step.id,
                )
            )
        if abs(unaccounted) > step.energy_tolerance:  # within tolerance: the step closes
            label = f"unaccounted in {step.id}"
            add(-unaccounted, UNACCOUNTED, label, label, step=step.id)
    for stream_id in result.plant.boundary_outlets:
        x = stream_exergy(streams[stream_id])
        add(-x, STREAM, f"{stream_id} product (negative)", f"{stream_id} product", stream=stream_id)
    account.destroyed.sort(key=lambda i: -i.value)
    return account


def _mass_closes(
    step: StepResult, streams: dict[str, StreamResult], tolerances: dict[str, float]
) -> bool:
    """True when the step's mass balance closes within the balance's mass tolerances."""
    scale = sum(streams[i].mass_flow for i in step.inlets)
    allowed = max(tolerances.get("mass_relative", 1e-6) * scale, tolerances.get("mass_absolute", 0.0))
    return all(abs(r) <= allowed for r in step.mass_residual.values())


def _stream_drop(step: StepResult, streams: dict[str, StreamResult]) -> float:
    """Σ ṁ_i ψ_i − Σ ṁ_e ψ_e of a step [W]."""
    return sum(stream_exergy(streams[i]) for i in step.inlets) - sum(
        stream_exergy(streams[o]) for o in step.outlets
    )
