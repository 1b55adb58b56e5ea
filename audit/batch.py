"""Batches: audit many balance files, in parallel, each file's failure its own.

:func:`discover` turns folders, globs and files into a sorted list of balance files (``*.yaml`` and
``*.yml`` in folders, recursively, without the ``*.accepted.yaml`` files beside them);
:func:`workbook_names` gives each file its own workbook name in the output folder, derived from its
path and free of collisions; :func:`run_batch` audits them all through an executor
(:mod:`audit.executors`) and returns one :class:`audit.outcomes.FileOutcome` per file, in the order
of the files whatever the order they finished in.

A file that cannot be read or validated is *invalid*; a file whose own workbook cannot be written
is *unwritten*; a file on which plant-audit fails (an unexpected exception, a worker process that
dies) is an *internal* error of that file; none of them stops the others.
"""

from __future__ import annotations

import glob
import hashlib
import os
import re
import time
import traceback
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path

from audit.discovery import DEFAULT_INCLUDE, NOT_A_BALANCE, looks_like_balance, walk
from audit.errors import InputError, ReportError
from audit.executors import Executor, LocalProcesses, TaskFailed
from audit.outcomes import AUDITED, INTERNAL, INVALID, SKIPPED, UNWRITTEN, FileOutcome
from audit.review.acceptance import is_acceptance_file

BALANCE_SUFFIXES = (".yaml", ".yml")
SUMMARY_NAME = "summary.xlsx"
"""The summary workbook's name in the output folder (no file's own workbook takes it)."""

_GLOB_CHARS = re.compile(r"[*?\[]")
_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")


@dataclass(frozen=True)
class Skipped:
    """A file in a searched folder that is not a balance (:mod:`audit.discovery`): listed, never
    audited, never invalid."""

    path: str
    message: str = NOT_A_BALANCE


@dataclass(frozen=True)
class Missing:
    """A path argument that names nothing: reported as that argument's invalid input."""

    path: str
    message: str


def discover(
    arguments: Iterable[str | Path],
    include: Iterable[str] = DEFAULT_INCLUDE,
    exclude: Iterable[str] = (),
) -> list[str | Missing | Skipped]:
    """The balance files named by ``arguments`` (files, folders searched recursively, globs), in
    sorted order without duplicates; an argument that names nothing becomes a :class:`Missing`, a
    YAML file of a folder or glob that is not a balance a :class:`Skipped` (:mod:`audit.discovery`:
    hidden files and folders, ``include`` and ``exclude`` globs)."""
    found: list[str | Missing | Skipped] = []
    seen: set[str] = set()

    def add(path: Path, searched: bool = True) -> None:
        key = os.path.normpath(str(path))
        if key not in seen:
            seen.add(key)
            found.append(key if not searched or looks_like_balance(path) else Skipped(key))

    for argument in arguments:
        text = str(argument)
        path = Path(text)
        if path.is_dir():
            files = sorted(p for p in walk(path, include, exclude) if _is_balance(p))
            if not files:
                found.append(Missing(text, "the folder holds no balance file (*.yaml, *.yml)"))
            for file in files:
                add(file)
        elif path.exists():
            add(path, searched=False)
        elif _GLOB_CHARS.search(text):
            matches = sorted(Path(m) for m in glob.glob(text, recursive=True))
            files = [m for m in matches if _is_balance(m)]
            files += [f for m in matches if m.is_dir() for f in sorted(m.rglob("*")) if _is_balance(f)]
            if not files:
                found.append(Missing(text, "the pattern matches no balance file"))
            for file in sorted(set(files)):
                add(file)
        else:
            found.append(Missing(text, "no such file or folder"))
    return found


def _is_balance(path: Path) -> bool:
    return (
        path.suffix.lower() in BALANCE_SUFFIXES
        and path.is_file()
        and not is_acceptance_file(path)
        and not path.name.startswith(".")
    )


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
    """One file to audit: where it is, where its workbook goes (None: no workbook), the gate."""

    path: str
    workbook: str | None = None
    fail_on: str = "error"
    allow_outside: bool = False
    tolerances: dict | None = None  # the configuration's default tolerances


