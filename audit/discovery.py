"""Which files of a folder are balances: batch discovery that suits a repository.

In a folder (searched recursively) a file is audited when

* no part of its path below the folder starts with ``.`` (hidden folders such as ``.git`` or
  ``.github`` and hidden files are never entered or taken);
* it matches one of the ``include`` globs and none of the ``exclude`` globs (see :func:`matches`);
* it is not a reviewer's acceptance file (``*.accepted.yaml``);
* it looks like a balance: a top-level ``balance``, ``streams``, ``streams_from`` or ``steps`` key.
  Other YAML files (a CI workflow, a documentation site's configuration) are *skipped*, listed
  as such, and never reported invalid.

A file named on the command line is always audited.
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterable, Iterator
from functools import lru_cache
from pathlib import Path, PurePosixPath

DEFAULT_INCLUDE = ("**/*.yaml", "**/*.yml")
BALANCE_KEYS = ("balance", "streams", "streams_from", "steps")
NOT_A_BALANCE = "not a balance (no top-level 'balance', 'streams' or 'steps' key): skipped"

_TOP_LEVEL_KEY = re.compile(r"^[{]?\s*[\"']?(" + "|".join(BALANCE_KEYS) + r")[\"']?\s*:", re.MULTILINE)
_PEEK_BYTES = 4 * 1024 * 1024


@lru_cache(maxsize=256)
def _pattern(glob: str) -> re.Pattern[str]:
    """A glob as a regular expression over ``/``-separated relative paths: ``**`` any number of
    folders, ``*`` and ``?`` within one name, ``[...]`` a character class."""
    out, i = [], 0
    while i < len(glob):
        if glob.startswith("**/", i):
            out.append("(?:.*/)?")
            i += 3
        elif glob.startswith("**", i):
            out.append(".*")
            i += 2
        elif glob[i] == "*":
            out.append("[^/]*")
            i += 1
        elif glob[i] == "?":
            out.append("[^/]")
            i += 1
        elif glob[i] == "[" and "]" in glob[i + 1 :]:
            end = glob.index("]", i + 1)
            out.append("[" + glob[i + 1 : end].replace("!", "^", 1) + "]")
            i = end + 1
        else:
            out.append(re.escape(glob[i]))
            i += 1
    return re.compile("".join(out) + r"\Z")


def matches(relative: str, globs: Iterable[str]) -> bool:
    """True when the ``/``-separated path ``relative`` (or one of its folders) matches one of
    ``globs``; a glob without ``/`` also matches a file or folder name at any depth."""
    path = PurePosixPath(relative)
    prefixes = [str(path)] + [str(p) for p in path.parents if str(p) != "."]
    for glob in globs:
        glob = glob.removeprefix("./").rstrip("/")
        pattern = _pattern(glob)
        if any(pattern.match(p) for p in prefixes):
            return True
        if "/" not in glob and any(pattern.match(part) for part in path.parts):
            return True
    return False


def looks_like_balance(path: str | Path) -> bool:
    """True when the file has a top-level key of a balance (:data:`BALANCE_KEYS`), or cannot be
    read (the audit then reports why)."""
    try:
        with open(path, "rb") as handle:
            text = handle.read(_PEEK_BYTES).decode("utf-8", errors="replace")
    except OSError:
        return True
    return _TOP_LEVEL_KEY.search(text) is not None


def walk(
    folder: Path,
    include: Iterable[str] = DEFAULT_INCLUDE,
    exclude: Iterable[str] = (),
) -> Iterator[Path]:
    """The files below ``folder`` that are not hidden and match ``include`` but not ``exclude``
    (both relative to ``folder``), in sorted order."""
    include, exclude = tuple(include), tuple(exclude)
    for current, folders, files in os.walk(folder):
        here = Path(current)
        base = here.relative_to(folder).as_posix()
        folders[:] = sorted(
            d for d in folders if not d.startswith(".") and not matches(_join(base, d), exclude)
        )
        for name in sorted(files):
            relative = _join(base, name)
            if name.startswith(".") or matches(relative, exclude):
                continue
            if matches(relative, include):
                yield here / name


def _join(base: str, name: str) -> str:
    return name if base in ("", ".") else f"{base}/{name}"
