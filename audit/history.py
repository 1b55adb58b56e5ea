"""Run history in an SQLite database: every audit of a file, its content hash, revision, time and
findings, so a report can say what is new since the last run of each file.

Balances are keyed by their identity (:mod:`audit.identity`: a declared id or the path relative to
the project root), so a fresh checkout continues the same history; the column is named ``file``.
"New since the last run" compares with the file's last *audited* run (an invalid file or an
internal error has no findings to compare with).

Tables (``PRAGMA user_version`` = :data:`SCHEMA_VERSION`)::

    runs(id, file, sha256, name, revision, run_at [UTC, ISO 8601], status, verdict, fail_on,
         errors, warnings, infos, accepted, exergy_destroyed [W], problems, tool_version)
    findings(run_id, severity, name, step, stream, message, margin [SI], quantity, accepted)

Several processes may record at once: SQLite locks the file, and a writer waits up to
:data:`LOCK_TIMEOUT` seconds for another. A history that cannot be used raises
:class:`audit.errors.HistoryError` saying what is wrong: damaged (at which page, when SQLite says),
not a run history at all, read-only, locked by another process, on a full disk, or written by
another version of plant-audit.
"""

from __future__ import annotations

import json
import os
import re
import sqlite3
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

from audit.clock import run_time
from audit.errors import HistoryError
from audit.findings import ERROR, INFO, WARNING
from audit.identity import ID_PREFIX
from audit.outcomes import SKIPPED, FileOutcome, FindingKey, finding_key
from audit.version import __version__

SCHEMA_VERSION = 1
LOCK_TIMEOUT = 5.0
"""Seconds a run waits for a history that another process holds locked."""

_SCHEMA = """
CREATE TABLE IF NOT EXISTS runs (
    id INTEGER PRIMARY KEY AUTOINCREMENT,
    file TEXT NOT NULL,
    sha256 TEXT,
    name TEXT,
    revision TEXT,
    run_at TEXT NOT NULL,
    status TEXT NOT NULL,
    verdict TEXT NOT NULL,
    fail_on TEXT NOT NULL,
    errors INTEGER NOT NULL DEFAULT 0,
    warnings INTEGER NOT NULL DEFAULT 0,
    infos INTEGER NOT NULL DEFAULT 0,
    accepted INTEGER NOT NULL DEFAULT 0,
    exergy_destroyed REAL,
    problems TEXT NOT NULL DEFAULT '[]',
    tool_version TEXT NOT NULL
);
CREATE INDEX IF NOT EXISTS runs_by_file ON runs (file, id);
CREATE TABLE IF NOT EXISTS findings (
    run_id INTEGER NOT NULL REFERENCES runs (id) ON DELETE CASCADE,
    severity TEXT NOT NULL,
    name TEXT NOT NULL,
    step TEXT NOT NULL,
    stream TEXT NOT NULL,
    message TEXT NOT NULL,
    margin REAL,
    quantity TEXT,
    accepted TEXT
);
CREATE INDEX IF NOT EXISTS findings_by_run ON findings (run_id);
"""


@dataclass(frozen=True)
class Run:
    """One recorded run of a file."""

    id: int
    file: str
    sha256: str | None
    name: str | None
    revision: str | None
    run_at: str
    status: str
    verdict: str
    fail_on: str
    errors: int
    warnings: int
    infos: int
    accepted: int
    exergy_destroyed: float | None
    problems: list[str]
    findings: list[FindingKey]


def file_key(path: str | Path) -> str:
    """How a file without a stable identity is named in the history: its absolute, normalised
    path ('-' for the standard input; :mod:`audit.identity` gives the stable one, stored as
    ``FileOutcome.identity``)."""
    if str(path) == "-":
        return "-"
    return os.path.normpath(os.path.abspath(str(path)))


def outcome_key(outcome: FileOutcome) -> str:
    """The history key of an outcome: its identity, else its file's path."""
    return outcome.identity or file_key(outcome.path)


