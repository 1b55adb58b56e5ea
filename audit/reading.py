"""Reading a balance: the file's bytes → YAML with positions → tables merged → validated model.

The one place where the file edge (:mod:`audit.input`) meets the model with every step kind
(:func:`audit.steps.model_for`). The solver never reads files; it receives what this returns.
"""

from __future__ import annotations

from pathlib import Path

from audit import steps as _steps
from audit.input.document import Document, load_document, parse_document
from audit.input.tables import TableFile, resolve
from audit.model import balance as _balance
from audit.model.balance import Balance
from audit.model.ids import normalise_ids
from audit.model.table_columns import stream_kinds


def resolve_tables(document: Document, allow_outside: bool = False) -> tuple[Document, list[TableFile]]:
    """Merge the streams and claims a balance takes from tables (:mod:`audit.input.tables`),
    reading stream tables by the stream model's columns (:mod:`audit.model.table_columns`).

    A table outside the balance file's folder tree is refused unless ``allow_outside`` is true.
    Returns the merged document (its ids checked and normalised, :mod:`audit.model.ids`) and the
    table files read."""
    merged, tables = resolve(document, stream_kinds(), allow_outside=allow_outside)
    return normalise_ids(merged), tables


def validate_document(document: Document) -> Balance:
    """Validate a read document into the balance model of the step kinds it names
    (:func:`audit.steps.model_for`: the same verdict and messages as the model of every kind).

    Raises :class:`audit.errors.InputErrors` naming the file, line and field of every problem."""
    steps = document.data.get("steps") if isinstance(document.data, dict) else None
    kinds = [s.get("kind") for s in steps if isinstance(s, dict)] if isinstance(steps, list) else []
    return _balance.validate_document(document, _steps.model_for(kinds))


def load_balance(path: str | Path) -> tuple[Balance, Document]:
    """Read, parse and validate a balance file (its tables merged in).

    Raises :class:`audit.errors.InputError` (or :class:`audit.errors.InputErrors`) whose messages
    name the file, line, column and field path of every problem found.
    """
    document, _ = resolve_tables(load_document(path))
    return validate_document(document), document


def parse_balance(text: str, file: str = "<text>") -> tuple[Balance, Document]:
    """As :func:`load_balance`, from text (no tables are read)."""
    document = normalise_ids(parse_document(text, file))
    return validate_document(document), document


def json_schema() -> dict:
    """The JSON Schema of a balance file, as committed in ``schemas/``."""
    return _balance.json_schema(_steps.BALANCE_MODEL)


def schema_text() -> str:
    """:func:`json_schema` as the committed text."""
    return _balance.schema_text(_steps.BALANCE_MODEL)
