"""The reconciliation as JSON (section ``reconciliation``, values SI, keys as in the records)."""

from __future__ import annotations

import json
from dataclasses import asdict
from pathlib import Path
from typing import Any

from audit.reconcile.records import Reconciliation, finite
from audit.report.files import write_text

SCHEMA_VERSION = 1


def to_dict(result: Reconciliation) -> dict[str, Any]:
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
    return {"schema": f"plant-audit reconciliation {SCHEMA_VERSION}", "reconciliation": _clean(data)}


def _clean(value: Any) -> Any:
    if isinstance(value, float):
        return finite(value)
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value


def write_reconciliation_json(result: Reconciliation, path: Path) -> None:
    """Write :func:`to_dict` to ``path`` atomically (:mod:`audit.report.files`)."""
    write_text(path, json.dumps(to_dict(result), indent=2, ensure_ascii=False) + "\n", "the JSON result")
