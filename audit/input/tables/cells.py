"""Cell parsing: the value one table cell gives its field, in the form the balance file would write
it, so all unit handling stays in :mod:`audit.units`.

A column reads its cells as one of these kinds: a quantity (:data:`QUANTITY_KINDS`; a number and the
header's unit become ``"105.73 degC"``), ``fraction`` (a plain number), ``mapping`` (a composition
such as ``N2: 0.79, O2: 0.21``, or a name) or ``text``."""

from __future__ import annotations

import math
import re
from datetime import date, datetime, time, timedelta
from typing import Any

from audit.input.tables.grid import Cell

QUANTITY_KINDS = frozenset(
    {
        "temperature",
        "pressure",
        "specific_enthalpy",
        "specific_entropy",
        "specific_volume",
        "density",
        "velocity",
        "length",
        "flow",
    }
)
"""The cell kinds that are quantities written with a unit."""

PLAIN_NUMBER = re.compile(r"^[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?$")
"""A number as text, without a unit."""
QUANTITY_TEXT = re.compile(r"^[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?\s+\S.*$")
"""A number followed by a unit, as text."""
_DECIMAL_COMMA = re.compile(r"^[-+]?\d+,\d+$")


class Bad(Exception):
    """A cell that cannot be read (the message names the problem, the caller the cell)."""


def text(value: Any) -> str:
    """A cell's value as text (a whole float without its ``.0``, booleans as the sheet shows them)."""
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return str(value)


def number_text(value: Any) -> str:
    """The number in a cell, as text that reads back to the same float."""
    if isinstance(value, bool):
        raise Bad(f"{text(value)} is not a number")
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise Bad(f"the cell holds {value!r}, not a finite number (too large for the workbook)")
        return repr(value)
    if isinstance(value, (datetime, date, time, timedelta)):
        raise Bad(
            f"'{value}' is a date or time, not a number (the spreadsheet may have read "
            "the entry as a date; format the cell as a number)"
        )
    written = str(value).strip()
    if PLAIN_NUMBER.match(written):
        return written
    if _DECIMAL_COMMA.match(written):
        raise Bad(f"'{written}' is not a number; write the decimal point as '.'")
    raise Bad(f"'{written}' is not a number")


def number(value: Any) -> int | float:
    """The number in a cell (an int when written without a point or exponent)."""
    written = number_text(value)
    try:
        return int(written)
    except ValueError:
        return float(written)


def check_saved(cell: Cell) -> None:
    """Refuse a formula with no saved value and a saved error value."""
    if cell.formula is not None:
        raise Bad(
            f"the formula '{cell.formula}' has no saved value (the file was written by a "
            "program that does not calculate formulas); open and save it in a spreadsheet "
            "program, or write the value"
        )
    if cell.error is not None:
        raise Bad(f"the cell shows the error value '{cell.error}'")


def cell_value(cell: Cell, kind: str, unit: str | None, header: str) -> Any:
    """The value a cell gives its field, in the form the balance file would write it."""
    check_saved(cell)
    value = cell.value
    if kind in QUANTITY_KINDS:
        if unit is not None:
            if isinstance(value, str) and QUANTITY_TEXT.match(value.strip()):
                raise Bad(
                    f"'{value.strip()}' is not a number; the column '{header}' gives the "
                    f"unit ({unit}); for another unit, add a column such as "
                    f"'{header.split('[')[0].strip()} [{value.split()[-1]}]'"
                )
            return f"{number_text(value)} {unit}"
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            raise Bad(
                f"'{text(value)}' has no unit, and the column '{header}' gives none; "
                f"write the unit in the header, like '{header} [unit]', or in the cell"
            )
        return str(value).strip()
    if kind == "fraction":
        return number(value)
    if kind == "mapping":
        return mapping(value)
    return text(value).strip()


def mapping(value: Any) -> dict[str, Any] | str:
    """A composition cell: ``N2: 0.79, O2: 0.21`` (braces optional), or a name such as ``air``."""
    written = text(value).strip()
    example = "write it like 'N2: 0.79, O2: 0.21', or give a name such as 'air'"
    if ":" not in written and "," not in written:
        if any(ch.isdigit() for ch in written) and not re.search(r"[A-Za-z]{3}", written):
            raise Bad(f"'{written}' is not a composition; {example}")
        return written  # a named composition; the stream validation says whether it is known
    if written.startswith("{") and written.endswith("}"):
        written = written[1:-1]
    result: dict[str, Any] = {}
    for part in written.split(","):
        name, colon, amount = part.partition(":")
        name = name.strip().strip("'\"")
        if not colon or not name or not amount.strip():
            raise Bad(f"'{text(value).strip()}' is not a composition; {example}")
        if name in result:
            raise Bad(f"'{name}' is written twice in the composition")
        try:
            result[name] = number(amount.strip())
        except Bad:
            raise Bad(f"'{amount.strip()}' (for {name}) is not a number; {example}") from None
    return result
