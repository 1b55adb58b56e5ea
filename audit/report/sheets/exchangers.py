"""The Exchangers sheet: per heat exchanger its arrangement, duty, terminal approaches, LMTD of the
terminals, smallest approach and where along the duty it occurs; below the table, one block per
exchanger with its T–Q points (both sides' temperatures against the duty counted from the cold
inlet) and a native scatter chart of them with the smallest approach marked. The findings
``internal-pinch`` and ``temperature-cross`` link to their exchanger's block.

The values come from the exchanger's :class:`audit.exchangers.ExchangerValues` and
:class:`audit.exchangers.ExchangerProfile` (``StepResult.exchanger`` and ``.profile``)."""

from __future__ import annotations

from typing import Any

from audit.findings import ERROR
from audit.report.display import shown
from audit.report.sheets.context import (
    CHART_ROWS,
    EXCHANGERS,
    FINDINGS,
    STEPS,
    Book,
    marker,
    worst,
)
from audit.report.workbook_cells import (
    FILLS,
    FORMATS,
    HEADER_FILL,
    HEADER_FONT,
    PERCENT,
    SECTION_FONT,
    location,
)
from audit.results import StepResult

HEADERS = [
    "step",
    "findings",
    "arrangement",
    "duty [kW]",
    "approach at the hot end (co-current: inlet end) [K]",
    "approach at the cold end (co-current: outlet end) [K]",
    "LMTD of the terminals [K]",
    "smallest approach [K]",
    "where: duty from the cold inlet [kW]",
    "where: fraction of the duty [%]",
    "T–Q chart",
]
POINT_HEADERS = ["duty from the cold inlet [kW]", "hot side [°C]", "cold side [°C]", "approach [K]"]
DT = FORMATS["temperature_difference"]
T = FORMATS["temperature"]
KW = FORMATS["power"]
HOT, COLD, PINCH = "#C0392B", "#1F5FA8", "#222222"  # plain line colours of the chart
CM = 96 / 2.54  # pixels per centimetre (96 dpi)


def write(book: Book) -> None:
    sh = book.sheets[EXCHANGERS]
    sh.header(HEADERS)
    exchangers = [s for s in book.result.steps if s.exchanger is not None]
    for row, s in enumerate(exchangers, start=2):
        _summary_row(book, s, row)
    if not exchangers:
        sh.put(2, 1, "no heat exchangers")
    for s in exchangers:
        _block(book, s, book.exchanger_row[s.id])
    sh.freeze("B2")
    sh.fit(cap=40, header_cap=18)


def _summary_row(book: Book, s: StepResult, row: int) -> None:
    sh, rating = book.sheets[EXCHANGERS], s.exchanger
    assert rating is not None
    findings = book.result.findings_for(s.id)
    severity = worst(findings)
    fill = FILLS[severity] if severity else None
    sh.put(row, 1, s.id, link=location(STEPS, book.step_row[s.id]))
    if severity:
        target = location(FINDINGS, book.first_finding_row[("step", s.id)])
        sh.put(row, 2, marker(severity, len(findings)), fill=fill, link=target)
    else:
        sh.put(row, 2, "none")
    sh.put(row, 3, rating.arrangement)
    sh.put(row, 4, shown(rating.duty, "power"), fmt=KW)
    for col, dT in enumerate(rating.end_approach, start=5):
        sh.put(row, col, dT, fmt=DT)
    sh.put(row, 7, rating.lmtd, fmt=DT)
    sh.put(row, 8, rating.min_approach, fmt=DT, fill=_approach_fill(book, s, rating.min_approach))
    sh.put(row, 9, shown(rating.min_approach_duty, "power"), fmt=KW)
    sh.put(row, 10, rating.min_approach_fraction, fmt=PERCENT)
    what = "T–Q chart" if s.profile is not None else "no profile"
    sh.put(row, 11, what, link=location(EXCHANGERS, book.exchanger_row[s.id]))


def _approach_fill(book: Book, s: StepResult, approach: float | None) -> Any:
    if approach is None:
        return None
    names = {f.name for f in book.result.findings_for(s.id) if not f.accepted}
    if approach <= 0 or "internal-pinch" in names:
        return FILLS[ERROR]
    return FILLS["warning"] if "approach-below-minimum" in names else None


