"""The look of the findings workbook's cells: fills, fonts and the number format of each display
unit, a cell's style (the tuple by which equal looks share one format of the file), and how wide
and tall a cell's text shows. Used by
:mod:`audit.report.workbook_cells` (which re-exports it for the sheets) and
:mod:`audit.report.workbook_file`."""

from __future__ import annotations

import math
import re
from typing import Any, NamedTuple

from audit.findings import ERROR, INFO, WARNING


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

Style = tuple  # (number format, fill, font, wrap, horizontal, quote prefix, header)
"""A cell's look; equal tuples share one format of the file."""


def with_unit(fmt: str, label: str) -> str:
    """A number format that shows ``label`` after the number."""
    return f'{fmt}" {label}"'


LINE_HEIGHT = 15  # points per line of 11-point text


def text_lines(text: str, width: float) -> int:
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


def shown_length(value: Any, fmt: str | None) -> int:
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
