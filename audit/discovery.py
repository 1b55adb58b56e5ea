"""Finding a batch's balance files in a repository, with nothing skipped in silence.

:func:`discover` turns folders (searched recursively, following links to folders once each),
globs and files into a sorted list of entries:

* a path (``str``): a balance file to audit;
* a :class:`Skipped`: a YAML file of a searched folder or glob that is not a balance (no
  top-level ``balance``, ``streams``, ``streams_from`` or ``steps`` key: a CI workflow, a
  documentation site's configuration); listed as skipped, never reported invalid;
* a :class:`Missing`: a path that cannot be used, which the batch reports as that path's invalid
  input (exit code 2): an argument that names nothing, a folder with no balance file, a glob that
  matches none; a folder that cannot be listed (permissions, an I/O error); a balance file that is
  a broken link, not a regular file (a FIFO, a device, a socket: never opened, so a FIFO cannot
  hang the night) or not readable; a file whose name would be a balance's but for trailing spaces
  or invisible characters.

In a searched folder a file is considered when no part of its path below the folder starts with
``.`` (hidden folders such as ``.git`` or ``.github`` and hidden files are never entered or
taken), it matches one of the ``include`` globs and none of the ``exclude`` globs (see
:func:`matches`), it ends in ``.yaml`` or ``.yml`` and it is not a reviewer's acceptance file
(``*.accepted.yaml``). A file named on the command line is always audited.

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
from functools import lru_cache
from pathlib import PurePosixPath

from audit.review.acceptance import is_acceptance_file

BALANCE_SUFFIXES = (".yaml", ".yml")
DEFAULT_INCLUDE = ("**/*.yaml", "**/*.yml")
BALANCE_KEYS = ("balance", "streams", "streams_from", "steps")
NOT_A_BALANCE = "not a balance (no top-level 'balance', 'streams' or 'steps' key): skipped"

_GLOB_CHARS = re.compile(r"[*?\[]")
_NEAR_SUFFIX = re.compile(r"\.ya?ml[\s\u00a0\u200b-\u200f\u2060\ufeff]+$", re.IGNORECASE)
_TOP_LEVEL_KEY = re.compile(r"^[{]?\s*[\"']?(" + "|".join(BALANCE_KEYS) + r")[\"']?\s*:", re.MULTILINE)
_PEEK_BYTES = 4 * 1024 * 1024


@dataclass(frozen=True)
class Missing:
    """A path that cannot be audited: reported as that path's invalid input."""

    path: str
    message: str


@dataclass(frozen=True)
class Skipped:
    """A file of a searched folder or glob that is not a balance: listed, never audited, never
    invalid."""

    path: str
    message: str = NOT_A_BALANCE


Entry = str | Missing | Skipped


def discover(
    arguments: Iterable[str | os.PathLike[str]],
    include: Iterable[str] = DEFAULT_INCLUDE,
    exclude: Iterable[str] = (),
) -> list[Entry]:
    """The balance files named by ``arguments`` (files, folders searched recursively, globs), in
    sorted order without duplicates, with a :class:`Skipped` for each non-balance YAML file and a
    :class:`Missing` for each path that cannot be used (see the module docstring); ``include``
    and ``exclude`` choose the files of folders."""
    include, exclude = tuple(include), tuple(exclude)
    found: list[Entry] = []
    seen: set[str] = set()

    def add(entry: Entry) -> None:
        path = os.path.normpath(_path_of(entry))
        if path in seen:
            return
        seen.add(path)
        if isinstance(entry, Missing):
            found.append(Missing(path, entry.message))
        elif isinstance(entry, Skipped):
            found.append(Skipped(path, entry.message))
        else:
            found.append(path)

    for argument in arguments:
        text = os.fspath(argument)
        if os.path.isdir(text):
            entries = _walk(text, include, exclude)
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
                    entries += _walk(match, include, exclude)
                elif _looks_like_balance(match):
                    entries.append(_classified(match))
            if not entries:
                add(Missing(text, "the pattern matches no balance file"))
            for entry in sorted(entries, key=_path_of):
                add(entry)
        else:
            add(Missing(text, "no such file or folder"))
    return found