def _block(book: Book, s: StepResult, first: int) -> None:
    """The exchanger's T–Q points and chart, from row ``first``."""
    sh, profile, rating = book.sheets[EXCHANGERS], s.profile, s.exchanger
    assert rating is not None
    title = f"{s.id} ({rating.arrangement}): temperature against duty"
    sh.put(first, 1, title, font=SECTION_FONT, width=False)
    if profile is None:
        sh.put(
            first + 1,
            1,
            "no temperature profile: the terminals cross or the profile could not be evaluated",
            width=False,
        )
        return
    for col, header in enumerate(POINT_HEADERS, start=1):
        sh.put(first + 1, col, header, fill=HEADER_FILL, font=HEADER_FONT, width=False)
    duty = [shown(q, "power") for q in profile.duty]
    hot = [shown(t, "temperature") for t in profile.hot_T]
    cold = [shown(t, "temperature") for t in profile.cold_T]
    start = first + 2
    for k, (q, h, c, dT) in enumerate(zip(duty, hot, cold, profile.approach, strict=True)):
        row = start + k
        pinch = k == profile.pinch_index
        sh.put(row, 1, q, fmt=KW)
        sh.put(row, 2, h, fmt=T)
        sh.put(row, 3, c, fmt=T)
        sh.put(row, 4, dT, fmt=DT, fill=FILLS[ERROR] if pinch and dT <= 0 else None)
        if pinch:
            sh.put(row, 5, "← smallest approach", width=False)
    end = start + len(duty) - 1
    pinch_row = end + 1
    sh.put(pinch_row, 1, "smallest approach", fill=HEADER_FILL, font=HEADER_FONT, width=False)
    sh.put(pinch_row, 2, "temperature [°C]", fill=HEADER_FILL, font=HEADER_FONT, width=False)
    i = profile.pinch_index
    for k, t in enumerate((hot[i], cold[i]), start=1):
        sh.put(pinch_row + k, 1, duty[i], fmt=KW)
        sh.put(pinch_row + k, 2, t, fmt=T)
    if book.wb is not None:
        series = {
            "hot": (start, end, duty, hot),
            "cold": (start, end, duty, cold),
            "pinch": (pinch_row + 1, pinch_row + 2, [duty[i], duty[i]], [hot[i], cold[i]]),
        }
        sh.ws.insert_chart(f"G{first + 1}", chart(book, s, series))


def chart(book: Book, s: StepResult, series: dict[str, tuple[int, int, list, list]]) -> Any:
    """A scatter chart with straight lines of both sides' temperatures against the duty and the
    smallest approach as a vertical segment; the points go in as the chart's cached data too (the
    sheet is already on disk in constant-memory mode)."""
    rating, profile = s.exchanger, s.profile
    assert rating is not None and profile is not None
    made = book.wb.add_chart({"type": "scatter", "subtype": "straight_with_markers"})
    sheet = "'" + EXCHANGERS.replace("'", "''") + "'"
    dT = profile.approach[profile.pinch_index]
    where = rating.min_approach_fraction
    pinch_name = f"smallest approach {dT:.1f} K" + (f" at {where:.0%} of the duty" if where else "")
    looks = {
        "hot": ("hot side", HOT, "circle", "solid"),
        "cold": ("cold side", COLD, "circle", "solid"),
        "pinch": (pinch_name, PINCH, "diamond", "dash"),
    }
    for key, (first, last, xs, ys) in series.items():
        name, colour, shape, dash = looks[key]
        y_col = "B" if key == "pinch" else ("B" if key == "hot" else "C")
        made.add_series(
            {
                "name": name,
                "categories": f"={sheet}!$A${first}:$A${last}",
                "categories_data": xs,
                "values": f"={sheet}!${y_col}${first}:${y_col}${last}",
                "values_data": ys,
                "line": {"color": colour, "width": 2.25 if key == "pinch" else 1.75, "dash_type": dash},
                "marker": {
                    "type": shape,
                    "size": 7 if key == "pinch" else 4,
                    "fill": {"color": colour},
                    "border": {"color": colour},
                },
            }
        )
    made.set_title({"name": f"{s.id}: temperature against duty ({rating.arrangement})"})
    made.set_x_axis({"name": "duty from the cold inlet [kW]", "num_format": "#,##0", "min": 0})
    made.set_y_axis(
        {"name": "temperature [°C]", "num_format": "0", "major_gridlines": {"visible": True}}
    )
    made.set_legend({"position": "bottom"})
    made.set_size({"width": round(20 * CM), "height": CHART_ROWS * 20})
    return made
