"""The Python entry point: ``audit.run(path)`` reads a balance file and audits it.

Example (in a notebook)::

    import audit
    result = audit.run("sample_plant/maple-creek-clean.yaml")
    result.steps_frame()[["Q", "W", "S_gen", "W_rev"]]
    result.findings_frame()
"""

from __future__ import annotations

import atexit
import gc
import hashlib
from collections.abc import Iterator
from contextlib import contextmanager
from datetime import date
from pathlib import Path

from audit.input.document import Document, parse_document, read_text
from audit.model.balance import Balance
from audit.reading import resolve_tables, validate_document
from audit.results import AuditResult
from audit.review.acceptance import Acceptance, apply_acceptances, load_beside
from audit.review.passes import review
from audit.solve import solve, to_result


def run(
    path: str | Path, today: date | None = None, allow_outside: bool = False, monte_carlo: int = 0
) -> AuditResult:
    """Audit the balance file at ``path``, then apply the reviewers' acceptances written in it or
    beside it (:mod:`audit.review.acceptance`; ``today`` decides which have expired, default: today).

    Streams and claims the balance takes from tables (:mod:`audit.input.tables`) are read first; a table
    outside the balance file's folder tree is refused unless ``allow_outside`` is true.
    ``monte_carlo`` > 0 cross-checks the measurement uncertainties with that many Monte Carlo
    draws per step (:mod:`audit.review.uncertainty`).

    Raises :class:`audit.errors.InputError` when the file cannot be read, parsed, validated or
    evaluated; every message names the file and line.
    """
    path = Path(path)
    with _cycle_collection_paused():
        text = read_text(path)
        sha256 = hashlib.sha256(path.read_bytes()).hexdigest()
        document = parse_document(text, str(path))
        document, tables = resolve_tables(document, allow_outside=allow_outside)
        balance = validate_document(document)
        result = audit_balance(balance, document, sha256=sha256, monte_carlo=monte_carlo)
    for table in tables:
        sheet = f", sheet '{table.sheet}'" if table.sheet is not None else ""
        result.provenance[f"table {table.display}{sheet}"] = f"sha256 {table.sha256}"
    return apply_acceptances(result, _acceptances(balance, document, path), today)


def audit_balance(
    balance: Balance, document: Document, sha256: str = "", monte_carlo: int = 0
) -> AuditResult:
    """Solve a validated balance (:func:`audit.solve.solve`), then review its findings
    (:func:`audit.review.passes.review`: verdicts with uncertainty and rounding, probable
    causes). ``monte_carlo`` > 0 cross-checks the uncertainties with that many draws per step."""
    solution = solve(balance, document)
    findings, notes = review(solution, monte_carlo_trials=monte_carlo)
    return to_result(solution, findings, notes, sha256=sha256)


@contextmanager
def _cycle_collection_paused() -> Iterator[None]:
    """Pause Python's cyclic garbage collector while a balance is read and solved.

    The audit builds millions of small objects that live until it ends; the collector would walk
    them again and again (about 14 % of a 10 000-stream audit, benchmarks/run.py) and free none.
    Reference counting still frees what the audit drops; the collector resumes afterwards, after
    the objects that outlive the audit (the result and the model) are moved out of its sight
    (:func:`gc.freeze`): its next passes would walk them all again. The next audit (and the
    program's exit) gives the previous one's objects back to the collector (:func:`gc.unfreeze`),
    so that a process that audits many files frees their cycles too."""
    enabled = gc.isenabled()
    gc.disable()
    gc.unfreeze()
    try:
        yield
    finally:
        if enabled:
            gc.freeze()
            gc.enable()


atexit.register(gc.unfreeze)  # the last audit's objects are collected at exit


def _acceptances(balance: Balance, document: Document, path: Path) -> list[Acceptance]:
    """The balance's own ``accepted:`` list (with file and line) and the file beside it."""
    inside = []
    for index, acceptance in enumerate(balance.accepted):
        line, _ = document.position(("accepted", index))
        inside.append(acceptance.placed(f"{document.file}:{line}"))
    return inside + load_beside(path)
