"""Reading a balance file's bytes at the file edge: once, with a byte cap, refusing what is not a
file to read (a folder, a device, a socket) before opening it; decoding them as UTF-8; and
spelling a path that is not valid UTF-8 with escapes for messages and reports."""

from __future__ import annotations

import os
import stat
from pathlib import Path

from audit.errors import InputError

MAX_FILE_BYTES = 20 * 1024 * 1024
"""Largest balance file read [bytes]; a real balance is a few hundred kB."""


def display_path(path: str | Path) -> str:
    """``path`` as text that any message or report can hold: bytes of a name that are not UTF-8
    (kept by the file system's encoding as lone surrogates) are written as ``\\xNN``."""
    text = os.fspath(path)
    try:
        text.encode("utf-8")
        return text
    except UnicodeEncodeError:
        return os.fsencode(text).decode("utf-8", "backslashreplace")


def read_bytes(path: Path) -> bytes:
    """The bytes of a balance file, read once, at most :data:`MAX_FILE_BYTES` of them.

    A regular file, or a pipe (``/dev/stdin`` fed by another program); a folder, a device or a
    socket is refused before it is read."""
    name = display_path(path)
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise InputError("no such file", file=name) from None
    except OSError as exc:
        raise InputError(f"cannot be read: {exc.strerror or exc}", file=name) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError("is a folder, not a balance file", file=name)
    if not (stat.S_ISREG(info.st_mode) or stat.S_ISFIFO(info.st_mode)):
        raise InputError("is a device or a socket, not a balance file", file=name)
    if info.st_size > MAX_FILE_BYTES:
        raise _too_large(info.st_size, name)
    try:
        with Path(path).open("rb") as stream:
            raw = stream.read(MAX_FILE_BYTES + 1)
    except OSError as exc:  # permission denied, an I/O error
        raise InputError(f"cannot be read: {exc.strerror or exc}", file=name) from None
    if len(raw) > MAX_FILE_BYTES:
        raise _too_large(len(raw), name)
    return raw


def _too_large(size: int, name: str) -> InputError:
    return InputError(
        f"the file is {size / 2**20:.1f} MiB, larger than the {MAX_FILE_BYTES / 2**20:.0f} "
        "MiB a balance file may be",
        file=name,
    )


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
