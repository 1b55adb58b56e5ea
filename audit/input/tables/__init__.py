"""Stream and claim tables: a balance's streams (and, optionally, its steps' claims) read from a
spreadsheet.

A balance file names its tables, relative to its own folder::

    streams_from: {file: quillon-bay-streams.xlsx, sheet: streams}
    claims_from: {file: quillon-bay-streams.xlsx, sheet: claims}     # optional

**Stream table.** One header row (the first filled row, or ``header_row``), then one row per
stream. A header is a stream field and, for a quantity, its unit in square brackets::

    id | fluid | T [degC] | P [barg] | quality | h [kJ/kg] | s [kJ/(kg K)] | flow [t/h] | phase |
    description

A numeric cell and its header's unit become the quantity string the balance file would hold
(``105.73`` under ``T [degC]`` → ``"105.73 degC"``), so all unit handling stays in
:mod:`audit.units`. A quantity may have several columns with different units (``P [barg]`` and
``P [bar]``); a row fills at most one of them. A header without a unit takes cells written with their
own unit (``"10.8 t/h"``). ``quality`` takes no unit; ``composition`` is text like
``N2: 0.79, O2: 0.21``. Other headers can be mapped with ``columns`` (field → header as written, or
``{header: ..., unit: ...}``) or skipped with ``ignore_columns``. Which fields a stream table may
give is the model's to say (:mod:`audit.model.table_columns`); the caller hands it to
:func:`resolve`.

**Claim table.** Columns ``step | field | value | unit`` (``note`` is free text, not read): each row
sets one field of one step of the balance file, e.g. ``T1 | shaft_power | 1.148 | MW``.

Rules: empty rows and trailing blank columns are ignored; everything else is read or refused. Merged
cells, text in a numeric cell, unknown headers or units, a stream id used twice, a formula with no
saved value and a value given both in the table and in the balance file are errors that name the
table file, the sheet and the cell (``streams.xlsx, sheet 'HB rev C', cell D14``). Tables must lie
inside the balance file's folder tree unless the caller allows otherwise (``--allow-outside``), so
an audit never reads arbitrary files named by a balance it was handed.

How the parts fit, bottom to top:

* :mod:`~audit.input.tables.sources`: where a balance names its tables; which files may be read;
* :mod:`~audit.input.tables.grid`: a CSV file or a workbook sheet as a grid of cells with positions
  (the only module here that imports openpyxl);
* :mod:`~audit.input.tables.cells`: the value one cell gives its field;
* :mod:`~audit.input.tables.headers`: the header row, its columns and their units;
* :mod:`~audit.input.tables.streams`, :mod:`~audit.input.tables.claims`: stream rows and claim rows
  merged into the balance data;
* :mod:`~audit.input.tables.reader`: :func:`resolve`, which runs the above for a balance;
* :mod:`~audit.input.tables.layout`: the reverse, streams laid out as a table (:func:`table_rows`).
"""

from audit.input.tables.claims import CLAIM_HEADERS
from audit.input.tables.grid import MAX_CELLS, column_letter
from audit.input.tables.layout import table_rows
from audit.input.tables.reader import resolve
from audit.input.tables.sources import SOURCE_KEYS, ColumnSpec, TableFile, TableSource

__all__ = [
    "CLAIM_HEADERS",
    "MAX_CELLS",
    "SOURCE_KEYS",
    "ColumnSpec",
    "TableFile",
    "TableSource",
    "column_letter",
    "resolve",
    "table_rows",
]
