"""Plain result objects: what the solver hands to the reports, all values SI.

The reports import these classes, never the solver. :class:`AuditResult` also offers pandas
DataFrames of streams, steps and findings for use from a notebook.
"""

from __future__ import annotations

import copy
from dataclasses import asdict, dataclass, field, fields, is_dataclass
from enum import Enum
from typing import TYPE_CHECKING, Any, Generic, TypeVar

from audit.exchangers import ExchangerProfile, ExchangerValues
from audit.findings import SEVERITY_RANK, Finding, at_or_above

if TYPE_CHECKING:  # pandas loads only when a frame is asked for
    import pandas as pd  # type: ignore[import-untyped]  # no stubs installed

V = TypeVar("V")

STANDARD_GRAVITY = 9.806_65  # m/s**2, exact by definition (3rd CGPM, 1901)


@dataclass(slots=True)  # one per stream or step: no per-instance dict
class StreamResult:
    """A stream's evaluated state and flow. T [K], P [Pa], rho [kg/m**3], h, u, g, a, psi
    [J/kg], s [J/(kg K)], mass_flow [kg/s], molar_flow [mol/s], velocity [m/s], elevation [m];
    a gas mixture's ``composition`` is its mole fractions [-] by species formula (None for a
    pure fluid)."""

    id: str
    fluid: str
    T: float
    P: float
    rho: float
    h: float
    s: float
    u: float
    g: float
    a: float
    psi: float
    phase: str
    quality: float | None
    basis: str
    mass_flow: float
    molar_flow: float
    flow_as_written: str
    velocity: float = 0.0
    elevation: float = 0.0
    declared_phase: str | None = None
    description: str | None = None
    line: int | None = None
    composition: dict[str, float] | None = None
    # Printed properties beyond the fixing pair, each beside the computed value (audit.printed):
    # property -> Printed record; None when the stream prints only its two fixing properties.
    printed: dict[str, Any] | None = None

    @property
    def kinetic_potential(self) -> float:
        """Kinetic plus potential energy per kg [J/kg]."""
        return 0.5 * self.velocity**2 + STANDARD_GRAVITY * self.elevation


class BoundaryChoice(Enum):
    """How the boundary temperature of a heat flow was chosen."""

    DECLARED = "declared"
    """Written in the balance file."""
    CONSERVATIVE = "conservative"
    """Not written: heat in from an infinitely hot source, heat out at the dead state (or the
    coldest stream), the choice least likely to flag a violation."""
    STEP = "step temperature"
    """Not written, and the step is isothermal: exchanged at the step's own temperature (the
    premise of its −ΔG or −ΔA bound, :mod:`audit.steps.potentials`)."""


@dataclass(slots=True)  # one per stream or step: no per-instance dict
class HeatFlow:
    """A heat flow INTO the step [W] (or [J] for a vessel) crossing the boundary at
    ``temperature`` [K] (math.inf: an infinitely hot source). ``claimed`` is False when the
    balance inferred it from the first law; ``boundary`` says whether ``temperature`` was
    declared or chosen conservatively; ``note`` is the text shown with it."""

    Q: float
    temperature: float
    claimed: bool
    note: str = ""
    boundary: BoundaryChoice = BoundaryChoice.DECLARED

    @property
    def conservative(self) -> bool:
        """True when the boundary temperature was chosen conservatively, not declared."""
        return self.boundary is BoundaryChoice.CONSERVATIVE


@dataclass(slots=True)
class Balance:
    """The computed balances of one step (rates [W], [W/K] or totals [J], [J/K]); the equations
    are in :mod:`audit.steps.laws` and :mod:`audit.physics.bounds`. ``W_rev`` is the governing
    bound (:mod:`audit.steps.potentials`); beside it, each bound under its own name: the exergy
    drop ``W_rev_exergy``; for an isothermal step at ``T_isothermal`` [K], −ΔG of a flow step (of a
    closed isobaric step's other work) ``minus_dG_isothermal`` and −ΔA of a closed step
    ``minus_dA_isothermal``; a closed step's ``useful_work_bound`` (W_rev − P0 ΔV)."""

    H_in: float
    H_out: float
    KE_PE_in: float
    KE_PE_out: float
    dH: float
    dU: float
    dS: float
    dG: float
    dA: float
    Q: float
    W: float
    energy_residual: float
    mass_residual: dict[str, float]
    S_gen: float
    W_rev: float
    exergy_destroyed: float
    energy_scale: float
    W_rev_exergy: float
    T_isothermal: float | None = None
    minus_dG_isothermal: float | None = None
    minus_dA_isothermal: float | None = None
    useful_work_bound: float | None = None


class _FromBalance(Generic[V]):
    """A read-only value of a step's :class:`Balance`, read as the step's own attribute."""

    def __init__(self, name: str, doc: str) -> None:
        self.name, self.__doc__ = name, doc

    def __get__(self, step: Any, owner: Any = None) -> V:
        if step is None:
            return self  # type: ignore[return-value]  # the descriptor itself, on the class
        return getattr(step.balance, self.name)


