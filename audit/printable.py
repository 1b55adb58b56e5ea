"""Text made safe to print or to write into XML: what reaches a terminal, a log or a CI server.

A stream id, a file name or a message may hold any character a file can: a newline that would start
a forged line ("Verdict: PASS"), an escape sequence that clears the screen, a zero-width space that
makes two ids look alike, a lone surrogate from a file name that is not UTF-8. :func:`escaped` spells
each such character as a Python-style escape (``\\n``, ``\\x1b``, ``\\u200b``) so the text stays one
line and shows what is really there; :func:`xml_safe` does the same for the characters XML 1.0
cannot hold at all.
"""

from __future__ import annotations

import unicodedata

_UNSAFE_CATEGORIES = frozenset({"Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"})
"""Control, format, surrogate, private-use and unassigned characters, and the line and paragraph
separators (Unicode general categories)."""

_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def unsafe(character: str) -> bool:
    """Whether ``character`` must not reach a terminal as it is (see the module docstring)."""
    if character.isascii():
        return character < " " or character == "\x7f"
    return unicodedata.category(character) in _UNSAFE_CATEGORIES


def _spell(character: str) -> str:
    code = ord(character)
    if character in _NAMED:
        return _NAMED[character]
    if code < 0x100:
        return f"\\x{code:02x}"
    if code < 0x10000:
        return f"\\u{code:04x}"
    return f"\\U{code:08x}"


def escaped(text: object) -> str:
    """``text`` as one printable line: each unsafe character spelt as an escape. Text with nothing
    unsafe (the usual case) comes back unchanged, and a backslash is left as it is (so escaping
    twice changes nothing, and Windows paths read as written)."""
    text = str(text)
    if text.isascii() and text.isprintable():
        return text
    if not any(unsafe(c) for c in text):
        return text
    return "".join(_spell(c) if unsafe(c) else c for c in text)


def escaped_lines(text: str) -> str:
    """Text of several lines (a report) with each line escaped: its line breaks are kept, every
    other unsafe character is spelt as an escape."""
    return "\n".join(escaped(line) for line in text.split("\n"))


def _xml_allowed(code: int) -> bool:
    """Characters XML 1.0 allows (§2.2 Char production)."""
    return (
        code in (0x9, 0xA, 0xD)
        or 0x20 <= code <= 0xD7FF
        or 0xE000 <= code <= 0xFFFD
        or 0x10000 <= code <= 0x10FFFF
    )


def xml_safe(text: object) -> str:
    """``text`` with every character XML 1.0 does not allow (and every other unsafe one) spelt as
    an escape, so an XML file stays well formed."""
    text = str(text)
    if all(_xml_allowed(ord(c)) for c in text) and not any(unsafe(c) for c in text if c != "\n"):
        return text
    return escaped(text)
