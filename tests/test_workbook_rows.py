"""The workbook's own row writer (``audit.report.workbook_rows``) against XlsxWriter's cell writer.

The same cells are written twice into a constant-memory workbook: once through XlsxWriter's public
``write_*`` calls, once through :class:`audit.report.workbook_rows.Rows`; the two files must be the
same bytes, part for part. A change in how XlsxWriter writes a cell, a row, a link, a merge or a
style number shows here (the row writer uses XlsxWriter's private parts; see its docstring).
"""

from __future__ import annotations

import io
import zipfile
from datetime import datetime
from typing import Any

import openpyxl
import pytest
from xlsxwriter import Workbook

from audit.report import workbook_rows
from audit.report.workbook_rows import BLANK, BOOLEAN, FORMULA, NUMBER, STRING, Rows

WHEN = datetime(2024, 5, 6, 7, 8, 9)

# (row, col, kind, value, format name or None); rows in order, columns in any order
CELLS: list[tuple[int, int, int, Any, str | None]] = [
    (0, 0, STRING, "header", "header"),
    (0, 2, STRING, "third", "header"),
    (0, 1, STRING, "second", None),
    (1, 0, NUMBER, 1.0, None),
    (1, 1, NUMBER, -0.000123456789012345678, "number"),
    (1, 2, NUMBER, 12345678901234567890.0, None),
    (1, 3, NUMBER, 7, None),
    (1, 4, NUMBER, 1e-300, "number"),
    (1, 5, NUMBER, 0.1 + 0.2, None),
    (2, 0, STRING, "a & b < c > d \"quoted\" 'single'", None),
    (2, 1, STRING, " leading", None),
    (2, 2, STRING, "trailing\n", "wrap"),
    (2, 3, STRING, "bell\x07 and nul\x00 and _x0041_ literal", None),
    (2, 4, STRING, "non-characters \ufffe \uffff", None),
    (2, 5, STRING, "", None),
    (2, 6, STRING, "ρ [kg/m³] Ṡ_gen 🔥 astral", "number"),
    (2, 7, STRING, "tab\tinside", None),
    (2, 8, STRING, "\u00a0non-breaking space first", None),
    (2, 9, STRING, "ends in a line feed\n\n", None),
    (3, 0, FORMULA, ("=B4-C4-(E4-D4)", 1.25), "number"),
    (3, 1, FORMULA, ("=A4+1", 0), None),
    (3, 2, FORMULA, ("=SUM(A4:B4)", 2.5e-7), None),
    (3, 3, FORMULA, ("=AND(ISNUMBER(A4),ABS(A4)>B4)", True), None),
    (3, 4, FORMULA, ('=A4&"<x>"', 3), None),
    (4, 0, FORMULA, ('=A4&"x"', "1.25x & <more>"), None),
    (4, 1, FORMULA, ("=1/0", "#DIV/0!"), None),
    (4, 2, FORMULA, ("=A1", ""), None),
    (3, 5, BLANK, None, "number"),
    (3, 6, BLANK, None, None),
    (3, 7, BOOLEAN, True, None),
    (3, 8, BOOLEAN, False, "number"),
    (5, 0, STRING, "x" * 40_000, None),
    (5, 1, STRING, "🔥" * 20_000, None),
    (6, 9, NUMBER, 42.0, None),
]
LINKS = [  # (row, col, target, text, format name or None)
    (7, 0, "internal:'Steps'!A2", "S1", None),
    (7, 1, "internal:Findings!A5", "error (2 findings)", "link"),
    (8, 3, "internal:'Heat flows'!B7", "P & Q", None),
]
MERGES = [(9, 1, 3, STRING, "merged text", "wrap"), (10, 0, 2, NUMBER, 3.5, None)]
HEIGHTS = {0: 32, 2: 47, 9: 77.25}
COLUMNS = {0: "number", 2: "wrap", 5: None}  # column formats (None: a width only)


def _formats(wb: Workbook) -> dict[str, Any]:
    return {
        "header": wb.add_format({"bold": True, "bottom": 1, "text_wrap": True}),
        "number": wb.add_format({"num_format": "0.000"}),
        "wrap": wb.add_format({"text_wrap": True, "valign": "top"}),
        "link": wb.add_format({"font_color": "#0563C1", "underline": 1}),
    }


