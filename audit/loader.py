"""Reading a balance file: safe YAML with line numbers, duplicate keys refused, aliases bounded.

PyYAML composes the file into a node graph that knows where each node starts; this module builds the
plain Python data from that graph itself, so that

* only the standard YAML tags are accepted (no code-executing ``!!python/...`` tags, nor any other);
* a key written twice in one mapping is an error naming both lines (PyYAML keeps the last silently);
* alias expansion is counted and refused past :data:`MAX_NODES` (an "alias bomb" is refused, not
  swallowed);
* every value's position is recorded, by its path of keys and indices, so a validation error can be
  mapped back to the file, line and column where the offending value was written.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml
from yaml.constructor import SafeConstructor

from audit.errors import InputError

MAX_FILE_BYTES = 20 * 1024 * 1024
"""Largest balance file read [bytes]; a real balance is a few hundred kB."""

MAX_NODES = 5_000_000
"""Most values built from one file; past it the file is refused."""

MAX_ALIAS_NODES = 100_000
"""Most values built a second time through aliases; past it the file is refused as an alias bomb
(a legitimate balance repeats a few hundred values through anchors at most)."""

_STANDARD_TAG = "tag:yaml.org,2002:"
_ALLOWED_SCALAR_TAGS = {
    _STANDARD_TAG + t for t in ("str", "int", "float", "bool", "null", "timestamp")
}

Path_ = tuple[object, ...]


@dataclass
class Document:
    """The plain data of a balance file and where each value was written (1-based line, column).

    ``cells`` records values that came from a table (:mod:`audit.tables`) instead: path → (table
    file, place in it), the place reading like ``sheet 'HB rev C', cell D14`` or ``row 14``.
    """

    data: Any
    file: str
    positions: dict[Path_, tuple[int, int]] = field(default_factory=dict)
    cells: dict[Path_, tuple[str, str]] = field(default_factory=dict)

    def position(self, path: Path_) -> tuple[int | None, int | None]:
        """Line and column of the value at ``path``, or of its nearest written ancestor."""
        path = tuple(path)
        while path:
            if path in self.positions:
                return self.positions[path]
            path = path[:-1]
        return self.positions.get((), (None, None))

    def place(self, path: Path_) -> dict[str, Any]:
        """Where the value at ``path`` was written, as keyword arguments of
        :class:`audit.errors.Problem`: the file with its line and column, or the table file with
        its cell, whichever the nearest written ancestor of ``path`` is."""
        path = tuple(path)
        while path:
            if path in self.cells:
                file, cell = self.cells[path]
                return {"file": file, "line": None, "column": None, "cell": cell}
            if path in self.positions:
                break
            path = path[:-1]
        line, column = self.position(path)
        return {"file": self.file, "line": line, "column": column, "cell": None}


class _Builder:
    def __init__(self, file: str) -> None:
        self.file = file
        self.count = 0
        self.repeats = 0
        self._seen: set[int] = set()
        self.positions: dict[Path_, tuple[int, int]] = {}
        self._scalar = SafeConstructor()

    def _fail(self, node: yaml.Node, message: str) -> InputError:
        return InputError(
            message, file=self.file, line=node.start_mark.line + 1,
            column=node.start_mark.column + 1,
        )

    def build(self, node: yaml.Node, path: Path_, depth: int = 0) -> Any:
        self.count += 1
        if id(node) in self._seen:
            self.repeats += 1
            if self.repeats > MAX_ALIAS_NODES:
                raise self._fail(
                    node,
                    f"aliases in the file expand to more than {MAX_ALIAS_NODES:,} repeated "
                    "values; refusing it as an alias bomb",
                )
        else:
            self._seen.add(id(node))
        if self.count > MAX_NODES:
            raise self._fail(node, f"the file holds more than {MAX_NODES:,} values")
        if depth > 100:
            raise self._fail(node, "the file nests deeper than 100 levels")
        self.positions.setdefault(path, (node.start_mark.line + 1, node.start_mark.column + 1))
        if isinstance(node, yaml.ScalarNode):
            if node.tag not in _ALLOWED_SCALAR_TAGS:
                raise self._fail(node, f"the tag '{node.tag}' is not allowed in a balance file")
            value = self._scalar.construct_object(node, deep=True)
            if node.tag == _STANDARD_TAG + "timestamp":
                value = node.value  # keep dates as written
            return value
        if isinstance(node, yaml.SequenceNode):
            if node.tag != _STANDARD_TAG + "seq":
                raise self._fail(node, f"the tag '{node.tag}' is not allowed in a balance file")
            return [self.build(item, path + (i,), depth + 1) for i, item in enumerate(node.value)]
        if isinstance(node, yaml.MappingNode):
            if node.tag != _STANDARD_TAG + "map":
                raise self._fail(node, f"the tag '{node.tag}' is not allowed in a balance file")
            return self._mapping(node, path, depth)
        raise self._fail(node, "unsupported YAML node")  # pragma: no cover

    def _mapping(self, node: yaml.MappingNode, path: Path_, depth: int) -> dict:
        result: dict = {}
        seen: dict[object, int] = {}
        merged: dict = {}
        for key_node, value_node in node.value:
            if key_node.tag == _STANDARD_TAG + "merge":
                sources = value_node.value if isinstance(value_node, yaml.SequenceNode) else [
                    value_node]
                for source in sources:
                    built = self.build(source, path, depth + 1)
                    if not isinstance(built, dict):
                        raise self._fail(source, "a merge key '<<' must name a mapping")
                    for k, v in built.items():
                        merged.setdefault(k, v)
                continue
            if not isinstance(key_node, yaml.ScalarNode):
                raise self._fail(key_node, "a mapping key must be a plain value, not a collection")
            key = self.build(key_node, path + ("<key>",), depth + 1)
            line = key_node.start_mark.line + 1
            if key in seen:
                raise self._fail(
                    key_node,
                    f"the key '{key}' is written twice in the same mapping, on line "
                    f"{seen[key]} and line {line}; a balance must say each thing once",
                )
            seen[key] = line
            result[key] = self.build(value_node, path + (key,), depth + 1)
            self.positions[path + (key,)] = (line, key_node.start_mark.column + 1)
        for k, v in merged.items():
            result.setdefault(k, v)
        return result


def read_text(path: Path) -> str:
    """Read a balance file as UTF-8 text, refusing folders, huge files and undecodable bytes."""
    name = str(path)
    if not path.exists():
        raise InputError("no such file", file=name)
    if path.is_dir():
        raise InputError("is a folder, not a balance file", file=name)
    size = path.stat().st_size
    if size > MAX_FILE_BYTES:
        raise InputError(
            f"the file is {size / 1e6:.1f} MB, larger than the {MAX_FILE_BYTES / 1e6:.0f} MB "
            "a balance file may be", file=name,
        )
    raw = path.read_bytes()
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError(
            f"the file is not valid UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start})",
            file=name, line=line,
        ) from None


def parse_document(text: str, file: str) -> Document:
    """Compose YAML text into plain data with positions; see the module docstring for the rules."""
    try:
        node = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or "malformed YAML"
        if exc.context:
            problem = f"{exc.context}: {problem}" if "found character '\\t'" not in problem else (
                problem)
        if "\\t" in problem or "tab" in problem.lower():
            problem += " (YAML does not allow tabs for indentation; use spaces)"
        raise InputError(
            f"not valid YAML: {problem}", file=file,
            line=mark.line + 1 if mark else None, column=mark.column + 1 if mark else None,
        ) from None
    except yaml.YAMLError as exc:
        raise InputError(f"not valid YAML: {exc}", file=file) from None
    if node is None:
        raise InputError("the file is empty; a balance needs 'balance', 'streams' and 'steps'",
                         file=file, line=1)
    builder = _Builder(file)
    data = builder.build(node, ())
    return Document(data=data, file=file, positions=builder.positions)


def load_document(path: str | Path) -> Document:
    """Read and compose a balance file; raise :class:`InputError` naming the file and line."""
    path = Path(path)
    return parse_document(read_text(path), str(path))
