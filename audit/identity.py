"""A balance's identity in the run history: stable across checkouts, machines and folders.

In order of preference:

1. a declared ``balance: id:`` in the file: ``id:<the id>`` (survives renames and moves);
2. its path relative to the *project root*: the folder of the project configuration
   (:mod:`audit.config`), else the repository root (the nearest folder holding ``.git``);
3. its path relative to the folder a batch searched;
4. its absolute, normalised path (the old key, for a file outside any project).

Paths are written with ``/`` whatever the system, so a history moves between machines.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import yaml

ID_PREFIX = "id:"


def repository_root(start: Path) -> Path | None:
    """The nearest folder at or above ``start`` that holds ``.git``."""
    return next((f for f in (start, *start.parents) if (f / ".git").exists()), None)


def balance_identity(
    path: str | Path,
    declared: str | None = None,
    project_root: Path | None = None,
    batch_root: Path | None = None,
) -> str:
    """The history key of the balance at ``path`` (see the module docstring)."""
    if declared:
        return ID_PREFIX + declared
    full = Path(os.path.normpath(os.path.abspath(str(path))))
    roots = [project_root, repository_root(full.parent), batch_root]
    for root in roots:
        if root is None:
            continue
        root = Path(os.path.normpath(os.path.abspath(str(root))))
        if full.is_relative_to(root):
            return full.relative_to(root).as_posix()
    return str(full)


def declared_id(path: str | Path) -> str | None:
    """The ``balance: id:`` written in the file, if it can be read (for the ``history`` command,
    which looks a balance up without auditing it)."""
    try:
        with open(path, encoding="utf-8") as handle:
            data: Any = yaml.safe_load(handle)
    except (OSError, UnicodeDecodeError, yaml.YAMLError):
        return None
    info = data.get("balance") if isinstance(data, dict) else None
    value = info.get("id") if isinstance(info, dict) else None
    return str(value) if value is not None else None