def _book(write: Any) -> bytes:
    stream = io.BytesIO()
    wb = Workbook(stream, {"constant_memory": True, "strings_to_formulas": False})
    wb.set_properties({"created": WHEN})
    formats = _formats(wb)
    ws = wb.add_worksheet("Rows")
    for col, name in COLUMNS.items():
        ws.set_column(col, col, 14, formats[name] if name else None)
    write(ws, formats)
    ws.freeze_panes("B2")
    wb.add_worksheet("Second").write_string(0, 0, "after")
    wb.close()
    return stream.getvalue()


def _events() -> list[tuple[int, str, tuple]]:
    """Every cell, link, merge and row height, in row order (heights before their row's cells)."""
    events: list[tuple[int, str, tuple]] = []
    events += [(row, "0height", (row, h)) for row, h in HEIGHTS.items()]
    events += [(c[0], "cell", c) for c in CELLS]
    events += [(link[0], "link", link) for link in LINKS]
    events += [(m[0], "merge", m) for m in MERGES]
    return sorted(events, key=lambda e: (e[0], e[1]))


def _by_xlsxwriter(ws: Any, formats: dict[str, Any]) -> None:
    for _, what, item in _events():
        if what == "0height":
            ws.set_row(*item)
        elif what == "cell":
            row, col, kind, value, name = item
            fmt = formats[name] if name else None
            if kind == NUMBER:
                ws.write_number(row, col, value, fmt)
            elif kind == STRING:
                ws.write_string(row, col, value, fmt)
            elif kind == FORMULA:
                ws.write_formula(row, col, value[0], fmt, value[1])
            elif kind == BLANK:
                ws.write_blank(row, col, None, fmt)
            else:
                ws.write_boolean(row, col, value, fmt)
        elif what == "link":
            row, col, target, text, name = item
            ws.write_url(row, col, target, formats[name] if name else None, text)
        else:
            row, first, last, kind, value, name = item
            ws.merge_range(row, first, row, last, value, formats[name] if name else None)


def _by_rows(ws: Any, formats: dict[str, Any]) -> None:
    rows = Rows(ws)
    for _, what, item in _events():
        if what == "0height":
            rows.height(*item)
        elif what == "cell":
            row, col, kind, value, name = item
            rows.cell(row, col, kind, value, formats[name] if name else None)
        elif what == "link":
            row, col, target, text, name = item
            rows.link(row, col, target, text, formats[name] if name else None)
        else:
            row, first, last, kind, value, name = item
            rows.merge(row, first, last, kind, value, formats[name] if name else None)
    rows.finish()


def test_rows_make_the_same_bytes_as_xlsxwriter():
    ours, theirs = _book(_by_rows), _book(_by_xlsxwriter)
    with zipfile.ZipFile(io.BytesIO(ours)) as a, zipfile.ZipFile(io.BytesIO(theirs)) as b:
        assert a.namelist() == b.namelist()
        for name in a.namelist():
            assert a.read(name) == b.read(name), name
    assert ours == theirs


def test_rows_read_back_as_written():
    ws = openpyxl.load_workbook(io.BytesIO(_book(_by_rows)))["Rows"]
    assert ws["A3"].value == "a & b < c > d \"quoted\" 'single'"
    assert ws["B3"].value == " leading"
    # control characters as the file format's _xHHHH_ escapes (openpyxl leaves them escaped)
    assert ws["D3"].value == "bell_x0007_ and nul_x0000_ and _x005F_x0041_ literal"
    assert ws["B2"].value == pytest.approx(-0.000123456789012345678, rel=1e-15)
    assert ws["B2"].number_format == "0.000"
    assert ws["A4"].value == "=B4-C4-(E4-D4)"
    assert len(ws["A6"].value) == workbook_rows.STRING_MAX
    assert ws["A8"].hyperlink.location == "'Steps'!A2"
    assert "B10:D10" in {str(r) for r in ws.merged_cells.ranges}
    assert ws.row_dimensions[1].height == 32.25  # 32 points asked: whole pixels (43 px at 96 dpi)


