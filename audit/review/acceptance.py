"""Accepted findings: a reviewer's record that a known finding may stand for a while.

A reviewer accepts a finding by naming the step (or the stream) and the finding's name, with a
reason, who accepted it and an expiry date. Acceptances are written either inside the balance, as a
top-level ``accepted:`` list, or in a file beside it named ``<balance stem>.accepted.yaml`` (or
``.accepted.yml``) holding the same ``accepted:`` list::

    accepted:
      - step: T1
        finding: work-above-bound
        reason: vendor curve pending; the guarantee point is being re-rated
        accepted_by: process lead
        expires: 2026-12-31

Rules, applied after the audit by :func:`apply_acceptances`:

* an acceptance matches every finding with its name at its step (and at its stream, when it names
  one); a matched finding keeps its severity and stays in every report, with ``accepted`` set to the
  reason, who and until when, and no longer fails the gate;
* an acceptance is valid up to and including its expiry date; past it the finding counts again and
  an ``acceptance-expired`` warning says so;
* an acceptance that matches no finding is reported as an ``acceptance-unmatched`` warning, so
  stale acceptances do not pile up silently.
"""

from __future__ import annotations

import dataclasses
from datetime import date
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from audit.errors import InputError, InputErrors, Problem
from audit.findings import WARNING, Finding
from audit.input.document import parse_document, read_text
from audit.model.acceptance import Acceptance
from audit.model.editor_schema import SCHEMA_KEY
from audit.results import AuditResult

BESIDE_SUFFIXES = (".accepted.yaml", ".accepted.yml")
"""Endings of the acceptance file beside a balance (``plant.yaml`` → ``plant.accepted.yaml``)."""


def beside_file(balance_path: str | Path) -> Path | None:
    """The acceptance file beside ``balance_path``, if one exists."""
    path = Path(balance_path)
    for suffix in BESIDE_SUFFIXES:
        candidate = path.with_name(
            path.name[: -len(path.suffix)] + suffix if path.suffix else path.name + suffix
        )
        if candidate.is_file():
            return candidate
    return None


def is_acceptance_file(path: str | Path) -> bool:
    """True for a file named like an acceptance file (batches do not audit those)."""
    return Path(path).name.lower().endswith(BESIDE_SUFFIXES)


def parse_acceptances(items: Any, document: Any, base: tuple = ("accepted",)) -> list[Acceptance]:
    """Validate a list of acceptances found at ``base`` in ``document`` (a
    :class:`audit.input.document.Document`); errors name the file, line and field."""
    if items is None:
        return []
    if not isinstance(items, list):
        line, column = document.position(base)
        raise InputError(
            "'accepted' is a list of acceptances",
            file=document.file,
            line=line,
            column=column,
            field_path=".".join(map(str, base)),
        )
    accepted: list[Acceptance] = []
    problems: list[Problem] = []
    for index, item in enumerate(items):
        path = (*base, index)
        line, column = document.position(path)
        try:
            acceptance = Acceptance.model_validate(item)
        except ValidationError as exc:
            for error in exc.errors(include_url=False):
                loc = tuple(part for part in error["loc"] if isinstance(part, (str, int)))
                at = (*path, *loc) if loc and isinstance(item, dict) and loc[0] in item else path
                e_line, e_column = document.position(at)
                message = error["msg"].removeprefix("Value error, ")
                if error["type"] == "missing":
                    message = f"'{loc[-1]}' is required here"
                elif error["type"] == "extra_forbidden":
                    message = f"unknown field '{loc[-1]}'"
                field_path = "".join(
                    f"[{p}]" if isinstance(p, int) else f".{p}" for p in (*path, *loc)
                ).lstrip(".")
                problems.append(
                    Problem(
                        message,
                        file=document.file,
                        line=e_line,
                        column=e_column,
                        field_path=field_path,
                        where=f"acceptance #{index + 1}",
                    )
                )
            continue
        accepted.append(acceptance.placed(f"{document.file}:{line}" if line else document.file))
    if problems:
        raise InputErrors(problems)
    return accepted


def load_beside(balance_path: str | Path) -> list[Acceptance]:
    """The acceptances in the file beside the balance (none when there is no such file)."""
    path = beside_file(balance_path)
    if path is None:
        return []
    text = read_text(path)
    if all(not line.strip() or line.lstrip().startswith("#") for line in text.splitlines()):
        raise InputError(
            "the acceptance file is empty; it holds 'accepted:' with a list of acceptances "
            "(delete the file if nothing is accepted)",
            file=str(path),
            line=1,
        )
    document = parse_document(text, str(path))
    data = document.data
    if isinstance(data, dict):
        data = {k: v for k, v in data.items() if k != SCHEMA_KEY}  # for editors only
    if not isinstance(data, dict) or set(data) != {"accepted"}:
        raise InputError(
            "an acceptance file holds one key, 'accepted:', with a list of acceptances",
            file=document.file,
            line=1,
        )
    return parse_acceptances(data["accepted"], document)


def refuse_contradictions(acceptances: list[Acceptance]) -> list[Acceptance]:
    """Refuse two acceptances of one finding (same name, step and stream) that say different
    things (another reason, reviewer or expiry): a reviewer must not have to guess which holds.
    Returns ``acceptances`` unchanged otherwise."""
    seen: dict[tuple, Acceptance] = {}
    problems = []
    for acceptance in acceptances:
        key = (acceptance.finding, acceptance.step, acceptance.stream)
        first = seen.setdefault(key, acceptance)
        if first is not acceptance and (
            (first.reason, first.accepted_by, first.expires)
            != (acceptance.reason, acceptance.accepted_by, acceptance.expires)
        ):
            file, _, line = (acceptance.source or "").rpartition(":")
            problems.append(
                Problem(
                    f"this acceptance of '{acceptance.finding}' at {acceptance.where()} contradicts "
                    f"the one at {first.source} (another reason, reviewer or expiry); keep one",
                    file=file or acceptance.source,
                    line=int(line) if line.isdigit() else None,
                )
            )
    if problems:
        raise InputErrors(problems)
    return acceptances


def apply_acceptances(
    result: AuditResult, acceptances: list[Acceptance], today: date | None = None
) -> AuditResult:
    """Mark the findings of ``result`` that a valid acceptance covers, and report expired and
    unmatched acceptances as findings (see the module docstring). Returns ``result``, changed."""
    if not acceptances:
        return result
    today = today or date.today()
    findings = list(result.findings)
    extra: list[Finding] = []
    for acceptance in acceptances:
        matched = [i for i, f in enumerate(findings) if acceptance.matches(f)]
        origin = f" ({acceptance.source})" if acceptance.source else ""
        if not matched:
            extra.append(
                Finding(
                    WARNING,
                    "acceptance-unmatched",
                    acceptance.step,
                    f"an acceptance of '{acceptance.finding}' at {acceptance.where()}{origin} matches "
                    "no finding of this audit: remove it, or correct its step or finding name",
                    stream=acceptance.stream,
                )
            )
            continue
        if acceptance.expires < today:
            extra.append(
                Finding(
                    WARNING,
                    "acceptance-expired",
                    acceptance.step,
                    f"the acceptance of '{acceptance.finding}' at {acceptance.where()}{origin} by "
                    f"{acceptance.accepted_by} expired on {acceptance.expires.isoformat()}; the "
                    "finding counts again",
                    stream=acceptance.stream,
                )
            )
            continue
        for i in matched:
            if not findings[i].accepted:
                findings[i] = dataclasses.replace(findings[i], accepted=acceptance.label())
    result.findings = findings + extra
    return result
