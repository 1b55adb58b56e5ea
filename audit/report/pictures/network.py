"""The plant's network as an SVG picture: one box per step, one arrow per stream labelled with its
id, laid out left to right in layers (:mod:`audit.report.pictures.network_layout`); a step with an
open error is drawn red, one with a warning amber (and says so in words)."""

from __future__ import annotations

from collections.abc import Callable

from audit.report.pictures.network_layout import BOX_W, Arrow, Box, network
from audit.report.pictures.svg import FILL, INK, MUTED, STROKE, document, el, points, text
from audit.results import AuditResult

ARROW = el(
    "marker",
    el("path", d="M0,0 L8,4 L0,8 z", fill=INK),
    id="arrow",
    markerWidth=8,
    markerHeight=8,
    refX=8,
    refY=4,
    orient="auto",
    markerUnits="userSpaceOnUse",
)


def network_svg(result: AuditResult, link: Callable[[str], str] | None = None) -> str:
    """The network picture of ``result`` as SVG text; ``link(step_id)``, when given, is the target
    of each box (an anchor in the HTML report)."""
    laid = network(result)
    body = [el("defs", ARROW)]
    body += [_arrow(arrow) for arrow in laid.arrows]
    for box in laid.boxes:
        body.append(_box(box, laid.kinds[box.step], laid.marks[box.step], link))
    return document(laid.width, laid.height, body, laid.title, "network")


def _box(box: Box, kind: str, mark: str | None, link: Callable[[str], str] | None) -> str:
    left, top = box.x - BOX_W / 2, box.y - box.height / 2
    shapes = [
        el(
            "rect",
            x=f"{left:.1f}",
            y=f"{top:.1f}",
            width=f"{BOX_W:.0f}",
            height=f"{box.height:.0f}",
            rx=4,
            fill=FILL[mark],
            stroke=STROKE[mark],
            stroke_width=3 if mark else 1.2,
        ),
        text(box.x, box.y - 6, box.step, text_anchor="middle", font_weight="bold", fill=INK),
        text(box.x, box.y + 9, kind.replace("_", " "), text_anchor="middle", fill=MUTED),
    ]
    if mark:
        shapes.append(
            text(
                box.x,
                box.y + 23,
                f"✖ {mark}" if mark == "error" else f"⚠ {mark}",
                fill=STROKE[mark],
                text_anchor="middle",
                font_weight="bold",
            )
        )
    shapes += [_arrow(arrow) for arrow in box.stubs()]
    group = el(
        "g",
        shapes,
        class_=f"step {mark or 'ok'}",
        id=f"net-{box.step}",
        data_step=box.step,
        data_severity=mark or "none",
    )
    return el("a", group, href=link(box.step)) if link else group


def _arrow(arrow: Arrow) -> str:
    line = el(
        "polyline",
        points=points(arrow.points),
        fill="none",
        stroke=INK,
        stroke_width=1.3,
        marker_end="url(#arrow)",
    )
    words = text(
        arrow.label[0],
        arrow.label[1],
        arrow.stream,
        text_anchor="middle",
        fill=INK,
        font_size="11px",
        stroke="#ffffff",
        stroke_width=3,
        paint_order="stroke",
    )
    return el("g", [line, words], class_=f"stream {arrow.role}", data_stream=arrow.stream)
