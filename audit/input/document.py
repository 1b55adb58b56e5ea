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
from audit.input import flowlines
from audit.input.files import MAX_FILE_BYTES as MAX_FILE_BYTES
from audit.input.files import decode_text as decode_text
from audit.input.files import display_path as display_path
from audit.input.files import read_bytes as read_bytes
from audit.input.files import read_text as read_text
from audit.input.yaml_limits import (
    LimitError,
    bound_nodes,
    compose,
    too_deep,
)

MAX_NODES = 5_000_000
"""Most values built from one file; past it the file is refused."""


MAX_ALIAS_NODES = 100_000
"""Most values built a second time through aliases; past it the file is refused as an alias bomb
(a legitimate balance repeats a few hundred values through anchors at most)."""

_STANDARD_TAG = "tag:yaml.org,2002:"
_ALLOWED_SCALAR_TAGS = {_STANDARD_TAG + t for t in ("str", "int", "float", "bool", "null", "timestamp")}
_STR_TAG = _STANDARD_TAG + "str"
_YES_NO = {"yes", "no", "on", "off"}  # YAML 1.1 booleans that read as words, not true/false

"""libyaml's parser, when PyYAML was built with it: it composes the same nodes, with the same
marks, about eight times faster than the pure-Python parser (benchmarks/run.py). Text it refuses,
and text with a tab, goes to the pure-Python parser, whose errors the messages below are written
for. (One known leniency: libyaml reads a tag followed directly by a comma in a flow collection,
``{a: !!str, b: c}``, as a tag on an empty value, where PyYAML refuses the text.)"""

Path_ = tuple[object, ...]

POSITION_DEPTH = 2
"""Positions are kept for paths this deep while reading (the file's sections, each stream and
step: what a good file's messages need, ``("steps", 4)``); a message about a deeper value reads
the positions of the whole file again, once (:meth:`Document.position`). A 100 000-stream file
has 1.3 million values: their positions would take more memory than the audit."""


