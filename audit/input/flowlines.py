"""One-line flow mappings read without YAML nodes: the loader's fast path for large balances.

A large balance writes its streams and steps one per line, as YAML flow mappings::

    S01: {fluid: Water, T: 105 degC, P: 1.6 bar, flow: 10.8 t/h}
    - {id: P1, kind: pump, inlet: S01, outlet: S02, shaft_power: 18.3 kW}

PyYAML composes each such line into a dozen node objects, each with two marks and a resolver call:
on a balance of 10 000 streams that costs more than the property calls of the whole audit
(benchmarks/run.py). :func:`scan` recognises the lines whose flow mapping holds nothing but plain
keys and plain values from a narrow set of characters (letters, digits, space and ``_ . + - / ( )
* ^ ° ³ ² µ``; a value does not start with an indicator), at most one nested mapping deep, on one
line; it reads their items itself and returns the text with each such mapping written ``{}``.

The loader (:mod:`audit.input.document`) composes that text, and where it finds an empty mapping exactly
where a recognised one began, it builds the recognised items with the same values (resolved by
PyYAML's own resolver, constructed by its SafeConstructor), the same positions and the same node
count as composing the line would have given. When anything differs from that plan (a recognised
line that does not come back as a mapping where it was written, e.g. inside a block scalar; two
keys of one mapping that resolve to the same value; any error), the loader reads the original text
the usual way, so the fast path never changes what a file means or how an error reads.

Values that contain a space (and no colon, which the character set excludes) are strings without
asking the resolver: none of YAML 1.1's implicit types (bool, int, float, null, timestamp, merge,
value) matches text with a space and no colon.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import yaml

_KEY = r"[A-Za-z_][A-Za-z0-9_]*"
_SCALAR = r"(?:[A-Za-z0-9_.(+°µ]|-(?=[0-9.]))[A-Za-z0-9_.+\-/()*^°³²µ ]*"
_ITEM = re.compile(rf"[ ]*({_KEY}):[ ]+(?:\{{([^{{}}]*)\}}|({_SCALAR}))[ ]*(,|$)")
_INNER_ITEM = re.compile(rf"[ ]*({_KEY}):[ ]+({_SCALAR})[ ]*(,|$)")
_LEAD = re.compile(r"^[ ]*(?:-[ ]+)?(?:[A-Za-z0-9_][A-Za-z0-9_.\-]*:[ ]+)?$")
_FLAT_ITEM = rf"[ ]*{_KEY}:[ ]+{_SCALAR}[ ]*"
_FLAT = re.compile(rf"{_FLAT_ITEM}(?:,{_FLAT_ITEM})*")
"""A flow mapping's items with no nested mapping, as :data:`_INNER_ITEM` reads them one by one:
neither a key nor a value holds a comma or a colon, so its text splits at them."""

STR_TAG = "tag:yaml.org,2002:str"

Item = tuple
"""(key text, key column, key tag, value text, value column, value tag) for a scalar value, or
(key text, key column, key tag, brace column, [items], None) for a nested mapping; a tag is None
for a plain string (columns 0-based)."""


@dataclass
class Scan:
    """The text to compose (recognised mappings written ``{}``) and, by (line, column) of each
    recognised mapping's ``{`` (0-based, as YAML marks count), its items."""

    text: str
    mappings: dict[tuple[int, int], list[Item]] = field(default_factory=dict)


def scan(text: str) -> Scan | None:
    """Find the one-line flow mappings of ``text`` that the fast path reads; None when there are
    none, or when the text has line breaks other than LF and CR LF, a tab or a byte-order mark
    (those files are read the usual way)."""
    if (
        "\t" in text
        or "\x85" in text
        or "\u2028" in text
        or "\u2029" in text
        or (text.startswith("\ufeff"))
        or text.count("\r") != text.count("\r\n")
    ):
        return None
    lines = text.split("\n")
    mappings: dict[tuple[int, int], list[Item]] = {}
    for number, line in enumerate(lines):
        end = len(line.rstrip(" \r"))
        if end == 0 or line[end - 1] != "}":
            continue
        brace = line.find("{")
        if brace < 0 or not _LEAD.match(line, 0, brace):
            continue
        items = _items(line, brace + 1, end - 1, nested=True)
        if not items:
            continue
        mappings[(number, brace)] = items
        lines[number] = line[: brace + 1] + line[end - 1 :]
    if not mappings:
        return None
    return Scan("\n".join(lines), mappings)


