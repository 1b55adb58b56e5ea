"""Ids a reviewer can trust: the stream and step ids of a balance, checked and normalised before
validation.

* an id must not be empty or blank, and must not hold a control or format character (a newline, an
  escape sequence, a zero-width space), a surrogate or an unassigned character: two ids that look
  alike must be alike;
* ids are normalised to Unicode NFC (so ``Café`` typed with a combining accent and ``Café`` typed
  with the precomposed letter are one id, as they look), and two ids of the same kind that are one
  after normalising are refused, naming both places.

Every other string of a step (its references to streams) is normalised the same way, so a reference
finds its stream however the accent was typed.
"""

from __future__ import annotations

import unicodedata
from typing import Any

from audit.errors import InputErrors, Problem
from audit.input.document import Document
from audit.printable import escaped, unsafe


def _nfc(value: Any) -> Any:
    if isinstance(value, str):
        return value if value.isascii() else unicodedata.normalize("NFC", value)
    if isinstance(value, list):
        return [_nfc(item) for item in value]
    if isinstance(value, dict):
        return {_nfc(k): _nfc(v) for k, v in value.items()}
    return value


def _flaw(name: str) -> str | None:
    """What is wrong with an id, or None."""
    if not name.strip():
        return "must not be empty or blank"
    bad = next((c for c in name if unsafe(c)), None)
    if bad is not None:
        label = unicodedata.name(bad, "") if not 0xD800 <= ord(bad) <= 0xDFFF else "a lone surrogate"
        return (
            f"holds the invisible or control character {escaped(bad)}"
            + (f" ({label})" if label else "")
            + "; an id must read as it is written"
        )
    if name != name.strip():
        return "begins or ends with a space"
    return None


def normalise_ids(document: Document) -> Document:
    """The document with its stream ids and its steps' strings in NFC; raises
    :class:`InputErrors` naming the place of each id that is blank, holds an invisible character,
    or collides with another after normalising."""
    data = document.data
    if not isinstance(data, dict):
        return document
    problems: list[Problem] = []
    streams = data.get("streams")
    new_streams = streams
    if isinstance(streams, dict):
        new_streams = {}
        first: dict[Any, Any] = {}
        for key, value in streams.items():
            name = _nfc(key)
            if isinstance(key, str):
                flaw = _flaw(key)
                if flaw is not None:
                    problems.append(
                        _problem(document, ("streams", key), f"the stream id '{escaped(key)}' {flaw}")
                    )
                if name in first and first[name] != key:
                    line, _ = document.position(("streams", first[name]))
                    problems.append(
                        _problem(
                            document,
                            ("streams", key),
                            f"the stream id '{escaped(key)}' is the same as '{escaped(first[name])}' "
                            f"(line {line}) once both are normalised (Unicode NFC); use one spelling",
                        )
                    )
                first.setdefault(name, key)
            new_streams[name] = value
    steps = data.get("steps")
    new_steps = steps
    if isinstance(steps, list):
        for index, step in enumerate(steps):
            if isinstance(step, dict) and isinstance(step.get("id"), str):
                flaw = _flaw(step["id"])
                if flaw is not None:
                    problems.append(
                        _problem(
                            document,
                            ("steps", index, "id"),
                            f"the step id '{escaped(step['id'])}' {flaw}",
                        )
                    )
        if any(not _all_ascii(step) for step in steps):
            new_steps = [_nfc(step) for step in steps]
    if problems:
        raise InputErrors(problems)
    renamed = {
        key: _nfc(key)
        for key in (streams if isinstance(streams, dict) else ())
        if isinstance(key, str) and _nfc(key) != key
    }
    if not renamed and new_steps is steps:
        return document
    positions, cells = document.positions, document.cells
    if renamed:
        positions, cells = _moved(positions, renamed), _moved(cells, renamed)
    data = {**data, "streams": new_streams, "steps": new_steps}
    return Document(
        data=data, file=document.file, positions=positions, cells=cells, texts=document.texts
    )


def _moved(places: dict, renamed: dict[str, str]) -> dict:
    """``places`` (by path) with the paths under renamed streams also under their new names."""
    moved = dict(places)
    for path, place in places.items():
        if len(path) >= 2 and path[0] == "streams" and path[1] in renamed:
            moved[("streams", renamed[path[1]]) + tuple(path[2:])] = place
    return moved


def _all_ascii(value: Any) -> bool:
    if isinstance(value, str):
        return value.isascii()
    if isinstance(value, list):
        return all(_all_ascii(item) for item in value)
    if isinstance(value, dict):
        return all(_all_ascii(k) and _all_ascii(v) for k, v in value.items())
    return True


def _problem(document: Document, path: tuple, message: str) -> Problem:
    return Problem(message, **document.place(path), field_path=".".join(map(str, path)))