@dataclass
class Document:
    """The plain data of a balance file and where each value was written (1-based line, column).

    ``cells`` records values that came from a table (:mod:`audit.input.tables`) instead: path → (table
    file, place in it), the place reading like ``sheet 'HB rev C', cell D14`` or ``row 14``.
    """

    data: Any
    file: str
    positions: dict[Path_, tuple[int, int]] = field(default_factory=dict)
    cells: dict[Path_, tuple[str, str]] = field(default_factory=dict)
    texts: dict[Path_, str] = field(default_factory=dict)
    """The text of each number written in the first two levels (``balance: revision: 1.10``), where
    the value read ("1.1") would lose what was written."""
    source: str | None = None  # the text, while only the shallow positions are read

    def _complete(self, path: Path_) -> None:
        """Read every position of the file when ``path`` lies deeper than those kept."""
        if self.source is not None and len(path) > POSITION_DEPTH:
            full = _parse(self.source, self.file, None, keep=None)
            self.positions.update(full.positions)
            self.source = None

    def position(self, path: Path_) -> tuple[int | None, int | None]:
        """Line and column of the value at ``path``, or of its nearest written ancestor."""
        path = tuple(path)
        self._complete(path)
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
        self._complete(path)
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
    def __init__(self, file: str, flow_lines: dict | None = None, keep: int | None = None) -> None:
        self.file = file
        self.keep = 10**6 if keep is None else keep  # the deepest path whose position is kept
        self.flow_lines = flow_lines or {}  # mappings audit.input.flowlines read, by (line, column)
        self.flow_lines_built: set[tuple[int, int]] = set()
        self.count = 0
        self.repeats = 0
        self._seen: set[int] = set()
        self._open: set[int] = set()  # collections being built: an alias back to one is a loop
        self.positions: dict[Path_, tuple[int, int]] = {}
        self.texts: dict[Path_, str] = {}
        self._scalar = SafeConstructor()

    def _fail(self, node: yaml.Node, message: str, kind: type[InputError] = InputError) -> InputError:
        return kind(
            message,
            file=self.file,
            line=node.start_mark.line + 1,
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
                    LimitError,
                )
        else:
            self._seen.add(id(node))
        if self.count > MAX_NODES:
            raise self._fail(node, f"the file holds more than {MAX_NODES:,} values", LimitError)
        if depth > 100:
            raise self._fail(node, "the file nests deeper than 100 levels")
        if len(path) <= self.keep:
            self.positions.setdefault(path, (node.start_mark.line + 1, node.start_mark.column + 1))
        if isinstance(node, yaml.ScalarNode):
            return self._scalar_value(node, path)
        if id(node) in self._open:
            raise self._fail(
                node,
                "an alias here refers to a collection that contains it, so the value would never end",
            )
        if isinstance(node, yaml.SequenceNode):
            if node.tag != _STANDARD_TAG + "seq":
                raise self._fail(node, f"the tag '{node.tag}' is not allowed in a balance file")
            self._open.add(id(node))
            built = [self.build(item, path + (i,), depth + 1) for i, item in enumerate(node.value)]
            self._open.discard(id(node))
            return built
        if isinstance(node, yaml.MappingNode):
            if node.tag != _STANDARD_TAG + "map":
                raise self._fail(node, f"the tag '{node.tag}' is not allowed in a balance file")
            if not node.value and self.flow_lines:
                where = (node.start_mark.line, node.start_mark.column)
                items = self.flow_lines.get(where)
                if items is not None:
                    self.flow_lines_built.add(where)
                    return self._flow_line(items, where[0], path, depth)
            self._open.add(id(node))
            mapping = self._mapping(node, path, depth)
            self._open.discard(id(node))
            return mapping
        raise self._fail(node, "unsupported YAML node")  # pragma: no cover

    def _flow_scalar(self, node: yaml.ScalarNode, path: Path_) -> Any:
        """:meth:`build` of a scalar node made for a value :mod:`audit.input.flowlines` read (not
        a node of the composed graph, so never an alias): counted and placed as :meth:`build`
        does, its value constructed and not remembered by the constructor (which would keep every
        such node alive until the file is read)."""
        self.count += 1
        if self.count > MAX_NODES:
            raise self._fail(node, f"the file holds more than {MAX_NODES:,} values", LimitError)
        if len(path) <= self.keep:
            self.positions.setdefault(path, (node.start_mark.line + 1, node.start_mark.column + 1))
        value = self._scalar_value(node, path)
        self._scalar.constructed_objects.pop(node, None)
        return value

    def _scalar_value(self, node: yaml.ScalarNode, path: Path_) -> Any:
        """The value of a scalar node, its tag checked (see the module docstring)."""
        if node.tag == _STR_TAG:
            return node.value  # what SafeConstructor makes of a string, without its calls
        if node.tag not in _ALLOWED_SCALAR_TAGS:
            raise self._fail(node, f"the tag '{node.tag}' is not allowed in a balance file")
        if node.tag == _STANDARD_TAG + "timestamp":
            return node.value  # keep dates as written (and never fail on 2024-02-30)
        if node.tag == _STANDARD_TAG + "bool" and node.value.lower() in _YES_NO:
            raise InputError(
                f"'{node.value}' reads as a yes/no value in YAML; write the number meant, "
                "true or false, or put text in quotes",
                file=self.file,
                line=node.start_mark.line + 1,
                column=node.start_mark.column + 1,
                field_path=".".join(map(str, path)) or None,
            )
        if len(path) <= 2 and node.tag in (_STANDARD_TAG + "float", _STANDARD_TAG + "int"):
            self.texts[path] = node.value
        try:
            return self._scalar.construct_object(node, deep=True)
        except (ValueError, IndexError, KeyError) as exc:
            # e.g. an integer of more than 4300 digits, or '!!int' with no value
            shown = node.value if len(node.value) <= 40 else node.value[:40] + "..."
            if "integer string conversion" in str(exc):
                reason = f"a number of {len(node.value):,} digits is too long to read"
            elif isinstance(exc, ValueError):
                reason = str(exc)
            else:
                reason = f"it is not a valid {node.tag.rsplit(':', 1)[-1]}"
            raise self._fail(node, f"the value '{shown}' cannot be read: {reason}") from None

    def _mapping(self, node: yaml.MappingNode, path: Path_, depth: int) -> dict:
        result: dict = {}
        seen: dict[object, int] = {}
        merged: dict = {}
        for key_node, value_node in node.value:
            if key_node.tag == _STANDARD_TAG + "merge":
                sources = value_node.value if isinstance(value_node, yaml.SequenceNode) else [value_node]
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
                where = (
                    f"on line {line}" if seen[key] == line else f"on line {seen[key]} and line {line}"
                )
                raise self._fail(
                    key_node,
                    f"the key '{key}' is written twice in the same mapping, {where}; a balance "
                    "must say each thing once",
                )
            seen[key] = line
            result[key] = self.build(value_node, path + (key,), depth + 1)
            if len(path) < self.keep:
                self.positions[path + (key,)] = (line, key_node.start_mark.column + 1)
        for k, v in merged.items():
            result.setdefault(k, v)
        return result

    def _flow_line(self, items: list, line: int, path: Path_, depth: int) -> dict:
        """A mapping :mod:`audit.input.flowlines` read from one line, built as :meth:`_mapping` builds
        composed nodes: the same values, positions and node count (a value's own position is
        overwritten by its key's there, so only the key's is recorded here)."""
        depth += 1
        if depth > 100:
            raise _FastPathDeclined  # the usual path words the error
        result: dict = {}
        kept = len(path) < self.keep  # the items' own positions (else only the mapping's is)
        positions = self.positions
        row = line + 1
        nodes = 0
        for key, key_column, key_tag, first, second, tag in items:
            if key_tag is None:
                nodes += 1
                if kept and not result:
                    positions.setdefault(path + ("<key>",), (row, key_column + 1))
            else:
                key = self._flow_scalar(
                    flowlines.scalar_node(key, key_tag, line, key_column), path + ("<key>",)
                )
                if key in result:
                    raise _FastPathDeclined  # the usual path words the duplicate-key error
            if type(second) is list:  # a nested mapping: (column of its brace, its items)
                nodes += 1
                result[key] = self._flow_line(second, line, path + (key,), depth)
            elif tag is None:  # a plain string: (text, column)
                nodes += 1
                result[key] = first
            else:
                scalar = flowlines.scalar_node(first, tag, line, second)
                result[key] = self._flow_scalar(scalar, path + (key,))
            if kept:
                positions[path + (key,)] = (row, key_column + 1)
        self.count += nodes
        if self.count > MAX_NODES:
            raise _FastPathDeclined  # the usual path words the error
        return result