def _items(line: str, start: int, stop: int, nested: bool) -> list[Item] | None:
    """The items of the flow mapping written in ``line[start:stop]``, or None when it is not
    entirely made of recognised items (or repeats a key)."""
    if not nested or line.find("{", start, stop) < 0:
        return _flat_items(line, start, stop)
    items: list[Item] = []
    keys: set[str] = set()
    position = start
    comma = None
    for match in (_ITEM if nested else _INNER_ITEM).finditer(line, start, stop):
        if match.start() != position:
            return None
        regs = match.regs
        if nested:
            key, inner, value, comma = match.groups()
            key_at, value_at = regs[1][0], regs[3][0]
        else:
            key, value, comma = match.groups()
            inner, key_at, value_at = None, regs[1][0], regs[2][0]
        if key in keys:
            return None  # the usual path words the duplicate-key error
        keys.add(key)
        key, key_tag = _plain(key)
        if inner is not None:
            nested_items = _items(line, regs[2][0], regs[2][1], nested=False)
            if not nested_items:
                return None
            items.append((key, key_at, key_tag, regs[2][0] - 1, nested_items, None))
        else:
            value = value.rstrip(" ")
            value, tag = (value, None) if " " in value else _plain(value)
            items.append((key, key_at, key_tag, value, value_at, tag))
        position = match.end()
    if position != stop or comma == ",":
        return None  # text the items do not cover, or a trailing comma: the usual path reads it
    return items


def _flat_items(line: str, start: int, stop: int) -> list[Item] | None:
    """:func:`_items` of a mapping with no nested mapping: the same items, with the same
    columns, checked by one match of the whole text and split at its commas and colons."""
    if _FLAT.fullmatch(line, start, stop) is None:
        return None
    items: list[Item] = []
    keys: set[str] = set()
    known = _PLAIN.get  # (most keys and many values are remembered: no call for them)
    at = start
    for part in line[start:stop].split(","):
        key_text, _, value_text = part.partition(":")
        key = key_text.lstrip(" ")
        value = value_text.lstrip(" ")
        key_at = at + len(key_text) - len(key)
        value_at = at + len(key_text) + 1 + len(value_text) - len(value)
        at += len(part) + 1
        if key in keys:
            return None  # the usual path words the duplicate-key error
        keys.add(key)
        key, key_tag = known(key) or _plain(key)
        value = value.rstrip(" ")
        value, tag = (value, None) if " " in value else (known(value) or _plain(value))
        items.append((key, key_at, key_tag, value, value_at, tag))
    return items


_RESOLVER = yaml.resolver.Resolver()
_PLAIN: dict[str, tuple[str, str | None]] = {}
_MAX_PLAIN = 10_000
_IMPLICIT_FIRST = frozenset(_RESOLVER.yaml_implicit_resolvers)
"""The first characters of the text PyYAML's implicit resolvers read (digits, signs, the first
letters of true/false/yes/no/on/off/null, ...): the resolver looks its patterns up by the text's
first character, so text starting otherwise is a string (the default resolver has no pattern for
any text, key None, nor path resolvers)."""


def _plain(text: str) -> tuple[str, str | None]:
    """(``text``, the tag PyYAML's resolver gives it as a plain scalar, None for a string).

    Remembered per text (the first few thousand distinct ones), which also makes the keys and the
    repeated values (fluid names, step kinds) of every line one shared string object. Text with a
    space is a string (see the module docstring) and is not asked here."""
    known = _PLAIN.get(text)
    if known is not None:
        return known
    if text and text[0] not in _IMPLICIT_FIRST:
        known = (text, None)  # the resolver asks no pattern of text starting so (ids, names)
    else:
        tag = _RESOLVER.resolve(yaml.ScalarNode, text, (True, False))
        known = (text, None if tag == STR_TAG else tag)
    if len(_PLAIN) < _MAX_PLAIN:
        _PLAIN[text] = known
    return known


def scalar_node(text: str, tag: str, line: int, column: int) -> yaml.ScalarNode:
    """A scalar node as composing would make it (for values that are not plain strings)."""
    mark = yaml.error.Mark("<line>", 0, line, column, None, None)
    return yaml.ScalarNode(tag, text, start_mark=mark, end_mark=mark)
