"""Batches: audit many balance files, in parallel, each file's failure its own.

:func:`discover` (:mod:`audit.discovery`) turns folders, globs and files into a sorted list of
balance files, non-balances (skipped) and paths that cannot be used (invalid);
:func:`workbook_names` gives each file its own workbook name in the output folder, derived from its
path and free of collisions; :func:`run_batch` audits them all through an executor
(:mod:`audit.executors`) and returns one :class:`audit.outcomes.FileOutcome` per file, in the order
of the files whatever the order they finished in.

A file that cannot be read or validated is *invalid*; a file whose own workbook cannot be written
is *unwritten*; a file on which plant-audit fails (an unexpected exception, a worker process that
dies) is an *internal* error of that file; none of them stops the others.
"""

from __future__ import annotations

import os
import re
import secrets
import time
import traceback
from collections.abc import Callable, Iterable
from contextlib import AbstractContextManager, nullcontext
from dataclasses import dataclass
from pathlib import Path

from audit.discovery import BALANCE_SUFFIXES, DEFAULT_INCLUDE, Missing, Skipped, discover
from audit.errors import InputError, ReportError
from audit.executors import Executor, LocalProcesses, TaskFailed
from audit.input.document import display_path as shown
from audit.outcomes import AUDITED, INTERNAL, INVALID, SKIPPED, UNWRITTEN, FileOutcome
from audit.report.files import StagedSet
from audit.report.publish import Output

__all__ = [
    "BALANCE_SUFFIXES",
    "SUMMARY_NAME",
    "Job",
    "Missing",
    "Skipped",
    "audit_job",
    "discover",
    "run_batch",
]
SUMMARY_NAME = "summary.xlsx"
"""The summary workbook's name in the output folder (no file's own workbook takes it)."""

_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")


def workbook_names(files: list[str]) -> dict[str, str]:
    """Each file's own workbook name: its path below the files' common folder, with folder
    separators as ``__`` and unsafe characters as ``_``; a name taken (case-insensitively) by an
    earlier file, or the summary's, gets ``-2``, ``-3``, ... in the order of ``files``."""
    if not files:
        return {}
    absolute = [os.path.abspath(f) for f in files]
    base = os.path.commonpath([os.path.dirname(a) for a in absolute])
    taken = {SUMMARY_NAME.lower()}
    names: dict[str, str] = {}
    for file, full in zip(files, absolute, strict=True):
        relative = os.path.relpath(full, base)
        stem = os.path.splitext(relative)[0]
        parts = [_UNSAFE.sub("_", p).strip("._") or "_" for p in Path(stem).parts]
        candidate = "__".join(parts)
        name, counter = f"{candidate}.xlsx", 1
        while name.lower() in taken:
            counter += 1
            name = f"{candidate}-{counter}.xlsx"
        taken.add(name.lower())
        names[file] = name
    return names


@dataclass(frozen=True)
class Job:
    """One file to audit: where it is, where its workbook goes (None: no workbook), the gate,
    and the run's token for the names of its temporary files."""

    path: str
    workbook: str | None = None
    fail_on: str = "error"
    allow_outside: bool = False
    tolerances: dict | None = None  # the configuration's default tolerances
    token: str = ""


def audit_job(job: Job) -> FileOutcome:
    """Audit one file and write its workbook as a temporary file beside its target (runs in a
    worker; never raises); :func:`run_batch` publishes it with the batch's other reports.

    InputError → an invalid outcome (also a workbook that would be written over one of the
    file's own tables); a workbook that cannot be written (ReportError) → an unwritten outcome;
    any other exception → an internal error of this file."""
    from audit.api import Inputs
    from audit.api import run as audit_file

    started = time.perf_counter()
    outcome = FileOutcome(path=shown(job.path), status=AUDITED)
    inputs = Inputs()
    try:
        outcome.result = audit_file(
            job.path, allow_outside=job.allow_outside, tolerances=job.tolerances, inputs=inputs
        )
    except InputError as exc:
        outcome.status = INVALID
        outcome.problems = [shown(str(p)) for p in exc.problems]
    except Exception as exc:  # noqa: BLE001 - a bug of ours on this file, reported as such
        outcome.status = INTERNAL
        outcome.problems = [
            f"internal error of plant-audit on this file: {exc!r}"
            f"{_innermost(exc)} (please report it with the file)"
        ]
    outcome.sha256 = inputs.sha256
    outcome.inputs = [(os.fspath(path), what) for path, what in inputs.files]
    if outcome.result is not None and job.workbook:
        _stage_workbook(job, outcome, inputs.files)
    outcome.seconds = time.perf_counter() - started
    return outcome


