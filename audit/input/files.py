"""Reading an input file's bytes: only a regular file, never more than a set number of bytes.

A FIFO, a device such as ``/dev/zero`` or a socket given where a balance or a table belongs is
refused before it is opened (opening a FIFO blocks, reading a device may never end), and the read
stops one byte past the limit. The one pipe read is the program's own standard input, when the
user names it (``/dev/stdin``; ``-`` is read by the command line itself).
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

from audit.errors import InputError

MAX_FILE_BYTES = 20 * 1024 * 1024
"""Largest balance file read [bytes]; a real balance is a few hundred kB."""


def read_bytes(path: Path, limit: int = MAX_FILE_BYTES, what: str = "a balance file") -> bytes:
    """The bytes of a regular file of at most ``limit`` bytes. Anything else (a folder, a FIFO, a
    device such as /dev/zero, a socket) is refused before it is opened, so nothing can hang or read
    without end; the read itself stops one byte past the limit (a file that grows while it is read
    is refused too)."""
    name = display_path(path)
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise InputError("no such file", file=name) from None
    except OSError as exc:  # permission denied on a folder, a name too long, a loop of links
        raise InputError(f"cannot be read: {exc.strerror or exc}", file=name) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError(f"is a folder, not {what}", file=name)
    if not stat.S_ISREG(info.st_mode) and not _is_standard_input(info):
        raise InputError(
            f"is not a regular file (a {_file_kind(info.st_mode)}); give the path of {what}", file=name
        )
    too_big = InputError(
        f"the file is {max(info.st_size, limit + 1) / 2**20:.1f} MiB, larger than the "
        f"{limit / 2**20:.0f} MiB {what} may be",
        file=name,
    )
    if info.st_size > limit:
        raise too_big
    try:
        with Path(path).open("rb") as handle:
            raw = handle.read(limit + 1)
    except OSError as exc:  # permission denied, an I/O error
        raise InputError(f"cannot be read: {exc.strerror or exc}", file=name) from None
    if len(raw) > limit:
        raise too_big
    return raw


def _is_standard_input(info: os.stat_result) -> bool:
    """True when ``info`` is this process's standard input and it is a pipe (``cat b.yaml |
    plant-audit check /dev/stdin``): the user asked for it, and its writer ends it."""
    if not stat.S_ISFIFO(info.st_mode):
        return False
    try:
        own = os.fstat(0)
    except OSError:
        return False
    return (own.st_dev, own.st_ino) == (info.st_dev, info.st_ino)


def _file_kind(mode: int) -> str:
    for test, kind in (
        (stat.S_ISFIFO, "named pipe"),
        (stat.S_ISCHR, "character device"),
        (stat.S_ISBLK, "block device"),
        (stat.S_ISSOCK, "socket"),
    ):
        if test(mode):
            return kind
    return "special file"


def read_text(path: Path) -> str:
    """Read a balance file as UTF-8 text, refusing anything but a regular file, huge files and
    undecodable bytes (:func:`read_bytes`)."""
    return decode_text(read_bytes(path), display_path(path))


def display_path(path: str | Path) -> str:
    """``path`` as text that any message or report can hold: bytes of a name that are not UTF-8
    (kept by the file system's encoding as lone surrogates) are written as ``\\xNN``."""
    text = os.fspath(path)
    try:
        text.encode("utf-8")
        return text
    except UnicodeEncodeError:
        return os.fsencode(text).decode("utf-8", "backslashreplace")


def decode_text(raw: bytes, name: str) -> str:
    """A balance file's bytes as text (UTF-8, with or without a byte-order mark)."""
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError(
            f"the file is not valid UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start})",
            file=name,
            line=line,
        ) from None
