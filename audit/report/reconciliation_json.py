"""The ``reconciliation`` section of the JSON results (``plant-audit reconcile FILE --json X``):
the :class:`~audit.reconcile.records.Reconciliation` record as plain data, values SI, keys as in
the records, non-finite numbers as null; its structure is part of the published results schema
(:mod:`audit.report.results_schema`)."""

from __future__ import annotations

from dataclasses import asdict
from typing import Any

from audit.reconcile.records import Reconciliation, finite

SECTION_KEYS = (
    "name",
    "file",
    "confidence",
    "converged",
    "message",
    "iterations",
    "tolerance",
    "first",
    "final",
    "critical_value",
    "critical_method",
    "readings",
    "eliminations",
    "constraints",
    "phase_notes",
    "origins",
    "redundancy",
    "evaluations",
    "caution",
    "gross_errors",
    "unobservable",
    "fails",
)
"""The keys of the section (the schema requires each)."""


def section(result: Reconciliation) -> dict[str, Any]:
    """The reconciliation as plain data (NaN and infinity as null)."""
    data = asdict(result)
    data["readings"] = [{**asdict(r), "correction": r.correction} for r in result.readings]
    for test in ("first", "final"):
        data[test]["passed"] = getattr(result, test).passed
    for elim, raw in zip(result.eliminations, data["eliminations"], strict=True):
        raw["after"]["passed"] = elim.after.passed
    data["constraints"] = [{"constraint": k, "residual": v, "unit": u} for k, v, u in result.constraints]
    data["gross_errors"] = result.gross_errors
    data["unobservable"] = result.unobservable
    data["fails"] = result.fails()
    return _clean(data)


def _clean(value: Any) -> Any:
    if isinstance(value, float):
        return finite(value)
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value
