"""Resolving a balance's tables: each table named under ``streams_from`` or ``claims_from`` is
located and checked (:mod:`~audit.input.tables.sources`), read into a grid
(:mod:`~audit.input.tables.grid`, once per file and sheet), and its rows merged into the balance
data (:mod:`~audit.input.tables.streams`, :mod:`~audit.input.tables.claims`)."""

from __future__ import annotations

import hashlib
from collections.abc import Mapping
from pathlib import Path

from audit.errors import InputError, InputErrors, Problem
from audit.input.document import Document
from audit.input.files import MAX_FILE_BYTES, read_bytes
from audit.input.tables.claims import merge_claims
from audit.input.tables.grid import Grid, read_csv, read_workbook
from audit.input.tables.sources import (
    SOURCE_KEYS,
    TableFile,
    TableSource,
    fail,
    locate,
    table_source,
)
from audit.input.tables.streams import CellPlaces, merge_streams


def resolve(
    document: Document, stream_kinds: Mapping[str, str], *, allow_outside: bool = False
) -> tuple[Document, list[TableFile]]:
    """Merge the streams and claims a balance takes from tables into its data.

    ``stream_kinds`` says which fields a stream table may give (with ``id``) and how each
    column's cells are read (field → cell kind, :mod:`audit.input.tables.cells`); the model
    provides it (:func:`audit.model.table_columns.stream_kinds`). A table outside the balance
    file's folder tree is refused unless ``allow_outside`` is true.

    Returns a new :class:`~audit.input.document.Document` whose ``cells`` say which cell each
    merged value came from, and the table files read. Raises :class:`~audit.errors.InputError`
    (or :class:`~audit.errors.InputErrors`) naming the balance line or the table cell of each
    problem.
    """
    data = document.data
    if not isinstance(data, dict) or not any(key in data for key in SOURCE_KEYS):
        return document, []
    new = dict(data)
    cells: CellPlaces = dict(document.cells)
    problems: list[Problem] = []
    grids: dict[tuple[Path, str | None], Grid] = {}
    read: list[TableFile] = []
    for key in SOURCE_KEYS:
        if key not in data:
            continue
        source = table_source(document, key)
        grid = _load(document, key, source, allow_outside, grids)
        if key == "streams_from":
            problems += merge_streams(document, new, cells, grid, source, stream_kinds)
        else:
            problems += merge_claims(document, new, cells, grid, source)
        table = TableFile(grid.display, grid.sha256, grid.sheet, grid.filled_rows())
        if table not in read:
            read.append(table)
    if problems:
        raise InputErrors(problems)
    merged = Document(
        data=new,
        file=document.file,
        positions=document.positions,
        cells=cells,
        texts=document.texts,
        source=document.source,
    )
    return merged, read


def _load(
    document: Document,
    key: str,
    source: TableSource,
    allow_outside: bool,
    grids: dict[tuple[Path, str | None], Grid],
) -> Grid:
    """Find, check and read the table file named under ``key`` (once per file and sheet)."""
    found = locate(document, key, source, allow_outside)
    cache_key = (found.path, source.sheet)
    if cache_key in grids:
        return grids[cache_key]

    def fail_file(message: str) -> Exception:
        return fail(document, found.named_at, message)

    try:
        raw = read_bytes(found.path, MAX_FILE_BYTES, "a table")
    except InputError as exc:
        raise fail_file(f"the table '{found.display}' {exc.problem.message}") from None

    if found.suffix == ".csv":
        grid = read_csv(raw, found.display, source.delimiter, fail_file)
    else:
        default = "streams" if key == "streams_from" else "claims"
        grid = read_workbook(
            raw,
            found.display,
            source.sheet,
            default,
            fail_file,
            lambda message: fail(document, (key, "sheet"), message),
        )
    grid.sha256 = hashlib.sha256(raw).hexdigest()
    grids[cache_key] = grid
    return grid
