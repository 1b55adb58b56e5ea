"""``plant-audit convert FILE --to yaml [-o OUT]``: write the fully resolved balance, with the streams
and claims its tables give inlined, as one YAML file, for review diffs in version control.

Quantities are written back as the strings the balance holds: a string from the balance file as it
was written, a table cell with its header's unit (``105.73`` under ``T [degC]`` → ``105.73 degC``).
Each stream is one line, so a changed stream is a one-line diff. Comments of the original file are
not carried over. The balance is validated first: an invalid balance is not converted."""

from __future__ import annotations

import argparse
import os
import re
import sys
from pathlib import Path
from typing import Any

import yaml

from audit.commands.outputs import check_run_outputs, table_files
from audit.exitcodes import EXIT_PASS
from audit.report.publish import Output, is_standard_output, publish_set

NAME = "convert"
HELP = "write a balance with its stream and claim tables inlined, as YAML"

_SCHEMA_LINE = re.compile(r"^#\s*yaml-language-server:\s*\$schema=(\S+)")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file (YAML)")
    parser.add_argument(
        "--to", choices=["yaml"], default="yaml", help="the output format (default: yaml)"
    )
    parser.add_argument(
        "-o",
        "--output",
        type=Path,
        metavar="PATH",
        help="write to this file instead of the standard output ('-': the standard output)",
    )
    parser.add_argument(
        "--allow-outside",
        action="store_true",
        help="let the balance read stream or claim tables outside its own folder",
    )


def run(args: argparse.Namespace) -> int:
    output = None if args.output is None or is_standard_output(args.output) else args.output
    if output is not None:
        outputs = [Output(output, "the converted balance")]
        check_run_outputs(outputs, table_files(args.file), None, [args.file])
    text = resolved_yaml(args.file, allow_outside=args.allow_outside, output=output)
    if output is not None:
        from audit.report.files import write_text

        publish_set(lambda: write_text(output, text, "the converted balance"))
        print(f"wrote {output}")
    else:
        sys.stdout.write(text)
    return EXIT_PASS


def resolved_yaml(
    path: str | Path, allow_outside: bool = False, output: str | Path | None = None
) -> str:
    """The balance at ``path`` with its tables inlined, as YAML text.

    The first line points editors at the JSON Schema: the original file's ``$schema`` target,
    made relative to ``output``'s folder (the working folder when None), or the schema's ``$id``.
    Raises :class:`audit.errors.InputError` when the balance or a table is invalid.
    """
    from audit.input.document import parse_document, read_text
    from audit.input.tables import SOURCE_KEYS
    from audit.reading import json_schema, resolve_tables, validate_document

    path = Path(path)
    text = read_text(path)
    document, tables = resolve_tables(parse_document(text, str(path)), allow_outside=allow_outside)
    validate_document(document)
    data = {key: value for key, value in document.data.items() if key not in SOURCE_KEYS}
    schema = _schema_target(text, path, output) or json_schema()["$id"]
    sources = ", ".join(f"{t.display}" + (f" (sheet '{t.sheet}')" if t.sheet else "") for t in tables)
    lines = [
        f"# yaml-language-server: $schema={schema}",
        f"# Written by plant-audit convert from {path}" + (" and" if sources else ";"),
        *([f"# its tables {sources};"] if sources else []),
        "# edit the sources, not this file.",
    ]
    body = yaml.dump(
        _styled(data, depth=0),
        Dumper=_Dumper,
        sort_keys=False,
        allow_unicode=True,
        width=4096,
        default_flow_style=False,
    )
    return "\n".join(lines) + "\n" + body


def _schema_target(text: str, path: Path, output: str | Path | None) -> str | None:
    first = text.splitlines()[0] if text else ""
    match = _SCHEMA_LINE.match(first)
    if not match:
        return None
    target = match.group(1)
    if "://" in target or os.path.isabs(target):
        return target
    schema = (path.parent / target).resolve()
    folder = Path(output).resolve().parent if output else Path.cwd()
    return Path(os.path.relpath(schema, folder)).as_posix()


class _Dumper(yaml.SafeDumper):
    """Block style with indented lists; small mappings and lists of plain values on one line."""

    def increase_indent(self, flow: bool = False, indentless: bool = False) -> Any:
        return super().increase_indent(flow, False)


class _Inline(dict):
    pass


class _InlineList(list):
    pass


_Dumper.add_representer(
    _Inline, lambda d, v: d.represent_mapping("tag:yaml.org,2002:map", v, flow_style=True)
)
_Dumper.add_representer(
    _InlineList, lambda d, v: d.represent_sequence("tag:yaml.org,2002:seq", v, flow_style=True)
)


def _stream_order(stream: dict) -> dict:
    """A stream's fields in one order (the fluid, then the model's order), whatever the order of
    the table's columns, so that reordering columns does not show as a change."""
    from audit.model.streams import StreamSpec

    order = ["fluid", "composition", *StreamSpec.model_fields]
    rank = {name: i for i, name in enumerate(dict.fromkeys(order))}
    return dict(sorted(stream.items(), key=lambda item: rank.get(item[0], len(rank))))


def _plain(value: Any) -> bool:
    return not isinstance(value, (dict, list))


def _styled(value: Any, depth: int, key: Any = None, item: bool = False) -> Any:
    """Mark what is written on one line: each stream, and mappings or lists of plain values below
    the top sections (``hot: {inlet: S05, outlet: S07}``, ``outlets: [S05, S06]``); each step
    (an item of a list) stays a block."""
    if isinstance(value, dict):
        if depth == 1 and key == "streams":
            return {k: _Inline(_stream_order(v)) if isinstance(v, dict) else v for k, v in value.items()}
        items = {k: _styled(v, depth + 1, k) for k, v in value.items()}
        if depth >= 2 and not item and all(_plain(v) for v in value.values()):
            return _Inline(items)
        return items
    if isinstance(value, list):
        if depth >= 2 and all(_plain(v) for v in value):
            return _InlineList(value)
        return [_styled(v, depth + 1, item=True) for v in value]
    return value
