"""The Overview sheet: the balance, its file and SHA-256, the dead state, the site pressure, the
verdict at the chosen threshold, counts by severity, the plant's network as a PNG picture
(:mod:`audit.report.pictures.network_png`), plant totals, tolerances, the run and the
safety caution, with links to the other sheets."""

from __future__ import annotations

import io
import math
from typing import Any

from audit.findings import ERROR, SEVERITY_RANK
from audit.report.display import shown, unit
from audit.report.pictures.network_layout import network
from audit.report.pictures.network_png import draw
from audit.report.sheets.context import (
    EXCHANGERS,
    EXERGY,
    FINDINGS,
    HEAT,
    METHOD,
    OVERVIEW,
    RECONCILIATION,
    STEPS,
    STREAMS,
    TOLERANCE_QUANTITY,
    Book,
    number_or_text,
    rank,
)
from audit.report.workbook_cells import (
    BOLD,
    FILLS,
    FORMATS,
    GENERAL,
    HEADER_FONT,
    INTEGER,
    SECTION_FONT,
    TITLE_FONT,
    Fill,
    Font,
    location,
)
from audit.report.workbook_method import CAUTION

MAX_DRAWN_STEPS = 200
"""Plants with more steps are not drawn in the workbook (too many boxes to read, and the layout
time grows fast); the HTML report draws them."""
PICTURE_WIDTH = 940.0
"""The widest the network picture is shown on the sheet [px] (about columns A and B)."""
RESOLUTION = 1.5
"""Image pixels per pixel shown (sharp when zoomed and printed); the image is at most
``RESOLUTION * PICTURE_WIDTH`` pixels wide, which bounds the time to draw it."""
LONG_TEXT = 60
"""Values longer than this wrap in their cell (text running on to the right would widen the page)."""
ROW_PIXELS = 20  # the height of a row of the default height (15 pt) [px]

SHEET_GUIDE = (
    (FINDINGS, "one row per finding, most severe first; the step links to its row"),
    (STEPS, "every step's balances; the first-law residual is a live formula"),
    (STREAMS, "every stream's state and flow"),
    (HEAT, "every heat flow across a step's boundary and its temperature"),
    (EXCHANGERS, "per heat exchanger: duty, approaches, LMTD and a T–Q chart"),
    (EXERGY, "exergy destroyed per step, largest first, with a chart"),
    (METHOD, "sign convention, equations, tolerances and published sources"),
)

RECONCILIATION_GUIDE = (
    RECONCILIATION,
    "every reading measured and reconciled, its correction and uncertainty before and after",
)