class _FastPathDeclined(Exception):
    """The fast path of :mod:`audit.input.flowlines` does not apply: read the original text."""


def parse_document(text: str, file: str) -> Document:
    """Compose YAML text into plain data with positions; see the module docstring for the rules.

    One-line flow mappings are read by the fast path of :mod:`audit.input.flowlines` when it applies;
    whenever it does not (or the text has an error), the original text is read the usual way."""
    scanned = flowlines.scan(text)
    document = None
    if scanned is not None:
        try:
            document = _parse(scanned.text, file, scanned.mappings, keep=POSITION_DEPTH)
        except LimitError:
            raise
        except (InputError, _FastPathDeclined):
            pass
    if document is None:
        document = _parse(text, file, None, keep=POSITION_DEPTH)
    document.source = text
    return document


def _parse(text: str, file: str, flow_lines: dict | None, keep: int | None = None) -> Document:
    bound_nodes(text, file)
    try:
        node = compose(text)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or "malformed YAML"
        if exc.context:
            context = exc.context
            if exc.context_mark and mark and exc.context_mark.line != mark.line:
                context += f" (begun on line {exc.context_mark.line + 1})"
            problem = f"{context}: {problem}" if "found character '\\t'" not in problem else (problem)
        if "could not find expected ':'" in problem and mark is not None:
            line_text = text.split("\n", mark.line + 1)[mark.line] if text else ""
            if len(line_text) > 1024:
                problem = (
                    f"a line of {len(line_text):,} characters: a key may be at most 1,024 "
                    "characters long (a key this long is not a name)"
                )
        if "expected <block end>" in problem:
            problem += " (check the indentation of this line)"
        if "\\t" in problem or "tab" in problem.lower():
            problem += " (YAML does not allow tabs for indentation; use spaces)"
        raise InputError(
            f"not valid YAML: {problem}",
            file=file,
            line=mark.line + 1 if mark else None,
            column=mark.column + 1 if mark else None,
        ) from None
    except yaml.reader.ReaderError as exc:  # a control character: position is a text offset
        line = text.count("\n", 0, exc.position) + 1
        column = exc.position - (text.rfind("\n", 0, exc.position) + 1) + 1
        raise InputError(
            f"not valid YAML: the control character #x{exc.character:04x} is not allowed in a "
            "balance file",
            file=file,
            line=line,
            column=column,
        ) from None
    except yaml.YAMLError as exc:
        raise InputError(f"not valid YAML: {exc}", file=file) from None
    except RecursionError:  # PyYAML composes nested collections recursively
        raise InputError("the file nests deeper than 100 levels", file=file, **too_deep(text)) from None
    if node is None:
        raise InputError(
            "the file is empty; a balance needs 'balance', 'streams' and 'steps'", file=file, line=1
        )
    builder = _Builder(file, flow_lines, keep)
    data = builder.build(node, ())
    if flow_lines and len(builder.flow_lines_built) != len(flow_lines):
        raise _FastPathDeclined  # a recognised line did not come back as a mapping where written
    return Document(data=data, file=file, positions=builder.positions, texts=builder.texts)


def load_document(path: str | Path) -> Document:
    """Read and compose a balance file; raise :class:`InputError` naming the file and line."""
    path = Path(path)
    return parse_document(read_text(path), str(path))