@contextmanager
def _connect(database: str | Path, create: bool) -> Iterator[sqlite3.Connection]:
    database = Path(database)
    name = str(database)
    if not create and not database.is_file():
        raise HistoryError("no run history here (record runs with --history)", file=name)
    if database.exists() and not database.is_file():
        raise HistoryError("the history file is not a regular file (a folder or a device)", file=name)
    try:
        if create:
            database.parent.mkdir(parents=True, exist_ok=True)
        connection = sqlite3.connect(database, timeout=LOCK_TIMEOUT)
    except (OSError, sqlite3.Error) as exc:
        raise HistoryError(f"the run history cannot be opened: {_reason(exc)}", file=name) from None
    try:
        version = connection.execute("PRAGMA user_version").fetchone()[0]
        if version == 0:
            if not create:
                raise HistoryError("the file holds no run history (an empty database)", file=name)
            connection.executescript(_SCHEMA)
            connection.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")
        elif version != SCHEMA_VERSION:
            raise HistoryError(
                f"the run history has schema version {version}; this plant-audit "
                f"reads version {SCHEMA_VERSION} (it was written by another version)",
                file=name,
            )
        yield connection
        connection.commit()
    except sqlite3.Error as exc:
        raise HistoryError(_diagnosis(connection, database, exc), file=name) from None
    finally:
        connection.close()


def _reason(exc: BaseException) -> str:
    return getattr(exc, "strerror", None) or str(exc)


def _diagnosis(connection: sqlite3.Connection, database: Path, exc: sqlite3.Error) -> str:
    """What is wrong with the history, in words, from SQLite's error."""
    text = str(exc).lower()
    if "locked" in text or "busy" in text:
        return (
            f"the history file is locked by another process (waited {LOCK_TIMEOUT:.0f} s); "
            "this run was not recorded"
        )
    if "readonly" in text or "read-only" in text or not os.access(database, os.W_OK):
        return "the history file is read-only; this run was not recorded"
    if "full" in text:
        return "the disk holding the history file is full; this run was not recorded"
    if "not a database" in text:
        return "not a plant-audit run history (the file is not an SQLite database)"
    if "malformed" in text or "corrupt" in text:
        page = _damaged_page(connection)
        where = f" at page {page}" if page else ""
        return (
            f"the history file is damaged{where} ({exc}); this run was not recorded: restore the "
            "file from a backup or start a new one"
        )
    return f"the run history cannot be used: {exc}"


def _check_integrity(connection: sqlite3.Connection, database: Path | str) -> None:
    """Refuse to write into a damaged history (SQLite's quick check reads every page once; a
    write into a damaged file could lose what is still readable)."""
    rows = connection.execute("PRAGMA quick_check(20)").fetchall()
    if [row[0] for row in rows] != ["ok"]:
        page = _damaged_page(connection)
        where = f" at page {page}" if page else ""
        raise HistoryError(
            f"the history file is damaged{where} ({rows[0][0]}); this run was not recorded: "
            "restore the file from a backup or start a new one",
            file=str(database),
        )


def _damaged_page(connection: sqlite3.Connection) -> int | None:
    """The first damaged page SQLite's integrity check names, if it names one."""
    try:
        rows = connection.execute("PRAGMA quick_check(20)").fetchall()
    except sqlite3.Error:
        return None
    for (row,) in rows:
        match = re.search(r"\bpage (\d+)", str(row), re.IGNORECASE)
        if match:
            return int(match.group(1))
    return None


