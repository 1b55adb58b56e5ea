"""Whole rows of a findings-workbook sheet written as XML by us, into an XlsxWriter worksheet in
constant-memory mode: the one module that reaches into XlsxWriter's private parts.

XlsxWriter keeps one row of a constant-memory worksheet in a table and writes it to the sheet's
temporary file when a cell of a later row arrives; each cell costs it a cell object, a dimension
check and a list of attributes turned into XML one by one. :class:`Rows` does the same job a row at
a time: the cells of the current row are kept as (kind, value, format), and when the row is done
its XML goes straight into the worksheet's temporary file, the same bytes XlsxWriter's own cell
writer makes (``tests/test_workbook_rows.py`` compares the two on every kind of cell, so a change in
XlsxWriter's output shows there). What it uses of XlsxWriter's insides, all of the worksheet:

* ``constant_memory``, ``fh`` (the temporary row file while the sheet is open), ``previous_row``
  and ``_write_single_row`` (the row XlsxWriter itself holds, written before ours), ``table``;
* ``_check_dimensions`` (the sheet's used range), ``_write_row`` (a row's opening tag, with its
  height), ``row_info`` (the heights :meth:`set_row` stored), ``col_info`` (a column's format, the
  format of a cell that has none), ``merge`` (merged ranges), ``ignore_write_string`` (a link
  stored without its text cell, which :class:`Rows` writes), ``default_url_format``;
  ``hyperlinks``, ``hlink_count`` and ``max_url_length`` (an internal link stored as the
  attributes ``_write_hyperlinks`` reads, :class:`InternalLink`, with ``url.UrlTypes``);
* of a format, ``_get_xf_index`` (its number in the file's style table, given on first use).

What kind of cell a value makes (:func:`cell_kind`) is here too: text always as text, with the
control characters a cell cannot hold replaced (:func:`safe_text`), a :class:`Formula` with its
cached value.

The XlsxWriter versions this is written for are pinned in ``pyproject.toml``.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass
from typing import Any

from xlsxwriter.url import UrlTypes

from audit.wording import finite_or_none

NUMBER, STRING, FORMULA, BLANK, BOOLEAN = range(5)
"""The kinds of cell :meth:`Rows.cell` takes."""

STRING_MAX = 32_767
"""The most characters (UTF-16 code units) a cell's text may have; longer text is cut there."""

_SPECIAL = re.compile("[&<>\x00-\x08\x0b-\x1f\ufffe\uffff]|_x[0-9a-fA-F]{4}_")
"""Text that needs escaping: XML's own characters, control characters, Excel's ``_xHHHH_``."""
_ESCAPED = re.compile("(_x[0-9a-fA-F]{4}_)")
_CONTROL = re.compile("([\x00-\x08\x0b-\x1f])")
_FUNCTION = re.compile(r"[A-Za-z_][A-Za-z0-9_.]*\(|^\{")
"""A formula that calls a function (XlsxWriter may prefix newer ones) or is an array formula."""


_ILLEGAL = re.compile(r"[\000-\010]|[\013-\014]|[\016-\037]")
"""Control characters an .xlsx cell cannot hold (XML 1.0)."""


def safe_text(value: str) -> str:
    """``value`` with the control characters a workbook cannot hold replaced by U+FFFD, and
    carriage returns as line feeds (XML readers turn them into line feeds anyway)."""
    if value.isprintable():  # the usual text: no control character at all
        return value
    return _ILLEGAL.sub("\ufffd", value.replace("\r\n", "\n").replace("\r", "\n"))


@dataclass
class Formula:
    """A live formula and the value a spreadsheet program computes for it (cached in the file)."""

    text: str
    cached: float | None


def cell_kind(value: Any) -> tuple[int, Any]:
    """The kind of cell a value makes, and what it holds: text as text (:func:`safe_text`), a
    :class:`Formula` with its cached value (0 when it has none), a number (a non-finite one as an
    empty cell), a boolean, nothing as an empty cell, anything else as its text."""
    if isinstance(value, str):
        return STRING, safe_text(value)
    if isinstance(value, Formula):
        return FORMULA, (value.text, value.cached if value.cached is not None else 0)
    if isinstance(value, bool):
        return BOOLEAN, value
    if isinstance(value, (int, float)):
        number = finite_or_none(float(value)) if isinstance(value, float) else value
        return (BLANK, None) if number is None else (NUMBER, number)
    if value is None:
        return BLANK, None
    return STRING, safe_text(str(value))


INTERNAL = "internal:"
"""The prefix of a link to a place in the workbook."""


