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
from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from audit.report.machine import FORMULA_TRIGGERS
from audit.report.workbook_look import (
    BOLD,
    FILLS,
    FONT,
    FORMATS,
    GENERAL,
    HEADER_FILL,
    HEADER_FONT,
    INTEGER,
    LINE_HEIGHT,
    LINK_FONT,
    PERCENT,
    PLAIN,
    SECTION_FONT,
    TITLE_FONT,
    Fill,
    Font,
    Style,
    shown_length,
    text_lines,
    with_unit,
)
from audit.report.workbook_rows import (
    BLANK,
    NUMBER,
    STRING,
    Formula,
    Rows,
    cell_kind,
    safe_text,
)

__all__ = [  # the look (audit.report.workbook_look) is re-exported for the sheets
    "BOLD",
    "FILLS",
    "FONT",
    "FORMATS",
    "GENERAL",
    "HEADER_FILL",
    "HEADER_FONT",
    "INTEGER",
    "LINE_HEIGHT",
    "LINK_FONT",
    "MAX_LINKS",
    "PERCENT",
    "PLAIN",
    "SECTION_FONT",
    "TITLE_FONT",
    "Fill",
    "Font",
    "Formula",
    "Layout",
    "Sheet",
    "Style",
    "column_letter",
    "location",
    "safe_text",
    "with_unit",
]


QUOTED, WHOLE = -1, -2
"""For :meth:`Sheet.plain`: a text cell that starts like a formula (it carries the quote prefix),
an integer (measured as it is shown, not by the column's extremes)."""

MAX_LINKS = 65_530
"""The most hyperlinks a worksheet may hold (the file format's limit); later cells keep their text
without the link."""


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
            kind, shown = cell_kind(value)
            rows.merge(r, c, merge_to - 1, kind, shown, cell_format)
        elif link is not None and self.links < MAX_LINKS:
            self.links += 1
            rows.link(r, c, "internal:" + link, safe_text(value), cell_format)
        else:
            kind, shown = cell_kind(value)
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
            self._extend_extremes(col, fmt, value)
            return
        length = shown_length(value, fmt) if look == WHOLE or look == NUMBER else len(value)
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
                    self._extend_extremes(col, fmt, value)
                return
            length = len(value) if isinstance(value, str) else shown_length(value, fmt)
            if length > self.widths.get(col, 0):
                self.widths[col] = length

    def _extend_extremes(self, col: int, fmt: str, value: float) -> None:
        """Keep the smallest and the largest finite ``value`` of a column and number format."""
        extremes = self.extremes.get((col, fmt))
        if extremes is None:
            self.extremes[(col, fmt)] = [value, value]
        elif value < extremes[0]:
            extremes[0] = value
        elif value > extremes[1]:
            extremes[1] = value

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
            length = max(shown_length(v, fmt) for v in extremes)
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
            lines = max(text_lines(title, final[col]) for col, title in enumerate(titles, start=1))
            heights[self.header_row] = LINE_HEIGHT * lines + 2
        rows: dict[int, int] = {}
        spans = {(row, col): to for row, col, to in self.merged}
        for row, col, text in self.wrapped:
            to = spans.get((row, col), col)
            span = sum(final.get(c, 10) for c in range(col, to + 1))
            rows[row] = max(rows.get(row, 1), text_lines(text, span))
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
