"""Reading YAML within limits: composing a file, bounding its number of values before it is
composed (with bounded memory), and finding where it nests too deep.
"""

from __future__ import annotations

import yaml

from audit.errors import InputError

MAX_COMPOSED_NODES = 1_000_000
"""Most YAML nodes composed from one file (after the fast path of :mod:`audit.input.flowlines` has
taken the one-line mappings): composing keeps every node with its marks in memory, about half a
kilobyte each, so a file of millions of tiny values is refused before it is composed
(:func:`_bound_nodes`)."""

FAST_LOADER = getattr(yaml, "CSafeLoader", None)


class LimitError(InputError):
    """A file refused for its number of values: never read a second time the usual way."""


def bound_nodes(text: str, file: str) -> None:
    """Refuse text that would compose into more than :data:`MAX_COMPOSED_NODES` nodes, before it
    is composed, with bounded memory. Every node but the first follows one of the characters
    counted here (a line break, ``,``, ``:``, ``-``, ``[``, ``{``), so their count bounds the nodes
    from above in one cheap pass; only when that bound is over the limit are the parse events
    counted (streamed, never kept)."""
    estimate = sum(text.count(c) for c in "\n,:-[{")
    if estimate <= MAX_COMPOSED_NODES:
        return
    count = 0
    loader = FAST_LOADER or yaml.SafeLoader
    try:
        for event in yaml.parse(text, Loader=loader):
            if isinstance(event, (yaml.ScalarEvent, yaml.CollectionStartEvent, yaml.AliasEvent)):
                count += 1
                if count > MAX_COMPOSED_NODES:
                    raise LimitError(
                        f"the file holds more than {MAX_COMPOSED_NODES:,} values (written out, not "
                        "counting one-line stream and step mappings); a balance is far smaller",
                        file=file,
                        line=event.start_mark.line + 1,
                        column=event.start_mark.column + 1,
                    )
    except yaml.YAMLError:
        return  # composing words the error


def compose(text: str) -> yaml.Node | None:
    """The YAML node graph of ``text``: libyaml's when it reads the text, else the pure-Python
    parser's (which raises the errors :func:`parse_document` words)."""
    if FAST_LOADER is not None and "\t" not in text:
        try:
            return yaml.compose(text, Loader=FAST_LOADER)
        except yaml.YAMLError:
            pass
    return yaml.compose(text, Loader=yaml.SafeLoader)


def too_deep(text: str) -> dict[str, int]:
    """Line and column where collections first nest deeper than 100 levels (parse events are read
    without recursion, so this works where composing the file failed)."""
    depth = 0
    try:
        for event in yaml.parse(text, Loader=yaml.SafeLoader):
            if isinstance(event, yaml.CollectionStartEvent):
                depth += 1
                if depth > 100:
                    return {"line": event.start_mark.line + 1, "column": event.start_mark.column + 1}
            elif isinstance(event, yaml.CollectionEndEvent):
                depth -= 1
    except yaml.YAMLError:
        pass
    return {}
