"""Cell writing for the findings workbook: styles, number formats, text that is never a formula,
and columns and rows sized to their content. Used by :mod:`audit.report.workbook` only."""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter, quote_sheetname
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.worksheet import Worksheet

from audit.findings import ERROR, INFO, WARNING
from audit.report.machine import FORMULA_TRIGGERS
from audit.results import finite_or_none

# Fills for the severities and the verdict; the word is always written too (greyscale prints).
FILLS = {
    ERROR: PatternFill("solid", fgColor="F4A6A6"),
    WARNING: PatternFill("solid", fgColor="FFE699"),
    INFO: PatternFill("solid", fgColor="DDEBF7"),
    "pass": PatternFill("solid", fgColor="C6EFCE"),
}
HEADER_FILL = PatternFill("solid", fgColor="D9D9D9")
FONT = "Calibri"  # the workbook's default font
HEADER_FONT = Font(name=FONT, bold=True)
BOLD = Font(name=FONT, bold=True)
PLAIN = Font(name=FONT)
LINK_FONT = Font(name=FONT, color="0563C1", underline="single")
TITLE_FONT = Font(name=FONT, bold=True, size=14)
SECTION_FONT = Font(name=FONT, bold=True, size=12)
HEADER_BORDER = Border(bottom=Side(style="thin"))
WRAP_TOP = Alignment(wrap_text=True, vertical="top")
TOP = Alignment(vertical="top")

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
}
PERCENT = "0.0%"
INTEGER = "0"
GENERAL = "General"


def safe_text(value: str) -> str:
    """``value`` with the control characters a workbook cannot hold replaced by U+FFFD, and
    carriage returns as line feeds (XML readers turn them into line feeds anyway)."""
    return ILLEGAL_CHARACTERS_RE.sub("\ufffd", value.replace("\r\n", "\n").replace("\r", "\n"))


@dataclass
class Formula:
    """A live formula and the value a spreadsheet program computes for it (cached in the file)."""

    text: str
    cached: float | None


class Sheet:
    """A worksheet written cell by cell, which remembers how wide each column must be and which
    cells wrap, so that widths and row heights fit the content."""

    def __init__(self, ws: Worksheet) -> None:
        self.ws = ws
        self.widths: dict[int, float] = {}
        self.fixed: dict[int, float] = {}
        self.wrapped: list[tuple[int, int, str]] = []
        self.formulas: list[tuple[str, float]] = []
        self.header_titles: list[str] = []
        self.header_row = 1

    def put(
        self,
        row: int,
        col: int,
        value: Any,
        fmt: str | None = None,
        fill: PatternFill | None = None,
        font: Font | None = None,
        link: str | None = None,
        wrap: bool = False,
        width: bool = True,
    ) -> Any:
        cell = self.ws.cell(row=row, column=col)
        if isinstance(value, Formula):
            cell.value = value.text
            if value.cached is not None:
                self.formulas.append((cell.coordinate, value.cached))
        elif isinstance(value, str):
            cell.value = safe_text(value)
            cell.data_type = "s"  # an explicit string: never read as a formula
            if value.startswith(FORMULA_TRIGGERS):
                cell.quotePrefix = True
        elif isinstance(value, float):
            cell.value = finite_or_none(value)
        else:
            cell.value = value
        if fmt and not isinstance(value, str):
            cell.number_format = fmt
        if fill is not None:
            cell.fill = fill
        if font is not None:
            cell.font = font
        if link is not None:
            cell.hyperlink = Hyperlink(ref=cell.coordinate, location=link)
            cell.font = LINK_FONT
        if wrap:
            cell.alignment = WRAP_TOP
            if isinstance(value, str):
                self.wrapped.append((row, col, value))
        else:
            cell.alignment = TOP
            if width:
                self._measure(col, value, fmt)
        return cell

    def _measure(self, col: int, value: Any, fmt: str | None) -> None:
        if value is None:
            return
        if isinstance(value, Formula):
            value = value.cached
        length = len(value) if isinstance(value, str) else _shown_length(value, fmt)
        self.widths[col] = max(self.widths.get(col, 0), length)

    def fix(self, col: int, width: float) -> None:
        """Give column ``col`` this width (its text wraps)."""
        self.fixed[col] = width

    def header(self, titles: Sequence[str], row: int = 1) -> None:
        for col, title in enumerate(titles, start=1):
            cell = self.put(row, col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
            cell.border = HEADER_BORDER
            cell.alignment = Alignment(wrap_text=True, vertical="bottom")
        self.header_titles = list(titles)
        self.header_row = row

    def table(self, last_row: int, freeze: str = "B2") -> None:
        """Freeze the header row (and the id column), filter on, widths that fit."""
        self.ws.freeze_panes = freeze
        last_col = get_column_letter(len(self.header_titles))
        self.ws.auto_filter.ref = f"A{self.header_row}:{last_col}{max(last_row, self.header_row)}"
        self.fit()

    def fit(self, cap: int = 60, header_cap: int = 24) -> None:
        """Column widths from the content (headers wrap past ``header_cap`` characters), then row
        heights for the header and the wrapped cells."""
        titles = self.header_titles
        final: dict[int, float] = {}
        for col in range(1, self.ws.max_column + 1):
            head = len(titles[col - 1]) if col <= len(titles) else 0
            width = self.fixed.get(col) or min(
                max(self.widths.get(col, 0), min(head, header_cap), 6) + 2, cap
            )
            final[col] = width
            self.ws.column_dimensions[get_column_letter(col)].width = width
        if titles:
            lines = max(_lines(title, final[col]) for col, title in enumerate(titles, start=1))
            self.ws.row_dimensions[self.header_row].height = LINE_HEIGHT * lines + 2
        heights: dict[int, int] = {}
        for row, col, text in self.wrapped:
            span = final.get(col, 10)
            for merged in self.ws.merged_cells.ranges:
                if merged.min_row == row and merged.min_col == col:
                    span = sum(final.get(c, 10) for c in range(col, merged.max_col + 1))
            heights[row] = max(heights.get(row, 1), _lines(text, span))
        for row, lines in heights.items():
            self.ws.row_dimensions[row].height = LINE_HEIGHT * lines + 2


LINE_HEIGHT = 15  # points per line of 11-point text


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


def location(sheet: str, row: int, col: int = 1) -> str:
    return f"{quote_sheetname(sheet)}!{get_column_letter(col)}{row}"


def with_unit(fmt: str, label: str) -> str:
    """A number format that shows ``label`` after the number."""
    return f'{fmt}" {label}"'
