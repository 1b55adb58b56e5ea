"""Finding a batch's balance files, with nothing skipped in silence.

:func:`discover` turns folders (searched recursively, following links to folders once each),
globs and files into a sorted list of balance files (``*.yaml`` and ``*.yml``, without the
``*.accepted.yaml`` files beside them and without hidden files). Whatever it cannot use becomes a
:class:`Missing` entry, which the batch reports as that path's invalid input (exit code 2):

* an argument that names nothing, a folder with no balance file, a glob that matches none;
* a folder that cannot be listed (permissions, an I/O error);
* a balance file that is a broken link, not a regular file (a FIFO, a device, a socket: never
  opened, so a FIFO cannot hang the night) or not readable;
* a file whose name would be a balance's but for trailing spaces or invisible characters.

Paths are kept as the file system gives them (a name that is not valid UTF-8 keeps its bytes, so
the file can be opened); :func:`audit.input.document.display_path` spells such a name with
escapes for messages and reports.
"""

from __future__ import annotations

import glob
import os
import re
import stat
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

from audit.review.acceptance import is_acceptance_file

BALANCE_SUFFIXES = (".yaml", ".yml")

_GLOB_CHARS = re.compile(r"[*?\[]")
_NEAR_SUFFIX = re.compile(r"\.ya?ml[\s\u00a0\u200b-\u200f\u2060\ufeff]+$", re.IGNORECASE)


@dataclass(frozen=True)
class Missing:
    """A path that cannot be audited: reported as that path's invalid input."""

    path: str
    message: str


def discover(arguments: Iterable[str | Path]) -> list[str | Missing]:
    """The balance files named by ``arguments`` (files, folders searched recursively, globs), in
    sorted order without duplicates, with a :class:`Missing` for each path that cannot be used
    (see the module docstring)."""
    found: list[str | Missing] = []
    seen: set[str] = set()

    def add(entry: str | Missing) -> None:
        if isinstance(entry, Missing):
            path = os.path.normpath(entry.path)
            if path not in seen:
                seen.add(path)
                found.append(Missing(path, entry.message))
            return
        key = os.path.normpath(entry)
        if key not in seen:
            seen.add(key)
            found.append(key)

    for argument in arguments:
        text = os.fspath(argument)
        if os.path.isdir(text):
            entries = _walk(text)
            if not entries:
                add(Missing(text, "the folder holds no balance file (*.yaml, *.yml)"))
            for entry in entries:
                add(entry)
        elif os.path.lexists(text):
            add(_checked(text))
        elif _GLOB_CHARS.search(text):
            entries = []
            for match in sorted(glob.glob(text, recursive=True)):
                if os.path.isdir(match):
                    entries += _walk(match)
                elif _looks_like_balance(match):
                    entries.append(_checked(match))
            if not entries:
                add(Missing(text, "the pattern matches no balance file"))
            for entry in sorted(entries, key=_sort_key):
                add(entry)
        else:
            add(Missing(text, "no such file or folder"))
    return found


def _sort_key(entry: str | Missing) -> str:
    return entry.path if isinstance(entry, Missing) else entry


def _walk(top: str) -> list[str | Missing]:
    """The balance files below ``top`` and the problems met on the way, sorted by path."""
    entries: list[str | Missing] = []
    visited: set[tuple[int, int]] = set()

    def unreadable(error: OSError) -> None:
        where = error.filename if error.filename is not None else top
        entries.append(
            Missing(os.fspath(where), f"the folder cannot be read: {error.strerror or error}")
        )

    for folder, folders, files in os.walk(top, onerror=unreadable, followlinks=True):
        try:
            info = os.stat(folder)
        except OSError:
            continue
        if (info.st_dev, info.st_ino) in visited:  # a link back to a folder already searched
            folders.clear()
            continue
        visited.add((info.st_dev, info.st_ino))
        for name in files:
            path = os.path.join(folder, name)
            if _looks_like_balance(name):
                entries.append(_checked(path))
            elif _NEAR_SUFFIX.search(name) and not name.startswith("."):
                entries.append(
                    Missing(
                        path,
                        "the name ends in spaces or invisible characters after '.yaml'/'.yml'; "
                        "not audited: rename the file",
                    )
                )
    return sorted(entries, key=_sort_key)


def _looks_like_balance(path: str) -> bool:
    name = os.path.basename(path)
    return (
        name.lower().endswith(BALANCE_SUFFIXES)
        and not is_acceptance_file(name)
        and not name.startswith(".")
    )


def _checked(path: str) -> str | Missing:
    """``path`` when it is a readable regular file; otherwise why it cannot be audited."""
    try:
        info = os.stat(path)
    except FileNotFoundError:
        return Missing(path, "is a broken link (it points to nothing)")
    except OSError as exc:
        return Missing(path, f"cannot be read: {exc.strerror or exc}")
    if stat.S_ISDIR(info.st_mode):
        return Missing(path, "is a folder")
    if not stat.S_ISREG(info.st_mode):
        return Missing(path, "is not a regular file (a FIFO, a device or a socket); not read")
    if not os.access(path, os.R_OK):
        return Missing(path, "cannot be read: permission denied")
    return path
