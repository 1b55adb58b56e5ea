"""Plain table workbooks written with XlsxWriter in constant-memory mode: the batch summary and the
comparison workbooks. Rows are written in order, one at a time; text is always text (quote-prefixed
when it starts like a formula, without the control characters a workbook cannot hold), numbers are
numbers with a number format, a non-finite number is an empty cell; rows that wrap get the height
their text needs; every sheet prints landscape, one page wide (:mod:`audit.report.printing`). The
document's times are the run time given, so the same input gives the same bytes."""

from __future__ import annotations

import math
from collections.abc import Sequence
from datetime import datetime, timezone
from typing import Any, BinaryIO

from xlsxwriter import Workbook

from audit.report.machine import FORMULA_TRIGGERS
from audit.report.printing import set_up_page
from audit.report.workbook_cells import FONT, HEADER_FILL, LINE_HEIGHT, safe_text
from audit.report.workbook_file import OPTIONS

BASE = {"font_name": FONT, "valign": "top"}
HEADER = {"bold": True, "bg_color": "#" + HEADER_FILL.color, "pattern": 1, "text_wrap": True}
HEADER.update(valign="bottom", bottom=1)
BOLD = {"bold": True}
TITLE = {"bold": True, "font_size": 14}
WRAP = {"text_wrap": True}
LINK = {"font_color": "#0563C1", "underline": 1}
MAX_HEIGHT = 409  # the tallest row the file format allows [points]


def lines(text: str, width: float) -> int:
    """About how many lines ``text`` takes wrapped in a column ``width`` characters wide."""
    per_line = max(int(width * 1.1) - 1, 1)
    return sum(max(1, math.ceil(len(part) / per_line)) for part in text.split("\n"))


class PlainBook:
    """One workbook written to ``stream``; its document created and modified at ``when``."""

    def __init__(self, stream: BinaryIO, title: str, when: datetime, balance: str, revision: str | None):
        self.wb = Workbook(stream, OPTIONS)
        created = when.astimezone(timezone.utc).replace(tzinfo=None) if when.tzinfo else when
        self.wb.set_properties(
            {"title": safe_text(title), "author": "plant-audit", "created": max(created, EPOCH)}
        )
        self.what, self.balance, self.revision = title.split(":")[0], balance, revision
        self._formats: dict[tuple, Any] = {}  # by the parts' items (equal looks may get two)

    def format(self, *parts: dict[str, Any] | None) -> Any:
        """The workbook format of the properties in ``parts`` (one per distinct set)."""
        key = tuple(tuple(part.items()) for part in parts if part)
        made = self._formats.get(key)
        if made is None:
            properties = dict(BASE)
            for part in parts:
                properties.update(part or {})
            made = self._formats[key] = self.wb.add_format(properties)
        return made

    def sheet(self, title: str, widths: Sequence[float]) -> PlainSheet:
        return PlainSheet(self, title, widths)

    def close(self) -> None:
        self.wb.close()


EPOCH = datetime(1980, 1, 1)  # the earliest time a zip entry can hold


class PlainSheet:
    """A worksheet written row after row (``next_row`` is the 1-based row the next line takes)."""

    def __init__(self, book: PlainBook, title: str, widths: Sequence[float]):
        self.book = book
        self.ws = book.wb.add_worksheet(title)
        self.widths = list(widths)
        self.next_row = 1
        self.header_row = 0
        for col, width in enumerate(widths):
            self.ws.set_column(col, col, width, book.format())

    def line(
        self,
        values: Sequence[Any],
        formats: Sequence[str | None] = (),
        style: dict[str, Any] | None = None,
        wrap: Sequence[int] = (),
        links: dict[int, str] | None = None,
        styles: dict[int, dict[str, Any]] | None = None,
    ) -> int:
        """Write one row: ``values`` from column 1, ``formats[i]`` the number format of value i,
        ``style`` the look of the whole row, ``wrap`` the 0-based columns whose text wraps,
        ``links`` a target per column, ``styles`` a look per column. Returns the row (1-based)."""
        row = self.next_row
        self.next_row += 1
        tall = 1
        for col in wrap:
            value = values[col] if col < len(values) else None
            if isinstance(value, str) and col < len(self.widths):
                tall = max(tall, lines(value, self.widths[col]))
        if tall > 1:
            self.ws.set_row(row - 1, min(LINE_HEIGHT * tall + 2, MAX_HEIGHT))
        for col, value in enumerate(values):
            fmt = formats[col] if col < len(formats) else None
            look = [style, (styles or {}).get(col), WRAP if col in wrap else None]
            self.cell(row - 1, col, value, fmt, look, (links or {}).get(col))
        return row

    def cell(
        self, r: int, c: int, value: Any, fmt: str | None, look: list[Any], link: str | None
    ) -> None:
        ws, book = self.ws, self.book
        if value is None or (isinstance(value, float) and not math.isfinite(value)):
            if any(look):
                ws.write_blank(r, c, None, book.format(*look))
            return
        if isinstance(value, str):
            text = safe_text(value)
            if link is not None:
                if ws.write_url(r, c, link, book.format(*look, LINK), text) == 0:
                    return
            quote = {"quote_prefix": True} if text.startswith(FORMULA_TRIGGERS) else None
            ws.write_string(r, c, text, book.format(*look, quote))
        elif isinstance(value, bool):
            ws.write_boolean(r, c, value, book.format(*look))
        else:
            number = {"num_format": fmt} if fmt else None
            ws.write_number(r, c, value, book.format(*look, number))

    def header(self, titles: Sequence[str]) -> int:
        """The table's header row: bold on grey, wrapped, as tall as its longest title needs."""
        row = self.next_row
        tall = max(lines(t, w) for t, w in zip(titles, self.widths, strict=False))
        self.ws.set_row(row - 1, LINE_HEIGHT * tall + 4)
        for col, title in enumerate(titles):
            self.ws.write_string(row - 1, col, safe_text(title), self.book.format(HEADER))
        self.next_row += 1
        self.header_row = row
        return row

    def finish(self, last_data_row: int | None = None, freeze: tuple[int, int] | None = None) -> None:
        """Filter on the table (header to ``last_data_row``), freeze panes below the header and
        right of ``freeze[1]`` columns, and set the sheet up for printing."""
        if self.header_row:
            last = max(last_data_row or self.header_row, self.header_row)
            self.ws.autofilter(self.header_row - 1, 0, last - 1, len(self.widths) - 1)
        if freeze is not None:
            self.ws.freeze_panes(*freeze)
        set_up_page(self.ws, self.book.what, self.book.balance, self.book.revision, self.header_row)
