"""A step's result: its heat flows, its balance (composed) and everything computed for it."""

from __future__ import annotations

from dataclasses import dataclass, field
from enum import Enum
from typing import Any

from audit.exchangers import ExchangerProfile, ExchangerValues
from audit.results.delegated import Delegated


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
    # The signed margins of the kind's own claim checks by finding name (bound minus claim, or
    # the violation itself), for the review's re-evaluations; not published.
    checks: dict[str, float] = field(default_factory=dict)

    # -- the balance's values, read as the step's own (reports read them by name) --
    @property
    def Q(self) -> float:
        """Heat into the step [W] or [J]."""
        return self.balance.Q

    @property
    def W(self) -> float:
        """Work delivered by the step [W] or [J]."""
        return self.balance.W

    H_in = Delegated[float]("balance", "H_in", "Σ ṁ h of the inlets [W] (vessel: m u1 [J]).")
    H_out = Delegated[float]("balance", "H_out", "Σ ṁ h of the outlets [W] (vessel: m u2 [J]).")
    KE_PE_in = Delegated[float]("balance", "KE_PE_in", "Kinetic and potential energy in [W].")
    KE_PE_out = Delegated[float]("balance", "KE_PE_out", "Kinetic and potential energy out [W].")

    dH = Delegated[float]("balance", "dH", "Enthalpy change, out minus in [W] or [J].")
    dU = Delegated[float]("balance", "dU", "Internal-energy change [W] or [J].")

    dS = Delegated[float]("balance", "dS", "Entropy change [W/K] or [J/K].")
    dG = Delegated[float]("balance", "dG", "Gibbs-function change [W] or [J].")
    dA = Delegated[float]("balance", "dA", "Helmholtz-function change [W] or [J].")

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

    W_rev_exergy = Delegated[float]("balance", "W_rev_exergy", "The exergy drop [W] or [J].")
    T_isothermal = Delegated[float | None](
        "balance", "T_isothermal", "The isothermal step's temperature [K]."
    )
    minus_dG_isothermal = Delegated[float | None](
        "balance", "minus_dG_isothermal", "−ΔG at T_isothermal [W] or [J]."
    )
    minus_dA_isothermal = Delegated[float | None](
        "balance", "minus_dA_isothermal", "−ΔA at T_isothermal [J]."
    )
    useful_work_bound = Delegated[float | None](
        "balance", "useful_work_bound", "W_rev − P0 ΔV of a vessel [J]."
    )

    exergy_destroyed = Delegated[float]("balance", "exergy_destroyed", "T0 S_gen [W] or [J].")
    energy_scale = Delegated[float]("balance", "energy_scale", "Scale of the relative energy tolerance.")


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
