"""Where a balance names its tables, and which files may be read: the ``streams_from`` and
``claims_from`` entries, checked against the balance file's folder tree, the file types read and
the largest file size."""

from __future__ import annotations

import difflib
import os
from dataclasses import dataclass
from pathlib import Path

from pydantic import BaseModel, ConfigDict, Field, ValidationError

from audit.errors import InputError, InputErrors, Problem
from audit.input.document import Document
from audit.input.files import MAX_FILE_BYTES

SOURCE_KEYS = ("streams_from", "claims_from")
"""The balance-file keys that name tables."""

TABLE_SUFFIXES = {".xlsx", ".xlsm", ".csv"}
"""The file types read as tables."""

_REFUSED_SUFFIXES = (".xls", ".ods", ".xlsb")


class ColumnSpec(BaseModel):
    """A column of a table named by its header as written, with the unit of its cells."""

    model_config = ConfigDict(extra="forbid")

    header: str = Field(min_length=1, description="the header text as written in the table")
    unit: str | None = Field(None, description="the unit of the column's numbers, e.g. 'degC'")


class TableSource(BaseModel):
    """A table a balance takes streams or claims from: a .xlsx or .csv file beside the balance."""

    model_config = ConfigDict(extra="forbid")

    file: str = Field(min_length=1, description="the .xlsx or .csv file, relative to the balance")
    sheet: str | None = Field(
        None,
        description="the workbook's sheet; default: the only sheet, or the one named "
        "'streams' (stream tables) or 'claims' (claim tables)",
    )
    header_row: int | None = Field(
        None,
        ge=1,
        description="the row of the headers (1 = first row); default: the first filled row",
    )
    columns: dict[str, str | ColumnSpec] = Field(
        default_factory=dict,
        description="field → header as written (with '[unit]'), or "
        "{header, unit}, for tables whose headers are not in the standard form",
    )
    ignore_columns: list[str] = Field(
        default_factory=list, description="headers of columns the audit does not read"
    )
    delimiter: str = Field(",", min_length=1, max_length=1, description="field separator of a .csv file")


@dataclass(frozen=True)
class TableFile:
    """A table file read for a balance: as shown in messages, its SHA-256, its sheet, its rows."""

    display: str
    sha256: str
    sheet: str | None
    rows: int


@dataclass(frozen=True)
class Located:
    """A table file found and checked: where it is, how messages show it, its type, and the
    balance-file path that named it (for messages about the file as a whole)."""

    path: Path
    display: str
    suffix: str
    named_at: tuple[str, ...]


def table_source(document: Document, key: str) -> TableSource:
    """The table named under ``key`` (a file name, or a mapping with ``file`` and options).

    Raises :class:`~audit.errors.InputErrors` naming the balance line of each problem."""
    raw = document.data[key]
    if isinstance(raw, str):
        raw = {"file": raw}
    try:
        return TableSource.model_validate(raw)
    except ValidationError as exc:
        problems = []
        for error in exc.errors(include_url=False):
            loc = tuple(part for part in error["loc"] if part not in ("str", "ColumnSpec"))
            kind = error["type"]
            if kind == "extra_forbidden":
                allowed = sorted(TableSource.model_fields)
                close = difflib.get_close_matches(str(loc[-1]), allowed, n=1)
                message = f"unknown field '{loc[-1]}'" + (
                    f"; did you mean '{close[0]}'?" if close else ""
                )
            elif kind == "missing":
                message = f"'{loc[-1]}' is required here"
            elif kind in ("model_type", "dict_type") and not loc:
                message = (
                    "a table is named by its file, e.g. 'streams.xlsx', or by a mapping "
                    "with 'file' and optionally 'sheet'"
                )
            else:
                message = error["msg"]
            path = (key, *loc)
            problems.append(
                Problem(message, **document.place(path), field_path=".".join(str(p) for p in path))
            )
        raise InputErrors(problems) from None


def fail(document: Document, path: tuple, message: str) -> InputError:
    """An error about the balance-file value at ``path``."""
    return InputError(message, **document.place(path), field_path=".".join(map(str, path)))


def locate(document: Document, key: str, source: TableSource, allow_outside: bool) -> Located:
    """Find the table file named under ``key`` and check that it may be read: inside the balance
    file's folder tree (unless ``allow_outside``), a .xlsx or .csv file, no larger than
    :data:`~audit.input.document.MAX_FILE_BYTES`, and no sheet named for a CSV file."""
    here: tuple[str, ...] = (key, "file") if isinstance(document.data[key], dict) else (key,)
    written = Path(source.file)
    folder = Path(document.file).parent
    target = written if written.is_absolute() else folder / written
    display = os.path.normpath(str(target))
    resolved = target.resolve()
    home = folder.resolve()
    if not allow_outside and not resolved.is_relative_to(home):
        raise fail(
            document,
            here,
            f"the table '{source.file}' is outside the balance file's folder ({home}); an audit "
            "reads only files inside that folder tree unless allowed (--allow-outside on the "
            "command line, allow_outside=True in Python)",
        )
    suffix = resolved.suffix.lower()
    if suffix in _REFUSED_SUFFIXES:
        raise fail(
            document,
            here,
            f"the table '{source.file}' is a {suffix} file, which plant-audit does not read; "
            "save it as .xlsx or .csv",
        )
    if suffix not in TABLE_SUFFIXES:
        raise fail(document, here, f"the table '{source.file}' is neither a .xlsx nor a .csv file")
    if not resolved.exists():
        raise fail(document, here, f"the table '{display}' does not exist")
    if resolved.is_dir():
        raise fail(document, here, f"the table '{display}' is a folder, not a file")
    if not resolved.is_file():
        raise fail(
            document,
            here,
            f"the table '{display}' is not a regular file (a named pipe, a device or a socket)",
        )
    size = resolved.stat().st_size
    if size > MAX_FILE_BYTES:
        raise fail(
            document,
            here,
            f"the table '{display}' is {size / 1e6:.1f} MB, larger than the "
            f"{MAX_FILE_BYTES / 1e6:.0f} MB a table may be",
        )
    if suffix == ".csv" and source.sheet is not None:
        raise fail(
            document,
            (key, "sheet"),
            f"'{display}' is a CSV file, which has no sheets; remove 'sheet'",
        )
    return Located(resolved, display, suffix, here)
