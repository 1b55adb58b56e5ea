"""The Exergy losses sheet: exergy destroyed per flow step, largest first, with two bar charts of it
(a linear scale, and a logarithmic one on which the small steps stay readable beside the boiler),
each step's bar coloured by its worst open finding (red: error, amber: warning); vessels (batch
totals in kJ, not rates) listed below and not charted."""

from __future__ import annotations

from typing import Any

from audit.findings import ERROR, WARNING
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
    if not flow:  # rows are written in order: the note goes in before any vessel row
        sh.put(2, 9, "no flow steps: nothing to chart", width=False)
    row = 2
    for rank, s in enumerate(flow, start=1):
        severity = worst(book.result.findings_for(s.id))
        sh.put(row, 1, rank, fmt=INTEGER)
        sh.put(row, 2, s.id, link=location(STEPS, book.step_row[s.id]))
        sh.plain(row, 3, s.kind)
        sh.plain(row, 4, shown(s.exergy_destroyed, "power"), FORMATS["power"])
        sh.plain(row, 5, shown(s.S_gen, "entropy_rate"), FORMATS["entropy_rate"])
        sh.put(row, 6, severity or "none", fill=FILLS[severity] if severity else None)
        sh.plain(row, 7, s.description or "", wrap=True)
        row += 1
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
    sh.freeze("A2")
    sh.fix(7, 40)
    sh.fit()
    if flow and book.wb is not None:
        sh.ws.insert_chart("I2", chart(book, flow))
        sh.ws.insert_chart(f"I{2 + CHART_ROWS}", chart(book, flow, logarithmic=True))


CM = 96 / 2.54
"""Pixels per centimetre (96 dpi), for the chart's size."""

CHART_ROWS = 25
"""Rows between the tops of the two charts (a 12 cm chart covers about 23 rows of 15 points)."""

BAR_COLOURS = {ERROR: "#C00000", WARNING: "#FFC000"}
"""Bar colours of a step with an open error or warning (plain red and amber); others keep the
chart style's colour."""


def chart(book: Book, flow: list[Any], logarithmic: bool = False) -> Any:
    """A column chart of the exergy destroyed per flow step (rows 2 to the last flow step); the
    step ids and the values go in as the chart's cached data (the sheet is already on disk). On the
    ``logarithmic`` one, a step that destroys no exergy (or a negative amount: a violation) has no
    bar; its row and its colour on the linear chart still show it."""
    chart = book.wb.add_chart({"type": "column"})
    points = []
    for s in flow:
        severity = worst(book.result.findings_for(s.id))
        colour = BAR_COLOURS.get(severity or "")
        points.append({"fill": {"color": colour}} if colour else None)
    last = len(flow) + 1
    sheet = "'" + EXERGY + "'"
    chart.add_series(
        {
            "name": f"={sheet}!D1",
            "name_data": ["exergy destroyed [kW]"],
            "categories": f"={sheet}!$B$2:$B${last}",
            "categories_data": [s.id for s in flow],
            "values": f"={sheet}!$D$2:$D${last}",
            "values_data": [shown(s.exergy_destroyed, "power") for s in flow],
            "gap": 60,
            "points": points,
        }
    )
    chart.set_style(10)
    scale = " (logarithmic scale)" if logarithmic else ""
    chart.set_title(
        {"name": f"Exergy destroyed per step, largest first [kW]{scale}; red: error, amber: warning"}
    )
    y_axis: dict[str, Any] = {"name": "exergy destroyed [kW]", "num_format": "#,##0.##"}
    if logarithmic:
        y_axis["log_base"] = 10
    chart.set_y_axis(y_axis)
    # step names below the plot even for negative bars
    chart.set_x_axis({"name": "step", "label_position": "low"})
    chart.set_legend({"none": True})
    chart.set_size({"width": round(22 * CM), "height": round(12 * CM)})
    return chart