def audit_job(job: Job) -> FileOutcome:
    """Audit one file and write its workbook (runs in a worker; never raises).

    InputError → an invalid outcome; a workbook that cannot be written (ReportError) → an
    unwritten outcome; any other exception → an internal error of this file."""
    started = time.perf_counter()
    outcome = FileOutcome(path=job.path, status=AUDITED)
    try:
        outcome.sha256 = hashlib.sha256(Path(job.path).read_bytes()).hexdigest()
    except OSError:
        pass
    try:
        from audit.api import run as audit_file

        outcome.result = audit_file(job.path, allow_outside=job.allow_outside, tolerances=job.tolerances)
    except InputError as exc:
        outcome.status = INVALID
        outcome.problems = [str(p) for p in exc.problems]
    except Exception as exc:  # noqa: BLE001 - a bug of ours on this file, reported as such
        outcome.status = INTERNAL
        outcome.problems = [
            f"internal error of plant-audit on this file: {exc!r}"
            f"{_innermost(exc)} (please report it with the file)"
        ]
    if outcome.result is not None and job.workbook:
        try:
            from audit.report.workbook import write_workbook

            write_workbook(outcome.result, job.workbook, fail_on=job.fail_on)
            outcome.workbook = job.workbook
        except ReportError as exc:
            outcome.status = UNWRITTEN
            outcome.problems = [str(exc)]
        except Exception as exc:  # noqa: BLE001
            outcome.status = INTERNAL
            outcome.problems = [f"the file's workbook could not be written: {exc!r}"]
    outcome.seconds = time.perf_counter() - started
    return outcome


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
) -> list[FileOutcome]:
    """Audit every balance named by ``arguments``; one outcome per file, in discovery order.

    ``output``: the folder for each file's own workbook (names from :func:`workbook_names`);
    ``executor``: where to run (default: local worker processes, one per core); ``task``: what
    runs per file (default :func:`audit_job`); ``on_start(total)`` and ``on_done(outcome, done,
    total)`` report progress (the command line draws its progress bar with them);
    ``allow_outside`` lets balances read tables outside their own folder (see :func:`audit.run`);
    ``include``/``exclude`` choose the files of folders (:mod:`audit.discovery`); ``tolerances``
    the default tolerances (the project configuration's).
    """
    found = discover(arguments, include or DEFAULT_INCLUDE, exclude)
    files = [f for f in found if isinstance(f, str)]
    names = workbook_names(files) if output is not None else {}
    jobs = [
        Job(
            path=f,
            workbook=str(Path(output) / names[f]) if output is not None else None,
            fail_on=fail_on,
            allow_outside=allow_outside,
            tolerances=tolerances,
        )
        for f in files
    ]
    outcomes: dict[str, FileOutcome] = {}
    total = len(found)
    done = 0
    if on_start:
        on_start(total)
    for missing in (f for f in found if not isinstance(f, str)):
        status = SKIPPED if isinstance(missing, Skipped) else INVALID
        outcomes[missing.path] = FileOutcome(
            missing.path, status, problems=[f"{missing.path}: {missing.message}"]
        )
        done += 1
        if on_done:
            on_done(outcomes[missing.path], done, total)
    if output is not None and jobs:
        Path(output).mkdir(parents=True, exist_ok=True)
    if task is audit_job:
        preload(output is not None)
    executor = executor or LocalProcesses()
    for index, value in executor.map_unordered(task, jobs):
        job = jobs[index]
        if isinstance(value, TaskFailed):
            value = FileOutcome(job.path, INTERNAL, problems=[value.message])
        outcomes[job.path] = value
        done += 1
        if on_done:
            on_done(value, done, total)
    order = [f if isinstance(f, str) else f.path for f in found]
    return [outcomes[key] for key in order]