def _stage_workbook(job: Job, outcome: FileOutcome, inputs: list[tuple[Path, str]]) -> None:
    from audit.report.files import staged
    from audit.report.publish import Output, check_outputs
    from audit.report.workbook import write_workbook

    assert outcome.result is not None and job.workbook is not None
    try:
        check_outputs([Output(Path(job.workbook), "the file's workbook")], inputs, shapes=False)
        with staged(job.token) as staging:
            write_workbook(outcome.result, job.workbook, fail_on=job.fail_on)
            outcome.staged = os.fspath(staging.files[0][0])
            staging.files.clear()  # handed over to the batch, which publishes it
        outcome.workbook = shown(job.workbook)
    except InputError as exc:
        outcome.status = INVALID
        outcome.problems = [shown(str(p)) for p in exc.problems]
    except ReportError as exc:
        outcome.status = UNWRITTEN
        outcome.problems = [shown(str(exc))]
    except Exception as exc:  # noqa: BLE001
        outcome.status = INTERNAL
        outcome.problems = [f"the file's workbook could not be written: {exc!r}"]


def _innermost(exc: BaseException) -> str:
    """' at file:line in function' of the frame that raised, for the report of a bug."""
    frames = traceback.extract_tb(exc.__traceback__)
    if not frames:
        return ""
    frame = frames[-1]
    return f" at {Path(frame.filename).name}:{frame.lineno} in {frame.name}"


def preload(workbooks: bool) -> None:
    """Import the audit (and the workbook writer) before the worker processes are forked, so each
    worker starts with them loaded instead of importing them again."""
    import audit.api  # noqa: F401

    if workbooks:
        import audit.report.workbook  # noqa: F401


