"""Writing a stream table: balance-file streams laid out as table rows (for templates, sample
tables and conversions); the reverse of :mod:`~audit.input.tables.streams`."""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

from audit.input.tables.cells import PLAIN_NUMBER, QUANTITY_KINDS, number
from audit.input.tables.headers import HEADER

Tag = tuple[str, str | None]
"""A column as (field, unit)."""


def table_rows(
    streams: dict[str, dict], headers: list[str], kinds: Mapping[str, str]
) -> tuple[list[str], list[list[Any]], list[str]]:
    """Lay out balance-file streams as a stream table.

    Starts from ``headers`` (e.g. :func:`audit.model.table_columns.stream_template_headers`) and
    adds a column for each unit a quantity is written in that the headers lack (``P [bar]`` beside
    ``P [barg]``); ``kinds`` says how each stream field is written in a table (field → cell kind,
    :func:`audit.model.table_columns.stream_kinds`). Returns the headers, one row of cell values
    per stream, and the ids of the streams a table cannot express (a field that is neither a
    quantity with a unit, a number, a text nor a simple composition).
    """
    headers = list(headers)
    parsed: dict[Tag, int] = {}
    for index, header in enumerate(headers):
        match = HEADER.match(header.strip())
        if match is None:
            raise ValueError(f"'{header}' is not a stream-table header")
        name = match.group("name")
        unit = (match.group("unit") or "").strip() or None
        parsed[(name, unit)] = index
    records: list[dict[Tag, Any]] = []
    left_out: list[str] = []
    for stream_id, stream in streams.items():
        cells = _row_cells(stream_id, stream, kinds)
        if cells is None:
            left_out.append(stream_id)
        else:
            records.append(cells)
    order = list(parsed)  # the given headers first; a further unit goes after its field's last
    for cells in records:
        for tag in cells:
            if tag not in order:
                same = [i for i, known in enumerate(order) if known[0] == tag[0]]
                order.insert(same[-1] + 1 if same else len(order), tag)
    given = {tag: headers[index] for tag, index in parsed.items()}
    layout = [given.get(tag) or (f"{tag[0]} [{tag[1]}]" if tag[1] else tag[0]) for tag in order]
    rows = [[cells.get(tag) for tag in order] for cells in records]
    return layout, rows, left_out


def _row_cells(stream_id: str, stream: Any, kinds: Mapping[str, str]) -> dict[Tag, Any] | None:
    """One stream's cells by (field, unit), or None when a table cannot express the stream."""
    cells: dict[Tag, Any] = {("id", None): stream_id}
    expressible = isinstance(stream, dict)
    for name, value in stream.items() if isinstance(stream, dict) else []:
        kind = kinds.get(name)
        if kind is None:
            expressible = False
        elif kind in QUANTITY_KINDS and isinstance(value, str):
            match = re.match(r"^\s*(\S+)\s+(.*?)\s*$", value)
            if not match or not PLAIN_NUMBER.match(match.group(1)) or "[" in value:
                expressible = False
                continue
            cells[(name, match.group(2))] = number(match.group(1))
        elif kind == "fraction" and isinstance(value, (int, float)) and not isinstance(value, bool):
            cells[(name, None)] = value
        elif kind == "mapping" and isinstance(value, str) and ":" not in value:
            cells[(name, None)] = value
        elif (
            kind == "mapping"
            and isinstance(value, dict)
            and all(
                isinstance(v, (int, float))
                and not isinstance(v, bool)
                and ":" not in str(k)
                and "," not in str(k)
                for k, v in value.items()
            )
        ):
            cells[(name, None)] = ", ".join(f"{k}: {v!r}" for k, v in value.items())
        elif kind == "text" and isinstance(value, str):
            cells[(name, None)] = value
        else:
            expressible = False
    return cells if expressible else None