def _path_of(entry: Entry) -> str:
    return entry if isinstance(entry, str) else entry.path


def _walk(top: str, include: tuple[str, ...], exclude: tuple[str, ...]) -> list[Entry]:
    """The balance files below ``top``, the non-balances and the problems met on the way, sorted
    by path; hidden names and ``exclude`` are never entered, only ``include`` is taken."""
    entries: list[Entry] = []
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
        base = os.path.relpath(folder, top).replace(os.sep, "/")
        folders[:] = sorted(
            d for d in folders if not d.startswith(".") and not matches(_join(base, d), exclude)
        )
        for name in files:
            relative = _join(base, name)
            if name.startswith(".") or matches(relative, exclude):
                continue
            path = os.path.join(folder, name)
            if _looks_like_balance(name):
                if matches(relative, include):
                    entries.append(_classified(path))
            elif _NEAR_SUFFIX.search(name):
                entries.append(
                    Missing(
                        path,
                        "the name ends in spaces or invisible characters after '.yaml'/'.yml'; "
                        "not audited: rename the file",
                    )
                )
    return sorted(entries, key=_path_of)


def _join(base: str, name: str) -> str:
    return name if base in ("", ".") else f"{base}/{name}"


def _looks_like_balance(path: str) -> bool:
    """True when the name is a balance file's: ``.yaml``/``.yml``, not an acceptance file, not
    hidden."""
    name = os.path.basename(path)
    return (
        name.lower().endswith(BALANCE_SUFFIXES)
        and not is_acceptance_file(name)
        and not name.startswith(".")
    )


def _classified(path: str) -> Entry:
    """A found file: a problem (:func:`_checked`), a non-balance (:class:`Skipped`) or the path."""
    checked = _checked(path)
    if isinstance(checked, str) and not looks_like_balance(checked):
        return Skipped(checked)
    return checked


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


def looks_like_balance(path: str | os.PathLike[str]) -> bool:
    """True when the (regular) file has a top-level key of a balance (:data:`BALANCE_KEYS`), or
    cannot be read (the audit then reports why)."""
    try:
        with open(path, "rb") as handle:
            text = handle.read(_PEEK_BYTES).decode("utf-8", errors="replace")
    except OSError:
        return True
    return _TOP_LEVEL_KEY.search(text) is not None


@lru_cache(maxsize=256)
def _pattern(text: str) -> re.Pattern[str]:
    """A glob as a regular expression over ``/``-separated relative paths: ``**`` any number of
    folders, ``*`` and ``?`` within one name, ``[...]`` a character class."""
    out, i = [], 0
    while i < len(text):
        if text.startswith("**/", i):
            out.append("(?:.*/)?")
            i += 3
        elif text.startswith("**", i):
            out.append(".*")
            i += 2
        elif text[i] == "*":
            out.append("[^/]*")
            i += 1
        elif text[i] == "?":
            out.append("[^/]")
            i += 1
        elif text[i] == "[" and "]" in text[i + 1 :]:
            end = text.index("]", i + 1)
            out.append("[" + text[i + 1 : end].replace("!", "^", 1) + "]")
            i = end + 1
        else:
            out.append(re.escape(text[i]))
            i += 1
    return re.compile("".join(out) + r"\Z")


def matches(relative: str, globs: Iterable[str]) -> bool:
    """True when the ``/``-separated path ``relative`` (or one of its folders) matches one of
    ``globs``; a glob without ``/`` also matches a file or folder name at any depth."""
    path = PurePosixPath(relative)
    prefixes = [str(path)] + [str(p) for p in path.parents if str(p) != "."]
    for glob_text in globs:
        glob_text = glob_text.removeprefix("./").rstrip("/")
        pattern = _pattern(glob_text)
        if any(pattern.match(p) for p in prefixes):
            return True
        if "/" not in glob_text and any(pattern.match(part) for part in path.parts):
            return True
    return False