class InternalLink:
    """What XlsxWriter's ``_write_hyperlinks`` reads of a stored internal link: the place, the
    text shown, no tooltip (the attributes of its ``Url`` it reads, and the one it may set)."""

    __slots__ = ("_link", "_text", "_is_object_link")
    _link_type = UrlTypes.INTERNAL
    _tip = ""

    def __init__(self, location: str, text: str) -> None:
        self._link = location
        self._text = text
        self._is_object_link = False


def column_letters(col: int) -> str:
    """The letters of a 0-based column (0 → A, 26 → AA)."""
    letters = ""
    col += 1
    while col:
        col, remainder = divmod(col - 1, 26)
        letters = chr(65 + remainder) + letters
    return letters


def text_xml(text: str) -> str:
    """``text`` as the content of an inline string's ``<t>`` element, with its opening tag's
    attribute: Excel's ``_xHHHH_`` escapes for control characters (and for literal ``_xHHHH_``),
    XML's for ``&``, ``<`` and ``>``, and ``xml:space="preserve"`` when it starts or ends with
    white space."""
    if _SPECIAL.search(text):
        text = _ESCAPED.sub(r"_x005F\1", text)
        text = _CONTROL.sub(lambda m: f"_x{ord(m.group(1)):04X}_", text)
        text = text.replace("\ufffe", "_xFFFE_").replace("\uffff", "_xFFFF_")
        text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    if text[:1].isspace() or text[-1:].isspace():  # as XlsxWriter's r"^\s" or r"\s$"
        return '<t xml:space="preserve">' + text + "</t>"
    return "<t>" + text + "</t>"


def _utf16_cut(text: str) -> str:
    """``text`` cut to :data:`STRING_MAX` UTF-16 code units (a cell's limit)."""
    if len(text) <= STRING_MAX // 2:
        return text
    units = 0
    for index, char in enumerate(text):
        units += 2 if ord(char) > 0xFFFF else 1
        if units > STRING_MAX:
            return text[:index]
    return text


