"""The claims of each step as written in two revisions of a balance, and which of them changed.

:mod:`audit.diff` compares two audits' results; a claim such as a fuel's heating value or an
efficiency is not a result, yet changing it changes the findings. This module reads what each step
*writes* (every field but its id, kind, description and connections; nested mappings as dotted
names such as ``hot.pressure_drop``) and lists the fields whose text differs, unless the validated
values are equal (``47 MJ/kg`` and ``47.0 MJ/kg`` are the same claim).
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

from audit.errors import InputError
from audit.input.document import load_document

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*)$")
SKIPPED = {"id", "kind", "description", "inlet", "outlet", "inlets", "outlets"}

ClaimChange = tuple[str, str, str | None, str | None]
"""(step id, field as a dotted name, the old text, the new text); None: not written."""


def written_claims(path: str | Path) -> dict[str, dict[str, Any]]:
    """Step id → dotted field name → the value as written, for the steps of the file."""
    data = load_document(path).data
    steps = data.get("steps") if isinstance(data, dict) else None
    claims: dict[str, dict[str, Any]] = {}
    for step in steps if isinstance(steps, list) else []:
        if isinstance(step, dict) and isinstance(step.get("id"), str):
            claims[step["id"]] = dict(_flat(step, ""))
    return claims


def _flat(mapping: dict, prefix: str) -> list[tuple[str, Any]]:
    items = []
    for key, value in mapping.items():
        if not prefix and key in SKIPPED or prefix and key in ("inlet", "outlet"):
            continue
        name = f"{prefix}{key}"
        if isinstance(value, dict):
            items += _flat(value, f"{name}.")
        else:
            items.append((name, value))
    return items


def claim_changes(old_file: str | Path, new_file: str | Path) -> list[ClaimChange]:
    """The claims written differently in the two files for the steps both have; [] when either
    file cannot be read."""
    try:
        old, new = written_claims(old_file), written_claims(new_file)
    except (InputError, OSError):
        return []
    changes: list[ClaimChange] = []
    for step_id, after in new.items():
        before = old.get(step_id)
        if before is None:
            continue
        for name in dict.fromkeys([*before, *after]):
            a, b = before.get(name), after.get(name)
            if _text(a) != _text(b) and not _same_value(a, b):
                changes.append((step_id, name, _text(a), _text(b)))
    return changes


def _text(value: Any) -> str | None:
    if value is None:
        return None
    if isinstance(value, list):
        return ", ".join(str(v) for v in value)
    return str(value)


def _same_value(a: Any, b: Any) -> bool:
    """True when two written values are the same number with the same unit text."""
    return _split(a) is not None and _split(a) == _split(b)


def _split(value: Any) -> tuple[float, str] | None:
    if isinstance(value, bool):
        return None
    if isinstance(value, (int, float)):
        return float(value), ""
    match = _NUMBER.match(str(value))
    return (float(match.group(1)), " ".join(match.group(2).split())) if match else None
