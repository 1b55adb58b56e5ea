"""The Python entry point: ``audit.run(path)`` reads a balance file and audits it.

Example (in a notebook)::

    import audit
    result = audit.run("sample_plant/maple-creek-clean.yaml")
    result.steps_frame()[["Q", "W", "S_gen", "W_rev"]]
    result.findings_frame()
    audit.frames(result)["steps"][["Q [W]", "W [W]", "exergy_destroyed [W]"]]  # units in headers
"""

from __future__ import annotations

import atexit
import gc
import hashlib
from collections.abc import Iterator, Mapping
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import date
from pathlib import Path
from typing import Any

from audit.errors import InputError
from audit.input.document import Document, decode_text, display_path, parse_document, read_bytes
from audit.input.tables import SOURCE_KEYS
from audit.input.tables.sources import table_source
from audit.model.balance import Balance
from audit.reading import resolve_tables, validate_document
from audit.results import AuditResult
from audit.review.acceptance import (
    Acceptance,
    apply_acceptances,
    beside_file,
    load_beside,
    refuse_contradictions,
)


@dataclass
class Inputs:
    """What a run read, filled in as it reads (also when it then fails): each input file with
    what it is (the balance, its tables, its acceptance file), and the balance's SHA-256. The
    command line checks its outputs against these files (:mod:`audit.report.publish`)."""

    files: list[tuple[Path, str]] = field(default_factory=list)
    sha256: str | None = None


def run(
    path: str | Path,
    today: date | None = None,
    allow_outside: bool = False,
    monte_carlo: int = 0,
    tolerances: Mapping[str, Any] | None = None,
    data: bytes | None = None,
    inputs: Inputs | None = None,
) -> AuditResult:
    """Audit the balance file at ``path``, then apply the reviewers' acceptances written in it or
    beside it (:mod:`audit.review.acceptance`; ``today`` decides which have expired, default: today).

    Streams and claims the balance takes from tables (:mod:`audit.input.tables`) are read first; a table
    outside the balance file's folder tree is refused unless ``allow_outside`` is true.
    ``monte_carlo`` > 0 cross-checks the measurement uncertainties with that many Monte Carlo
    draws per step (:mod:`audit.review.uncertainty`). ``tolerances``: default tolerances (the
    project configuration's, :mod:`audit.config`) for those the balance does not set itself.

    The file's bytes are read once (``data``: the bytes already read, e.g. from the standard
    input; ``path`` then names them in messages); the hash, the parse and the history use those
    bytes. ``inputs``, when given, is filled with the files read (see :class:`Inputs`).

    Raises :class:`audit.errors.InputError` when the file cannot be read, parsed, validated or
    evaluated; every message names the file and line.
    """
    path = Path(path)
    inputs = inputs if inputs is not None else Inputs()
    inputs.files.append((path, "the balance file"))
    beside = beside_file(path)
    if beside is not None:
        inputs.files.append((beside, "the acceptance file"))
    with _cycle_collection_paused():
        raw = read_bytes(path) if data is None else data
        sha256 = inputs.sha256 = hashlib.sha256(raw).hexdigest()
        name = display_path(path)
        document = parse_document(decode_text(raw, name), name)
        if tolerances:
            _default_tolerances(document.data, tolerances)
        inputs.files += table_files(document, path)
        document, tables = resolve_tables(document, allow_outside=allow_outside)
        balance = validate_document(document)
        result = audit_balance(balance, document, sha256=sha256, monte_carlo=monte_carlo)
    for table in tables:
        sheet = f", sheet '{table.sheet}'" if table.sheet is not None else ""
        result.provenance[f"table {table.display}{sheet}"] = f"sha256 {table.sha256}"
    return apply_acceptances(result, _acceptances(balance, document, path), today)


def frames(result: AuditResult) -> dict[str, Any]:
    """The result's ``streams``, ``steps`` and ``findings`` as pandas DataFrames whose headers
    name their SI units (``T [K]``, ``Q [W]``; a vessel's totals in ``Q [J]``) and whose cells are
    plain values, as in the CSV output (:mod:`audit.report.plain_tables`)."""
    from audit.report.plain_tables import result_frames

    return result_frames(result)


def audit_balance(
    balance: Balance, document: Document, sha256: str = "", monte_carlo: int = 0
) -> AuditResult:
    """Solve a validated balance (:func:`audit.solve.solve`), then review its findings
    (:func:`audit.review.passes.review`: verdicts with uncertainty and rounding, probable
    causes). ``monte_carlo`` > 0 cross-checks the uncertainties with that many draws per step."""
    # loaded here, once the file is read and valid: a refused input is answered without them
    from audit.review.passes import review
    from audit.solve import solve, to_result

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


def table_files(document: Document, path: Path) -> list[tuple[Path, str]]:
    """The stream and claim tables the balance at ``path`` names (as far as they are named
    correctly), with what each is."""
    files = []
    if isinstance(document.data, dict):
        for key in SOURCE_KEYS:
            if key in document.data:
                try:
                    name = table_source(document, key).file
                except InputError:
                    continue
                what = "the stream table" if key == "streams_from" else "the claim table"
                files.append((path.parent / name, what))
    return files


atexit.register(gc.unfreeze)  # the last audit's objects are collected at exit


def _acceptances(balance: Balance, document: Document, path: Path) -> list[Acceptance]:
    """The balance's own ``accepted:`` list (with file and line) and the file beside it."""
    inside = []
    for index, acceptance in enumerate(balance.accepted):
        line, _ = document.position(("accepted", index))
        inside.append(acceptance.placed(f"{document.file}:{line}"))
    return refuse_contradictions(inside + load_beside(path))


def _default_tolerances(data: Any, defaults: Mapping[str, Any]) -> None:
    """Fill the tolerances the balance does not set (``balance: tolerances:``) from ``defaults``."""
    info = data.get("balance") if isinstance(data, dict) else None
    if not isinstance(info, dict):
        return
    own = info.get("tolerances")
    if own is None:
        own = info["tolerances"] = {}
    if isinstance(own, dict):
        for name, value in defaults.items():
            own.setdefault(name, value)
