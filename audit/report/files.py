"""Writing a report file safely, the one way every report (and the command line's other output
files) is written.

:func:`write_atomically` lets a writer fill a temporary file in the target's folder, flushes it to
disk, gives it the permissions a new file gets (``0o666`` less the umask) and moves it into place
with :func:`os.replace`: a crash or an interrupt leaves the previous file as it was and no
temporary file.

Inside :func:`staged` (used by :mod:`audit.report.publish`), the file is left as a temporary
file beside its target and published with the other files of the set when the block ends, all
together; an error or an interrupt inside the block removes every temporary file and leaves each
target as it was. A file that cannot be written (a missing or read-only folder, a folder in the
file's place, a full disk) raises :class:`audit.errors.ReportError`, which names the path and the
operating system's reason; the command line exits with code 4 for it.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from pathlib import Path
from typing import BinaryIO

from audit.errors import ReportError

TEMPORARY_SUFFIX = ".tmp"
"""Temporary report files are named ``.<target name>.<random>.tmp`` beside their target."""


class StagedSet:
    """The temporary files of one output set, each with its target, in the order written."""

    def __init__(self, token: str = "") -> None:
        self.token = token  # part of each temporary file's name, to find those of one run
        self.files: list[tuple[Path, Path, str]] = []  # (temporary, target, what)

    def discard(self) -> None:
        """Remove every temporary file of the set (the targets stay as they were)."""
        for temporary, _, _ in self.files:
            temporary.unlink(missing_ok=True)
        self.files.clear()


_STAGING: ContextVar[StagedSet | None] = ContextVar("staging", default=None)


@contextmanager
def staged(token: str = "") -> Iterator[StagedSet]:
    """Collect the files written inside the block as temporary files (see the module docstring);
    the caller publishes them (:func:`audit.report.publish.commit`). Any exception (an interrupt
    too) removes them. ``token`` goes into the temporary files' names
    (``.<name>.<token>.<random>.tmp``), so that a run can find and remove those a killed worker
    left (:func:`remove_leftovers`)."""
    staging = StagedSet(token)
    previous = _STAGING.set(staging)
    try:
        yield staging
    except BaseException:
        staging.discard()
        raise
    finally:
        _STAGING.reset(previous)


def write_atomically(path: str | Path, write: Callable[[BinaryIO], None], what: str) -> None:
    """Let ``write`` fill a temporary file beside ``path``, then move it into place.

    ``what`` names the report in the error message ("the JSON results"). Creates the missing
    folders of ``path``. Raises :class:`audit.errors.ReportError` when the file cannot be written;
    any other failure of ``write`` (or an interrupt) propagates, and ``path`` stays as it was."""
    path = Path(path)
    temporary: Path | None = None
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        blocker = _file_in_the_way(path)
        reason = f"{blocker} is a file, not a folder" if blocker else exc.strerror or str(exc)
        raise ReportError(str(path), what, reason) from exc
    try:
        staging = _STAGING.get()
        token = f"{staging.token}." if staging is not None and staging.token else ""
        import tempfile  # loaded when a report is written, not for a refused input

        handle, name = tempfile.mkstemp(
            prefix=f".{path.name}.{token}", suffix=TEMPORARY_SUFFIX, dir=path.parent
        )
        temporary = Path(name)
        with os.fdopen(handle, "wb") as stream:
            write(stream)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temporary, 0o666 & ~_umask())
        if staging is not None:
            staging.files.append((temporary, path, what))
        else:
            os.replace(temporary, path)
        temporary = None
    except ReportError:
        raise
    except OSError as exc:
        raise ReportError(str(path), what, exc.strerror or str(exc)) from exc
    finally:
        if temporary is not None:
            temporary.unlink(missing_ok=True)


def remove_leftovers(folder: str | Path, token: str, keep: set[Path] | frozenset = frozenset()) -> None:
    """Remove the temporary files of the run ``token`` in ``folder`` (those a killed worker left),
    except those in ``keep``."""
    if not token:
        return
    try:
        leftovers = list(Path(folder).glob(f".*.{token}.*{TEMPORARY_SUFFIX}"))
    except OSError:
        return
    kept = {os.path.abspath(path) for path in keep}
    for leftover in leftovers:
        if os.path.abspath(leftover) not in kept:
            leftover.unlink(missing_ok=True)


def write_text(path: str | Path, text: str, what: str) -> None:
    """Write ``text`` (UTF-8, line endings as given) to ``path`` atomically (see
    :func:`write_atomically`)."""
    write_bytes(path, text.encode("utf-8"), what)


def write_bytes(path: str | Path, data: bytes, what: str) -> None:
    """Write ``data`` to ``path`` atomically (see :func:`write_atomically`)."""

    def write(stream: BinaryIO) -> None:
        stream.write(data)

    write_atomically(path, write, what)


def _file_in_the_way(path: Path) -> Path | None:
    """The first folder of ``path`` that is a file instead, if any."""
    for folder in reversed(path.parents):
        if folder.exists() and not folder.is_dir():
            return folder
    return None


def _umask() -> int:
    """The process's umask (read by setting and restoring it; the command line is
    single-threaded)."""
    mask = os.umask(0)
    os.umask(mask)
    return mask