def write(book: Book) -> None:
    r, sh = book.result, book.sheets[OVERVIEW]
    counts = r.counts()
    failed = r.fails(book.fail_on)
    sh.put(1, 1, "plant-audit findings workbook", font=TITLE_FONT, width=False)
    sh.put(2, 1, "Caution", font=HEADER_FONT, wrap=True)
    sh.put(2, 2, CAUTION, wrap=True, font=BOLD, merge_to=4)
    row = 4

    def section(title: str) -> None:
        nonlocal row
        row += 1 if row > 4 else 0
        sh.put(row, 1, title, font=SECTION_FONT, width=False)
        row += 1

    def item(
        label: str,
        value: Any,
        unit_label: str = "",
        fmt: str | None = None,
        fill: Fill | None = None,
        link: str | None = None,
        font: Font | None = None,
    ) -> None:
        nonlocal row
        sh.put(row, 1, label)
        wrap = isinstance(value, str) and len(value) > LONG_TEXT  # kept within the page width
        sh.put(row, 2, value, fmt=fmt, fill=fill, link=link, font=font, align="left", wrap=wrap)
        if unit_label:
            sh.put(row, 3, unit_label)
        row += 1

    section("Verdict")
    verdict = "FAIL" if failed else "PASS"
    item("verdict", verdict, fill=FILLS[ERROR] if failed else FILLS["pass"], font=SECTION_FONT)
    item("fails on findings at or above", book.fail_on)
    for severity in sorted(SEVERITY_RANK, key=rank, reverse=True):
        item(
            f"findings: {severity}",
            counts[severity],
            fmt=INTEGER,
            fill=FILLS[severity] if counts[severity] else None,
        )
    accepted = sum(1 for f in r.findings if getattr(f, "accepted", None))
    item("of which accepted by a reviewer (they do not fail the verdict)", accepted, fmt=INTEGER)
    with_errors = sorted(
        {f.step for f in r.findings if f.step and f.severity == ERROR},
        key=lambda s: book.step_row.get(s, 0),
    )
    item("steps with errors", ", ".join(with_errors) if with_errors else "none")
    item("streams", len(r.streams), fmt=INTEGER)
    item("steps", len(r.steps), fmt=INTEGER)
    item("where exergy is lost", "see the chart on the Exergy losses sheet", link=location(EXERGY, 1))

    if book.reconciliation is not None:
        _reconciliation(book, section, item)

    section("Network (red: a step with an open error; amber: an open warning)")
    row = network_picture(book, row)

    section("Balance")
    item("name", r.name)
    item("revision", r.revision or "")
    item("file", r.file)
    item("SHA-256 of the file", r.sha256)
    item(
        "dead state temperature T0",
        shown(r.dead_T, "temperature"),
        unit("temperature"),
        FORMATS["temperature"],
    )
    item("dead state pressure P0", shown(r.dead_P, "pressure"), unit("pressure"), FORMATS["pressure"])
    if r.site_pressure is not None:
        item(
            "site (atmospheric) pressure",
            shown(r.site_pressure, "pressure"),
            unit("pressure"),
            FORMATS["pressure"],
        )
    else:
        item("site (atmospheric) pressure", "not declared")
    item("sign convention", "Q is heat INTO the step; W is work DELIVERED BY the step")

    p = r.plant
    section("Plant totals (flow steps; vessels are batch totals and are not included)")
    for label, value in (
        ("heat in", p.heat_in),
        ("heat out", p.heat_out),
        ("work delivered", p.work_out),
        ("work absorbed", p.work_in),
        ("exergy destroyed", p.exergy_destroyed),
        ("first-law residual at the plant boundary", p.boundary_energy_residual),
        ("sum of the steps' first-law residuals", p.sum_of_step_residuals),
    ):
        item(label, shown(value, "power"), unit("power"), FORMATS["power"])
    item("boundary inlets", ", ".join(p.boundary_inlets))
    item("boundary outlets", ", ".join(p.boundary_outlets))

    section("Tolerances (see the Method sheet for what each one allows)")
    for name, tolerance in r.tolerances.items():
        quantity = TOLERANCE_QUANTITY.get(name)
        label = unit(quantity, difference=True) if quantity else "SI"
        item(
            name,
            shown(tolerance, quantity, difference=True),
            label,
            FORMATS.get(quantity or "", GENERAL),
        )

    section("Run")
    for key, text in r.provenance.items():
        value = number_or_text(text)
        item(key, value, fmt="0.000" if isinstance(value, float) else None)

    section("Sheets")
    guide: tuple[tuple[str, str], ...] = SHEET_GUIDE
    if book.reconciliation is not None:
        guide = (*SHEET_GUIDE[:-1], RECONCILIATION_GUIDE, SHEET_GUIDE[-1])
    for title, what in guide:
        sh.put(row, 1, title, link=location(title, 1))
        sh.put(row, 2, what)
        row += 1
    sh.fix(2, min(max(sh.widths.get(2, 0) + 2, 45), 70))
    sh.fit(cap=70)


def _reconciliation(book: Book, section: Any, item: Any) -> None:
    """The global test and the gross errors of the reconciliation, linked to its sheet."""
    from audit.report.sheets.reconciliation import test_lines

    rec = book.reconciliation
    assert rec is not None
    section("Reconciliation (a statistical estimate, not a calibration)")
    for label, text, passed in test_lines(rec):
        item(label, text, fill=FILLS["pass"] if passed else FILLS[ERROR])
    for number, elim in enumerate(rec.eliminations, 1):
        who = elim.removed if len(elim.named) <= 1 else "one of " + ", ".join(elim.named)
        item(f"gross error {number}", who, fill=FILLS[ERROR])
    item("every reading", f"see the {RECONCILIATION} sheet", link=location(RECONCILIATION, 1))


def network_picture(book: Book, row: int) -> int:
    """The plant's network as a PNG picture from ``row`` (column A), over as many empty rows as it
    takes; the row after it."""
    sh, result = book.sheets[OVERVIEW], book.result
    if not result.steps:
        sh.put(row, 1, "no steps to draw")
        return row + 1
    if len(result.steps) > MAX_DRAWN_STEPS:
        sh.put(
            row,
            1,
            f"{len(result.steps)} steps: too many to draw here; the HTML report draws the network",
            width=False,
        )
        return row + 1
    laid = network(result)
    scale = min(1.0, PICTURE_WIDTH / laid.width)  # shown pixels per layout pixel
    if book.wb is not None:
        pixels = scale * RESOLUTION  # image pixels per layout pixel
        sh.ws.insert_image(
            row - 1,
            0,
            "network.png",
            {
                "image_data": io.BytesIO(draw(laid, pixels)),
                "x_scale": 1 / RESOLUTION,
                "y_scale": 1 / RESOLUTION,
                "object_position": 1,  # moves and sizes with the cells
                "description": laid.title,
            },
        )
    return row + math.ceil(laid.height * scale / ROW_PIXELS) + 1
