"""How every sheet of every workbook prints: A4 landscape, one page wide (as many pages down as it
takes), the header rows on every page, and a page header and footer naming the balance, its
revision, the sheet and the page. Used by the findings, batch summary and comparison workbooks
(XlsxWriter worksheets)."""

from __future__ import annotations

from typing import Any

from audit.report.workbook_cells import safe_text

PAPER_A4 = 9
"""The paper size code of A4."""

LONGEST = 60
"""The most characters of a balance name or revision a page header shows (the file format holds
255 characters per header)."""


def header_text(text: str, longest: int = LONGEST) -> str:
    """``text`` for a page header or footer: on one line, at most ``longest`` characters, and with
    ``&`` (which starts a header code) doubled."""
    line = " ".join(safe_text(text).split())
    if len(line) > longest:
        line = line[: longest - 1] + "…"
    return line.replace("&", "&&")


def set_up_page(ws: Any, what: str, balance: str, revision: str | None, header_row: int = 0) -> None:
    """Print ``ws`` landscape on A4, fitted to the page width, with rows 1 to ``header_row``
    (1-based; 0: none) repeated on every page; the page header names ``what`` (the workbook), the
    balance and its revision, the footer the sheet and the page."""
    ws.set_landscape()
    ws.set_paper(PAPER_A4)
    ws.fit_to_pages(1, 0)  # one page wide, as many pages down as it takes
    ws.set_margins(left=0.4, right=0.4, top=0.7, bottom=0.7)
    if header_row:
        ws.repeat_rows(header_row - 1)
    name = header_text(balance)
    rev = f"revision {header_text(revision)}" if revision else "no revision stated"
    ws.set_header(f'&L&"Calibri,Bold"{header_text(what, 30)}: {name}&R{rev}', {"margin": 0.3})
    ws.set_footer(f"&L{name}, {rev}&C&A&Rpage &P of &N", {"margin": 0.3})
