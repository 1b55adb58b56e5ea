"""What the commands share about their outputs and inputs: the checks before writing, the
standard input as a balance, and recording in the run history without ever costing a report.

The checks themselves are :mod:`audit.report.publish`; this module gathers, per run, the inputs
they protect (the balance, its tables and acceptance file, the run history)."""

from __future__ import annotations

import sys
from collections.abc import Iterable
from pathlib import Path
from typing import TYPE_CHECKING

from audit.errors import HistoryError, InputError
from audit.report.publish import Output, check_outputs

if TYPE_CHECKING:
    from audit.outcomes import FileOutcome

STANDARD_INPUT = "-"


def is_standard_input(path: object) -> bool:
    return str(path) == STANDARD_INPUT


def read_standard_input() -> bytes:
    """The balance piped to the standard input, read once (at most the size a balance file may
    have)."""
    from audit.input.document import MAX_FILE_BYTES

    if sys.stdin is None or sys.stdin.isatty():
        raise InputError("'-' reads the balance from the standard input, but nothing is piped to it")
    raw = sys.stdin.buffer.read(MAX_FILE_BYTES + 1)
    if len(raw) > MAX_FILE_BYTES:
        raise InputError(
            f"the standard input holds more than the {MAX_FILE_BYTES / 2**20:.0f} MiB a balance "
            "file may be",
            file=STANDARD_INPUT,
        )
    return raw


def check_run_outputs(
    outputs: Iterable[Output],
    inputs: Iterable[tuple[Path, str]],
    history: Path | None,
    balances: Iterable[Path] = (),
) -> None:
    """Refuse the outputs that would replace an input of the run or another output, or that are
    not regular files (:func:`audit.report.publish.check_outputs`)."""
    from audit.review.acceptance import beside_file

    known: list[tuple[Path, str]] = []
    for balance in balances:
        if not is_standard_input(balance):
            known.append((balance, "the balance file"))
            beside = beside_file(balance)
            if beside is not None:
                known.append((beside, "the acceptance file"))
    known += inputs
    first = [Output(history, "the run history")] if history is not None else []
    check_outputs([*first, *outputs], known)


def table_files(balance: Path) -> list[tuple[Path, str]]:
    """The tables a balance file names (none when it cannot be read): for the commands that do
    not keep what the audit read (``reconcile``, ``diff``, ``convert``)."""
    from audit.api import table_files as named
    from audit.input.document import load_document

    if is_standard_input(balance):
        return []
    try:
        return named(load_document(balance), balance)
    except InputError:
        return []


def record_history(database: Path, outcomes: list[FileOutcome], fail_on: str) -> str | None:
    """Record the run; a history that cannot be used is a warning (printed, and returned), never
    a lost report or a changed exit code."""
    from audit.history import record

    try:
        record(database, outcomes, fail_on=fail_on)
    except HistoryError as exc:
        text = "; ".join(str(problem) for problem in exc.problems)
        print(
            f"warning: {text} (the reports are written; the audit's exit code is kept)", file=sys.stderr
        )
        return text
    return None
