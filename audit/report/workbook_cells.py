"""Cell writing for the findings workbook: styles, number formats, text that is never a formula,
and columns and rows sized to their content. Used by :mod:`audit.report.workbook` only.

A sheet is written twice by the same sheet code. The first pass (``Sheet(title)``, no worksheet)
only measures: how wide each column must be, which rows wrap and how tall they get, and which style
most cells of each column share. The second pass writes the cells into an XlsxWriter workbook in
its constant-memory mode, a whole row at a time as XML (:mod:`audit.report.workbook_rows`: each row
goes to disk when the next one starts, so memory stays flat in the number of rows): each column
gets its common style once (:meth:`Sheet.layout_columns`), and a cell carries a style of its own
only where it differs (a fill, a link, a bold id, a vessel's unit).
"""

from __future__ import annotations

import math
import re
from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, NamedTuple

from audit.findings import ERROR, INFO, WARNING
from audit.report.machine import FORMULA_TRIGGERS
from audit.report.workbook_rows import BLANK, BOOLEAN, FORMULA, NUMBER, STRING, Rows
from audit.wording import finite_or_none


class Fill(NamedTuple):
    """A solid cell fill of one colour (RGB hex). (Named tuples: a cell's style is looked up by
    them for every cell, and their hash and comparison run at C speed.)"""

    color: str


class Font(NamedTuple):
    """A cell font: the workbook's default face, bold or not, a size, a colour, underlined."""

    bold: bool = False
    size: int = 11
    color: str | None = None
    underline: bool = False


# Fills for the severities and the verdict; the word is always written too (greyscale prints).
FILLS = {
    ERROR: Fill("F4A6A6"),
    WARNING: Fill("FFE699"),
    INFO: Fill("DDEBF7"),
    "pass": Fill("C6EFCE"),
}
HEADER_FILL = Fill("D9D9D9")
FONT = "Calibri"  # the workbook's default font
HEADER_FONT = Font(bold=True)
BOLD = Font(bold=True)
PLAIN = Font()
LINK_FONT = Font(color="0563C1", underline=True)
TITLE_FONT = Font(bold=True, size=14)
SECTION_FONT = Font(bold=True, size=12)

# Number formats, one per display unit (resolution: about four significant figures or better).
FORMATS = {
    "temperature": "0.00",
    "temperature_difference": "0.00",
    "pressure": "0.00000",
    "mass_flow": "0.0000",
    "molar_flow": "0.000",
    "power": "#,##0.000",
    "energy": "#,##0.000",
    "entropy_rate": "0.00000",
    "entropy": "0.00000",
    "specific_energy": "#,##0.00",
    "specific_entropy": "0.00000",
    "density": "0.000",
    "specific_volume": "0.000000",
    "fraction": "0.0000",
    "mass": "#,##0.000",
    "velocity": "0.00",
    "elevation": "0.00",
    "voltage": "0.000",
    "current": "0.00",
}
PERCENT = "0.0%"
INTEGER = "0"
GENERAL = "General"

QUOTED, WHOLE = -1, -2
"""For :meth:`Sheet.plain`: a text cell that starts like a formula (it carries the quote prefix),
an integer (measured as it is shown, not by the column's extremes)."""

MAX_LINKS = 65_530
"""The most hyperlinks a worksheet may hold (the file format's limit); later cells keep their text
without the link."""

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


Style = tuple  # (number format, fill, font, wrap, horizontal, quote prefix, header)
"""A cell's look; equal tuples share one format of the file."""


@dataclass
class Layout:
    """What the measuring pass of one sheet found: final column widths, row heights, each
    column's most common style, the header."""

    widths: dict[int, float] = field(default_factory=dict)
    heights: dict[int, float] = field(default_factory=dict)
    column_style: dict[int, Style] = field(default_factory=dict)
    measured: dict[int, float] = field(default_factory=dict)


