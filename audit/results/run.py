"""The result of one audit: streams, steps, findings, plant totals and provenance."""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import TYPE_CHECKING

from audit.findings import SEVERITY_RANK, Finding, at_or_above

if TYPE_CHECKING:  # pandas loads only when a frame is asked for
    import pandas as pd  # type: ignore[import-untyped]  # no stubs installed

from audit.results.records import as_record
from audit.results.steps import StepResult
from audit.results.streams import StreamResult


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
