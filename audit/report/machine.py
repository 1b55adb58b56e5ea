"""Machine outputs: JSON (documented, versioned) and CSV tables. SI units throughout.

JSON structure, version ``JSON_VERSION``::

    {"format": "plant-audit-results", "version": "1",
     "balance": {name, revision, file, sha256, dead_state {T [K], P [Pa]}, site_pressure [Pa],
                 tolerances {...}},
     "provenance": {...},
     "verdict": {counts {...}, fail_on, marginal, passed, exit_code},
     "units": {...},
     "streams": [{id, fluid, T, P, rho, h, s, u, g, a, psi, phase, quality, basis, mass_flow, ...}],
     "steps": [{id, kind, batch, Q, W, dH, dU, dS, dG, dA, energy_residual, S_gen, W_rev, ...}],
     "findings": [{severity, name, step, stream, message, claimed, bound, margin, ...}],
     "plant": {heat_in, heat_out, work_out, work_in, exergy_destroyed, ...},
     "reconciliation": {...}}   (``plant-audit reconcile`` only: :mod:`audit.report.reconciliation_json`)

The fields of streams, steps and findings, and the CSV columns, come from the column registry
(:mod:`audit.report.columns`); the CSV tables name their SI units in the headers and hold plain
cells (:mod:`audit.report.plain_tables`). The structure is published as a JSON Schema,
``schemas/plant-audit-results.schema.json``, and every output is checked against it in the tests.
``verdict.passed`` and ``verdict.exit_code`` are those of ``check`` with ``verdict.fail_on``.
Non-finite numbers (an infinitely hot source) are written as null.
Keys are sorted and the run-time fields are kept in ``provenance`` only, so two runs on the same
input differ only there.

CSV text fields that a spreadsheet program would read as a formula (they start with ``=``, ``+``,
``-``, ``@``, a tab or a carriage return: formula or CSV injection, OWASP) are written with a leading
single quote; the JSON keeps the text as written.
"""

from __future__ import annotations

import json
import math
from dataclasses import asdict
from pathlib import Path
from typing import TYPE_CHECKING, Any

from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.reconcile.records import Reconciliation
from audit.report.columns import FINDINGS, STEPS, STREAMS, Table
from audit.report.files import write_text
from audit.report.plain_tables import json_units, plain_frame
from audit.results import AuditResult

if TYPE_CHECKING:  # pandas loads only when the CSV tables are written
    import pandas as pd  # type: ignore[import-untyped]

JSON_VERSION = "1"

# First characters that make a spreadsheet program evaluate a cell as a formula (OWASP, CSV injection)
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")


def _clean(value: Any) -> Any:
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value


def to_dict(
    result: AuditResult,
    fail_on: str = "error",
    marginal: bool = False,
    reconciliation: Reconciliation | None = None,
) -> dict:
    """The versioned JSON structure of a result (see the module docstring), its verdict at the
    gate ``fail_on`` (and on marginal findings with ``marginal``), and the ``reconciliation``
    section when one is given."""
    failed = result.fails(fail_on, marginal=marginal)
    data = _clean(
        {
            "format": "plant-audit-results",
            "version": JSON_VERSION,
            "balance": {
                "name": result.name,
                "id": result.balance_id,
                "revision": result.revision,
                "file": result.file,
                "sha256": result.sha256,
                "dead_state": {"T": result.dead_T, "P": result.dead_P},
                "site_pressure": result.site_pressure,
                "tolerances": result.tolerances,
            },
            "provenance": result.provenance,
            "verdict": {
                "counts": result.counts(),
                "fail_on": fail_on,
                "marginal": marginal,
                "passed": not failed,
                "exit_code": EXIT_FINDINGS if failed else EXIT_PASS,
            },
            "units": json_units(),
            "streams": [STREAMS.json_row(s) for s in result.streams],
            "steps": [STEPS.json_row(s) for s in result.steps],
            "findings": [FINDINGS.json_row(f) for f in result.findings],
            "plant": asdict(result.plant),
        }
    )
    if reconciliation is not None:
        from audit.report.reconciliation_json import section

        data["reconciliation"] = section(reconciliation)
    return data


def json_text(
    result: AuditResult,
    fail_on: str = "error",
    marginal: bool = False,
    reconciliation: Reconciliation | None = None,
) -> str:
    """The JSON results as text (what :func:`write_json` writes)."""
    data = to_dict(result, fail_on, marginal, reconciliation)
    return json.dumps(data, indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def write_json(
    result: AuditResult,
    path: str | Path,
    fail_on: str = "error",
    marginal: bool = False,
    reconciliation: Reconciliation | None = None,
) -> None:
    """Write the JSON results atomically (a temporary file moved into place); raises
    :class:`audit.errors.ReportError` when the file cannot be written."""
    write_text(path, json_text(result, fail_on, marginal, reconciliation), "the JSON results")


def table_frame(table: Table, rows: list[Any]) -> pd.DataFrame:
    """One table of the CSV output (SI units), its columns from the registry; indexed by the
    table's index column when it has one."""
    import pandas as pd

    columns = [c.key for c in table.machine_columns if c.csv and not c.flatten]
    if not rows:
        return pd.DataFrame() if table.index else pd.DataFrame([], columns=columns)
    frame = pd.DataFrame([table.csv_row(r) for r in rows])
    return frame.set_index(table.index) if table.index else frame


def write_csv(result: AuditResult, folder: str | Path) -> list[Path]:
    """Write findings.csv, steps.csv and streams.csv into ``folder``: SI units named in the
    headers, plain cells (:mod:`audit.report.plain_tables`); raises
    :class:`audit.errors.ReportError` when a file cannot be written."""
    folder = Path(folder)
    written = []
    for table, rows in ((FINDINGS, result.findings), (STEPS, result.steps), (STREAMS, result.streams)):
        target = folder / f"{table.name}.csv"
        frame = plain_frame(table, rows)
        frame = frame.apply(lambda column: column.map(csv_safe))
        frame.index = frame.index.map(csv_safe)
        write_text(target, frame.to_csv(index=table.index is not None), f"the CSV table of {table.name}")
        written.append(target)
    return written


def csv_safe(value: Any) -> Any:
    """``value`` with a leading single quote when it is text a spreadsheet program would evaluate
    as a formula (see :data:`FORMULA_TRIGGERS`); carriage returns in text become line feeds (the
    csv writer quotes a field with a line feed, not one with a lone carriage return, which would
    split the row). Anything else unchanged."""
    if not isinstance(value, str):
        return value
    text = value.replace("\r\n", "\n").replace("\r", "\n")
    return "'" + text if value.startswith(FORMULA_TRIGGERS) else text