class Sheet:
    """A worksheet written cell by cell; measuring (``ws`` None) or writing (``ws`` an XlsxWriter
    worksheet, ``layout`` from the measuring pass, ``formats`` the book's format cache)."""

    def __init__(self, title: str, ws: Any = None, layout: Layout | None = None, formats: Any = None):
        self.title = title
        self.ws = ws
        self.layout = layout or Layout()
        self.formats = formats
        self.widths: dict[int, float] = dict(self.layout.measured)
        self.fixed: dict[int, float] = {}
        self.wrapped: list[tuple[int, int, str]] = []
        self.merged: list[tuple[int, int, int]] = []
        self.styles: dict[int, Counter] = {}
        self.header_titles: list[str] = []
        self.header_row = 1
        self.extremes: dict[tuple[int, str], list[float]] = {}
        self.links = 0
        self._row = 0
        self.rows = Rows(ws) if ws is not None else None
        # plain cells: (column, format, wrap, look) → [style, cell format, cells measured]
        self._plain: dict[tuple[int, str | None, bool, int], list[Any]] = {}

    # -- cells -------------------------------------------------------------------------------------
    def put(
        self,
        row: int,
        col: int,
        value: Any,
        fmt: str | None = None,
        fill: Fill | None = None,
        font: Font | None = None,
        link: str | None = None,
        wrap: bool = False,
        width: bool = True,
        align: str | None = None,
        merge_to: int | None = None,
    ) -> None:
        """Write ``value`` at (``row``, ``col``), 1-based; text always as text (quote-prefixed when
        it starts like a formula), numbers as numbers with ``fmt``, a :class:`Formula` with its
        cached value; ``merge_to``: the cell spans to that column."""
        is_text = isinstance(value, str)
        quote = is_text and value.startswith(FORMULA_TRIGGERS)
        if link is not None:
            font = LINK_FONT
        style = (None if is_text else fmt, fill, font, wrap, align, quote, False)
        rows = self.rows
        if rows is None:
            self._measure_cell(row, col, value, fmt, style, wrap, width, merge_to)
            return
        r, c = row - 1, col - 1
        if row != self._row:
            self._row = row
            height = self.layout.heights.get(row)
            if height is not None:
                rows.height(r, height)
        cell_format = None if style == self.layout.column_style.get(col) else self.formats.get(style)
        if type(value) is float and link is None and merge_to is None:  # the usual cell
            if value - value == 0:  # finite
                rows.cell(r, c, NUMBER, value, cell_format)
            else:
                rows.cell(r, c, BLANK, None, cell_format or self.formats.get(style))
            return
        if merge_to is not None:
            kind, shown = _kind(value)
            rows.merge(r, c, merge_to - 1, kind, shown, cell_format)
        elif link is not None and self.links < MAX_LINKS:
            self.links += 1
            rows.link(r, c, "internal:" + link, safe_text(value), cell_format)
        else:
            kind, shown = _kind(value)
            if kind == BLANK:
                cell_format = cell_format or self.formats.get(style)
            rows.cell(r, c, kind, shown, cell_format)

    def plain(self, row: int, col: int, value: Any, fmt: str | None = None, wrap: bool = False) -> None:
        """:meth:`put` of a cell with no fill, font, link, alignment or merge: the large sheets'
        usual cell. A finite number, a text or nothing takes a short way (the style of each is the
        same in every row of a column, so it is looked up once per column); anything else, and a
        row's first cell (its height), goes through :meth:`put`."""
        kind = type(value)
        if kind is float:
            if value - value != 0:  # not finite
                self.put(row, col, value, fmt=fmt, wrap=wrap)
                return
            look = NUMBER
        elif kind is int:
            look = WHOLE
        elif kind is str:
            look = QUOTED if value.startswith(FORMULA_TRIGGERS) else STRING
        elif value is None:
            look = BLANK
        else:
            self.put(row, col, value, fmt=fmt, wrap=wrap)
            return
        rows = self.rows
        if rows is not None and row != self._row:
            self.put(row, col, value, fmt=fmt, wrap=wrap)
            return
        key = (col, fmt, wrap, look)
        known = self._plain.get(key)
        if known is None:
            style: Style
            if look == STRING or look == QUOTED:
                style = (None, None, None, wrap, None, look == QUOTED, False)
            else:
                style = (fmt, None, None, wrap, None, False, False)
            cell_format = None
            if rows is not None:
                if style != self.layout.column_style.get(col) or look == BLANK:
                    cell_format = self.formats.get(style)
            else:  # the style takes its place among the column's styles (see fit)
                counts = self.styles.get(col)
                if counts is None:
                    counts = self.styles[col] = Counter()
                counts[style] += 0
            known = self._plain[key] = [style, cell_format, 0]
        if rows is not None:
            cell_format = known[1]
            if look == NUMBER or look == WHOLE:
                rows.cell(row - 1, col - 1, NUMBER, value, cell_format)
            elif look == BLANK:
                rows.cell(row - 1, col - 1, BLANK, None, cell_format)
            else:
                rows.cell(row - 1, col - 1, STRING, safe_text(value), cell_format)
            return
        # measuring: as _measure_cell does (the style counted with its column's in fit)
        known[2] += 1
        if look == BLANK:
            return
        if wrap:
            if look == STRING or look == QUOTED:
                self.wrapped.append((row, col, value))
            return
        if look == NUMBER and fmt and fmt != GENERAL:
            extremes = self.extremes.get((col, fmt))
            if extremes is None:
                self.extremes[(col, fmt)] = [value, value]
            elif value < extremes[0]:
                extremes[0] = value
            elif value > extremes[1]:
                extremes[1] = value
            return
        length = _shown_length(value, fmt) if look == WHOLE or look == NUMBER else len(value)
        if length > self.widths.get(col, 0):
            self.widths[col] = length

    def _measure_cell(
        self,
        row: int,
        col: int,
        value: Any,
        fmt: str | None,
        style: Style,
        wrap: bool,
        width: bool,
        merge_to: int | None,
    ) -> None:
        counts = self.styles.get(col)
        if counts is None:
            counts = self.styles[col] = Counter()
        counts[style] += 1
        if merge_to is not None:
            self.merged.append((row, col, merge_to))
        if wrap:
            if isinstance(value, str):
                self.wrapped.append((row, col, value))
        elif width and value is not None:
            if isinstance(value, Formula):
                value = value.cached
            if type(value) is float and fmt and fmt != GENERAL:
                # the shown length grows with the magnitude on either side of zero: the smallest
                # and the largest value of a column and format give its widest text (see fit)
                if math.isfinite(value):
                    extremes = self.extremes.get((col, fmt))
                    if extremes is None:
                        self.extremes[(col, fmt)] = [value, value]
                    elif value < extremes[0]:
                        extremes[0] = value
                    elif value > extremes[1]:
                        extremes[1] = value
                return
            length = len(value) if isinstance(value, str) else _shown_length(value, fmt)
            if length > self.widths.get(col, 0):
                self.widths[col] = length

    def fix(self, col: int, width: float) -> None:
        """Give column ``col`` this width (its text wraps)."""
        self.fixed[col] = width

    def header(self, titles: Sequence[str], row: int = 1) -> None:
        for col, title in enumerate(titles, start=1):
            self.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False, align="header")
        self.header_titles = list(titles)
        self.header_row = row

    # -- the sheet ---------------------------------------------------------------------------------
    def freeze(self, cell: str) -> None:
        if self.ws is not None:
            self.ws.freeze_panes(cell)

    def highlight(self, cells: str, formula: str, fill: Fill, font: Font) -> None:
        """Conditional format: ``cells`` take ``fill`` and ``font`` while ``formula`` holds."""
        if self.ws is not None:
            self.ws.conditional_format(
                cells,
                {
                    "type": "formula",
                    "criteria": "=" + formula,
                    "format": self.formats.highlight(fill, font),
                },
            )

    def table(self, last_row: int, freeze: str = "B2") -> None:
        """Freeze the header row (and the id column), filter on, widths that fit."""
        self.freeze(freeze)
        if self.ws is not None:
            last_col = len(self.header_titles) - 1
            self.ws.autofilter(self.header_row - 1, 0, max(last_row, self.header_row) - 1, last_col)
        self.fit()

    def fit(self, cap: int = 60, header_cap: int = 12) -> None:
        """Column widths from the content (headers wrap past ``header_cap`` characters), then row
        heights for the header and the wrapped cells (measuring); the measured layout (writing)."""
        if self.ws is not None:
            return
        for (col, *_), known in self._plain.items():
            self.styles[col][known[0]] += known[2]
            known[2] = 0
        for (col, fmt), extremes in self.extremes.items():
            length = max(_shown_length(v, fmt) for v in extremes)
            if length > self.widths.get(col, 0):
                self.widths[col] = length
        self.extremes.clear()
        titles = self.header_titles
        final: dict[int, float] = {}
        last = max([*self.styles, *self.fixed, len(titles), 0])
        for col in range(1, last + 1):
            head = len(titles[col - 1]) if col <= len(titles) else 0
            final[col] = self.fixed.get(col) or min(
                max(self.widths.get(col, 0), min(head, header_cap), 6) + 2, cap
            )
        heights: dict[int, float] = {}
        if titles:
            lines = max(_lines(title, final[col]) for col, title in enumerate(titles, start=1))
            heights[self.header_row] = LINE_HEIGHT * lines + 2
        rows: dict[int, int] = {}
        spans = {(row, col): to for row, col, to in self.merged}
        for row, col, text in self.wrapped:
            to = spans.get((row, col), col)
            span = sum(final.get(c, 10) for c in range(col, to + 1))
            rows[row] = max(rows.get(row, 1), _lines(text, span))
        for row, lines in rows.items():
            heights[row] = LINE_HEIGHT * lines + 2
        column_style = {col: counts.most_common(1)[0][0] for col, counts in self.styles.items()}
        self.layout = Layout(final, heights, column_style, dict(self.widths))

    def finish(self) -> None:
        """Writing: the last row goes to the file."""
        if self.rows is not None:
            self.rows.finish()

    def layout_columns(self) -> None:
        """Writing: each column's width and common style, set once for the whole column."""
        for col, width in self.layout.widths.items():
            style = self.layout.column_style.get(col)
            cell_format = self.formats.get(style) if style is not None else None
            self.ws.set_column(col - 1, col - 1, width, cell_format)