@dataclass(slots=True)  # one per stream or step: no per-instance dict
class StepResult:
    """Everything computed for one step. Flow steps: rates [W], [W/K]; vessels: totals [J], [J/K].

    Sign convention: Q is heat into the step, W is work delivered by the step. The step's
    :class:`Balance` is held in ``balance``; its values read as attributes of the step too
    (``result.dH``, ``result.S_gen``...). :data:`STEP_FIELDS` lists the published fields in
    order and :func:`as_record` gives them as a dict.
    """

    id: str
    kind: str
    batch: bool
    inlets: list[str]
    outlets: list[str]
    balance: Balance
    heat_flows: list[HeatFlow]
    energy_tolerance: float
    bound_basis: str
    classical_bound: float | None
    second_law_efficiency: float | None = None
    isentropic_efficiency: float | None = None
    claimed: list[str] = field(default_factory=list)
    inferred: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    extra: dict[str, Any] = field(default_factory=dict)
    description: str | None = None
    line: int | None = None
    profile: ExchangerProfile | None = None  # heat exchangers: the T–Q profile of both sides
    exchanger: ExchangerValues | None = None  # heat exchangers: duty, approaches, LMTD

    # -- the balance's values, read as the step's own (reports read them by name) --
    @property
    def Q(self) -> float:
        """Heat into the step [W] or [J]."""
        return self.balance.Q

    @property
    def W(self) -> float:
        """Work delivered by the step [W] or [J]."""
        return self.balance.W

    H_in = _FromBalance[float]("H_in", "Σ ṁ h of the inlets [W] (vessel: m u1 [J]).")
    H_out = _FromBalance[float]("H_out", "Σ ṁ h of the outlets [W] (vessel: m u2 [J]).")
    KE_PE_in = _FromBalance[float]("KE_PE_in", "Kinetic and potential energy in [W].")
    KE_PE_out = _FromBalance[float]("KE_PE_out", "Kinetic and potential energy out [W].")

    dH = _FromBalance[float]("dH", "Enthalpy change, out minus in [W] or [J].")
    dU = _FromBalance[float]("dU", "Internal-energy change [W] or [J].")

    dS = _FromBalance[float]("dS", "Entropy change [W/K] or [J/K].")
    dG = _FromBalance[float]("dG", "Gibbs-function change [W] or [J].")
    dA = _FromBalance[float]("dA", "Helmholtz-function change [W] or [J].")

    @property
    def energy_residual(self) -> float:
        """First-law residual [W] or [J]."""
        return self.balance.energy_residual

    @property
    def mass_residual(self) -> dict[str, float]:
        """Mass residual per fluid or element [kg/s]."""
        return self.balance.mass_residual

    @property
    def S_gen(self) -> float:
        """Entropy generated [W/K] or [J/K]."""
        return self.balance.S_gen

    @property
    def W_rev(self) -> float:
        """Reversible work delivered [W] or [J]: the bound the work check uses, the one
        ``bound_basis`` names (:attr:`W_rev_exergy`, :attr:`minus_dG_isothermal` or
        :attr:`minus_dA_isothermal`)."""
        return self.balance.W_rev

    W_rev_exergy = _FromBalance[float]("W_rev_exergy", "The exergy drop [W] or [J].")
    T_isothermal = _FromBalance[float | None]("T_isothermal", "The isothermal step's temperature [K].")
    minus_dG_isothermal = _FromBalance[float | None](
        "minus_dG_isothermal", "−ΔG at T_isothermal [W] or [J]."
    )
    minus_dA_isothermal = _FromBalance[float | None]("minus_dA_isothermal", "−ΔA at T_isothermal [J].")
    useful_work_bound = _FromBalance[float | None]("useful_work_bound", "W_rev − P0 ΔV of a vessel [J].")

    exergy_destroyed = _FromBalance[float]("exergy_destroyed", "T0 S_gen [W] or [J].")
    energy_scale = _FromBalance[float]("energy_scale", "Scale of the relative energy tolerance.")


@dataclass
class PlantTotals:
    """Plant totals over the flow steps [W]: heat in and out, work out and in, exergy destroyed,
    and the boundary streams (consumed by a step but produced by none, and the reverse)."""

    heat_in: float
    heat_out: float
    work_out: float
    work_in: float
    exergy_destroyed: float
    boundary_inlets: list[str]
    boundary_outlets: list[str]
    boundary_energy_residual: float
    sum_of_step_residuals: float