def run_batch(
    arguments: Iterable[str | Path],
    output: str | Path | None = None,
    fail_on: str = "error",
    executor: Executor | None = None,
    task: Callable[[Job], FileOutcome] = audit_job,
    on_done: Callable[[FileOutcome, int, int], None] | None = None,
    on_start: Callable[[int], None] | None = None,
    allow_outside: bool = False,
    include: Iterable[str] | None = None,
    exclude: Iterable[str] = (),
    tolerances: dict | None = None,
    staging: StagedSet | None = None,
    outputs: Iterable[Output] = (),
) -> list[FileOutcome]:
    """Audit every balance named by ``arguments``; one outcome per file, in discovery order.

    ``output``: the folder for each file's own workbook (names from :func:`workbook_names`);
    ``executor``: where to run (default: local worker processes, one per core); ``task``: what
    runs per file (default :func:`audit_job`); ``on_start(total)`` and ``on_done(outcome, done,
    total)`` report progress (the command line draws its progress bar with them);
    ``allow_outside`` lets balances read tables outside their own folder (see :func:`audit.run`);
    ``include``/``exclude`` choose the files of folders (:mod:`audit.discovery`); ``tolerances``
    the default tolerances (the project configuration's).

    Before any file is audited, the output folder, every workbook and the other ``outputs`` of
    the run (the summary, the JUnit file, the history) are checked
    (:func:`audit.report.publish.check_outputs`): a refused output raises
    :class:`audit.errors.InputError` and nothing is written. A workbook that would replace a
    table that a balance of the batch reads is not written; its file is invalid.

    The workbooks are published together when the batch ends, or, with ``staging``, left in it
    for the caller to publish with its own reports (:func:`audit.report.publish.commit`). An
    interrupt leaves every previous report as it was and removes the temporary files.
    """
    from audit.report.files import remove_leftovers, staged
    from audit.report.publish import commit

    found = discover(arguments, include or DEFAULT_INCLUDE, exclude)
    files = [f for f in found if isinstance(f, str)]
    names = workbook_names(files) if output is not None else {}
    token = secrets.token_hex(6)
    jobs = [
        Job(
            path=f,
            workbook=os.path.join(output, names[f]) if output is not None else None,
            fail_on=fail_on,
            allow_outside=allow_outside,
            tolerances=tolerances,
            token=token,
        )
        for f in files
    ]
    _check_outputs(output, jobs, files, outputs)
    results: dict[int, FileOutcome] = {}
    total = len(found)
    done = 0
    if on_start:
        on_start(total)
    for position, entry in enumerate(found):
        if not isinstance(entry, str):  # a problem (invalid) or a non-balance (skipped)
            status = SKIPPED if isinstance(entry, Skipped) else INVALID
            results[position] = FileOutcome(
                shown(entry.path), status, problems=[f"{shown(entry.path)}: {entry.message}"]
            )
            done += 1
            if on_done:
                on_done(results[position], done, total)
    positions = [i for i, entry in enumerate(found) if isinstance(entry, str)]
    own = staging is None
    context: AbstractContextManager[StagedSet] = (
        staged(token) if staging is None else nullcontext(staging)
    )
    with context as into:
        try:
            if output is not None and jobs:
                Path(output).mkdir(parents=True, exist_ok=True)
            if task is audit_job:
                preload(output is not None)
            executor = executor or LocalProcesses()
            for index, value in executor.map_unordered(task, jobs):
                job = jobs[index]
                if isinstance(value, TaskFailed):
                    value = FileOutcome(shown(job.path), INTERNAL, problems=[value.message])
                if value.staged is not None and job.workbook is not None:
                    into.files.append((Path(value.staged), Path(job.workbook), "the file's workbook"))
                    value.staged = None
                results[positions[index]] = value
                done += 1
                if on_done:
                    on_done(value, done, total)
            _refuse_over_tables([results[p] for p in positions], jobs, into)
        finally:
            if output is not None:  # what killed workers left; the staged set stays
                remove_leftovers(output, token, keep={temporary for temporary, _, _ in into.files})
        if own:
            commit(into)
    return [results[position] for position in range(len(found))]


def _check_outputs(
    output: str | Path | None, jobs: list[Job], files: list[str], outputs: Iterable[Output]
) -> None:
    """Refuse the batch's outputs that would replace a balance, an acceptance file or another
    output, or that are not regular files (before anything is audited or written)."""
    from audit.report.publish import check_outputs
    from audit.review.acceptance import beside_file

    known: list[tuple[Path, str]] = []
    for file in files:
        known.append((Path(file), f"the balance file {shown(file)}"))
        beside = beside_file(file)
        if beside is not None:
            known.append((beside, f"the acceptance file {shown(beside)}"))
    planned = list(outputs)
    if output is not None:
        planned.append(Output(Path(output), "the output folder", folder=True))
        planned += [
            Output(Path(job.workbook), f"the workbook of {shown(job.path)}")
            for job in jobs
            if job.workbook is not None
        ]
    check_outputs(planned, known)


def _refuse_over_tables(outcomes: list[FileOutcome], jobs: list[Job], staging: StagedSet) -> None:
    """Take out of ``staging`` each workbook that would replace a file some balance of the batch
    read (a table of the same name in the output folder); its file becomes invalid."""
    from audit.report.publish import check_outputs

    read = [
        (Path(path), f"{what} of {outcome.path}")
        for outcome in outcomes
        for path, what in outcome.inputs
    ]
    if not read:
        return
    by_target = {
        os.path.normpath(job.workbook): outcome
        for job, outcome in zip(jobs, outcomes, strict=True)
        if job.workbook is not None
    }
    for entry in list(staging.files):
        temporary, target, _ = entry
        outcome = by_target.get(os.path.normpath(target))
        if outcome is None:
            continue
        try:
            check_outputs([Output(target, "the file's workbook")], read, shapes=False)
        except InputError as exc:
            staging.files.remove(entry)
            temporary.unlink(missing_ok=True)
            outcome.status = INVALID
            outcome.workbook = None
            outcome.problems = [shown(str(p)) for p in exc.problems]