def test_a_cell_of_a_row_already_written_is_dropped_as_xlsxwriter_drops_it():
    def late(ws: Any, formats: dict[str, Any]) -> None:
        rows = Rows(ws)
        rows.cell(3, 0, NUMBER, 1.0)
        rows.cell(4, 0, NUMBER, 2.0)
        rows.cell(3, 1, NUMBER, 3.0)  # row 4 is on disk
        rows.finish()

    ws = openpyxl.load_workbook(io.BytesIO(_book(late)))["Rows"]
    assert ws["A4"].value == 1 and ws["B4"].value is None and ws["A5"].value == 2


def test_rows_with_more_than_a_height_are_opened_by_xlsxwriter():
    def tall(rows_first: bool) -> Any:
        def write(ws: Any, formats: dict[str, Any]) -> None:
            ws.set_default_row(18)
            rows = Rows(ws) if rows_first else None
            for row in range(4):
                if rows is not None:
                    rows.height(row, 30 + row)
                    rows.cell(row, 0, NUMBER, float(row))
                else:
                    ws.set_row(row, 30 + row)
                    ws.write_number(row, 0, float(row))
            ws.set_row(5, 20, formats["number"], {"level": 1, "hidden": True})
            if rows is not None:
                rows.cell(5, 1, STRING, "outlined")
                rows.finish()
            else:
                ws.write_string(5, 1, "outlined")

        return write

    assert _book(tall(True)) == _book(tall(False))


def test_rows_need_a_constant_memory_worksheet():
    wb = Workbook(io.BytesIO())
    with pytest.raises(ValueError, match="constant-memory worksheet only"):
        Rows(wb.add_worksheet())
    wb.close()


@pytest.mark.parametrize(
    ("col", "letters"), [(0, "A"), (25, "Z"), (26, "AA"), (701, "ZZ"), (702, "AAA")]
)
def test_column_letters(col, letters):
    assert workbook_rows.column_letters(col) == letters


# -- Sheet.plain: the large sheets' short way must write what Sheet.put writes ---------------------
PLAIN_ROWS = [
    # (value, number format, wraps); in the third column two texts (the short way) against four
    # cells that only put writes (nan, booleans, inf), so that the column's common style depends on
    # both being counted alike
    [(1.5, "0.00", False), ("Water", None, False), ("x", "0.000", False), (12, "0", False)],
    [(-2.25e5, "0.00", False), ("=1+1", None, False), (float("nan"), "0.000", False), (7, "0", False)],
    [
        (3.0, "0.00", False),
        ("a long text that wraps " * 5, None, True),
        ("y", "0.000", False),
        (None, "0", False),
    ],
    [(float("inf"), "0.00", False), ("", None, False), (True, "0.000", False), ("12", "0", False)],
    [(4.0, "0.00", False), ("+x\x07", None, True), (float("inf"), "0.000", False), (123456, "0", False)],
    [(None, "0.00", False), ("b", None, False), (False, "0.000", False), (5, "0", False)],
]


def _sheet_book(use_plain: bool) -> bytes:
    from audit.report import workbook_file
    from audit.report.workbook_cells import Sheet

    def cells(sheet: Sheet) -> None:
        sheet.header(["T [°C]", "fluid", "ρ", "line"])
        for row, values in enumerate(PLAIN_ROWS, start=2):
            for col, (value, fmt, wrap) in enumerate(values, start=1):
                if use_plain:
                    sheet.plain(row, col, value, fmt, wrap)
                else:
                    sheet.put(row, col, value, fmt=fmt, wrap=wrap)
        sheet.fix(2, 20)
        sheet.table(len(PLAIN_ROWS) + 1)

    measuring = Sheet("Cells")
    cells(measuring)
    stream = io.BytesIO()
    wb = workbook_file.open_workbook(stream, "cells", WHEN)
    writing = Sheet("Cells", wb.add_worksheet("Cells"), measuring.layout, workbook_file.Formats(wb))
    writing.layout_columns()
    cells(writing)
    writing.finish()
    workbook_file.close(wb)
    return stream.getvalue()


def test_plain_cells_write_what_put_writes():
    assert _sheet_book(use_plain=True) == _sheet_book(use_plain=False)
