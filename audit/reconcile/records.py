"""Plain records of a reconciliation, all values SI; the reports read these and compute nothing."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

CAUTION = (
    "Reconciliation is a statistical estimate, not a calibration: the reconciled values are "
    "the most likely plant state given the declared uncertainties and the balances; a "
    "reading named here is a reading to check, not a proven fault."
)

FLAGS = ("", "gross error", "suspect", "not checkable", "just determined", "estimated", "unobservable")
"""Every flag a :class:`Reading` can carry (empty: checked and consistent)."""

MEASUREMENT_ERROR = "measurement error"
IMPOSSIBLE_CLAIM = "impossible claim"


@dataclass
class Reading:
    """One variable of the reconciliation, measured or estimated.

    ``flag``: ``gross error`` (removed by the serial elimination), ``suspect`` (normalised
    correction above the critical value), ``not checkable`` (local redundancy too small),
    ``just determined`` (enters no balance that others check), ``estimated`` (unmeasured,
    observable), ``unobservable`` (unmeasured, not determined: no value is given) or empty."""

    key: str
    label: str
    quantity: str | None
    measured: float | None
    reconciled: float | None
    u_before: float | None
    u_after: float | None
    normalised: float | None = None
    redundancy: float | None = None
    detectable_bias: float | None = None
    equivalent_set: list[str] = field(default_factory=list)
    flag: str = ""

    @property
    def correction(self) -> float | None:
        if self.measured is None or self.reconciled is None:
            return None
        return self.reconciled - self.measured


@dataclass
class GlobalTest:
    """γ = vᵀ Σ⁻¹ v against χ²_{ν}(confidence)."""

    statistic: float
    dof: int
    confidence: float
    critical: float

    @property
    def passed(self) -> bool:
        return self.dof == 0 or self.statistic <= self.critical


@dataclass
class Elimination:
    """One round of the serial elimination: the reading removed (made unmeasured), the set it
    belongs to (any member would do), its normalised correction and the global test after;
    ``close``: readings whose normalised corrections are hard to tell apart from it (correlation
    at least 0.95), named with it as "one of these"; ``estimate``: the removed reading's value
    estimated with every gross error removed."""

    removed: str
    equivalent_set: list[str]
    normalised: float
    estimate: float
    measured: float
    after: GlobalTest
    note: str = ""
    close: list[str] = field(default_factory=list)
    swapped: str = ""  # why a close reading was removed in the place of the first one taken

    @property
    def named(self) -> list[str]:
        """The readings named "one of these": the equivalent set and the close readings."""
        return [*self.equivalent_set, *(k for k in self.close if k not in self.equivalent_set)]


@dataclass
class FindingOrigin:
    """What an original law finding of the audit was, judged on the reconciled balance."""

    step: str
    name: str
    origin: str  # MEASUREMENT_ERROR or IMPOSSIBLE_CLAIM
    note: str = ""


@dataclass
class Reconciliation:
    """The result of ``plant-audit reconcile``."""

    name: str
    file: str
    confidence: float
    converged: bool
    message: str
    iterations: int
    tolerance: float
    first: GlobalTest  # on the readings as read
    final: GlobalTest  # after the gross errors were removed
    critical_value: float  # Šidák's, of the final round
    critical_method: str
    readings: list[Reading]
    eliminations: list[Elimination]
    constraints: list[tuple[str, float, str]]  # (key, residual at the solution, unit)
    phase_notes: list[str]
    origins: list[FindingOrigin]
    redundancy: int
    evaluations: int
    caution: str = CAUTION

    @property
    def gross_errors(self) -> list[list[str]]:
        """The sets named by the serial elimination (each: 'one of these')."""
        return [e.named for e in self.eliminations]

    @property
    def unobservable(self) -> list[str]:
        return [r.key for r in self.readings if r.flag == "unobservable"]

    def fails(self, threshold: str = "error") -> bool:
        """True when the global test fails on the readings, a gross error is named, the solver
        did not converge or a step is an impossible claim; with ``warning`` also when a reading
        is suspect, not checkable, or a state changed phase."""
        failed = (
            not self.converged
            or not self.first.passed
            or bool(self.eliminations)
            or any(o.origin == IMPOSSIBLE_CLAIM for o in self.origins)
        )
        if threshold == "warning":
            failed = (
                failed
                or bool(self.phase_notes)
                or any(r.flag in ("suspect", "not checkable") for r in self.readings)
            )
        return failed


def finite(value: float | None) -> float | None:
    """``value`` when finite, else None."""
    return value if value is not None and math.isfinite(value) else None