@dataclass
class AuditResult:
    """The result of one audit: metadata, streams, steps, findings, plant totals, provenance."""

    name: str
    revision: str | None
    file: str
    sha256: str
    dead_T: float
    dead_P: float
    site_pressure: float | None
    tolerances: dict[str, float]
    streams: list[StreamResult]
    steps: list[StepResult]
    findings: list[Finding]
    plant: PlantTotals
    provenance: dict[str, str]
    balance_id: str | None = None  # the declared ``balance: id:`` (the run history's key)
    step_seconds: dict[str, float] = field(default_factory=dict)  # run time: not in the JSON

    # -- verdicts ------------------------------------------------------------------------------
    def counts(self, include_accepted: bool = True) -> dict[str, int]:
        """Number of findings per severity (without the accepted ones if ``include_accepted`` is
        False)."""
        counts = {severity: 0 for severity in SEVERITY_RANK}
        for finding in self.findings:
            if include_accepted or not finding.accepted:
                counts[finding.severity] += 1
        return counts

    def fails(self, threshold: str = "error", marginal: bool = False) -> bool:
        """True when any finding not accepted by a reviewer is at or above ``threshold``
        ("error" or "warning") or, with ``marginal``, has the verdict "marginal" (a law finding
        within its measurement uncertainty, :mod:`audit.review.uncertainty`)."""
        return any(
            (at_or_above(f.severity, threshold) or (marginal and f.verdict == "marginal"))
            and not f.accepted
            for f in self.findings
        )

    # -- tables --------------------------------------------------------------------------------
    def streams_frame(self) -> pd.DataFrame:
        """One row per stream, SI units."""
        import pandas as pd

        return pd.DataFrame([as_record(s) for s in self.streams]).set_index("id")

    def steps_frame(self) -> pd.DataFrame:
        """One row per step, SI units (Q in, W out)."""
        import pandas as pd

        rows = []
        for step in self.steps:
            row = as_record(step)
            row.pop("heat_flows")
            row["mass_residual"] = max((abs(v) for v in step.mass_residual.values()), default=0.0)
            row.update({f"extra.{k}": v for k, v in row.pop("extra").items()})
            rows.append(row)
        return pd.DataFrame(rows).set_index("id") if rows else pd.DataFrame()

    def findings_frame(self) -> pd.DataFrame:
        """One row per finding, SI units."""
        import pandas as pd

        columns = list(Finding.__dataclass_fields__)
        return pd.DataFrame([asdict(f) for f in self.findings], columns=columns)

    def step(self, step_id: str) -> StepResult:
        for step in self.steps:
            if step.id == step_id:
                return step
        raise KeyError(step_id)

    def stream(self, stream_id: str) -> StreamResult:
        for stream in self.streams:
            if stream.id == stream_id:
                return stream
        raise KeyError(stream_id)

    def findings_for(self, step_id: str) -> list[Finding]:
        return [f for f in self.findings if f.step == step_id]


HEAT_FLOW_FIELDS = ("Q", "temperature", "claimed", "note")
"""The published fields of a :class:`HeatFlow`, in order (``boundary`` shows in ``note``)."""

STEP_FIELDS = (
    "id",
    "kind",
    "batch",
    "inlets",
    "outlets",
    "Q",
    "W",
    "heat_flows",
    "H_in",
    "H_out",
    "KE_PE_in",
    "KE_PE_out",
    "dH",
    "dU",
    "dS",
    "dG",
    "dA",
    "energy_residual",
    "mass_residual",
    "S_gen",
    "W_rev",
    "exergy_destroyed",
    "energy_scale",
    "energy_tolerance",
    "bound_basis",
    "classical_bound",
    "W_rev_exergy",
    "T_isothermal",
    "minus_dG_isothermal",
    "minus_dA_isothermal",
    "useful_work_bound",
    "second_law_efficiency",
    "isentropic_efficiency",
    "claimed",
    "inferred",
    "notes",
    "extra",
    "description",
    "line",
    "profile",
    "exchanger",
)
"""The published fields of a :class:`StepResult`, in order: the keys of its JSON object and the
columns of the steps table (the balance's values appear flat, as attributes of the step)."""

_PUBLISHED: dict[type, tuple[str, ...]] = {StepResult: STEP_FIELDS, HeatFlow: HEAT_FLOW_FIELDS}


def as_record(value: Any) -> Any:
    """``value`` as plain data for JSON and tables, like :func:`dataclasses.asdict`: a result
    object becomes a dict of its published fields in order (:data:`STEP_FIELDS`,
    :data:`HEAT_FLOW_FIELDS`; every field for the other records), recursively; lists, tuples and
    dicts are copied."""
    published = _PUBLISHED.get(type(value))
    if published is not None:
        return {name: as_record(getattr(value, name)) for name in published}
    if is_dataclass(value) and not isinstance(value, type):
        return {name: as_record(getattr(value, name)) for name in (f.name for f in fields(value))}
    if isinstance(value, (list, tuple)):
        return type(value)(as_record(v) for v in value)
    if isinstance(value, dict):
        return {k: as_record(v) for k, v in value.items()}
    return copy.deepcopy(value)
