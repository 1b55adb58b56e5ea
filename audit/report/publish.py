"""Where a run's outputs go, checked before anything is written, and published as one set.

:func:`check_outputs` looks at every output of a command before the first is written (each file a
``--csv`` folder will hold too) and refuses, with an :class:`audit.errors.InputError` (exit code
2, nothing written), an output that

* is the same file as an input of the run (the balance, a stream or claim table, an acceptance
  file, the run history) or as another output. "The same" is decided by identity after resolving
  links (device and inode of the file, and of the folder the file would be renamed into), never by
  the path's text: a report folder that is a link to the balance's folder is caught;
* exists and is not a regular file (a device such as ``/dev/null``, a FIFO, a socket): writing
  would replace the node with a regular file or block;
* is a folder where a file is wanted, or lies below a file where a folder is wanted;
* has a name longer than the file system allows.

:func:`publish_set` writes a set of reports all-or-nothing: each report goes to a temporary file
beside its target (:func:`audit.report.files.staged`), and only when all are written are they
moved into place, under a lock on each target folder, so that two runs aimed at the same outputs
never leave one run's JSON beside the other's workbook. A full disk, an error or an interrupt
while writing removes the temporary files and leaves the previous set as it was.
"""

from __future__ import annotations

import errno
import fcntl
import os
import stat
from collections.abc import Callable, Iterable, Iterator
from contextlib import ExitStack, contextmanager
from dataclasses import dataclass
from pathlib import Path

from audit.errors import InputErrors, Problem, ReportError
from audit.report.files import StagedSet, staged

STANDARD_OUTPUT = "-"
"""The path that means "write this report to the standard output"."""

_NAME_MAX = 255  # bytes in one file name (ext4, xfs, btrfs, tmpfs)
_PATH_MAX = 4096  # bytes in a path given to the kernel (Linux)


@dataclass(frozen=True)
class Output:
    """One output of a run: where, what it is (for messages), and whether it is a folder that
    will hold files (their own :class:`Output` entries name them)."""

    path: Path
    what: str
    folder: bool = False


@dataclass(frozen=True)
class _Place:
    """Where a path's file is (its own identity when it exists) and the folder entry a rename
    would replace (the identity of the resolved folder, and the name)."""

    file: tuple[int, int] | None
    entry: tuple[int, int, str] | None


def _place(path: Path) -> _Place:
    try:
        info = os.stat(path)
        file: tuple[int, int] | None = (info.st_dev, info.st_ino)
    except (OSError, ValueError):
        file = None
    try:
        folder = os.stat(path.parent if str(path.parent) else ".")
        entry: tuple[int, int, str] | None = (folder.st_dev, folder.st_ino, path.name)
    except (OSError, ValueError):
        entry = None
    return _Place(file, entry)


def is_standard_output(path: object) -> bool:
    return str(path) == STANDARD_OUTPUT


def check_outputs(
    outputs: Iterable[Output], inputs: Iterable[tuple[Path, str]], shapes: bool = True
) -> None:
    """Refuse outputs that must not be written (see the module docstring); ``inputs`` are the
    run's input files with what each is ("the balance file", "the run history"). ``shapes``
    false: check only that no output is an input or another output.

    Raises :class:`audit.errors.InputErrors` naming each refused output."""
    problems: list[str] = []
    known: list[tuple[_Place, str]] = []
    for path, what in inputs:
        known.append((_place(Path(path)), what))
    outputs = [o for o in outputs if not is_standard_output(o.path)]
    files = {os.path.realpath(o.path): o.what for o in outputs if not o.folder}
    for output in outputs:
        path = Path(output.path)
        problem = _shape_problem(path, output) if shapes else None
        parents = [files.get(os.path.realpath(p)) for p in path.parents]
        if problem is None and any(parents):
            what = next(p for p in parents if p)
            problem = f"{output.what} would go into a folder where {what} is to be written as a file"
        if problem is None:
            place = _place(path)
            for other, what in known:
                if (place.file is not None and place.file == other.file) or (
                    place.entry is not None and place.entry == other.entry
                ):
                    problem = (
                        f"{output.what} would be written over {what}; a report never replaces "
                        "an input or another report of the run: choose another path"
                    )
                    break
            known.append((place, output.what))
        if problem is not None:
            problems.append(f"{_shown(path)}: {problem}")
    if problems:
        raise InputErrors([Problem(text) for text in problems])