class Rows:
    """The rows of one worksheet (an XlsxWriter worksheet made with ``constant_memory``), written
    a row at a time in increasing order; a cell of a row already written is dropped, as XlsxWriter
    drops it. Call :meth:`finish` when the sheet's cells are all given."""

    def __init__(self, ws: Any) -> None:
        if not ws.constant_memory:
            raise ValueError("Rows writes into a constant-memory worksheet only")
        self.ws = ws
        self.row = -1
        self.cells: dict[int, tuple[int, Any, Any]] = {}
        self.styles: dict[int, str] = {}  # id(format) → its ' s="N"' attribute
        self.column_styles: dict[int, str] = {}  # column → the attribute of its cells without one
        self.letters: list[str] = []

    # -- cells ---------------------------------------------------------------------------------
    def cell(self, row: int, col: int, kind: int, value: Any, cell_format: Any = None) -> None:
        """Keep a cell (0-based ``row`` and ``col``): a :data:`NUMBER` (finite), a
        :data:`STRING`, a :data:`FORMULA` (``value`` = (text, cached value)), a :data:`BLANK`
        (written only with a format) or a :data:`BOOLEAN`."""
        if row != self.row:
            if row < self.row:
                return
            self._write()
            self.row = row
        if kind == BLANK and cell_format is None:
            return  # XlsxWriter writes no blank cell without a format (nor clears the cell)
        self.cells[col] = (kind, value, cell_format)

    def link(self, row: int, col: int, target: str, text: str, cell_format: Any = None) -> None:
        """A cell of ``text`` that links to ``target`` ("internal:'Sheet'!A1" or a URL); without a
        format it takes the worksheet's hyperlink format, as XlsxWriter's own links do."""
        if row < self.row:
            return
        self.cell(row, col, STRING, text, cell_format or self.ws.default_url_format)
        ws = self.ws
        self._claim(row)
        location = target[len(INTERNAL) :] if target.startswith(INTERNAL) else None
        if location is not None and len(location) <= ws.max_url_length and text:
            # what XlsxWriter's own write_url stores for an internal link, without its Url object
            # (about 15 µs and half a kilobyte a link, kept until the file closes)
            if ws._check_dimensions(row, col) == 0:
                ws.hlink_count += 1
                ws.hyperlinks[row][col] = InternalLink(location, text)
            return
        ws.ignore_write_string = True
        try:
            ws.write_url(row, col, target, cell_format, text)
        finally:
            ws.ignore_write_string = False

    def merge(
        self, row: int, first_col: int, last_col: int, kind: int, value: Any, cell_format: Any
    ) -> None:
        """A cell merged across ``first_col`` … ``last_col`` of ``row``: its value in the first,
        formatted blanks in the others."""
        if row < self.row:
            return
        if kind == STRING and value == "":
            kind = BLANK  # as XlsxWriter's merge writes an empty text
        self.cell(row, first_col, kind, value, cell_format)
        for col in range(first_col + 1, last_col + 1):
            self.cell(row, col, BLANK, None, cell_format)
        self.ws.merge.append([row, first_col, row, last_col])

    def height(self, row: int, height: float) -> None:
        """Give ``row`` a height [points] (before its cells are written)."""
        if row < self.row:
            return
        if row != self.row:
            self._write()
            self.row = row
        self._claim(row)
        self.ws.set_row(row, height)

    def finish(self) -> None:
        """Write the last row."""
        self._write()

    # -- the XML -------------------------------------------------------------------------------
    def _claim(self, row: int) -> None:
        """Make XlsxWriter write the row it holds, so that ``row`` is the one it is at."""
        ws = self.ws
        if ws.previous_row < row:
            ws._write_single_row(row)

    def _style(self, cell_format: Any) -> str:
        style = self.styles[id(cell_format)] = f' s="{cell_format._get_xf_index()}"'
        return style

    def _column_style(self, col: int) -> str:
        """The style of a cell without a format: its column's format, if the column has one."""
        info = self.ws.col_info.get(col)
        style = "" if info is None or info.column_format is None else self._style(info.column_format)
        self.column_styles[col] = style
        return style

    def _row_tag(self, row: int, number: str) -> str:
        """The row's opening tag, with its height when it has one, as XlsxWriter writes it; rows
        with more than a height (a format, hidden, an outline level) are left to XlsxWriter."""
        ws = self.ws
        info = ws.row_info.get(row)
        plain_sheet = ws.excel_version == 2007 and ws.default_row_height == ws.original_row_height
        if info is None and plain_sheet:
            return f'<row r="{number}">'
        if plain_sheet and info.row_format is None and not (info.hidden or info.level or info.collapsed):
            if info.height == ws.original_row_height:
                return f'<row r="{number}">'
            return f'<row r="{number}" ht="{info.height * 0.75:.16g}" customHeight="1">'
        fh, ws.fh = ws.fh, io.StringIO()
        try:
            ws._write_row(row, None, info)
            return ws.fh.getvalue()
        finally:
            ws.fh = fh

    def _write(self) -> None:
        cells, row = self.cells, self.row
        if not cells:
            return
        ws = self.ws
        self._claim(row)
        columns = sorted(cells)
        ws._check_dimensions(row, columns[0])
        ws._check_dimensions(row, columns[-1])
        while len(self.letters) <= columns[-1]:
            self.letters.append(column_letters(len(self.letters)))
        number = str(row + 1)
        out = [self._row_tag(row, number)]
        letters, styles, column_styles = self.letters, self.styles, self.column_styles
        info = ws.row_info.get(row)
        if info is not None and info.row_format:  # a row format comes before a column's
            column_styles = dict.fromkeys(columns, self._style(info.row_format))
        for col in columns:
            kind, value, cell_format = cells[col]
            if cell_format is None:
                s = column_styles.get(col)
                if s is None:
                    s = self._column_style(col)
            else:
                s = styles.get(id(cell_format))
                if s is None:
                    s = self._style(cell_format)
            if kind == NUMBER:
                out.append(f'<c r="{letters[col]}{number}"{s}><v>{value:.16G}</v></c>')
            elif kind == STRING:
                text = text_xml(value if len(value) < STRING_MAX // 2 else _utf16_cut(value))
                out.append(f'<c r="{letters[col]}{number}"{s} t="inlineStr"><is>{text}</is></c>')
            elif kind == FORMULA:
                out.append(_formula(ws, letters[col] + number, s, *value))
            elif kind == BLANK:
                out.append(f'<c r="{letters[col]}{number}"{s}/>')
            else:  # BOOLEAN
                out.append(f'<c r="{letters[col]}{number}"{s} t="b"><v>{int(bool(value))}</v></c>')
        out.append("</row>")
        ws.fh.write("".join(out))
        ws.table.clear()
        ws.previous_row = row + 1  # XlsxWriter holds nothing of this row, nor writes it again
        cells.clear()


ERROR_VALUES = ("#DIV/0!", "#N/A", "#NAME?", "#NULL!", "#NUM!", "#REF!", "#VALUE!")


def _formula(ws: Any, ref: str, s: str, text: str, cached: Any) -> str:
    """A formula cell with its cached value (a number, a boolean, a text or an error value)."""
    if _FUNCTION.search(text):
        text = ws._prepare_formula(text)
    elif text.startswith("="):
        text = text[1:]
    text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    kind = ""
    if isinstance(cached, bool):
        kind, cached = ' t="b"', int(cached)
    elif isinstance(cached, str):
        kind = ' t="e"' if cached in ERROR_VALUES else ' t="str"' if cached else ""
        cached = cached.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return f'<c r="{ref}"{s}{kind}><f>{text}</f><v>{cached}</v></c>'