LINE_HEIGHT = 15  # points per line of 11-point text


def _kind(value: Any) -> tuple[int, Any]:
    """How a cell value is written (:mod:`audit.report.workbook_rows`): text as text, a
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


def _lines(text: str, width: float) -> int:
    """How many lines ``text`` takes in a wrapped column ``width`` characters wide (about one
    character per width unit, word wrap)."""
    per_line = max(int(width * 1.15) - 1, 1)
    lines = 0
    for paragraph in text.split("\n"):
        count, used = 1, 0
        for word in paragraph.split(" "):
            extra = len(word) + (1 if used else 0)
            if used and used + extra > per_line:
                count += 1
                used = len(word)
            else:
                used += extra
        lines += count
    return lines


def _shown_length(value: Any, fmt: str | None) -> int:
    """About how many characters a number takes once formatted with ``fmt``."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return len(str(value))
    if not math.isfinite(value):
        return 0
    fmt = fmt or GENERAL
    suffix = "".join(re.findall(r'"([^"]*)"', fmt))
    core = re.sub(r'"[^"]*"', "", fmt)
    if core == GENERAL:
        return len(f"{value:.10g}")
    decimals = len(core.split(".")[1].rstrip("%")) if "." in core else 0
    number = value * 100 if core.endswith("%") else value
    text = f"{number:,.{decimals}f}" if "," in core else f"{number:.{decimals}f}"
    return len(text) + len(suffix) + (1 if core.endswith("%") else 0)


def column_letter(col: int) -> str:
    """The letters of a 1-based column number (1 → A, 27 → AA)."""
    letters = ""
    while col:
        col, remainder = divmod(col - 1, 26)
        letters = chr(65 + remainder) + letters
    return letters


def location(sheet: str, row: int, col: int = 1) -> str:
    quoted = "'" + sheet.replace("'", "''") + "'"
    return f"{quoted}!{column_letter(col)}{row}"


def with_unit(fmt: str, label: str) -> str:
    """A number format that shows ``label`` after the number."""
    return f'{fmt}" {label}"'