def _shown(path: Path) -> str:
    """A path as printed: characters the file system gave as undecodable bytes are escaped."""
    return str(path).encode("utf-8", "backslashreplace").decode("utf-8")


def _shape_problem(path: Path, output: Output) -> str | None:
    """What is wrong with writing ``output`` at ``path`` whatever the inputs are, or None."""
    encoded = os.fsencode(path)
    if len(encoded) >= _PATH_MAX:
        return f"the path is {len(encoded)} bytes long; paths are limited to {_PATH_MAX - 1}"
    for part in path.parts:
        if len(os.fsencode(part)) > _NAME_MAX:
            return f"a name in the path is longer than the {_NAME_MAX} bytes a file name may have"
    try:
        info = os.stat(path)
    except FileNotFoundError:
        info = None
    except NotADirectoryError:
        return f"{_blocker(path)} is a file, not a folder"
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            return "the path holds a loop of symbolic links"
        return f"cannot be checked: {exc.strerror or exc}"
    if info is None:
        if os.path.islink(path):
            return "is a symbolic link to nothing (a broken link); remove it or choose another path"
        blocker = _blocker(path)
        return f"{blocker} is a file, not a folder" if blocker else None
    if output.folder:
        return (
            None if stat.S_ISDIR(info.st_mode) else f"is a file, but {output.what} needs a folder here"
        )
    if stat.S_ISDIR(info.st_mode):
        return f"is a folder, but {output.what} needs a file name here"
    if not stat.S_ISREG(info.st_mode):
        return (
            f"is a {_kind(info.st_mode)}, not a regular file; reports are written only to regular "
            f"files (use '{STANDARD_OUTPUT}' for the standard output where it is offered)"
        )
    return None


def _kind(mode: int) -> str:
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "device"
    if stat.S_ISFIFO(mode):
        return "FIFO (named pipe)"
    if stat.S_ISSOCK(mode):
        return "socket"
    return "special file"


def _blocker(path: Path) -> Path | None:
    """The first folder of ``path`` that exists and is not a folder, if any."""
    for folder in reversed(path.parents):
        if os.path.lexists(folder) and not os.path.isdir(folder):
            return folder
    return None


def publish_set(write: Callable[[], None]) -> list[Path]:
    """Run ``write`` (which writes reports with :mod:`audit.report.files`), then move every file
    it wrote into place together; returns the targets. On any failure (a :class:`ReportError`,
    an interrupt) no target is touched and the temporary files are removed."""
    with staged() as staging:
        write()
        return commit(staging)


def commit(staging: StagedSet) -> list[Path]:
    """Move the staged files into place, holding a lock on each target folder (in a fixed order)
    so that a concurrent run publishes its own set before or after this one, never between."""
    targets = [target for _, target, _ in staging.files]
    try:
        with _folders_locked(target.parent for target in targets):
            for temporary, target, what in staging.files:
                try:
                    os.replace(temporary, target)
                except OSError as exc:
                    raise ReportError(str(target), what, exc.strerror or str(exc)) from exc
    finally:
        staging.discard()
    return targets


@contextmanager
def _folders_locked(folders: Iterable[Path]) -> Iterator[None]:
    """Hold an exclusive advisory lock (flock) on each folder while the block runs."""
    opened: dict[tuple[int, int], int] = {}
    for folder in folders:
        try:
            handle = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
        except OSError:
            continue  # the rename reports the problem
        key = os.fstat(handle)[stat.ST_DEV], os.fstat(handle)[stat.ST_INO]
        if key in opened:
            os.close(handle)
        else:
            opened[key] = handle
    with ExitStack() as stack:
        for key in sorted(opened):
            handle = opened[key]
            stack.callback(os.close, handle)
            fcntl.flock(handle, fcntl.LOCK_EX)
            stack.callback(fcntl.flock, handle, fcntl.LOCK_UN)
        yield