def record(
    database: str | Path,
    outcomes: list[FileOutcome],
    fail_on: str = "error",
    now: datetime | None = None,
) -> list[FileOutcome]:
    """Record one run per outcome and fill each outcome's ``previous_run`` and ``new_since_last``
    (the findings absent from the file's last audited run). Returns ``outcomes``."""
    run_at = (now or run_time()).astimezone(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    with _connect(database, create=True) as connection:
        _check_integrity(connection, database)
        for outcome in outcomes:
            if outcome.status == SKIPPED:
                continue
            key = outcome_key(outcome)
            previous = _last_run(connection, key) or _last_run(connection, file_key(outcome.path))
            current = _keys(outcome)
            outcome.recorded = True
            if previous is not None and outcome.result is not None:
                outcome.previous_run = previous.run_at
                earlier = set(previous.findings)
                outcome.new_since_last = [k for k in dict.fromkeys(current) if k not in earlier]
            result = outcome.result
            counts = result.counts(include_accepted=False) if result else {}
            cursor = connection.execute(
                "INSERT INTO runs (file, sha256, name, revision, run_at, status, verdict, "
                "fail_on, errors, warnings, infos, accepted, exergy_destroyed, problems, "
                "tool_version) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    key,
                    outcome.sha256,
                    result.name if result else None,
                    result.revision if result else None,
                    run_at,
                    outcome.status,
                    outcome.verdict(fail_on),
                    fail_on,
                    counts.get(ERROR, 0),
                    counts.get(WARNING, 0),
                    counts.get(INFO, 0),
                    sum(1 for f in result.findings if f.accepted) if result else 0,
                    result.plant.exergy_destroyed if result else None,
                    json.dumps(outcome.problems),
                    __version__,
                ),
            )
            if result is not None:
                connection.executemany(
                    "INSERT INTO findings (run_id, severity, name, step, stream, message, margin, "
                    "quantity, accepted) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                    [
                        (
                            cursor.lastrowid,
                            f.severity,
                            f.name,
                            f.step or "",
                            f.stream or "",
                            f.message,
                            f.margin,
                            f.quantity,
                            f.accepted,
                        )
                        for f in result.findings
                    ],
                )
    return outcomes


def runs(
    database: str | Path, path: str | Path, limit: int | None = None, key: str | None = None
) -> list[Run]:
    """The recorded runs of the balance at ``path``, newest first: those under its identity
    ``key`` (:mod:`audit.identity`), under its absolute path (runs recorded outside a project or
    before identities), and, without a declared id, under a relative path its absolute path ends
    with (runs recorded by a batch relative to the folder it searched)."""
    with _connect(database, create=False) as connection:
        keys = _keys_of(connection, file_key(path), key)
        marks = ", ".join("?" * len(keys))
        query = f"SELECT * FROM runs WHERE file IN ({marks}) ORDER BY id DESC"
        parameters: tuple = tuple(keys)
        if limit is not None:
            query += " LIMIT ?"
            parameters += (limit,)
        rows = connection.execute(query, parameters).fetchall()
        return [_run(connection, row) for row in rows]


def _keys_of(connection: sqlite3.Connection, full: str, key: str | None) -> list[str]:
    keys = [full] + ([key] if key else [])
    if key and key.startswith(ID_PREFIX):
        return keys
    posix = full.replace(os.sep, "/")
    stored = connection.execute("SELECT DISTINCT file FROM runs").fetchall()
    keys += [k for (k,) in stored if not k.startswith(("/", ID_PREFIX)) and posix.endswith("/" + k)]
    return list(dict.fromkeys(keys))


def _last_run(connection: sqlite3.Connection, key: str) -> Run | None:
    """The file's last audited run (invalid runs and internal errors have no findings to
    compare with)."""
    row = connection.execute(
        "SELECT * FROM runs WHERE file = ? AND status = 'audited' ORDER BY id DESC LIMIT 1", (key,)
    ).fetchone()
    return _run(connection, row) if row else None


def _run(connection: sqlite3.Connection, row: tuple) -> Run:
    findings = connection.execute(
        "SELECT step, stream, name FROM findings WHERE run_id = ? ORDER BY rowid", (row[0],)
    ).fetchall()
    return Run(*row[:14], json.loads(row[14]), [tuple(f) for f in findings])  # type: ignore


def _keys(outcome: FileOutcome) -> list[FindingKey]:
    return [finding_key(f) for f in outcome.result.findings] if outcome.result else []


def new_between(older: Run | None, newer: Run) -> list[FindingKey]:
    """Findings of ``newer`` that ``older`` did not have (all of them when there is no older)."""
    earlier = set(older.findings) if older else set()
    return [k for k in dict.fromkeys(newer.findings) if k not in earlier]


def audited_before(history: list[Run], index: int) -> Run | None:
    """In ``history`` (newest first), the audited run recorded before ``history[index]``."""
    return next((r for r in history[index + 1 :] if r.status == "audited"), None)
