"""Stream rows: one stream per row of a stream table, merged into the balance's ``streams``.

The caller says which fields a stream table may give and how each column's cells are read
(``kinds``, field → cell kind, with ``id``); this module knows no stream model."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from audit.errors import Problem
from audit.input.document import Document
from audit.input.tables.cells import Bad, cell_value
from audit.input.tables.grid import Cell, Grid, column_letter
from audit.input.tables.headers import Column, has_site, header_row, merged_problems, read_columns
from audit.input.tables.sources import TableSource

CellPlaces = dict[tuple, tuple[str, str]]
"""Balance path → (table file, cell): where each merged value came from."""


def merge_streams(
    document: Document,
    new: dict,
    cells: CellPlaces,
    grid: Grid,
    source: TableSource,
    kinds: Mapping[str, str],
) -> list[Problem]:
    """Put the table's streams into ``new`` (the balance data) and their cells into ``cells``;
    return the problems found."""
    row = header_row(grid, source)
    if row is None:
        return [
            Problem(
                "the stream table is empty",
                file=grid.display,
                cell=grid.row(1) if grid.sheet is None else f"sheet '{grid.sheet}'",
            )
        ]
    columns, ignored, problems = read_columns(
        grid, row, source, kinds, has_site(document.data), document, "streams_from"
    )
    problems += merged_problems(grid, row, columns)
    if problems:
        return problems  # the rows cannot be read reliably
    id_column = next((c for c in columns if c.field == "id"), None)
    if id_column is None:
        return problems + [
            Problem(
                "the stream table needs an 'id' column (the stream ids)",
                file=grid.display,
                cell=grid.row(row),
            )
        ]
    inline = document.data.get("streams")
    streams: dict[str, dict] = {}
    first_cell: dict[str, str] = {}
    by_index = {c.index: c for c in columns}
    for number, cells_of_row in grid.rows:
        if number <= row or all(c.blank for c in cells_of_row):
            continue
        id_cell = cells_of_row[id_column.index] if id_column.index < len(cells_of_row) else Cell()
        id_place = grid.cell(number, id_column.index)
        if id_cell.blank:
            problems.append(
                Problem("this row has values but no stream id", file=grid.display, cell=id_place)
            )
            continue
        try:
            stream_id = cell_value(id_cell, "text", None, id_column.header)
        except Bad as exc:
            problems.append(Problem(str(exc), file=grid.display, cell=id_place))
            continue
        where = f"stream {stream_id}"
        if stream_id in first_cell:
            problems.append(
                Problem(
                    f"the stream id '{stream_id}' is used twice in the table (also in "
                    f"{first_cell[stream_id]})",
                    file=grid.display,
                    cell=id_place,
                    where=where,
                )
            )
            continue
        if isinstance(inline, dict) and stream_id in inline:
            line, _ = document.position(("streams", stream_id))
            problems.append(
                Problem(
                    f"stream {stream_id} is written both in the balance file ({document.file}, "
                    f"line {line}) and in this table; a stream is written in one place",
                    file=grid.display,
                    cell=id_place,
                    where=where,
                )
            )
            continue
        first_cell[stream_id] = id_place
        record, places, row_problems = _stream_row(
            grid, number, cells_of_row, id_column, by_index, ignored, kinds, where
        )
        problems += row_problems
        streams[stream_id] = record
        cells[("streams", stream_id)] = (grid.display, grid.row(number))
        cells[("streams", stream_id, "<key>")] = (grid.display, id_place)
        for name, place in places.items():
            cells[("streams", stream_id, name)] = (grid.display, place)
    if not streams and not problems:
        problems.append(
            Problem(
                "the stream table has a header row but no stream rows",
                file=grid.display,
                cell=grid.row(row),
            )
        )
    _place_streams(new, inline, streams)
    return problems


def _stream_row(
    grid: Grid,
    number: int,
    cells_of_row: list[Cell],
    id_column: Column,
    by_index: dict[int, Column],
    ignored: set[int],
    kinds: Mapping[str, str],
    where: str,
) -> tuple[dict[str, Any], dict[str, str], list[Problem]]:
    """One stream row: field → value, field → cell, and the row's problems."""
    record: dict[str, Any] = {}
    places: dict[str, str] = {}
    problems: list[Problem] = []
    for index, cell in enumerate(cells_of_row):
        if index == id_column.index or cell.blank or index in ignored:
            continue
        place = grid.cell(number, index)
        column = by_index.get(index)
        if column is None:
            problems.append(
                Problem(
                    f"this cell has a value but column {column_letter(index)} has no header",
                    file=grid.display,
                    cell=place,
                    where=where,
                )
            )
            continue
        try:
            value = cell_value(cell, kinds[column.field], column.unit, column.header)
        except Bad as exc:
            problems.append(Problem(str(exc), file=grid.display, cell=place, where=where))
            continue
        if column.field in record:
            problems.append(
                Problem(
                    f"{column.field} is given twice in this row "
                    f"({places[column.field].split()[-1]} and {place.split()[-1]}); leave one "
                    "of them empty",
                    file=grid.display,
                    cell=place,
                    where=where,
                )
            )
            continue
        record[column.field] = value
        places[column.field] = place
    return record, places, problems


def _place_streams(new: dict, inline: Any, streams: dict[str, dict]) -> None:
    """Add the table's streams to the balance's own; a balance without ``streams`` gets them
    where ``streams_from`` is, so the usual order holds."""
    if isinstance(inline, dict):
        new["streams"] = {**inline, **streams}
    elif inline is None:
        items = list(new.items())
        new.clear()
        for key, value in items:
            if key == "streams_from":
                new["streams"] = streams
            new[key] = value
    # a 'streams' that is not a mapping is left for the balance validation to report
