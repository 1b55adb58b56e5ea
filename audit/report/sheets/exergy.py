"""The Exergy losses sheet: exergy destroyed per flow step, largest first, with a bar chart of it;
vessels (batch totals in kJ, not rates) listed below and not charted."""

from __future__ import annotations

from openpyxl.chart import BarChart, Reference
from openpyxl.chart.data_source import AxDataSource, StrRef
from openpyxl.worksheet.worksheet import Worksheet

from audit.report.display import shown
from audit.report.sheets.context import EXERGY, STEPS, Book, worst
from audit.report.workbook_cells import (
    FILLS,
    FORMATS,
    HEADER_FILL,
    HEADER_FONT,
    INTEGER,
    SECTION_FONT,
    location,
)


def write(book: Book) -> None:
    sh = book.sheets[EXERGY]
    sh.header(
        ["rank", "step", "kind", "exergy destroyed [kW]", "Ṡ_gen [kW/K]", "findings", "description"]
    )
    flow = sorted((s for s in book.result.steps if not s.batch), key=lambda s: -s.exergy_destroyed)
    row = 2
    for rank, s in enumerate(flow, start=1):
        severity = worst(book.result.findings_for(s.id))
        sh.put(row, 1, rank, fmt=INTEGER)
        sh.put(row, 2, s.id, link=location(STEPS, book.step_row[s.id]))
        sh.put(row, 3, s.kind)
        sh.put(row, 4, shown(s.exergy_destroyed, "power"), fmt=FORMATS["power"])
        sh.put(row, 5, shown(s.S_gen, "entropy_rate"), fmt=FORMATS["entropy_rate"])
        sh.put(row, 6, severity or "none", fill=FILLS[severity] if severity else None)
        sh.put(row, 7, s.description or "", wrap=True)
        row += 1
    last_flow_row = row - 1
    vessels = [s for s in book.result.steps if s.batch]
    if vessels:
        row += 1
        sh.put(
            row,
            1,
            "Vessels: batch totals in kJ, not rates, so they are not charted",
            font=SECTION_FONT,
            width=False,
        )
        row += 1
        for title_col, title in enumerate(
            ["", "step", "kind", "exergy destroyed [kJ]", "S_gen [kJ/K]", "findings", "description"],
            start=1,
        ):
            if title:
                sh.put(row, title_col, title, fill=HEADER_FILL, font=HEADER_FONT, width=False)
        row += 1
        for s in vessels:
            severity = worst(book.result.findings_for(s.id))
            sh.put(row, 2, s.id, link=location(STEPS, book.step_row[s.id]))
            sh.put(row, 3, s.kind)
            sh.put(row, 4, shown(s.exergy_destroyed, "energy"), fmt=FORMATS["energy"])
            sh.put(row, 5, shown(s.S_gen, "entropy"), fmt=FORMATS["entropy"])
            sh.put(row, 6, severity or "none", fill=FILLS[severity] if severity else None)
            sh.put(row, 7, s.description or "", wrap=True)
            row += 1
    sh.ws.freeze_panes = "A2"
    sh.fix(7, 40)
    sh.fit()
    if flow:
        sh.ws.add_chart(chart(sh.ws, last_flow_row), "I2")
    else:
        sh.put(2, 9, "no flow steps: nothing to chart")


def chart(ws: Worksheet, last_row: int) -> BarChart:
    chart = BarChart()
    chart.type = "col"
    chart.style = 10
    chart.title = "Exergy destroyed per step, largest first [kW]"
    chart.y_axis.title = "exergy destroyed [kW]"
    chart.x_axis.title = "step"
    chart.y_axis.numFmt = "#,##0"
    chart.x_axis.delete = False
    chart.y_axis.delete = False
    chart.legend = None
    chart.gapWidth = 60
    data = Reference(ws, min_col=4, min_row=1, max_row=last_row)
    categories = Reference(ws, min_col=2, min_row=2, max_row=last_row)
    chart.add_data(data, titles_from_data=True)
    # The step ids are text: a string reference (set_categories would write a numeric one).
    chart.series[0].cat = AxDataSource(strRef=StrRef(f=str(categories)))
    chart.x_axis.tickLblPos = "low"  # step names below the plot even for negative bars
    chart.width = 22
    chart.height = 12
    return chart
