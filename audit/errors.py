"""One exception hierarchy for plant-audit.

Every failure a user can cause (a malformed file, an unknown unit, a state the property engine cannot
evaluate) is raised as an :class:`InputError`, which carries *where* it happened as fields: the file,
the line and column, the path of the field and the stream or step id. CoolProp, pint, YAML and
pydantic failures are translated into these classes at the edge where they happen, so the command line
can print a clear message and exit with code 2 instead of a traceback.

Several problems found in one pass are gathered into one :class:`InputErrors` so the user sees all of
them at once.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass
class Problem:
    """One thing wrong with the input, with where it was found."""

    message: str
    file: str | None = None
    line: int | None = None
    column: int | None = None
    field_path: str | None = None
    where: str | None = None  # "stream S3", "step T1"
    cell: str | None = None  # in a table file: "sheet 'HB rev C', cell D14" (audit.input.tables)

    def __str__(self) -> str:
        place = ""
        if self.cell:
            place = f"{self.file}, {self.cell}: " if self.file else f"{self.cell}: "
        elif self.file:
            place = self.file
            if self.line is not None:
                place += f":{self.line}"
                if self.column is not None:
                    place += f":{self.column}"
            place += ": "
        context = []
        if self.where:
            context.append(self.where)
        if self.field_path:
            context.append(f"field '{self.field_path}'")
        prefix = (", ".join(context) + ": ") if context else ""
        return f"{place}{prefix}{self.message}"


class AuditError(Exception):
    """Base class of every error plant-audit raises on purpose."""


class InputError(AuditError, ValueError):
    """A problem with the balance the user gave: exit code 2."""

    def __init__(self, message: str, **where: object) -> None:
        self.problem = Problem(message, **where)  # type: ignore[arg-type]
        super().__init__(str(self.problem))

    @property
    def problems(self) -> list[Problem]:
        return [self.problem]


class UnitError(InputError):
    """A quantity whose number or unit cannot be read, or has the wrong dimension."""


class StateError(InputError):
    """A stream state the property engine cannot or must not evaluate."""


class InputErrors(InputError):
    """Several input problems found in one pass."""

    def __init__(self, problems: list[Problem]) -> None:
        self._problems = list(problems)
        AuditError.__init__(self, "\n".join(str(p) for p in self._problems))

    @property
    def problems(self) -> list[Problem]:
        return self._problems

    @property
    def problem(self) -> Problem:  # type: ignore[override]
        return self._problems[0]


class HistoryError(InputError):
    """The run history cannot be read or written (damaged, read-only, locked, from another
    version, on a full disk). Reading it (``plant-audit history``) exits 2; recording a run
    (``check``/``batch --history``) only warns, unless the user asked to fail on it."""


class InternalError(AuditError, RuntimeError):
    """A bug in plant-audit itself: exit code 3."""


class ReportError(AuditError, OSError):
    """A report (or another output file) that could not be written: exit code 4. ``path`` is the
    file, ``what`` names the report ("the JSON results") and ``reason`` is the operating system's
    reason ("Permission denied")."""

    def __init__(self, path: str, what: str, reason: str) -> None:
        self.path = path
        self.what = what
        self.reason = reason
        super().__init__(f"{path}: cannot write {what}: {reason}")

    def __str__(self) -> str:
        return f"{self.path}: cannot write {self.what}: {self.reason}"
