"""The findings workbook's file: an XlsxWriter workbook in constant-memory mode, with fixed
document times (the same result gives the same bytes). Used by :mod:`audit.report.workbook`, which
writes the bytes with :mod:`audit.report.files`."""

from __future__ import annotations

from datetime import datetime
from typing import Any, BinaryIO

from xlsxwriter import Workbook

from audit.report.workbook_cells import FONT, GENERAL, Fill, Font, Style
from audit.results import AuditResult

_ZIP_EPOCH = (1980, 1, 1, 0, 0, 0)  # the earliest time a zip entry can hold

OPTIONS = {
    "constant_memory": True,  # each row to disk when the next starts
    "strings_to_numbers": False,
    "strings_to_formulas": False,  # text is text (the sheets write it as text anyway)
    "strings_to_urls": False,
}


def run_time(result: AuditResult) -> datetime:
    """The run time recorded in ``result.provenance`` ("run at (UTC)"), naive UTC; the zip epoch
    (1980-01-01) when it is missing, so the file stays reproducible."""
    text = result.provenance.get("run at (UTC)", "")
    try:
        when = datetime.strptime(text, "%Y-%m-%d %H:%M:%S")
    except ValueError:
        when = datetime(*_ZIP_EPOCH)
    return max(when, datetime(*_ZIP_EPOCH))


def open_workbook(stream: BinaryIO, title: str, when: datetime) -> Any:
    """A new workbook writing to ``stream``, its document created and modified at ``when``."""
    wb = Workbook(stream, OPTIONS)
    wb.set_properties({"title": title, "author": "plant-audit", "created": when})
    return wb


def close(wb: Any) -> None:
    """Finish the file: the parts are put together and written to the stream."""
    wb.close()


class Formats:
    """The formats of one XlsxWriter workbook, one per distinct :data:`Style`, made on first use."""

    def __init__(self, workbook: Any) -> None:
        self.workbook = workbook
        self.cache: dict[Style, Any] = {}

    def get(self, style: Style | None) -> Any:
        if style is None:
            return None
        made = self.cache.get(style)
        if made is None:
            made = self.cache[style] = self.workbook.add_format(_properties(style))
        return made

    def highlight(self, fill: Fill, font: Font) -> Any:
        """A conditional format (a fill and a font)."""
        return self.workbook.add_format({"bg_color": "#" + fill.color, "bold": font.bold})


def _properties(style: Style) -> dict[str, Any]:
    fmt, fill, font, wrap, align, quote, _ = style
    properties: dict[str, Any] = {"font_name": FONT, "valign": "top"}
    if fmt and fmt != GENERAL:
        properties["num_format"] = fmt
    if fill is not None:
        properties.update(pattern=1, bg_color="#" + fill.color)
    if font is not None:
        properties.update(bold=font.bold, font_size=font.size)
        if font.color:
            properties["font_color"] = "#" + font.color
        if font.underline:
            properties["underline"] = 1
    if wrap:
        properties["text_wrap"] = True
    if align == "header":
        properties.update(text_wrap=True, valign="bottom", bottom=1)
    elif align is not None:
        properties["align"] = align
    if quote:
        properties["quote_prefix"] = True
    return properties
